"""The two determinacy routes agree on mid-size generated frames.

Dense route: full SVD of A_free. Sparse route: shift-invert Lanczos on A A^T with
deflation (sheets/analysis/determinacy.py). Both must give the same rank, the same
mechanism and self-stress subspaces (principal angles, Golub & Van Loan, "Matrix
Computations", section on subspace angles; from memory) and the same member forces.
Frames with many repeated zero singular values (many mechanisms, rigid-body
motions) are the hard case for a single Lanczos run.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial import Delaunay

from sheets.analysis import analyse
from sheets.analysis.determinacy import determinacy, self_stress_basis
from sheets.analysis.equilibrium import equilibrium_matrix
from sheets.model.project import AnalysisOptions

TOL = 1e-8


def grid_2d(nx, ny, braced_every=1, double_every=0, seed=0):
    """Square grid of bars; panel (i, j) gets a diagonal when (i + j) % braced_every == 0 and
    a second one when double_every and (i + 2j) % double_every == 0."""
    index = lambda i, j: i * (ny + 1) + j  # noqa: E731
    coords = np.array([(i, j) for i in range(nx + 1) for j in range(ny + 1)], float)
    coords += np.random.default_rng(seed).uniform(-0.1, 0.1, coords.shape)
    members = []
    for i in range(nx + 1):
        for j in range(ny + 1):
            if i < nx:
                members.append((index(i, j), index(i + 1, j)))
            if j < ny:
                members.append((index(i, j), index(i, j + 1)))
            if i < nx and j < ny:
                if braced_every and (i + j) % braced_every == 0:
                    members.append((index(i, j), index(i + 1, j + 1)))
                if double_every and (i + 2 * j) % double_every == 0:
                    members.append((index(i + 1, j), index(i, j + 1)))
    fixed = np.zeros(coords.shape, bool)
    fixed[index(0, 0)] = True
    fixed[index(nx, 0), 1] = True
    return coords, np.array(members), fixed


def tetrahedral_block(nx, ny, nz, loose=0, seed=0):
    """Delaunay tetrahedra of a jittered lattice (rigid, highly redundant). ``loose`` nodes keep
    only two of their members: each such node can swing about the line of its two bars,
    one mechanism apiece."""
    rng = np.random.default_rng(seed)
    coords = np.array([(i, j, k) for i in range(nx + 1) for j in range(ny + 1) for k in range(nz + 1)], float)
    coords += rng.uniform(-0.15, 0.15, coords.shape)
    edges = set()
    for simplex in Delaunay(coords).simplices:
        for a in range(4):
            for b in range(a + 1, 4):
                edges.add((min(simplex[a], simplex[b]), max(simplex[a], simplex[b])))
    members = np.array(sorted(edges))
    # nodes at odd lattice points are never joined to one another, so stripping one leaves the others alone
    odd = np.flatnonzero(np.all(np.round(coords) % 2 == 1, axis=1))
    for node in rng.choice(odd, loose, replace=False):
        at = np.flatnonzero((members == node).any(axis=1))
        members = np.delete(members, at[2:], axis=0)
    return coords, members


def same_subspace(a: np.ndarray, b: np.ndarray, tol: float = 1e-7) -> bool:
    """Orthonormal bases of the same subspace: every principal angle ~ 0 (cosines ~ 1)."""
    if a.shape[1] != b.shape[1]:
        return False
    if a.shape[1] == 0:
        return True
    cosines = np.linalg.svd(a.T @ b, compute_uv=False)
    return bool(np.all(cosines >= 1 - tol))


def both_routes(coords, members, fixed):
    eq = equilibrium_matrix(coords, members, fixed)
    dense = determinacy(eq, TOL, dense_limit=10**9)
    sparse = determinacy(eq, TOL, dense_limit=0)
    assert dense.route == "dense SVD" and sparse.route == "sparse shift-invert"
    return eq, dense, sparse


def assert_routes_agree(eq, dense, sparse):
    assert (sparse.rank, sparse.self_stress, sparse.mechanisms) == (dense.rank, dense.self_stress, dense.mechanisms)
    assert sparse.largest_singular == pytest.approx(dense.largest_singular, rel=1e-6)
    assert sparse.smallest_kept_singular == pytest.approx(dense.smallest_kept_singular, rel=1e-6)
    assert same_subspace(dense.mechanism_modes, sparse.mechanism_modes)
    a_free = eq.free_matrix
    # Each basis really is null (not just the same size): A^T M = 0, A S = 0.
    assert np.abs(a_free.T @ sparse.mechanism_modes).max(initial=0) <= 1e-9 * dense.largest_singular
    if dense.self_stress <= 300:  # the sparse basis of hundreds of states is slow: kept for prestress only
        basis = self_stress_basis(a_free, sparse)
        assert same_subspace(dense.self_stress_basis, basis)
        assert np.abs(a_free @ basis).max(initial=0) <= 1e-9 * dense.largest_singular


CASES_2D = {
    # name: (grid, expected (s, k)) - mechanisms from unbraced panels, self-stress from doubly braced ones
    "braced, a few doubles": (dict(nx=12, ny=10, braced_every=1, double_every=7), None),
    "every other panel braced": (dict(nx=14, ny=12, braced_every=2, double_every=0), None),
    "no braces (many equal zeros)": (dict(nx=16, ny=14, braced_every=0, double_every=0), (0, 16 + 14 - 1)),
    "braces and many mechanisms": (dict(nx=20, ny=16, braced_every=3, double_every=5), None),
}


@pytest.mark.parametrize("name", list(CASES_2D))
def test_routes_agree_on_2d_grids(name):
    grid, expected = CASES_2D[name]
    coords, members, fixed = grid_2d(**grid)
    eq, dense, sparse = both_routes(coords, members, fixed)
    if expected:  # an unbraced nx x ny grid keeps one shear mechanism per row and column: nx + ny - 1
        assert (dense.self_stress, dense.mechanisms) == expected
    assert_routes_agree(eq, dense, sparse)


@pytest.mark.parametrize("shape, loose, supported", [((4, 4, 4), 0, False), ((5, 4, 4), 9, True), ((6, 5, 4), 5, False)])
def test_routes_agree_on_3d_tetrahedral_blocks(shape, loose, supported):
    coords, members = tetrahedral_block(*shape, loose=loose, seed=sum(shape) + loose)
    fixed = np.zeros(coords.shape, bool)
    if supported:
        fixed[0] = True
        fixed[1, 1:] = True
        fixed[len(coords) - 1, 2] = True
    eq, dense, sparse = both_routes(coords, members, fixed)
    # A Delaunay block is rigid: the rigid-body motions (none once supported) plus one per loose node.
    assert dense.mechanisms == (0 if supported else 6) + loose
    assert dense.self_stress > 0
    assert 300 <= len(members) <= 3000
    assert_routes_agree(eq, dense, sparse)


@pytest.mark.slow
def test_routes_agree_near_3000_members():
    coords, members = tetrahedral_block(7, 6, 6, loose=12, seed=3)
    fixed = np.zeros(coords.shape, bool)
    fixed[0] = True
    fixed[5, :2] = True
    fixed[40] = [True, False, True]  # node 40 is above node 5 along y: stops the turn about z
    assert 2500 <= len(members) <= 3200
    eq, dense, sparse = both_routes(coords, members, fixed)
    assert dense.mechanisms == 12
    assert_routes_agree(eq, dense, sparse)


def test_analyse_gives_the_same_forces_on_both_routes(frame):
    # A braced grid with self-stress (stiffness method) and mechanisms the loads do not excite.
    coords, members, fixed = grid_2d(nx=10, ny=8, braced_every=1, double_every=4)
    rng = np.random.default_rng(5)
    loads = rng.normal(0, 1e3, coords.shape)
    ea = rng.uniform(1e7, 5e7, len(members))
    results = []
    for limit in (10**9, 0):
        project = frame(coords, members, fixed, {"random": loads}, ea=ea, options=AnalysisOptions(dense_limit=limit))
        analysis = analyse(project)
        results.append(analysis)
    dense, sparse = (a.state("random") for a in results)
    assert results[0].determinacy.route != results[1].determinacy.route
    scale = np.abs(dense.forces).max()
    np.testing.assert_allclose(sparse.forces, dense.forces, rtol=0, atol=1e-10 * scale)
    np.testing.assert_allclose(sparse.reactions, dense.reactions, rtol=0, atol=1e-10 * scale)
    assert dense.checks.passed and sparse.checks.passed
