"""Statically determinate frames against closed-form hand solutions.

Each expected value comes from joint equilibrium or the method of sections
(Ritter's method of sections, any statics textbook; the formulas are written
out beside each check). Tension positive.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.analysis.analyse import self_weight_loads
from sheets.analysis.equilibrium import equilibrium_matrix
from sheets.model.project import STANDARD_GRAVITY

REL = 1e-10


def close(actual, expected, scale):
    assert abs(actual - expected) <= REL * scale, (actual, expected)


def test_equilibrium_matrix_columns_hold_minus_and_plus_unit_vector():
    # METHODS.md 1 (Pellegrino & Calladine 1986): column e = -u_e at the start node, +u_e at the end node.
    coords = np.array([[0.0, 0.0], [3.0, 4.0], [3.0, 0.0]])
    ends = np.array([[0, 1], [1, 2]])
    eq = equilibrium_matrix(coords, ends, np.zeros((3, 2), bool))
    a = eq.matrix.toarray()
    np.testing.assert_allclose(a[:, 0], [-0.6, -0.8, 0.6, 0.8, 0, 0], atol=1e-15)
    np.testing.assert_allclose(a[:, 1], [0, 0, 0, 1.0, 0, -1.0], atol=1e-15)
    np.testing.assert_allclose(eq.lengths, [5.0, 4.0])
    # A tension pulls each end node towards the other: the load that balances
    # a unit tension at the start node points away from the end node.
    t = np.array([1.0, 0.0])
    np.testing.assert_allclose((a @ t)[:2], [-0.6, -0.8])


@pytest.mark.parametrize("half_span, rise", [(4.0, 3.0), (6.0, 1.5), (2.0, 5.0)])
def test_symmetric_triangle_under_apex_load(frame, half_span, rise):
    # Symmetric triangular truss, pin at A, roller at B, load P down at the apex C.
    # Joint C: 2 C_r sin(a) = P  -> rafters   t = -P / (2 sin a)
    # Joint A: T = C_r cos(a)    -> tie (bottom chord) t = +P / (2 tan a)
    # Reactions P/2 up at each support (symmetry).
    p = 120e3
    a = math.atan2(rise, half_span)
    project = frame(
        [[0, 0], [2 * half_span, 0], [half_span, rise]],
        [(0, 2), (2, 1), (0, 1)],
        {0: "xy", 1: "y"},
        {"apex": {2: [0.0, -p]}},
    )
    state = analyse(project).state("apex")
    close(state.forces[0], -p / (2 * math.sin(a)), p)
    close(state.forces[1], -p / (2 * math.sin(a)), p)
    close(state.forces[2], p / (2 * math.tan(a)), p)
    np.testing.assert_allclose(state.reactions[[0, 1], 1], [p / 2, p / 2], rtol=REL)
    assert abs(state.reactions[0, 0]) <= REL * p
    assert state.method.startswith("equilibrium")
    assert state.checks.passed


def pratt(panels: int, width: float, height: float):
    """Flat Pratt truss: bottom nodes L0..Ln, top nodes U1..U(n-1), inclined end posts,
    diagonals running down towards mid-span. Returns coords, members, names."""
    coords, names = [], []
    for i in range(panels + 1):
        coords.append([i * width, 0.0])
        names.append(f"L{i}")
    for i in range(1, panels):
        coords.append([i * width, height])
        names.append(f"U{i}")
    node = {nm: k for k, nm in enumerate(names)}
    members = []
    labels = []

    def add(a, b):
        members.append((node[a], node[b]))
        labels.append(f"{a}{b}")

    for i in range(panels):
        add(f"L{i}", f"L{i + 1}")
    for i in range(1, panels - 1):
        add(f"U{i}", f"U{i + 1}")
    for i in range(1, panels):
        add(f"U{i}", f"L{i}")
    add("L0", "U1")
    add(f"U{panels - 1}", f"L{panels}")
    half = panels // 2
    for i in range(1, half):
        add(f"U{i}", f"L{i + 1}")  # left half
    for i in range(half + 1, panels):
        add(f"U{i}", f"L{i - 1}")  # right half, mirrored
    return np.array(coords), members, labels, node


def test_pratt_truss_by_method_of_sections(frame):
    # Pratt truss, 6 panels of width w, depth h, load P at every inner bottom node,
    # pin at L0 and roller at L6: reactions R = 5P/2 (symmetry).
    # Beam analogy (method of sections): M(x_j) = P w (5j/2 - j(j-1)/2), shear in panel i: V_i = R - iP.
    #  - bottom chord L_i L_(i+1): moments about U_i (about U1 for panel 0): t = +M(x_max(i,1)) / h
    #  - top chord U_i U_(i+1):   moments about L_(i+1):                 t = -M(x_(i+1)) / h
    #  - diagonal U_i L_(i+1):    vertical forces on the cut:             t = +V_i d / h
    #  - end post L0 U1:          joint L0:                               t = -R d / h
    #  - vertical U1 L1:          joint U1 (a hanger carrying the load): t = +P
    #  - vertical U_i L_i, i >= 2 (left half): joint U_i:                 t = -V_i
    #  - mid-span vertical: joint U3 has no diagonal:                     t = 0
    panels, w, h, p = 6, 3.0, 4.0, 80e3
    d = math.hypot(w, h)
    coords, members, labels, node = pratt(panels, w, h)
    loads = {node[f"L{i}"]: [0.0, -p] for i in range(1, panels)}
    project = frame(coords, members, {node["L0"]: "xy", node[f"L{panels}"]: "y"}, {"panel": loads})
    state = analyse(project).state("panel")
    force = dict(zip(labels, state.forces))
    r = (panels - 1) * p / 2

    def moment(j):
        return p * w * ((panels - 1) * j / 2 - j * (j - 1) / 2)

    def shear(i):
        return r - i * p

    expected = {
        "L0L1": moment(1) / h,
        "L1L2": moment(1) / h,
        "L2L3": moment(2) / h,
        "U1U2": -moment(2) / h,
        "U2U3": -moment(3) / h,
        "U1L2": shear(1) * d / h,
        "U2L3": shear(2) * d / h,
        "L0U1": -r * d / h,
        "U1L1": p,
        "U2L2": -shear(2),
        "U3L3": 0.0,
    }
    mirror = {"L0L1": "L5L6", "L1L2": "L4L5", "L2L3": "L3L4", "U1U2": "U4U5", "U2U3": "U3U4",
              "U1L2": "U5L4", "U2L3": "U4L3", "L0U1": "U5L6", "U1L1": "U5L5", "U2L2": "U4L4"}
    for label, value in expected.items():
        close(force[label], value, p)
        if label in mirror:
            close(force[mirror[label]], value, p)
    assert state.checks.passed
    assert analyse(project).determinacy.self_stress == 0
    assert analyse(project).determinacy.mechanisms == 0


@pytest.mark.parametrize("radius, height", [(2.0, 3.0), (4.0, 1.0)])
def test_tripod_under_vertical_load(frame, radius, height):
    # Symmetric tripod, three legs from the apex to pinned feet on a circle of
    # radius r, apex height H, leg angle b from the vertical: cos b = H / L.
    # Vertical equilibrium of the apex: 3 t cos b = -P -> every leg t = -P / (3 cos b).
    p = 50e3
    feet = [[radius * math.cos(k * 2 * math.pi / 3), radius * math.sin(k * 2 * math.pi / 3), 0.0] for k in range(3)]
    project = frame(feet + [[0.0, 0.0, height]], [(3, 0), (3, 1), (3, 2)], {0: "xyz", 1: "xyz", 2: "xyz"},
                    {"down": {3: [0.0, 0.0, -p]}})
    state = analyse(project).state("down")
    cos_b = height / math.hypot(radius, height)
    for t in state.forces:
        close(t, -p / (3 * cos_b), p)
    # Each foot: the leg pushes it down by P/3 and outwards by P tan(b)/3, so the
    # reaction is P/3 up and P tan(b)/3 towards the centre.
    tan_b = radius / height
    for k, foot in enumerate(feet):
        close(state.reactions[k, 2], p / 3, p)
        inward = -np.array(foot[:2]) / radius
        close(float(state.reactions[k, :2] @ inward), p * tan_b / 3, p)


def test_self_weight_half_to_each_end(frame):
    # Self-weight of member e is rho g A L_e, carried half by each end node (common practice
    # for pin-jointed frames). Triangle truss: the apex receives half of each rafter,
    # W = rho g A L_r in all, so the tie carries W / (2 tan a) and the supports the whole weight.
    rho, area, half_span, rise = 7850.0, 2.5e-3, 4.0, 3.0
    project = frame([[0, 0], [2 * half_span, 0], [half_span, rise]], [(0, 2), (2, 1), (0, 1)],
                    {0: "xy", 1: "y"}, {"dead": {}}, area=area, density=rho, self_weight=("dead",))
    rafter = math.hypot(half_span, rise)
    per_metre = rho * STANDARD_GRAVITY * area
    loads = self_weight_loads(project, project.cases[0])
    close(loads[2, 1], -per_metre * rafter, per_metre)  # two half rafters
    close(loads[0, 1], -per_metre * (rafter + 2 * half_span) / 2, per_metre)
    assert np.all(loads[:, 0] == 0)
    state = analyse(project).state("dead")
    a = math.atan2(rise, half_span)
    close(state.forces[2], per_metre * rafter / (2 * math.tan(a)), per_metre * rafter)
    close(state.reactions[:, 1].sum(), per_metre * (2 * rafter + 2 * half_span), per_metre)


def test_self_weight_acts_along_minus_vertical_axis_in_3d(frame):
    # The tripod again, under its own weight only: the apex receives half of each leg,
    # W = 3 rho g A L / 2, so each leg carries the apex share -W / (3 cos b).
    rho, area, r, hgt = 2700.0, 1.0e-3, 2.0, 3.0
    feet = [[r * math.cos(k * 2 * math.pi / 3), r * math.sin(k * 2 * math.pi / 3), 0.0] for k in range(3)]
    project = frame(feet + [[0.0, 0.0, hgt]], [(3, 0), (3, 1), (3, 2)], {0: "xyz", 1: "xyz", 2: "xyz"},
                    {"dead": {}}, area=area, density=rho, self_weight=("dead",))
    leg = math.hypot(r, hgt)
    w_apex = 3 * rho * STANDARD_GRAVITY * area * leg / 2
    state = analyse(project).state("dead")
    for t in state.forces:
        close(t, -w_apex / (3 * (hgt / leg)), w_apex)
    close(state.loads[3, 2], -w_apex, w_apex)


def test_stiffness_method_on_a_determinate_frame_gives_the_same_forces(frame):
    # On a statically determinate frame compatibility cannot change the forces: the
    # method of sections above must come out of the stiffness method too ([analysis] method = "elastic").
    from sheets.model.project import AnalysisOptions

    coords, members, labels, node = pratt(6, 3.0, 4.0)
    loads = {node[f"L{i}"]: [0.0, -80e3] for i in range(1, 6)}
    fixed = {node["L0"]: "xy", node["L6"]: "y"}
    by_equilibrium = analyse(frame(coords, members, fixed, {"panel": loads})).state("panel")
    by_stiffness = analyse(frame(coords, members, fixed, {"panel": loads}, options=AnalysisOptions(method="elastic"))).state("panel")
    assert by_stiffness.method != by_equilibrium.method
    np.testing.assert_allclose(by_stiffness.forces, by_equilibrium.forces, rtol=0, atol=1e-9 * 80e3)
    np.testing.assert_allclose(by_stiffness.displacements, by_equilibrium.displacements, rtol=1e-9, atol=1e-15)
