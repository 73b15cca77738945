"""Minkowski-sum views (METHODS.md 8): piece sizes against the closed form and an independent hull.

"Maxwell and Rankine reciprocal diagrams via Minkowski sums for two-dimensional
and three-dimensional trusses under load", Int. J. Solids Struct. 85-86 (2016)
142-154: each member becomes a
rectangle (1-s) L x s kappa |t| (2D) or a prism of volume (1-s) L s^2 kappa^2 |t|
(3D). Totals against Maxwell's load path theorem (Maxwell 1870).
"""

import numpy as np
import pytest
from scipy.spatial import ConvexHull

from sheets.analysis import analyse
from sheets.reciprocal.cells import node_cells
from sheets.reciprocal.diagram import force_diagram
from sheets.reciprocal.minkowski_sum import minkowski_view

from polyhedral_frames import tripod_frame


def truss_2d(frame):
    coords = [[0, 0], [3, 0], [6, 0], [1.5, 2], [4.5, 2]]
    members = [(0, 1), (1, 2), (0, 3), (3, 1), (1, 4), (4, 2), (3, 4)]
    return frame(coords, members, {0: "xy", 2: "y"}, {"P": {3: [0, -10e3], 4: [2e3, -10e3]}})


@pytest.mark.parametrize("connected", [False, True])
def test_2d_rectangles_closed_form(frame, connected):
    project = truss_2d(frame)
    analysis = analyse(project)
    state = analysis.state("P")
    s, kappa = 0.3, 2e-4
    diagram = force_diagram(project, state) if connected else None
    view = minkowski_view(analysis, node_cells(analysis, "P"), mix=s, kappa=kappa, diagram=diagram)
    assert view.layout == ("connected" if connected else "separate cells")
    lengths = analysis.equilibrium.lengths
    for e, piece in enumerate(view.members):
        pts = piece.vertices[list(piece.loops[0])]
        sides = np.linalg.norm(np.roll(pts, -1, axis=0) - pts, axis=1)
        # a rectangle: sides (1-s) L and s kappa |t|, right angles
        assert sorted(sides[:2]) == pytest.approx(sorted([(1 - s) * lengths[e], s * kappa * abs(state.forces[e])]), rel=1e-9)
        assert abs((pts[1] - pts[0]) @ (pts[2] - pts[1])) <= 1e-9 * sides.max() ** 2
        assert ConvexHull(pts).volume == pytest.approx((1 - s) * s * kappa * abs(state.forces[e]) * lengths[e], rel=1e-9)
    # totals: factor x load path; tension - compression: factor x sum f.x
    load_path = float(np.abs(state.forces) @ lengths)
    assert view.total == pytest.approx((1 - s) * s * kappa * load_path, rel=1e-12)
    sum_fx = float(np.sum(state.external * project.coords))
    assert view.total_tension - view.total_compression == pytest.approx((1 - s) * s * kappa * sum_fx, rel=1e-9, abs=1e-12)
    assert view.passed


def _signed_area(pts):
    x, y = pts[:, 0], pts[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def test_2d_connected_node_polygons_are_turned_force_polygons(frame):
    # Each node becomes its force polygon (forces head to tail in the angular order of the
    # members around the node, as in Maxwell's reciprocal figure), turned 90 degrees and
    # scaled by s kappa: built here from the forces alone.
    project = truss_2d(frame)
    analysis = analyse(project)
    state = analysis.state("P")
    s, kappa = 0.5, 1e-4
    view = minkowski_view(analysis, node_cells(analysis, "P"), mix=s, kappa=kappa, diagram=force_diagram(project, state))
    coords = np.asarray(project.coords)
    for v, piece in enumerate(view.nodes):
        vectors, angles = [], []
        for e, (i, j) in enumerate(project.ends):
            if v in (i, j):
                d = coords[j if i == v else i] - coords[v]
                vectors.append(state.forces[e] * d / np.linalg.norm(d))
                angles.append(np.arctan2(d[1], d[0]))
        p = state.external[v]
        if np.linalg.norm(p) > 0:
            vectors.append(p)
            angles.append(np.arctan2(-p[1], -p[0]))  # the load edge runs out of the node to infinity
        order = np.argsort(angles)
        polygon = np.cumsum(np.array(vectors)[order], axis=0)
        assert abs(_signed_area(piece.vertices)) == pytest.approx(abs(_signed_area(polygon)) * (s * kappa) ** 2, rel=1e-9)


def test_3d_prisms_against_hull_volumes(frame):
    project = tripod_frame(frame)
    analysis = analyse(project)
    state = analysis.states[0]
    s, kappa = 0.4, 3e-3
    view = minkowski_view(analysis, node_cells(analysis, state.id), mix=s, kappa=kappa)
    lengths = analysis.equilibrium.lengths
    for e, piece in enumerate(view.members):
        expected = (1 - s) * s**2 * kappa**2 * abs(state.forces[e]) * lengths[e]
        if expected == 0:
            continue
        assert ConvexHull(piece.vertices).volume == pytest.approx(expected, rel=1e-8)
    assert view.passed
    assert view.total == pytest.approx((1 - s) * s**2 * kappa**2 * float(np.abs(state.forces) @ lengths), rel=1e-8)


def test_3d_connected_view_from_a_fitted_polarity_diagram():
    # The polarity diagram fitted to the prestress: member prisms swept from the shared
    # dual polygons; volumes re-measured with scipy's ConvexHull.
    import dataclasses
    from pathlib import Path

    from sheets.model.loading import load_project
    from sheets.model.project import PolyhedralInput
    from sheets.reciprocal.polarity import project_polarity

    project = load_project(Path(__file__).with_name("cell_with_centre.toml"))
    project = dataclasses.replace(project, polyhedral=PolyhedralInput(find_tetrahedra=True))
    analysis = analyse(project)
    polar = project_polarity(analysis, "PS")
    assert polar.matches_state
    s, kappa = 0.5, 0.004
    view = minkowski_view(analysis, node_cells(analysis, "PS"), mix=s, kappa=kappa, polar=polar.diagram)
    assert view.layout == "connected"
    state = analysis.state("PS")
    lengths = analysis.equilibrium.lengths
    for e, piece in enumerate(view.members):
        expected = (1 - s) * s**2 * kappa**2 * abs(state.forces[e]) * lengths[e]
        assert ConvexHull(piece.vertices).volume == pytest.approx(expected, rel=1e-6)
    assert view.passed
