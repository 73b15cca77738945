"""Per-node force cells (METHODS.md 6) on frames, checked against the frame itself.

Rankine (1864), "Principle of the equilibrium of polyhedral frames", Phil. Mag.
27 92; "Disjointed force polyhedra", Computer-Aided Design 99 (2018) 11-28.
Each face must be perpendicular to its member (normal computed here from the
node coordinates, not from the cell code) and as large as the member force;
areas and volumes are re-measured with scipy.spatial.ConvexHull.
"""

import dataclasses

import numpy as np
import pytest
from scipy.spatial import ConvexHull

from sheets.analysis import analyse
from sheets.model.project import Prestress
from sheets.reciprocal.cells import cells_for_forces, node_cells

from polyhedral_frames import prism, tripod_frame


def _direction(project, cell, part):
    """Unit vector from the cell's node along the member (independent of sheets.reciprocal)."""
    v = project.node_ids.index(cell.node)
    e = project.member_ids.index(part.id)
    i, j = project.ends[e]
    w = j if i == v else i
    d = project.coords[w] - project.coords[v]
    return d / np.linalg.norm(d)


def _check_cells(project, state, cells, tol=1e-6):
    for cell in cells.cells:
        assert cell.kind != "failed", cell.note
        for k, parts in enumerate(cell.parts):
            members = [p for p in parts if p.kind == "member"]
            expected = sum(abs(p.force) for p in parts)
            assert cell.sizes[k] == pytest.approx(expected, rel=tol)
            for p in members:
                # outward normal = sign(t) x direction along the member from the node
                assert np.linalg.norm(cell.normals[k] - np.sign(p.force) * _direction(project, cell, p)) < tol
            if cell.kind == "cell":
                loop = cell.vertices[list(cell.loops[k])]
                centre = loop.mean(axis=0)
                # measured normal of the face polygon (from its vertices)
                n = np.cross(loop[1] - loop[0], loop[2] - loop[0])
                n /= np.linalg.norm(n)
                assert np.linalg.norm(n - cell.normals[k]) < 1e-6
                assert np.all(np.abs((loop - centre) @ cell.normals[k]) < 1e-9 * np.ptp(cell.vertices, axis=0).max())
        if cell.kind == "cell":
            hull = ConvexHull(cell.vertices)
            assert hull.area == pytest.approx(cell.expected.sum(), rel=1e-6)
            assert hull.volume == pytest.approx(cell.volume, rel=1e-9)


def test_loaded_space_frame_cells_close(frame):
    project = tripod_frame(frame)
    analysis = analyse(project)
    state = analysis.states[0]
    cells = node_cells(analysis, state.id)
    assert cells.passed
    _check_cells(project, state, cells)
    # free nodes: closed cells; supports with one member: segments (member and reaction collinear)
    assert cells.cell("N4").kind == "cell" and cells.cell("N5").kind == "cell"
    # the external face of a loaded node stands for the load: area |p|
    c = cells.cell("N4")
    k = next(k for k, parts in enumerate(c.parts) if parts[0].kind == "external")
    assert c.sizes[k] == pytest.approx(np.linalg.norm([1e3, 2e3, -30e3]), rel=1e-9)


def test_planar_truss_in_space_gives_flat_polygons(frame):
    # A 2D truss drawn in the xz-plane of a 3D model: every node's forces are coplanar.
    coords = [[0, 0, 0], [2, 0, 0], [4, 0, 0], [1, 0, 1.5], [3, 0, 1.5]]
    members = [(0, 1), (1, 2), (0, 3), (3, 1), (1, 4), (4, 2), (3, 4)]
    fixed = {0: "xyz", 2: "yz", 1: "y", 3: "y", 4: "y"}
    project = frame(coords, members, fixed, {"P": {3: [0, 0, -10e3], 4: [2e3, 0, -5e3]}})
    analysis = analyse(project)
    cells = node_cells(analysis, "P")
    kinds = {c.kind for c in cells.cells}
    assert kinds <= {"polygon", "segment"}
    assert cells.passed
    for cell in cells.cells:
        if cell.kind == "polygon":
            # edges perpendicular to the members, lengths = forces; polygon closed (vertex loop)
            for k, (a, b) in enumerate(cell.loops):
                edge = cell.vertices[b] - cell.vertices[a]
                assert np.linalg.norm(edge) == pytest.approx(cell.expected[k], rel=1e-9)
                for p in cell.parts[k]:
                    if p.kind == "member":
                        assert abs(edge @ _direction(project, cell, p)) < 1e-9 * np.linalg.norm(edge)


def test_equal_normals_merge_and_zero_forces_drop():
    # Node 0 on a straight chord: member A (to the left) in tension, B (to the right) in
    # compression: outward normals sign(t) d are both -x, so one face of area |tA| + |tB|.
    coords = np.array([[0, 0, 0], [-1, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1.0], [0, -1, 0]])
    ends = np.array([[0, 1], [0, 2], [0, 3], [0, 4], [0, 5]])
    forces = np.array([3.0, -2.0, 1.0, 0.5, 0.0])
    # balance node 0 with an external force: sum t d + p = 0
    d = coords[ends[:, 1]] - coords[0]
    external = np.zeros((6, 3))
    external[0] = -(forces[:, None] * d).sum(axis=0)
    cells = cells_for_forces(tuple("ABCDEF"), ("A", "B", "C", "D", "E"), coords, ends, forces, external)
    c = cells[0]
    merged = [parts for parts in c.parts if len(parts) == 2]
    assert [sorted(p.id for p in parts) for parts in merged] == [["A", "B"]]
    k = c.parts.index(merged[0])
    assert c.expected[k] == pytest.approx(5.0)
    assert np.allclose(c.normals[k], [-1, 0, 0])
    assert c.zero_members == ("E",)


def test_tensegrity_prism_self_stress_at_150_degrees(frame):
    # Published: the three-strut prism has one self-stress state (and one infinitesimal
    # mechanism) exactly at a twist of 90 + 180/3 = 150 degrees; Tibert & Pellegrino (2003),
    # "Review of form-finding methods for tensegrity structures", Int. J. Space Struct.
    # 18(4) (after Connelly & Terrell).
    fixed = {0: "xyz", 1: "yz", 2: "z"}
    for twist, expected in ((150.0, 1), (140.0, 0), (165.0, 0)):
        coords, members, roles = prism(twist)
        project = frame(coords, members, fixed, {}, roles=roles)
        det = analyse(dataclasses.replace(project, cases=())).determinacy
        assert det.self_stress == expected, twist
    coords, members, roles = prism(150.0)
    project = frame(coords, members, fixed, {}, roles=roles, prestress=Prestress("PS", "feasible", level=5e3))
    analysis = analyse(project)
    state = analysis.state("PS")
    assert np.all(state.forces[:3] < 0) and np.all(state.forces[3:] > 0)
    cells = node_cells(analysis, "PS")
    assert cells.passed
    assert all(c.kind == "cell" for c in cells.cells)
    _check_cells(project, state, cells)
    # every node has four members and no external force: every cell is a tetrahedron
    assert all(len(c.vertices) == 4 for c in cells.cells)


def test_two_dimensional_frame_gives_force_polygons(frame):
    coords = [[0, 0], [3, 0], [6, 0], [1.5, 2], [4.5, 2]]
    members = [(0, 1), (1, 2), (0, 3), (3, 1), (1, 4), (4, 2), (3, 4)]
    project = frame(coords, members, {0: "xy", 2: "y"}, {"P": {3: [0, -10e3], 4: [0, -10e3], 1: [5e3, 0]}})
    analysis = analyse(project)
    cells = node_cells(analysis, "P")
    assert cells.passed
    for cell in cells.cells:
        assert cell.kind in ("polygon", "segment")
        if cell.kind == "polygon":
            # a closed convex polygon: its perimeter is the sum of the forces at the node
            edges = np.roll(cell.vertices, -1, axis=0) - cell.vertices
            assert np.linalg.norm(edges, axis=1).sum() == pytest.approx(cell.expected.sum(), rel=1e-9)
            assert cell.volume > 0  # counter-clockwise
