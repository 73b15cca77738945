"""Different projections of one 3D frame: the same force vectors, arranged differently.

The vector-based 3D construction: D'acunto et al. (2019), "Vector-based 3D
graphic statics: a framework for the design of spatial structures based on the
relation between form and force diagrams", Int. J. Solids Struct. 167 58-70.
Each force-diagram edge is t_e u_e whatever the embedding, while the points
(spaces) it joins depend on the faces of the embedding chosen.
"""

from dataclasses import replace

import numpy as np

from reciprocal_frames import drawn_checks, space_truss
from sheets.analysis import analyse
from sheets.model.schema import NAMED_DIRECTIONS
from sheets.reciprocal.diagram import force_diagram


def _diagram(project, state, view):
    drawing = replace(project.drawing, projection=NAMED_DIRECTIONS[view], projection_name=view)
    return force_diagram(project, state, drawing)


def _vectors_by_element(diagram, digits=6):
    """{element id: set of drawn edge vectors (rounded)}: pieces of a split member repeat its vector."""
    out = {}
    for eid, vec in zip(diagram.edge_ids, diagram.drawn):
        out.setdefault(eid, set()).add(tuple(np.round(vec, digits) + 0.0))
    return out


def test_two_projections_give_the_same_edge_vectors_differently_arranged(frame):
    project = space_truss(frame)
    state = analyse(project).state("G")
    plan = _diagram(project, state, "plan")
    front = _diagram(project, state, "front")
    assert plan.embedding.projection.name == "plan" and front.embedding.projection.name == "front"

    a, b = _vectors_by_element(plan), _vectors_by_element(front)
    assert a.keys() == b.keys() == set(plan.graph.element_ids)
    for eid in a:  # each element drawn as its own force vector, one value, in both
        assert a[eid] == b[eid] and len(a[eid]) == 1, eid
    for view in (plan, front):
        assert max(drawn_checks(project, state, view)) < 1e-9

    # ... but arranged differently: the spaces differ, so the point sets are not translates of each other
    pa = plan.points - plan.points.mean(axis=0)
    pb = front.points - front.points.mean(axis=0)
    same_arrangement = len(pa) == len(pb) and np.allclose(np.sort(pa, axis=0), np.sort(pb, axis=0))
    assert not same_arrangement
    assert plan.faces.count != front.faces.count or not np.allclose(sorted(map(tuple, pa)), sorted(map(tuple, pb)))


def test_a_view_that_stacks_nodes_is_tilted_and_says_so(frame):
    """A vertical post seen in plan collapses to a point: the projection is tilted a little, and the note says it."""
    coords = [(0, 0, 0), (3, 0, 0), (0, 3, 0), (0, 0, 2)]  # node 4 straight above node 1
    members = [(0, 3), (1, 3), (2, 3)]
    project = frame(coords, members, {0: "xyz", 1: "xyz", 2: "xyz"}, {"G": {3: (1e3, 2e3, -9e3)}})
    state = analyse(project).state("G")
    diagram = _diagram(project, state, "plan")
    projection = diagram.embedding.projection
    assert 0 < projection.tilt_degrees <= 13
    assert "tilted" in diagram.embedding.note
    drawn = projection.apply(project.coords)
    assert np.linalg.norm(drawn[0] - drawn[3]) > 1e-4 * 3
    assert max(drawn_checks(project, state, diagram)) < 1e-9
