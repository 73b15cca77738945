"""Constant-stress sizing: the least material when every member works at one stress.

With a stress limit sigma the area a member needs is A_e = |t_e| / sigma, taken
here for the largest |force| the member carries over the strength states
(sheets.analysis.design_states: the combinations tagged "strength", else every
state but the serviceability combinations). The material volume is
V = sum_e A_e L_e and the mass sum_e rho_e A_e L_e.

Maxwell's load path theorem ties the tension and compression volumes of any one
state to its loads: sum_e t_e L_e = sum_i f_i . x_i (reactions counted as
loads), so at constant stress

    V_T - V_C = (sum_i f_i . x_i) / sigma.

Maxwell (1870), "On reciprocal figures, frames, and diagrams of forces", Trans.
R. Soc. Edinburgh 26 1-40; "Maxwell's reciprocal diagrams and discrete Michell
frames", Struct. Multidisc. Optim. 48 (2013) 267-277. The identity is checked
per state.

This is indicative sizing: it ignores buckling, connections, self-weight of the
added material and every code requirement. It is not a member check.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.analysis.analyse import make_envelope
from sheets.analysis.design_states import design_states
from sheets.export.results import _num


@dataclass(frozen=True)
class StateVolumes:
    """Constant-stress volumes of one state (each member sized for this state alone)."""

    state: str
    volume_tension: float  # m^3, sum over t > 0 of t L / sigma
    volume_compression: float  # m^3, sum over t < 0 of |t| L / sigma
    load_term: float  # m^3, sum f . x / sigma (reactions included)
    maxwell_error: float  # |V_T - V_C - load_term| / (V_T + V_C)
    tolerance: float  # the project's equilibrium tolerance

    @property
    def volume(self) -> float:
        return self.volume_tension + self.volume_compression

    @property
    def passed(self) -> bool:
        return self.maxwell_error <= self.tolerance


@dataclass(frozen=True)
class Sizing:
    """Constant-stress sizing over the envelope; ``available`` False says why not in ``note``."""

    available: bool
    note: str
    stress_limit: float | None  # Pa
    over: tuple[str, ...]  # state ids of the envelope
    member_ids: tuple[str, ...]
    lengths: np.ndarray  # (m,) m
    governing_force: np.ndarray  # (m,) N, signed: the force of largest magnitude
    governing_state: tuple[str, ...]
    reverses: np.ndarray  # (m,) bool: tension in some state, compression in another
    areas: np.ndarray  # (m,) m^2 required
    density: np.ndarray  # (m,) kg/m^3, NaN where the section's material gives none
    states: tuple[StateVolumes, ...]

    @property
    def volumes(self) -> np.ndarray:
        return self.areas * self.lengths

    @property
    def volume(self) -> float:
        return float(self.volumes.sum())

    @property
    def volume_tension(self) -> float:
        return float(self.volumes[self.governing_force > 0].sum())

    @property
    def volume_compression(self) -> float:
        return float(self.volumes[self.governing_force < 0].sum())

    @property
    def masses(self) -> np.ndarray:
        return self.volumes * self.density

    @property
    def mass(self) -> float | None:
        """Total mass, or None unless every member with a required area has a density."""
        needed = self.areas > 0
        if not self.available or np.any(~np.isfinite(self.density[needed])):
            return None
        return float(self.masses[needed].sum())

    @property
    def members_without_density(self) -> tuple[str, ...]:
        return tuple(mid for mid, a, rho in zip(self.member_ids, self.areas, self.density) if a > 0 and not np.isfinite(rho))

    @property
    def passed(self) -> bool:
        return all(s.passed for s in self.states)


def _densities(project) -> np.ndarray:
    out = np.full(project.n_members, np.nan)
    for e, sid in enumerate(project.member_sections):
        section = project.sections.get(sid)
        material = project.materials.get(section.material) if section is not None and section.material else None
        if material is not None and material.density is not None:
            out[e] = material.density
    return out


def state_volumes(analysis, state, sigma: float) -> StateVolumes:
    lengths = analysis.equilibrium.lengths
    t = np.asarray(state.forces)
    vt = float(t[t > 0] @ lengths[t > 0]) / sigma
    vc = float(-t[t < 0] @ lengths[t < 0]) / sigma
    load = float(np.sum(state.external * analysis.project.coords)) / sigma
    total = vt + vc
    error = abs(vt - vc - load) / total if total > 0 else abs(load)
    return StateVolumes(state.id, vt, vc, load, error, analysis.project.options.equilibrium_tolerance)


def size_members(analysis) -> Sizing:
    """Constant-stress sizing from ``project.design.stress_limit`` over the strength states."""
    project = analysis.project
    env = make_envelope(project, design_states(analysis).strength)
    lengths = np.asarray(analysis.equilibrium.lengths)
    m = project.n_members
    sigma = project.design.stress_limit
    tension, compression = np.asarray(env.max_tension), np.asarray(env.max_compression)
    tension_governs = tension >= -compression
    governing = np.where(tension_governs, tension, compression)
    governing_state = tuple(env.max_tension_state[e] if tension_governs[e] else env.max_compression_state[e] for e in range(m))
    reverses = (tension > 0) & (compression < 0)
    density = _densities(project)
    if sigma is None:
        return Sizing(False, "no stress limit given ([design] stress_limit): constant-stress sizing not done",
                      None, env.over, project.member_ids, lengths, governing, governing_state, reverses,
                      np.zeros(m), density, ())
    areas = np.abs(governing) / sigma
    states = tuple(state_volumes(analysis, analysis.state(sid), sigma) for sid in env.over)
    note = "indicative: areas for axial stress only (no buckling, connections or code checks)"
    return Sizing(True, note, sigma, env.over, project.member_ids, lengths, governing, governing_state, reverses,
                  areas, density, states)


def sizing_results(sizing: Sizing, units) -> dict:
    """Plain numbers in display units for the results document."""
    area, length, force = units.factor("area"), units.factor("length"), units.factor("force")
    volume, mass, stress = units.factor("volume"), units.factor("mass"), units.factor("stress")
    doc = {
        "available": sizing.available,
        "note": sizing.note,
        "stress_limit": None if sizing.stress_limit is None else _num(sizing.stress_limit / stress),
        "over": list(sizing.over),
    }
    if not sizing.available:
        return doc
    doc["members"] = {
        mid: {
            "governing_force": _num(sizing.governing_force[e] / force),
            "governing_state": sizing.governing_state[e],
            "reverses": bool(sizing.reverses[e]),
            "required_area": _num(sizing.areas[e] / area),
            "length": _num(sizing.lengths[e] / length),
            "volume": _num(sizing.volumes[e] / volume),
            "mass": None if not np.isfinite(sizing.masses[e]) else _num(sizing.masses[e] / mass),
        }
        for e, mid in enumerate(sizing.member_ids)
    }
    doc["volume"] = _num(sizing.volume / volume)
    doc["volume_tension"] = _num(sizing.volume_tension / volume)
    doc["volume_compression"] = _num(sizing.volume_compression / volume)
    doc["mass"] = None if sizing.mass is None else _num(sizing.mass / mass)
    doc["members_without_density"] = list(sizing.members_without_density)
    doc["states"] = [
        {
            "state": s.state,
            "volume_tension": _num(s.volume_tension / volume),
            "volume_compression": _num(s.volume_compression / volume),
            "volume": _num(s.volume / volume),
            "loads_times_positions_over_stress": _num(s.load_term / volume),
            "maxwell_error": _num(s.maxwell_error),
            "passed": s.passed,
        }
        for s in sizing.states
    ]
    doc["passed"] = sizing.passed
    return doc
