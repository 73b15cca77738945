"""The design outcome a reviewer reads first: what, in the indicative checks, is not as it should be.

Flags, each with the ids it concerns:
- members over a utilisation of 1 in the member checks (count, governing member, check and state);
- cables (role "cable") in compression and struts (role "strut") in tension;
- uplift at supports: a reaction along the vertical axis that pulls the frame
  down (R_v < 0), i.e. the support must hold the frame down;
- serviceability combinations over ``[design] deflection_limit`` (where one is given).

Role and uplift flags are looked for in every state a design check takes
(sheets.analysis.design_states: the strength and serviceability combinations,
or every state where no combination is tagged for strength). Any flag makes
``sheets solve`` and ``sheets build`` exit with EXIT_DESIGN_FLAGS once every
file is written.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.analysis.design_states import design_states
from sheets.analysis.member_checks import FORCE_EPS, MemberChecks


@dataclass(frozen=True)
class Sighting:
    """One member or node flagged, in the state where it is worst."""

    id: str  # member or node id
    state: str
    value: float  # N: the member force, or the vertical reaction


@dataclass(frozen=True)
class DesignOutcome:
    states: tuple[str, ...]  # the states the role and uplift flags were looked for in
    over_utilised: tuple[str, ...]  # member ids with a utilisation above 1, worst first
    governing: tuple[str, float, str, str] | None  # (member, utilisation, check, state) of the largest utilisation
    cables_in_compression: tuple[Sighting, ...]
    struts_in_tension: tuple[Sighting, ...]
    uplift: tuple[Sighting, ...]  # supported nodes, most pulled-down first
    deflection_over_limit: tuple[str, ...]  # serviceability combinations whose span / deflection is under the limit

    @property
    def flagged(self) -> bool:
        return bool(self.over_utilised or self.cables_in_compression or self.struts_in_tension or self.uplift
                    or self.deflection_over_limit)

    def findings(self, force_unit: str = "N", force_factor: float = 1.0, shown: int = 8) -> list[tuple[str, bool]]:
        """The outcome in plain sentences, each with True where it is a flag; ``shown`` ids at most per sentence."""

        def ids(items) -> str:
            names = [getattr(i, "id", i) for i in items]
            return ", ".join(names[:shown]) + (f" and {len(names) - shown} more" if len(names) > shown else "")

        def worst(s: Sighting) -> str:
            return f"worst {s.id}, {s.value / force_factor:.4g} {force_unit} in {s.state}"

        out = []
        if not self.flagged:
            out.append(("No member over a utilisation of 1, no cable in compression or strut in tension, "
                        "no uplift at the supports.", False))
        if self.over_utilised:
            out.append((f"{len(self.over_utilised)} member{'s' if len(self.over_utilised) != 1 else ''} over a utilisation "
                        f"of 1: {ids(self.over_utilised)}.", True))
        if self.governing is not None:
            member, u, check, state = self.governing
            out.append((f"Governing member {member}: utilisation {u:.3f} ({check.replace('_', ' ')}, state {state or '-'}).",
                        u > 1.0))
        else:
            out.append(("No member check was made (see Member checks): the members are not verified.", False))
        if self.cables_in_compression:
            out.append((f"Cables in compression: {ids(self.cables_in_compression)} ({worst(self.cables_in_compression[0])}).", True))
        if self.struts_in_tension:
            out.append((f"Struts in tension: {ids(self.struts_in_tension)} ({worst(self.struts_in_tension[0])}).", True))
        if self.uplift:
            out.append((f"Uplift at supports {ids(self.uplift)}: the support must hold the frame down "
                        f"({worst(self.uplift[0])}).", True))
        if self.deflection_over_limit:
            out.append((f"Deflection over the limit in {ids(self.deflection_over_limit)}.", True))
        return out

    def sentences(self, force_unit: str = "N", force_factor: float = 1.0, shown: int = 8) -> list[str]:
        return [text for text, _ in self.findings(force_unit, force_factor, shown)]


def _sightings(rows: np.ndarray, table: np.ndarray, states, names, sign: float) -> tuple[Sighting, ...]:
    """For each flagged row, the state where ``sign * table`` is largest; worst first."""
    out = []
    for e in rows:
        k = int((sign * table[:, e]).argmax())
        out.append(Sighting(names[e], states[k].id, float(table[k, e])))
    return tuple(sorted(out, key=lambda s: -sign * s.value))


def design_outcome(analysis, checks: MemberChecks, service=None) -> DesignOutcome:
    """The outcome of ``checks`` (sheets.analysis.member_checks) and ``service`` (sheets.analysis.serviceability)."""
    p = analysis.project
    states = design_states(analysis).checked
    roles = np.array(p.member_roles)
    if states:
        forces = np.array([s.forces for s in states])  # (states, m)
        scale = np.abs(forces).max(axis=1, initial=0.0)[:, None]
        cable = (roles == "cable") & (forces < -FORCE_EPS * scale).any(axis=0)
        strut = (roles == "strut") & (forces > FORCE_EPS * scale).any(axis=0)
        v = p.vertical_axis
        vertical = np.array([s.reactions[:, v] for s in states])  # (states, n)
        # the state's own size: its largest reaction, load or member force (a self-stress state has no loads)
        reach = np.array([max(float(np.abs(s.reactions).max(initial=0.0)), float(np.abs(s.loads).max(initial=0.0)),
                              float(np.abs(s.forces).max(initial=0.0))) for s in states])[:, None]
        pulled = p.fixed[:, v] & (vertical < -FORCE_EPS * reach).any(axis=0)
        cables = _sightings(np.flatnonzero(cable), forces, states, p.member_ids, -1.0)
        struts = _sightings(np.flatnonzero(strut), forces, states, p.member_ids, 1.0)
        uplift = _sightings(np.flatnonzero(pulled), vertical, states, p.node_ids, -1.0)
    else:
        cables = struts = uplift = ()
    worst = checks.worst
    governing = None if worst is None else (p.member_ids[worst], float(checks.governing[worst]),
                                            checks.title(checks.governing_check[worst]), checks.governing_state(worst))
    over = tuple(p.member_ids[e] for e in checks.failing)
    deflection = tuple(s.state for s in service.failing) if service is not None else ()
    return DesignOutcome(tuple(s.id for s in states), over, governing, cables, struts, uplift, deflection)


def outcome_results(outcome: DesignOutcome, units) -> dict:
    """The outcome as plain values in display units (results document section "outcome")."""
    f = units.factor("force")
    sighting = lambda s: {"id": s.id, "state": s.state, "value": float(s.value / f) + 0.0}
    member, u, check, state = outcome.governing or (None, None, None, None)
    return {
        "flagged": outcome.flagged,
        "states": list(outcome.states),
        "members_over_utilisation_1": list(outcome.over_utilised),
        "governing": None if member is None else {"member": member, "utilisation": u, "check": check, "state": state},
        "cables_in_compression": [sighting(s) for s in outcome.cables_in_compression],
        "struts_in_tension": [sighting(s) for s in outcome.struts_in_tension],
        "uplift": [sighting(s) for s in outcome.uplift],
        "deflection_over_limit": list(outcome.deflection_over_limit),
    }
