"""Planarisation: non-planar graphs (K5) and loads on interior nodes.

Kuratowski (1930), "Sur le probleme des courbes gauches en topologie", Fund.
Math. 15 271-283: K5 is not planar, so every drawing of it has a crossing.
Crossing vertices: Micheletti (2008), "On generalized reciprocal diagrams for
self-stressed frameworks", Int. J. Space Struct. 23(3) 153-166. The crossings
found are checked against shapely (GEOS), a general-purpose geometry library
used only here.
"""

from dataclasses import replace

import numpy as np
import pytest
import shapely

from reciprocal_frames import drawn_checks, interior_loaded_panel, k5_tetrahedron
from sheets.analysis import analyse
from sheets.model.schema import NAMED_DIRECTIONS
from sheets.reciprocal.diagram import force_diagram


def _shapely_member_crossings(points2d, ends):
    """Pairs of members (no shared node) whose drawn segments cross, by shapely."""
    lines = [shapely.LineString([points2d[a], points2d[b]]) for a, b in ends]
    found = set()
    for i in range(len(lines)):
        for j in range(i + 1, len(lines)):
            if set(ends[i]) & set(ends[j]):
                continue
            if lines[i].crosses(lines[j]):
                found.add((i, j))
    return found


@pytest.mark.parametrize("view", list(NAMED_DIRECTIONS))
def test_k5_tetrahedron_is_planarised_in_every_view(frame, view):
    project = k5_tetrahedron(frame)
    state = analyse(project).state("PS")
    assert np.all(np.abs(state.forces) > 0)  # a proper self-stress: every member carries force
    drawing = replace(project.drawing, projection=NAMED_DIRECTIONS[view], projection_name=view)
    diagram = force_diagram(project, state, drawing)
    assert diagram.crossings, "K5 cannot be drawn without a crossing (Kuratowski)"
    assert diagram.graph.n_elements == 10  # no external forces: a self-stress
    assert max(drawn_checks(project, state, diagram)) < 1e-9
    # every crossing vertex is in equilibrium: its pieces cancel
    emb = diagram.embedding
    assert np.all(diagram.vertex_error[emb.n_nodes: emb.ideal] < 1e-12)

    drawn = emb.projection.apply(project.coords)
    expected = _shapely_member_crossings(drawn, [tuple(e) for e in project.ends])
    index = {mid: k for k, mid in enumerate(project.member_ids)}
    got = {tuple(sorted(index[e] for e in c.elements)) for c in diagram.crossings if not c.node and len(c.elements) == 2}
    assert got == expected


def test_k5_combinatorial_embedding_falls_back_and_says_why(frame):
    project = k5_tetrahedron(frame)
    state = analyse(project).state("PS")
    drawing = replace(project.drawing, embedding="combinatorial")
    diagram = force_diagram(project, state, drawing)
    assert "not planar" in diagram.embedding.note
    assert diagram.crossings and diagram.passed


def test_interior_load_is_routed_out_across_members(frame):
    """A load on the centre node of a panel must cross members on its way to the ideal vertex."""
    project = interior_loaded_panel(frame, load=(3e3, -12e3))
    state = analyse(project).state("L")
    diagram = force_diagram(project, state)
    emb = diagram.embedding
    centre = project.node_ids.index("N5")
    r = list(diagram.graph.external_nodes).index(centre)
    assert emb.ray_reach[r] > 0
    routed = [c for c in diagram.crossings if "external:N5" in c.elements]
    assert routed
    # the members it crosses are exactly those shapely finds crossing its ray (drawn to beyond the frame)
    ray = emb.ray_directions[r]
    start = emb.points[centre]
    line = shapely.LineString([start, start + 100 * ray])
    crossed = {project.member_ids[k] for k, (a, b) in enumerate(project.ends)
               if centre not in (a, b) and line.crosses(shapely.LineString([emb.points[a], emb.points[b]]))}
    assert {e for c in routed for e in c.elements if e != "external:N5"} == crossed
    # the ray runs along the load's line of action (a reciprocal edge parallel to its force)
    load = np.array([3e3, -12e3])
    assert abs(ray[0] * load[1] - ray[1] * load[0]) < 1e-9 * np.linalg.norm(load)
    assert max(drawn_checks(project, state, diagram)) < 1e-9
    assert diagram.passed
