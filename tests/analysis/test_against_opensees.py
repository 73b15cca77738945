"""Statically indeterminate frames against an independent finite-element library.

Reference: OpenSeesPy (the Python interpreter of OpenSees, the Open System for
Earthquake Engineering Simulation), version given by ``OPENSEES_VERSION`` below
(3.7.1 when written), from the package registry and used only in tests and bench/.
Model: 'Truss' elements on uniaxialMaterial 'Elastic' (E), area A, linear static
analysis (LoadControl 1.0, Linear algorithm, FullGeneral system). Member forces,
reactions and displacements must agree to 1e-8 relative.
"""

from __future__ import annotations

from importlib.metadata import version

import numpy as np

from sheets.analysis import analyse

# A hard import: the reference must be there (.ci/run installs it and the system BLAS/LAPACK it
# needs), or the suite fails rather than quietly dropping the check.
import openseespy.opensees as ops  # noqa: E402
OPENSEES_VERSION = version("openseespy")
REL = 1e-8


def opensees_solve(coords, members, fixed, loads, e_modulus, areas):
    """Forces (m,), reactions (n, dim), displacements (n, dim) from OpenSees."""
    coords = np.asarray(coords, float)
    n, dim = coords.shape
    ops.wipe()
    ops.model("basic", "-ndm", dim, "-ndf", dim)
    for i, x in enumerate(coords):
        ops.node(i + 1, *map(float, x))
        if fixed[i].any():
            ops.fix(i + 1, *[int(f) for f in fixed[i]])
    ops.uniaxialMaterial("Elastic", 1, float(e_modulus))
    for e, (i, j) in enumerate(members):
        ops.element("Truss", e + 1, int(i) + 1, int(j) + 1, float(areas[e]), 1)
    ops.timeSeries("Linear", 1)
    ops.pattern("Plain", 1, 1)
    for i in range(n):
        if np.any(loads[i]):
            ops.load(i + 1, *map(float, loads[i]))
    ops.system("FullGeneral")
    ops.numberer("Plain")
    ops.constraints("Plain")
    ops.integrator("LoadControl", 1.0)
    ops.algorithm("Linear")
    ops.analysis("Static")
    assert ops.analyze(1) == 0
    ops.reactions()
    forces = np.array([ops.eleResponse(e + 1, "axialForce")[0] for e in range(len(members))])
    reactions = np.array([ops.nodeReaction(i + 1) for i in range(n)])
    displacements = np.array([ops.nodeDisp(i + 1) for i in range(n)])
    ops.wipe()
    return forces, reactions, displacements


def compare(frame, coords, members, fixed, loads, areas, e_modulus=205e9):
    project = frame(coords, members, fixed, {"load": loads}, ea=e_modulus * np.asarray(areas))
    analysis = analyse(project)
    state = analysis.state("load")
    assert analysis.determinacy.self_stress > 0  # the point of these tests: compatibility decides
    assert state.method.startswith("linear-elastic")
    forces, reactions, displacements = opensees_solve(coords, members, project.fixed, loads, e_modulus, areas)
    f_scale = np.abs(forces).max()
    np.testing.assert_allclose(state.forces, forces, rtol=0, atol=REL * f_scale)
    np.testing.assert_allclose(state.reactions, reactions, rtol=0, atol=REL * f_scale)
    np.testing.assert_allclose(state.displacements, displacements, rtol=0, atol=REL * np.abs(displacements).max())
    assert state.checks.passed
    return analysis


def test_opensees_version_is_named():
    assert OPENSEES_VERSION.split(".")[0] == "3"


def test_indeterminate_2d_braced_truss(frame):
    """Four-panel 2D truss, every panel cross-braced, three supports, unequal areas
    (s = 5 self-stress states). Reference: OpenSeesPy Truss/Elastic (see module docstring)."""
    panels, w, h = 4, 2.5, 2.0
    coords = [[i * w, 0.0] for i in range(panels + 1)] + [[i * w, h] for i in range(panels + 1)]
    top = panels + 1
    members = []
    for i in range(panels):
        members += [(i, i + 1), (top + i, top + i + 1), (i, top + i + 1), (i + 1, top + i)]
    members += [(i, top + i) for i in range(panels + 1)]
    rng = np.random.default_rng(7)
    areas = rng.uniform(5e-4, 4e-3, len(members))
    fixed = {0: "xy", panels: "y", panels // 2: "y"}
    loads = np.zeros((len(coords), 2))
    loads[top:, 1] = -35e3
    loads[top, 0] = 12e3
    loads[2, 1] = -60e3
    analysis = compare(frame, coords, members, fixed, loads, areas)
    assert analysis.determinacy.self_stress == 5  # Maxwell: m - 2n + fixed = 21 - 20 + 4 (4 second braces + 1 redundant support)
    assert analysis.determinacy.mechanisms == 0


def test_indeterminate_3d_space_truss(frame):
    """A small square-on-square double-layer grid (3 x 3 bays over 2 x 2), pinned at the
    four top corners, unequal areas, a vertical and a sideways load.
    Reference: OpenSeesPy Truss/Elastic (see module docstring)."""
    nx, a, depth = 3, 2.0, 1.5
    coords, top, bottom = [], {}, {}
    for i in range(nx + 1):
        for j in range(nx + 1):
            top[i, j] = len(coords)
            coords.append([i * a, j * a, depth])
    for i in range(nx):
        for j in range(nx):
            bottom[i, j] = len(coords)
            coords.append([(i + 0.5) * a, (j + 0.5) * a, 0.0])
    members = []
    for (i, j), k in top.items():
        if (i + 1, j) in top:
            members.append((k, top[i + 1, j]))
        if (i, j + 1) in top:
            members.append((k, top[i, j + 1]))
    for (i, j), k in bottom.items():
        if (i + 1, j) in bottom:
            members.append((k, bottom[i + 1, j]))
        if (i, j + 1) in bottom:
            members.append((k, bottom[i, j + 1]))
        for di in (0, 1):
            for dj in (0, 1):
                members.append((k, top[i + di, j + dj]))
    rng = np.random.default_rng(11)
    areas = rng.uniform(8e-4, 3e-3, len(members))
    fixed = {top[0, 0]: "xyz", top[nx, 0]: "yz", top[0, nx]: "xz", top[nx, nx]: "z"}
    loads = np.zeros((len(coords), 3))
    for k in top.values():
        loads[k, 2] = -20e3
    loads[top[1, 2]] += [9e3, -4e3, -15e3]
    analysis = compare(frame, coords, members, fixed, loads, areas)
    assert analysis.determinacy.mechanisms == 0
    assert analysis.determinacy.self_stress == 5  # Maxwell: m - 3n + fixed = 72 - 75 + 8
