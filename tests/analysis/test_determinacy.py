"""Determinacy counts, Maxwell's rule, and the refusal of loads a mechanism cannot carry.

Maxwell's rule as extended by Calladine (1978), "Buckminster Fuller's 'tensegrity'
structures and Clerk Maxwell's rules for the construction of stiff frames",
Int. J. Solids Struct. 14 161-172: m - d n + n_fixed = s - k, with s and k from the
rank of A (Pellegrino & Calladine 1986, Int. J. Solids Struct. 22(4) 409-428).
"""

from __future__ import annotations

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.errors import EXIT_MECHANISM, MechanismError

# Two square panels side by side (nodes 0,1,2 bottom; 3,4,5 top), the left one braced
# twice, the right one not at all; pin at node 0, roller (y) at node 2.
TWO_PANELS = np.array([[0, 0], [1, 0], [2, 0], [0, 1], [1, 1], [2, 1]], float)
TWO_PANEL_MEMBERS = [(0, 1), (1, 2), (3, 4), (4, 5), (0, 3), (1, 4), (2, 5), (0, 4), (1, 3)]
TWO_PANEL_SUPPORTS = {0: "xy", 2: "y"}


def test_maxwell_count_zero_hides_one_self_stress_and_one_mechanism(frame):
    # Calladine (1978): Maxwell's count m - 2n + fixed = 9 - 12 + 3 = 0 looks "just stiff",
    # yet the doubly braced panel has a self-stress (s = 1) and the other panel, a four-bar
    # linkage driven by the rotation of the braced panel about the pin, a mechanism (k = 1).
    det = analyse(frame(TWO_PANELS, TWO_PANEL_MEMBERS, TWO_PANEL_SUPPORTS, {"v": {5: [0, -1e3]}}, ea=1e8)).determinacy
    assert det.maxwell == len(TWO_PANEL_MEMBERS) - 2 * 6 + 3 == 0
    assert (det.self_stress, det.mechanisms, det.rank) == (1, 1, 8)
    assert det.maxwell == det.self_stress - det.mechanisms
    assert "1 self-stress state" in det.classification and "1 mechanism" in det.classification
    # The mechanism, by hand (small rotation w of the braced panel about node 0): node 1 moves (0, w),
    # node 3 (-w, 0), node 4 (-w, w); node 5 follows node 4 in x (member 4-5) and node 2 in y (0);
    # node 2 is held by the roller and member 1-2.
    free = np.ones(12, bool)
    free[[0, 1, 5]] = False
    v = np.zeros(12)
    v[[3, 6, 8, 9, 10]] = [1, -1, -1, 1, -1]
    v = v[free] / np.linalg.norm(v)
    modes = det.mechanism_modes
    assert abs(abs(float(modes[:, 0] @ v)) - 1) <= 1e-12


def test_load_along_a_mechanism_is_refused_with_nodes_and_directions(frame):
    project = frame(TWO_PANELS, TWO_PANEL_MEMBERS, TWO_PANEL_SUPPORTS, {"wind": {5: [2e3, 0.0]}}, ea=1e8)
    with pytest.raises(MechanismError) as info:
        analyse(project)
    error = info.value
    assert error.exit_code == EXIT_MECHANISM == 3
    assert error.state_id == "wind"
    named = {(node, axis) for node, axis, _ in error.motions}
    # The hand mode above: N2 y, N4 x, N5 x, N5 y, N6 x, all of equal size.
    assert named == {("N2", "y"), ("N4", "x"), ("N5", "x"), ("N5", "y"), ("N6", "x")}
    assert all(abs(abs(v) - 1) <= 1e-9 for _, _, v in error.motions)
    assert "N6" in str(error) and "mechanism" in str(error)


def test_load_orthogonal_to_the_mechanism_is_carried(frame):
    # A vertical load at node 5 does no work in the mechanism (node 5 moves only in x):
    # it goes straight down member 2-5 into the roller: t(2-5) = -P, nothing else but the roller.
    p = 3e3
    state = analyse(frame(TWO_PANELS, TWO_PANEL_MEMBERS, TWO_PANEL_SUPPORTS, {"v": {5: [0, -p]}}, ea=1e8)).state("v")
    assert state.forces[6] == pytest.approx(-p, rel=1e-10)
    others = np.delete(state.forces, 6)
    assert np.abs(others).max() <= 1e-10 * p
    assert state.reactions[2, 1] == pytest.approx(p, rel=1e-10)
    assert state.checks.passed


def test_statically_determinate_frame_with_a_mechanism(frame):
    # A portal of three bars pinned at both feet (s = 0, k = 1: the sway). Vertical loads P1, P2 on
    # the top nodes go straight down the posts (joint equilibrium: beam force 0, posts -P1, -P2);
    # a horizontal load is refused.
    coords = [[0, 0], [4, 0], [0, 3], [4, 3]]
    members = [(0, 2), (2, 3), (1, 3)]
    project = frame(coords, members, {0: "xy", 1: "xy"}, {"gravity": {2: [0, -7e3], 3: [0, -4e3]}})
    analysis = analyse(project)
    assert (analysis.determinacy.self_stress, analysis.determinacy.mechanisms) == (0, 1)
    np.testing.assert_allclose(analysis.state("gravity").forces, [-7e3, 0, -4e3], atol=1e-9)
    with pytest.raises(MechanismError) as info:
        analyse(frame(coords, members, {0: "xy", 1: "xy"}, {"sway": {2: [1e3, 0]}}))
    assert {(n, a) for n, a, _ in info.value.motions} == {("N3", "x"), ("N4", "x")}


def test_unsupported_frame_refuses_an_unbalanced_load(frame):
    # No supports: the three rigid-body motions of the plane are mechanisms; a load with a
    # resultant cannot be carried, a self-equilibrated one can.
    coords = [[0, 0], [3, 0], [0, 4]]
    members = [(0, 1), (1, 2), (2, 0)]
    det = analyse(frame(coords, members, {}, {"pair": {0: [-1e3, 0], 1: [1e3, 0]}})).determinacy
    assert (det.self_stress, det.mechanisms, det.maxwell) == (0, 3, -3)
    with pytest.raises(MechanismError):
        analyse(frame(coords, members, {}, {"push": {1: [1e3, 0]}}))


def test_maxwell_counts_by_hand(frame):
    # Simple triangle truss: m - 2n + fixed = 3 - 6 + 3 = 0, s = k = 0 (statically determinate).
    det = analyse(frame([[0, 0], [4, 0], [2, 2]], [(0, 1), (1, 2), (2, 0)], {0: "xy", 1: "y"}, {"p": {2: [0, -1]}})).determinacy
    assert (det.maxwell, det.self_stress, det.mechanisms, det.n_fixed, det.n_free) == (0, 0, 0, 3, 3)
    assert det.classification == "statically determinate, kinematically determinate"
    assert det.maxwell_holds
    # A cube's 12 edges on 8 nodes, pinned by 6 conditions: 12 - 24 + 6 = -6 = s - k with s = 0, k = 6.
    cube = np.array([[i, j, k] for i in (0, 1) for j in (0, 1) for k in (0, 1)], float)
    edges = [(a, b) for a in range(8) for b in range(a + 1, 8) if np.abs(cube[a] - cube[b]).sum() == 1]
    det = analyse(frame(cube, edges, {0: "xyz", 4: "yz", 2: "z"}, {"none": {}})).determinacy
    assert (det.maxwell, det.self_stress, det.mechanisms) == (-6, 0, 6)


def test_conditioning_is_reported(frame):
    # A flat two-bar frame (a shallow 'V') becomes ill conditioned as it flattens; the smallest
    # kept singular value relative to the largest goes like the slope angle: 2 sin(a) / 2 cos(a).
    for rise in (1.0, 0.1, 0.01):
        det = analyse(frame([[0, 0], [2, -rise], [4, 0]], [(0, 1), (1, 2)], {0: "xy", 2: "xy"}, {"p": {1: [0, -1]}})).determinacy
        # A_free = [[cos a, -cos a], [-sin a, -sin a]] up to signs: singular values sqrt2 cos a, sqrt2 sin a.
        angle = np.arctan2(rise, 2.0)
        assert det.conditioning == pytest.approx(np.tan(angle), rel=1e-12)


def test_the_command_exits_with_3_and_names_the_motion(tmp_path, capsys):
    # The same two panels as a project file with the user's own ids; the sideways load at the
    # top right corner pushes the unbraced panel along its mechanism.
    from two_panels import project

    path = project(tmp_path, more='\n[cases.wind]\nloads = { TR = [2, 0] }\n')
    from sheets.cli import main

    assert main(["solve", str(path), "--quiet"]) == 3
    said = capsys.readouterr().err
    assert "TR +x" in said or "TR -x" in said
    assert "mechanism" in said


def test_null_space_residual_verifies_the_bases_and_catches_a_wrong_one():
    """The counts s and k rest on the computed null bases: A^T M = 0 and A S = 0
    (Pellegrino & Calladine 1986, eqs. for the four subspaces of A)."""
    import numpy as np

    from sheets.analysis.determinacy import determinacy, null_residual
    from sheets.analysis.equilibrium import equilibrium_matrix

    # unbraced square on two supports: one mechanism (sway); a braced square with both
    # diagonals: one self-stress state
    coords = np.array([[0.0, 0.0], [4.0, 0.0], [4.0, 3.0], [0.0, 3.0]])
    fixed = np.array([[True, True], [False, True], [False, False], [False, False]])
    for ends in ([[0, 1], [1, 2], [2, 3], [3, 0]], [[0, 1], [1, 2], [2, 3], [3, 0], [0, 2], [1, 3]]):
        eq = equilibrium_matrix(coords, np.array(ends), fixed)
        det = determinacy(eq, 1e-8, 500)
        assert det.null_residual < 1e-14 and det.bases_verified
        wrong = np.roll(np.eye(eq.free_matrix.shape[0]), 1, axis=1)[:, : max(det.mechanisms, 1)]
        assert null_residual(eq.free_matrix, wrong, None, det.largest_singular) > 1e-3
