"""Equilibrium states (load cases, prestress, combinations) and their checks.

A state is one set of external loads with the member forces, reactions and (where
computed) displacements that carry it. Every state carries its own checks:

- nodal residual: the largest |A t - (p + r)| over the largest member force, load or reaction;
- global equilibrium: resultant force and moment of loads plus reactions;
- Maxwell's load path theorem, sum_e t_e L_e = sum_i f_i . x_i with reactions
  counted as loads (Maxwell 1870, "On reciprocal figures, frames, and diagrams
  of forces", Trans. R. Soc. Edinburgh 26 1-40).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.analysis.equilibrium import Equilibrium


@dataclass(frozen=True)
class Checks:
    residual: float  # largest nodal residual / force scale
    resultant: float  # |sum of loads and reactions| / force scale
    moment: float  # |sum of x cross (loads and reactions)| / (force scale * extent)
    load_path_members: float  # sum_e t_e L_e (N m)
    load_path_loads: float  # sum_i f_i . x_i (N m), reactions included
    load_path_error: float  # |difference| / sum_e |t_e| L_e
    tolerance: float

    @property
    def passed(self) -> bool:
        return max(self.residual, self.resultant, self.moment, self.load_path_error) <= self.tolerance


@dataclass(frozen=True)
class State:
    id: str
    kind: str  # "case", "prestress" or "combination"
    title: str
    loads: np.ndarray  # (n, dim) applied nodal loads, N (self-weight included)
    forces: np.ndarray  # (m,) N, tension positive
    reactions: np.ndarray  # (n, dim) N, zero where the translation is free
    displacements: np.ndarray | None  # (n, dim) m, where computed
    method: str  # how the forces were found
    checks: Checks
    factors: tuple[tuple[str, float], ...] = ()  # for combinations

    @property
    def external(self) -> np.ndarray:
        """Loads and reactions together: every force the frame receives at its nodes."""
        return self.loads + self.reactions


def reactions_for(eq: Equilibrium, forces: np.ndarray, loads: np.ndarray) -> np.ndarray:
    """R = A_s t - p_s on the supported translations, zero elsewhere (METHODS.md 1)."""
    full = eq.matrix @ forces - loads.reshape(-1)
    full[eq.free] = 0.0
    return full.reshape(loads.shape)


def check_state(eq: Equilibrium, coords: np.ndarray, forces: np.ndarray, loads: np.ndarray, reactions: np.ndarray, tolerance: float) -> Checks:
    external = loads + reactions
    # Loads and reactions count apart in the scale: a load on a support node cancels against its
    # reaction, leaving a rounding of its own size that must not be judged against the (perhaps
    # far smaller) member forces.
    gross = np.abs(loads) + np.abs(reactions)
    scale = max(float(np.abs(forces).max(initial=0.0)), float(gross.max(initial=0.0)), 1e-300)
    residual_vec = (eq.matrix @ forces - external.reshape(-1))
    residual = float(np.abs(residual_vec).max(initial=0.0)) / scale
    resultant = float(np.linalg.norm(external.sum(axis=0))) / scale
    centre = coords.mean(axis=0)
    arm = coords - centre
    extent = max(float(np.ptp(coords, axis=0).max()), 1e-300)
    if coords.shape[1] == 2:
        moment_vec = np.array([np.sum(arm[:, 0] * external[:, 1] - arm[:, 1] * external[:, 0])])
    else:
        moment_vec = np.cross(arm, external).sum(axis=0)
    moment = float(np.linalg.norm(moment_vec)) / (scale * extent)
    lengths = eq.lengths
    members_side = float(forces @ lengths)
    loads_side = float(np.sum(external * coords))
    magnitude = max(float(np.abs(forces) @ lengths), float((gross * np.abs(coords)).sum()), 1e-300)
    return Checks(
        residual=residual,
        resultant=resultant,
        moment=moment,
        load_path_members=members_side,
        load_path_loads=loads_side,
        load_path_error=abs(members_side - loads_side) / magnitude,
        tolerance=tolerance,
    )
