"""Member forces for a load vector (METHODS.md section 3).

- Determinate (s = 0, k = 0): A_free is square and regular, t = A_free^-1 p.
- s = 0 with mechanisms the load does not excite: A_free has full column rank,
  t solves the normal equations (A^T A) t = A^T p exactly.
- Indeterminate (s > 0): linear-elastic compatibility, the stiffness method
  K = A diag(EA/L) A^T, K d = p, t = diag(EA/L) A^T d. Where mechanisms exist
  (loads orthogonal to them), K is singular; the bordered system
  [K M; M^T 0] [d; l] = [p; 0] picks the displacement orthogonal to the
  mechanisms, which leaves t unchanged (A^T M = 0).

Factorisations are made once per frame and reused for every load case.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.sparse as sp

from sheets.analysis.determinacy import Determinacy
from sheets.analysis.equilibrium import Equilibrium


@dataclass(frozen=True)
class Solution:
    forces: np.ndarray  # (m,)
    displacements_free: np.ndarray | None  # (n_free,)
    method: str


class FrameSolver:
    """Solves A t = p on the free translations for one frame, factorising lazily."""

    def __init__(self, eq: Equilibrium, det: Determinacy, ea: np.ndarray, method: str):
        self.eq = eq
        self.det = det
        self.ea = ea
        self.method = method
        self.a_free = eq.free_matrix.tocsc()
        self.has_stiffness = bool(np.all(np.isfinite(ea)) and np.all(ea > 0))

    @property
    def uses_stiffness(self) -> bool:
        return self.det.self_stress > 0 or self.method == "elastic"

    def solve(self, p_free: np.ndarray) -> Solution:
        if self.uses_stiffness:
            d = self._stiffness_solve(p_free)
            t = self._stiffness_forces(d)
            return Solution(t, d, "linear-elastic")
        t = self._equilibrium_solve(p_free)
        d = self._compatible_displacements(t, p_free) if self.has_stiffness else None
        return Solution(t, d, "equilibrium")

    def _compatible_displacements(self, t: np.ndarray, p_free: np.ndarray) -> np.ndarray:
        # Square, regular A: the elongations t L / EA fix d through compatibility A^T d = e, solved
        # with the LU of A already made; K d = p would square the condition number of A.
        if self.det.mechanisms == 0:
            return self._equilibrium_lu.solve(t / self._member_stiffness, trans="T")
        return self._stiffness_solve(p_free)

    # -- equilibrium alone -------------------------------------------------
    @cached_property
    def _equilibrium_lu(self):
        import scipy.sparse.linalg as spla  # here, not at the top: `sheets check` never solves

        if self.det.mechanisms == 0:
            return spla.splu(self.a_free.tocsc())
        return spla.splu((self.a_free.T @ self.a_free).tocsc())

    def _equilibrium_solve(self, p_free: np.ndarray) -> np.ndarray:
        if self.det.mechanisms == 0:
            return self._equilibrium_lu.solve(p_free)
        return self._equilibrium_lu.solve(self.a_free.T @ p_free)

    # -- stiffness method --------------------------------------------------
    @cached_property
    def _member_stiffness(self) -> np.ndarray:
        return self.ea / self.eq.lengths

    @cached_property
    def _stiffness_lu(self):
        import scipy.sparse.linalg as spla

        k = (self.a_free @ sp.diags(self._member_stiffness) @ self.a_free.T).tocsc()
        modes = self.det.mechanism_modes
        if modes.shape[1]:
            scale = float(abs(k).max()) or 1.0  # no member reaches a free node: any non-zero border will do
            border = sp.csc_matrix(modes * scale)
            k = sp.bmat([[k, border], [border.T, None]], format="csc")
        return spla.splu(k)

    def _stiffness_solve(self, p_free: np.ndarray) -> np.ndarray:
        k_mech = self.det.mechanism_modes.shape[1]
        rhs = np.concatenate([p_free, np.zeros(k_mech)])
        return self._stiffness_lu.solve(rhs)[: len(p_free)]

    def _stiffness_forces(self, d_free: np.ndarray) -> np.ndarray:
        return self._member_stiffness * (self.a_free.T @ d_free)
