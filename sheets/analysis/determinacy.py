"""Static and kinematic determinacy from the rank of the equilibrium matrix.

Pellegrino & Calladine (1986), "Matrix analysis of statically and kinematically
indeterminate frameworks", Int. J. Solids Struct. 22(4) 409-428; Calladine
(1978), "Buckminster Fuller's 'tensegrity' structures and Clerk Maxwell's rules
for the construction of stiff frames", Int. J. Solids Struct. 14 161-172.

With r = rank(A_free): self-stress states s = m - r (null space of A_free),
mechanisms k = n_free - r (null space of A_free^T, rigid-body motions left free
by the supports included). Maxwell's rule m - d n + n_fixed = s - k is checked,
never used in place of the rank.

Two routes give the same numbers: a dense SVD for small frames, and for large
ones the smallest eigenvalues of K = A A^T by shift-invert Lanczos about a
small negative shift (K + c I is positive definite, so its sparse LU is stable).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import scipy.sparse as sp

from sheets.analysis.equilibrium import Equilibrium

MAX_SPARSE_NULL = 4000  # beyond this many null vectors the sparse route gives up on bases


@dataclass(frozen=True)
class Determinacy:
    n_nodes: int
    n_members: int
    dim: int
    n_fixed: int  # fixed translations (support conditions)
    rank: int
    largest_singular: float
    smallest_kept_singular: float  # smallest singular value counted as non-zero
    route: str  # "dense SVD" or "sparse shift-invert"
    tolerance: float  # relative to the largest singular value
    mechanism_modes: np.ndarray  # (n_free, k) orthonormal, free-dof indexing
    self_stress_basis: np.ndarray | None  # (m, s) orthonormal; None if not computed (large sparse)
    # Largest |A^T v| or |A s| over the computed null bases, over the largest singular value:
    # the check that the counts s and k (and so Maxwell's rule, which holds for any rank) rest on.
    null_residual: float = 0.0

    @property
    def n_free(self) -> int:
        return self.n_nodes * self.dim - self.n_fixed

    @property
    def self_stress(self) -> int:
        return self.n_members - self.rank

    @property
    def mechanisms(self) -> int:
        return self.n_free - self.rank

    @property
    def maxwell(self) -> int:
        """Maxwell's rule, extended by Calladine (1978): m - d n + n_fixed."""
        return self.n_members - self.dim * self.n_nodes + self.n_fixed

    @property
    def maxwell_holds(self) -> bool:
        """Maxwell's rule: an arithmetic check on the counts (it holds for any rank r)."""
        return self.maxwell == self.self_stress - self.mechanisms

    @property
    def bases_verified(self) -> bool:
        """The mechanism and self-stress bases are null to the rank tolerance (with a margin for rounding)."""
        return self.null_residual <= 10 * self.tolerance

    @property
    def conditioning(self) -> float:
        """Smallest kept over largest singular value (1 = well conditioned, tiny = near-mechanism)."""
        return self.smallest_kept_singular / self.largest_singular if self.largest_singular else 0.0

    @property
    def classification(self) -> str:
        statics = "statically determinate" if self.self_stress == 0 else f"statically indeterminate ({self.self_stress} self-stress state{'s' if self.self_stress != 1 else ''})"
        kin = "kinematically determinate" if self.mechanisms == 0 else f"kinematically indeterminate ({self.mechanisms} mechanism{'s' if self.mechanisms != 1 else ''})"
        return f"{statics}, {kin}"


def null_residual(a_free: sp.spmatrix, modes: np.ndarray, basis: np.ndarray | None, largest: float) -> float:
    if largest <= 0:
        return 0.0
    worst = float(np.abs(a_free.T @ modes).max(initial=0.0))
    if basis is not None:
        worst = max(worst, float(np.abs(a_free @ basis).max(initial=0.0)))
    return worst / largest


def determinacy(eq: Equilibrium, tolerance: float, dense_limit: int) -> Determinacy:
    a_free = eq.free_matrix
    n_free, m = a_free.shape
    dim = eq.unit.shape[1]
    n_nodes = eq.matrix.shape[0] // dim
    common = dict(n_nodes=n_nodes, n_members=m, dim=dim, n_fixed=int((~eq.free).sum()), tolerance=tolerance)
    found = _dense(a_free, common) if max(n_free, m) <= dense_limit or min(n_free, m) < 20 else _sparse(a_free, common)
    return replace(found, null_residual=null_residual(a_free, found.mechanism_modes, found.self_stress_basis, found.largest_singular))


def _dense(a_free: sp.spmatrix, common: dict) -> Determinacy:
    n_free, m = a_free.shape
    if n_free == 0 or m == 0:  # nothing free, or nothing to carry: every vector is null
        return Determinacy(rank=0, largest_singular=0.0, smallest_kept_singular=0.0, route="dense SVD",
                           mechanism_modes=_frozen(np.eye(n_free)), self_stress_basis=_frozen(np.eye(m)), **common)
    dense = a_free.toarray()
    try:  # LAPACK gesdd, divide and conquer: about 10x faster than gesvd at 1,500 x 1,500 here
        u, sigma, vt = np.linalg.svd(dense, full_matrices=True)
    except np.linalg.LinAlgError:  # gesdd rarely fails to converge; gesvd is slower but sturdier
        import scipy.linalg as la  # only then: scipy.linalg costs `sheets check` a tenth of its start

        u, sigma, vt = la.svd(dense, full_matrices=True, lapack_driver="gesvd")
    smax = sigma[0]
    rank = int((sigma > common["tolerance"] * smax).sum())
    return Determinacy(
        rank=rank,
        largest_singular=float(smax),
        smallest_kept_singular=float(sigma[rank - 1]) if rank else 0.0,
        route="dense SVD",
        mechanism_modes=_frozen(u[:, rank:]),
        self_stress_basis=_frozen(vt[rank:].T),
        **common,
    )


def left_null_space(b: sp.spmatrix, tolerance: float, largest: float, limit: int) -> tuple[np.ndarray, float]:
    """Orthonormal basis of {v : b^T v = 0}: left singular vectors of ``b`` with singular value
    at most ``tolerance * largest``; also the smallest singular value seen above that (NaN if none).

    Shift-invert Lanczos on K = b b^T about -1e-6 largest^2 (K + cI is positive definite, so its
    sparse LU is stable). One Lanczos run finds a single vector per eigenvalue in exact arithmetic,
    so a repeated zero (many mechanisms, the rigid-body motions) is found by deflation: each run
    works on the complement of the vectors found so far, from a seeded random start, until a run
    finds none. Each candidate is judged by |b^T v| on ``b`` itself, because forming b b^T leaves
    rounding of about 1e-16 largest^2, as large as the threshold tolerance^2 largest^2.
    """
    import scipy.sparse.linalg as spla  # here, not at the top: `sheets check` of a small frame starts faster

    n = b.shape[0]
    shift = 1e-6 * largest**2
    lu = spla.splu((b @ b.T + shift * sp.identity(n, format="csc")).tocsc())
    rng = np.random.default_rng(0)  # fixed seed: the same frame always gives the same basis
    basis = np.zeros((n, 0))
    smallest_kept = np.inf
    nev = 8
    while basis.shape[1] < limit:
        ask = min(nev, n - basis.shape[1] - 1, limit - basis.shape[1])
        if ask < 1:
            break
        q = basis

        def apply(x, q=q):
            x = x - q @ (q.T @ x)
            y = lu.solve(x)
            return y - q @ (q.T @ y)

        op = spla.LinearOperator((n, n), matvec=apply, dtype=float)
        start = rng.standard_normal(n)
        start -= q @ (q.T @ start)
        try:
            _, vecs = spla.eigsh(op, k=ask, which="LA", tol=1e-12, v0=start)
        except spla.ArpackNoConvergence as exc:  # keep what converged; the next run goes on
            vecs = exc.eigenvectors
        if not vecs.shape[1]:
            break
        singular = np.linalg.norm(b.T @ vecs, axis=0)
        null = singular <= tolerance * largest
        if (~null).any():
            smallest_kept = min(smallest_kept, float(singular[~null].min()))
        if not null.any():
            break
        basis, _ = np.linalg.qr(np.hstack([basis, vecs[:, null]]))
        if null.all():
            nev *= 2
    return basis, (smallest_kept if np.isfinite(smallest_kept) else np.nan)


def _sparse(a_free: sp.spmatrix, common: dict) -> Determinacy:
    import scipy.sparse.linalg as spla

    n_free, m = a_free.shape
    # A seeded start vector: ARPACK's own is random, and at tol 1e-6 the value it returns (written to
    # results.json as the largest singular value and in the conditioning) then differs between runs.
    start = np.random.default_rng(0).standard_normal(n_free)
    largest_eig = float(spla.eigsh((a_free @ a_free.T).tocsc(), k=1, which="LA", return_eigenvectors=False, tol=1e-6,
                                   v0=start)[0])
    largest = float(np.sqrt(largest_eig))
    modes, above = left_null_space(a_free, common["tolerance"], largest, MAX_SPARSE_NULL)
    k = modes.shape[1]
    rank = n_free - k
    return Determinacy(
        rank=rank,
        largest_singular=largest,
        smallest_kept_singular=float(above) if np.isfinite(above) else 0.0,
        route="sparse shift-invert",
        mechanism_modes=_frozen(modes),
        self_stress_basis=None,
        **common,
    )


def self_stress_basis(a_free: sp.spmatrix, det: Determinacy) -> np.ndarray:
    """The self-stress basis, computed on demand on the sparse route (prestress needs it)."""
    if det.self_stress_basis is not None:
        return det.self_stress_basis
    if det.self_stress == 0:
        return np.zeros((det.n_members, 0))
    basis, _ = left_null_space(a_free.T.tocsc(), det.tolerance, det.largest_singular, max(det.self_stress + 2, MAX_SPARSE_NULL))
    return _frozen(basis[:, : det.self_stress])


def _frozen(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a)
    a.setflags(write=False)
    return a
