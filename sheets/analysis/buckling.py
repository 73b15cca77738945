"""Flexural buckling resistance by a buckling curve (the method of EN 1993-1-1:2005, 6.3.1.2).

    relative slenderness   lam = sqrt(A f_y / N_cr)
    Phi = 0.5 [1 + alpha (lam - 0.2) + lam^2]
    chi = 1 / (Phi + sqrt(Phi^2 - lam^2)),   chi <= 1
    N_b,Rd = chi A f_y / gamma

The imperfection factor alpha of each named curve is the one published in
EN 1993-1-1:2005 Table 6.1. Which curve a section takes, and gamma, are the
engineer's choice and come from the project file; nothing else is built in.
"""

from __future__ import annotations

import numpy as np

# EN 1993-1-1:2005 Table 6.1, imperfection factors of the buckling curves
CURVE_IMPERFECTION = {"a0": 0.13, "a": 0.21, "b": 0.34, "c": 0.49, "d": 0.76}


def imperfection_factor(design) -> float | None:
    """alpha as the project gives it: directly, or by the curve's name; None if neither."""
    if design.imperfection_factor is not None:
        return design.imperfection_factor
    return CURVE_IMPERFECTION.get(design.buckling_curve)


def relative_slenderness(squash_load, critical_load) -> np.ndarray:
    """lam = sqrt(A f_y / N_cr)."""
    return np.sqrt(np.asarray(squash_load, dtype=float) / np.asarray(critical_load, dtype=float))


def reduction_factor(slenderness, alpha: float) -> np.ndarray:
    """chi for the relative slenderness ``slenderness`` on the curve with imperfection factor ``alpha``."""
    lam = np.asarray(slenderness, dtype=float)
    phi = 0.5 * (1.0 + alpha * (lam - 0.2) + lam**2)
    chi = 1.0 / (phi + np.sqrt(np.maximum(phi**2 - lam**2, 0.0)))
    return np.minimum(chi, 1.0)
