"""Self-stress states of frameworks with a known answer, and prestress from them.

Counts from the rank of the equilibrium matrix: Pellegrino & Calladine (1986),
"Matrix analysis of statically and kinematically indeterminate frameworks",
Int. J. Solids Struct. 22(4) 409-428. Tensegrity prism: Tibert & Pellegrino (2003),
"Review of form-finding methods for tensegrity structures", Int. J. Space Struct.
18(4) 209-223; Connelly & Terrell (1995), "Globally rigid symmetric tensegrities",
Structural Topology 21 59-78 (both from memory): the 3-strut prism has a
self-stress only at the twist alpha = 90 + 180/3 = 150 degrees.
"""

from __future__ import annotations

import math
from itertools import combinations

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.analysis.determinacy import determinacy
from sheets.analysis.equilibrium import equilibrium_matrix
from sheets.errors import ProjectError
from sheets.model.project import Prestress

TOL = 1e-8


def counts(coords, members, fixed=None):
    coords = np.asarray(coords, float)
    fixed = np.zeros(coords.shape, bool) if fixed is None else fixed
    eq = equilibrium_matrix(coords, np.asarray(members), fixed)
    return eq, determinacy(eq, TOL, 10_000)


# -- tetrahedron with one interior node joined to its four corners ---------------

REGULAR_TET = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]], float) / math.sqrt(3)  # circumradius 1
OUTER = list(combinations(range(4), 2))
INNER = [(4, k) for k in range(4)]


@pytest.mark.parametrize("inside", [[0.0, 0.0, 0.0], [0.2, -0.1, 0.15], [-0.3, -0.3, 0.25]])
def test_tetrahedron_with_interior_node_unsupported(inside):
    # 5 nodes, 10 members, no supports: Maxwell m - 3n = -5 = s - k. The tetrahedron is rigid
    # (6 edges on 4 nodes), the interior node needs 3 of its 4 members: s = 1; k = 6 rigid-body motions.
    eq, det = counts(np.vstack([REGULAR_TET, inside]), OUTER + INNER)
    assert (det.self_stress, det.mechanisms, det.maxwell) == (1, 6, -5)
    s = det.self_stress_basis[:, 0]
    a = eq.matrix.toarray()
    assert np.abs(a @ s).max() <= 1e-12 * np.abs(s).max()  # A S = 0: equilibrium with no load
    outer, inner = s[:6], s[6:]
    # Signs: the outer edges all of one sign, the inner members all of the other (interior point).
    assert np.all(np.sign(outer) == np.sign(outer[0])) and np.all(np.sign(inner) == -np.sign(outer[0]))
    # The six rigid-body motions lie in the mechanism space: translations and rotations give A^T v = 0.
    x = eq.matrix.shape[0] // 3
    coords = np.vstack([REGULAR_TET, inside])
    rigid = [np.tile(np.eye(3)[k], x) for k in range(3)]
    rigid += [np.cross(np.eye(3)[k], coords).ravel() for k in range(3)]
    modes = det.mechanism_modes
    for v in rigid:
        v = v / np.linalg.norm(v)
        assert np.linalg.norm(v - modes @ (modes.T @ v)) <= 1e-10


def test_tetrahedron_with_centroid_node_force_ratio():
    # Centroid node, circumradius R = 1, edge L = sqrt(8/3). Joint equilibrium at a corner v_i:
    # t_edge sum_j (v_j - v_i)/L - t_in v_i = 0 and sum_j (v_j - v_i) = -4 v_i  =>  t_in = -4 t_edge / L = -sqrt(6) t_edge.
    _, det = counts(np.vstack([REGULAR_TET, [0, 0, 0]]), OUTER + INNER)
    s = det.self_stress_basis[:, 0]
    np.testing.assert_allclose(s[6:] / s[:6].mean(), -math.sqrt(6), rtol=1e-12)
    np.testing.assert_allclose(s[:6], s[0], rtol=1e-12)


def test_tetrahedron_with_interior_node_supported_statically_determinately():
    # Six support conditions that stop the rigid-body motions and nothing more (3 at a corner,
    # 2 at a second, 1 at a third, normal to the plane of the three): k = 0, s stays 1,
    # Maxwell m - 3n + fixed = 10 - 15 + 6 = 1 = s - k.
    coords = np.array([[0, 0, 0], [4, 0, 0], [1, 3, 0], [1.5, 1.2, 3.5], [1.4, 1.1, 0.9]], float)
    fixed = np.zeros((5, 3), bool)
    fixed[0] = True
    fixed[1, [1, 2]] = True
    fixed[2, 2] = True
    eq, det = counts(coords, OUTER + INNER, fixed)
    assert (det.self_stress, det.mechanisms, det.maxwell, det.rank) == (1, 0, 1, 9)
    s = det.self_stress_basis[:, 0]
    assert np.abs(eq.matrix @ s).max() <= 1e-12 * np.abs(s).max()  # also no reactions: a true self-stress
    assert np.all(np.sign(s[:6]) == -np.sign(s[6]))
    assert np.all(np.sign(s[6:]) == np.sign(s[6]))


# -- the 3-strut tensegrity prism ------------------------------------------------

def prism(alpha_deg: float, radius: float = 1.0, height: float = 1.2):
    """Bottom triangle b_i at angles 120 i, top triangle t_i at 120 i + alpha, height h.
    Struts b_i-t_i (they span the twist alpha), cables: both triangles and the
    'vertical' cables b_i-t_(i-1). Returns coords, members, roles."""
    a = math.radians(alpha_deg)
    coords = [[radius * math.cos(2 * math.pi * i / 3), radius * math.sin(2 * math.pi * i / 3), 0.0] for i in range(3)]
    coords += [[radius * math.cos(2 * math.pi * i / 3 + a), radius * math.sin(2 * math.pi * i / 3 + a), height] for i in range(3)]
    cables = [(i, (i + 1) % 3) for i in range(3)] + [(3 + i, 3 + (i + 1) % 3) for i in range(3)]
    cables += [(i, 3 + (i - 1) % 3) for i in range(3)]
    struts = [(i, 3 + i) for i in range(3)]
    return np.array(coords), cables + struts, ("cable",) * 9 + ("strut",) * 3


@pytest.mark.parametrize("height", [0.6, 1.2, 2.5])
def test_prism_has_one_self_stress_at_150_degrees(height):
    coords, members, _ = prism(150.0, height=height)
    eq, det = counts(coords, members)
    # 6 nodes, 12 members: m - 3n = -6 = s - k; at 150 degrees s = 1, so k = 7
    # (6 rigid-body motions and the infinitesimal mechanism the prestress stiffens).
    assert (det.self_stress, det.mechanisms) == (1, 7)
    s = det.self_stress_basis[:, 0]
    s = s * np.sign(s[0])
    assert np.abs(eq.matrix @ s).max() <= 1e-12
    assert np.all(s[:9] > 0) and np.all(s[9:] < 0)  # cables in tension with struts in compression


@pytest.mark.parametrize("alpha", [120.0, 140.0, 149.0, 151.0, 160.0, 180.0, -150.0])
def test_prism_has_no_self_stress_at_another_twist(alpha):
    # -150 is the mirror twist: it needs the mirror connectivity (b_i-t_(i+1)) to be prestressable.
    coords, members, _ = prism(alpha)
    _, det = counts(coords, members)
    assert (det.self_stress, det.mechanisms) == (0, 6)


def test_mirror_prism_is_prestressable_too():
    coords, members, _ = prism(150.0)
    mirrored = coords * [1, -1, 1]
    _, det = counts(mirrored, members)
    assert det.self_stress == 1


def prism_project(frame, alpha, prestress, fixed=None):
    coords, members, roles = prism(alpha)
    if fixed is None:  # six conditions that stop the rigid-body motions only
        fixed = {0: "xyz", 1: "yz", 2: "z"}
    return frame(coords, members, fixed, {"none": {}}, roles=roles, ea=1.0e7, prestress=prestress)


def test_feasible_prestress_of_the_prism(frame):
    # Linear programme (METHODS.md 3): cables >= level, struts <= -level.
    level = 5.0e3
    analysis = analyse(prism_project(frame, 150.0, Prestress("pre", "feasible", level=level)))
    assert (analysis.determinacy.self_stress, analysis.determinacy.mechanisms) == (1, 1)
    state = analysis.state("pre")
    t = state.forces
    assert np.all(t[:9] >= level * (1 - 1e-9)) and np.all(t[9:] <= -level * (1 - 1e-9))
    assert min(t[:9].min(), -t[9:].max()) <= level * (1 + 1e-9)  # least load path: the level binds
    assert np.abs(state.reactions).max() <= 1e-9 * level  # a self-stress needs no support
    assert state.checks.passed


def test_scaled_prestress_of_the_prism(frame):
    analysis = analyse(prism_project(frame, 150.0, Prestress("pre", "scaled", member="M10", force=-12.0e3)))
    t = analysis.state("pre").forces
    assert t[9] == pytest.approx(-12.0e3, rel=1e-12)
    assert np.all(t[:9] > 0) and np.all(t[9:] < 0)
    # All three struts carry the same force, as do the six triangle cables (3-fold symmetry).
    np.testing.assert_allclose(t[9:], -12.0e3, rtol=1e-9)
    np.testing.assert_allclose(t[:6], t[0], rtol=1e-9)


def test_prestress_refused_where_no_self_stress(frame):
    with pytest.raises(ProjectError) as info:
        analyse(prism_project(frame, 140.0, Prestress("pre", "feasible", level=1.0e3)))
    assert "no self-stress" in str(info.value)
    assert info.value.problems[0].where.startswith("prestress")
