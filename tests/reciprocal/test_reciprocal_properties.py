"""Property tests (hypothesis) on generated frames: the force diagram always closes.

Generated: random nodes in 2D or 3D (on a coarse grid too, so that collinear
overlaps and members through nodes occur), joined by a Delaunay triangulation
or a random edge set; member forces random; external forces p = A t at every
node, so each node is in equilibrium by construction and every node has an
external edge to route. The closure checks are Maxwell's (1864) reciprocity on
a planar map; Euler's formula confirms the embedding is planar.
"""

import itertools

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.spatial import Delaunay

from reciprocal_frames import drawn_checks, equilibrium_state
from sheets.model.project import DrawingOptions
from sheets.reciprocal.diagram import force_diagram


@st.composite
def frames(draw):
    dim = draw(st.sampled_from([2, 3]))
    seed = draw(st.integers(0, 2**31 - 1))
    rng = np.random.default_rng(seed)
    n = draw(st.integers(dim + 1, 16))
    if draw(st.booleans()):
        coords = np.unique(rng.integers(0, 4, size=(n, dim)).astype(float), axis=0)
    else:
        coords = rng.random((n, dim)) * 10
    n = len(coords)
    if n < dim + 1:
        coords = np.vstack([coords, np.eye(dim) * 7 + 11])[: dim + 1]
        n = len(coords)
    pairs = list(itertools.combinations(range(n), 2))
    if draw(st.booleans()):
        try:
            simplices = Delaunay(coords).simplices
            edges = sorted({tuple(sorted(map(int, e))) for s in simplices for e in itertools.combinations(s, 2)})
        except Exception:
            edges = pairs
    else:
        k = int(rng.integers(1, min(len(pairs), 3 * n) + 1))
        edges = [pairs[i] for i in rng.choice(len(pairs), k, replace=False)]
    forces = rng.normal(size=len(edges)) * 1e3
    embedding = draw(st.sampled_from(["geometric", "combinatorial"]))
    direction = tuple(rng.normal(size=3)) if draw(st.booleans()) else (0.0, 0.0, 1.0)
    return coords, edges, forces, DrawingOptions(embedding=embedding, projection=direction, projection_name="custom")


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(frames())
def test_generated_frames_close(frame, case):
    coords, edges, forces, drawing = case
    project = frame(coords, edges, np.zeros(coords.shape, bool))
    state = equilibrium_state(project, forces)
    diagram = force_diagram(project, state, drawing)
    assert diagram.faces.planar
    assert max(drawn_checks(project, state, diagram)) < 1e-9
    assert diagram.passed
    # one force-diagram edge per piece, each piece of an element carrying the element's vector
    np.testing.assert_allclose(diagram.edge_vectors, diagram.graph.vectors[diagram.embedding.element])
