"""Indicative member checks (METHODS.md section 9): a pure stage Analysis -> MemberChecks.

Code-neutral and indicative only. Every factor comes from the project's
[design] table; a factor the file does not give leaves out the check that needs
it, and ``omitted`` says so. Nothing here is a built-in code value.

- tension:      t <= A f_y / gamma
- compression:  |t| <= min(A f_y, N_cr) / gamma,  N_cr = pi^2 E I / (K L)^2
  (Euler's critical load of a pin-ended strut, Euler 1744, with the
  effective length K L);
- slenderness:  K L / r against ``slenderness_limit`` for members that see
  compression, L / r against ``tension_slenderness_limit`` for members that see
  only tension, with r = sqrt(I / A).

Demands are the largest tension and compression of each member over every
state (load cases, prestress and combinations). Cables take no compression and
have no bending stiffness: they get the tension check only, and a cable that
goes into compression (or a strut into tension) is reported as a role conflict.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property
from types import MappingProxyType
from typing import Mapping

import numpy as np

from sheets.analysis.analyse import Analysis, make_envelope
from sheets.model.project import DesignOptions

CHECKS = ("tension", "compression", "slenderness", "tension_slenderness")
CHECK_TITLES = {
    "tension": "tension resistance",
    "compression": "compression resistance (squash and Euler buckling)",
    "slenderness": "slenderness K L/r of compression members",
    "tension_slenderness": "slenderness L/r of tension members",
}
FORCE_EPS = 1e-9  # |t| below this x the largest force counts as no force


@dataclass(frozen=True)
class MemberChecks:
    """Per-member demands, resistances and utilisations (NaN where a check does not apply)."""

    over: tuple[str, ...]  # the state ids the demands are taken over
    design: DesignOptions  # the factors used, as the project gives them
    omitted: tuple[str, ...]  # checks left out, each with the reason
    lengths: np.ndarray  # (m,) m
    area: np.ndarray  # (m,) m^2
    second_moment: np.ndarray  # (m,) m^4
    radius: np.ndarray  # (m,) m, radius of gyration sqrt(I/A)
    yield_strength: np.ndarray  # (m,) Pa
    elastic_modulus: np.ndarray  # (m,) Pa
    max_tension: np.ndarray  # (m,) N >= 0
    max_tension_state: tuple[str, ...]
    max_compression: np.ndarray  # (m,) N <= 0
    max_compression_state: tuple[str, ...]
    tension_resistance: np.ndarray  # (m,) N, A f_y / gamma
    euler_load: np.ndarray  # (m,) N, pi^2 E I / (K L)^2
    compression_resistance: np.ndarray  # (m,) N, min(A f_y, N_cr) / gamma
    slenderness: np.ndarray  # (m,) K L / r (members in compression)
    tension_slenderness: np.ndarray  # (m,) L / r (members only in tension)
    utilisation: Mapping[str, np.ndarray]  # check name -> (m,) demand / capacity, NaN where not made
    unchecked: tuple[tuple[int, str], ...]  # (member index, why a check it needs could not be made)
    role_conflicts: tuple[tuple[int, str], ...]  # (member index, what is wrong)

    @cached_property
    def governing(self) -> np.ndarray:
        """Largest utilisation of each member over the checks made (NaN where none)."""
        table = np.vstack([self.utilisation[c] for c in CHECKS])
        has = ~np.isnan(table).all(axis=0)
        out = np.full(table.shape[1], np.nan)
        out[has] = np.nanmax(table[:, has], axis=0)
        return out

    @cached_property
    def governing_check(self) -> tuple[str, ...]:
        table = np.vstack([self.utilisation[c] for c in CHECKS])
        filled = np.where(np.isnan(table), -np.inf, table)
        idx = filled.argmax(axis=0)
        return tuple(CHECKS[i] if np.isfinite(filled[i, e]) else "" for e, i in enumerate(idx))

    def governing_state(self, e: int) -> str:
        """The state that sets member ``e``'s governing demand ("" for geometric checks only)."""
        check = self.governing_check[e]
        if check in ("tension",):
            return self.max_tension_state[e]
        if check in ("compression", "slenderness"):
            return self.max_compression_state[e]
        if check == "tension_slenderness":
            return self.max_tension_state[e]
        return ""

    @property
    def made(self) -> tuple[str, ...]:
        return tuple(c for c in CHECKS if not np.isnan(self.utilisation[c]).all())

    @property
    def worst(self) -> int | None:
        """Index of the member with the largest utilisation, None if no check was made."""
        g = self.governing
        if np.isnan(g).all():
            return None
        return int(np.nanargmax(g))

    @property
    def failing(self) -> np.ndarray:
        """Indices of members with a utilisation above 1, worst first."""
        g = np.nan_to_num(self.governing, nan=-1.0)
        idx = np.flatnonzero(g > 1.0)
        return idx[np.argsort(-g[idx], kind="stable")]


def _section_properties(analysis: Analysis) -> tuple[np.ndarray, ...]:
    """Area, second moment, yield strength and elastic modulus per member (NaN where not given)."""
    p = analysis.project
    names = sorted(set(p.member_sections))
    table = np.full((len(names), 4), np.nan)
    for k, sid in enumerate(names):
        section = p.sections.get(sid)
        if section is None:
            continue
        material = p.materials.get(section.material) if section.material else None
        table[k] = [
            np.nan if section.area is None else section.area,
            np.nan if section.second_moment is None else section.second_moment,
            np.nan if material is None or material.yield_strength is None else material.yield_strength,
            np.nan if material is None else material.elastic_modulus,
        ]
    index = {sid: k for k, sid in enumerate(names)}
    rows = table[np.array([index[s] for s in p.member_sections], dtype=np.int64)] if p.n_members else np.zeros((0, 4))
    return tuple(np.ascontiguousarray(rows[:, c]) for c in range(4))


def euler_load(elastic_modulus, second_moment, effective_length):
    """Euler's critical load of a pin-ended strut, pi^2 E I / (K L)^2 (N)."""
    return math.pi**2 * np.asarray(elastic_modulus) * np.asarray(second_moment) / np.asarray(effective_length) ** 2


def member_checks(analysis: Analysis) -> MemberChecks:
    p = analysis.project
    d = p.design
    m = p.n_members
    lengths = analysis.equilibrium.lengths
    env = make_envelope(p, analysis.states)
    tension, compression = env.max_tension, env.max_compression
    scale = max(float(np.abs(tension).max(initial=0.0)), float(np.abs(compression).max(initial=0.0)))
    in_tension = tension > FORCE_EPS * scale
    in_compression = compression < -FORCE_EPS * scale
    roles = np.array(p.member_roles)
    cable = roles == "cable"

    area, inertia, fy, modulus = _section_properties(analysis)
    with np.errstate(invalid="ignore", divide="ignore"):
        radius = np.sqrt(inertia / area)
    nan = np.full(m, np.nan)
    util = {c: nan.copy() for c in CHECKS}
    omitted: list[str] = []
    unchecked: list[tuple[int, str]] = []

    def missing(rows: np.ndarray, need: dict[str, np.ndarray], check: str) -> np.ndarray:
        """Members in ``rows`` that lack a property the check needs; records why; returns the rest."""
        ok = rows.copy()
        for what, values in need.items():
            bad = rows & np.isnan(values)
            for e in np.flatnonzero(bad & ok):
                unchecked.append((int(e), f"{CHECK_TITLES[check]}: the section or material gives no {what}"))
            ok &= ~bad
        return ok

    # tension
    t_res = nan.copy()
    if d.partial_factor is None:
        omitted.append("Tension and compression resistance: the project gives no partial_factor in [design].")
    else:
        ok = missing(in_tension, {"area": area, "yield strength": fy}, "tension")
        t_res[ok] = area[ok] * fy[ok] / d.partial_factor
        util["tension"][ok] = tension[ok] / t_res[ok]

    # compression (cables cannot take it: a role conflict, below)
    n_cr = nan.copy()
    c_res = nan.copy()
    struts = in_compression & ~cable
    if d.effective_length_factor is None:
        omitted.append("Euler buckling and the slenderness of compression members: the project gives no "
                       "effective_length_factor in [design].")
        if d.partial_factor is not None:
            omitted.append("Compression resistance: it needs the Euler load, so also the effective_length_factor.")
    else:
        ok = missing(struts, {"second moment of area": inertia, "elastic modulus": modulus}, "compression")
        n_cr[ok] = euler_load(modulus[ok], inertia[ok], d.effective_length_factor * lengths[ok])
        if d.partial_factor is not None:
            ok2 = missing(ok, {"area": area, "yield strength": fy}, "compression")
            c_res[ok2] = np.minimum(area[ok2] * fy[ok2], n_cr[ok2]) / d.partial_factor
            util["compression"][ok2] = -compression[ok2] / c_res[ok2]

    # slenderness: K L / r for compression members, L / r for tension-only members (not cables)
    slender = nan.copy()
    t_slender = nan.copy()
    if d.effective_length_factor is not None:
        ok = struts & ~np.isnan(radius)
        slender[ok] = d.effective_length_factor * lengths[ok] / radius[ok]
        if d.slenderness_limit is None:
            omitted.append("Slenderness of compression members against a limit: the project gives no slenderness_limit in [design].")
        else:
            ok = missing(struts, {"area": area, "second moment of area": inertia}, "slenderness")
            util["slenderness"][ok] = slender[ok] / d.slenderness_limit
    tension_only = in_tension & ~in_compression & ~cable
    ok_r = tension_only & ~np.isnan(radius)
    t_slender[ok_r] = lengths[ok_r] / radius[ok_r]
    if d.tension_slenderness_limit is None:
        omitted.append("Slenderness of tension members: the project gives no tension_slenderness_limit in [design].")
    else:
        ok = missing(tension_only, {"area": area, "second moment of area": inertia}, "tension_slenderness")
        util["tension_slenderness"][ok] = t_slender[ok] / d.tension_slenderness_limit

    conflicts = [(int(e), "cable in compression (it would go slack)") for e in np.flatnonzero(cable & in_compression)]
    conflicts += [(int(e), "strut in tension") for e in np.flatnonzero((roles == "strut") & in_tension)]
    for arr in (area, inertia, radius, fy, modulus, t_res, n_cr, c_res, slender, t_slender, *util.values()):
        arr.setflags(write=False)
    return MemberChecks(
        over=env.over,
        design=d,
        omitted=tuple(omitted),
        lengths=lengths,
        area=area,
        second_moment=inertia,
        radius=radius,
        yield_strength=fy,
        elastic_modulus=modulus,
        max_tension=env.max_tension,
        max_tension_state=env.max_tension_state,
        max_compression=env.max_compression,
        max_compression_state=env.max_compression_state,
        tension_resistance=t_res,
        euler_load=n_cr,
        compression_resistance=c_res,
        slenderness=slender,
        tension_slenderness=t_slender,
        utilisation=MappingProxyType(util),
        unchecked=tuple(sorted(unchecked)),
        role_conflicts=tuple(sorted(conflicts)),
    )


@dataclass(frozen=True)
class GroupSummary:
    """The worst member of one member group."""

    group: str  # the user's group name ("" for members without one)
    members: int
    checked: int  # members with at least one check made
    worst: int | None  # member index with the largest utilisation
    utilisation: float  # NaN where no member of the group was checked
    check: str
    state: str


def group_summaries(checks: MemberChecks, groups: tuple[str, ...]) -> tuple[GroupSummary, ...]:
    """One row per member group, in the order groups first appear."""
    governing = checks.governing
    members: dict[str, list[int]] = {}
    for e, name in enumerate(groups):
        members.setdefault(name, []).append(e)
    out = []
    for name, rows in members.items():
        rows = np.array(rows)
        values = governing[rows]
        checked = int((~np.isnan(values)).sum())
        if checked:
            e = int(rows[np.nanargmax(values)])
            out.append(GroupSummary(name, len(rows), checked, e, float(governing[e]), checks.governing_check[e], checks.governing_state(e)))
        else:
            out.append(GroupSummary(name, len(rows), 0, None, float("nan"), "", ""))
    return tuple(out)


def _value(x: float, factor: float):
    """Display-unit float for the results document; None where the check was not made."""
    return None if not np.isfinite(x) else float(x) / factor or 0.0


def member_checks_results(checks: MemberChecks, project) -> dict:
    """The member checks as plain numbers in display units (results document section "member_checks")."""
    f = project.units.factor("force")
    d = checks.design
    worst = checks.worst
    governing = checks.governing
    return {
        "indicative": True,
        "note": "Indicative checks with the project's factors; not a code check. The governing code is for the engineer.",
        "over": list(checks.over),
        "factors": {
            "partial_factor": d.partial_factor,
            "effective_length_factor": d.effective_length_factor,
            "slenderness_limit": d.slenderness_limit,
            "tension_slenderness_limit": d.tension_slenderness_limit,
        },
        "omitted": list(checks.omitted),
        "checks_made": list(checks.made),
        "governing": None if worst is None else {
            "member": project.member_ids[worst],
            "utilisation": float(governing[worst]),
            "check": checks.governing_check[worst],
            "state": checks.governing_state(worst),
        },
        "members_over_limit": [project.member_ids[e] for e in checks.failing],
        "unchecked": [{"member": project.member_ids[e], "reason": why} for e, why in checks.unchecked],
        "role_conflicts": [{"member": project.member_ids[e], "conflict": why} for e, why in checks.role_conflicts],
        "groups": [
            {"group": g.group, "members": g.members, "checked": g.checked,
             "governing_member": None if g.worst is None else project.member_ids[g.worst],
             "utilisation": _value(g.utilisation, 1.0), "check": g.check, "state": g.state}
            for g in group_summaries(checks, project.member_groups)
        ],
        "members": {
            mid: {
                "max_tension": _value(checks.max_tension[e], f),
                "max_tension_state": checks.max_tension_state[e],
                "max_compression": _value(checks.max_compression[e], f),
                "max_compression_state": checks.max_compression_state[e],
                "tension_resistance": _value(checks.tension_resistance[e], f),
                "euler_load": _value(checks.euler_load[e], f),
                "compression_resistance": _value(checks.compression_resistance[e], f),
                "slenderness": _value(checks.slenderness[e], 1.0),
                "tension_slenderness": _value(checks.tension_slenderness[e], 1.0),
                "utilisation": {c: _value(checks.utilisation[c][e], 1.0) for c in CHECKS},
                "governing": _value(governing[e], 1.0),
                "governing_check": checks.governing_check[e],
            }
            for e, mid in enumerate(project.member_ids)
        },
    }


def member_checks_csv(checks: MemberChecks, project, lengths: np.ndarray) -> str:
    """Every member's checks as CSV text, in display units (empty cell where a check was not made)."""
    import csv
    import io

    u = project.units
    f, L = u.factor("force"), u.factor("length")
    fu = u.label("force")
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["member", "group", "section", "role", f"length [{u.label('length')}]", f"max tension [{fu}]", "tension state",
                f"max compression [{fu}]", "compression state", f"tension resistance A fy/gamma [{fu}]", f"Euler load [{fu}]",
                f"compression resistance [{fu}]", "KL/r", "L/r", "u tension", "u compression", "u slenderness",
                "u tension slenderness", "u governing", "governing check"])
    cell = lambda v: "" if v is None else repr(v)
    governing = checks.governing
    for e, mid in enumerate(project.member_ids):
        w.writerow([mid, project.member_groups[e], project.member_sections[e], project.member_roles[e],
                    cell(_value(lengths[e], L)), cell(_value(checks.max_tension[e], f)), checks.max_tension_state[e],
                    cell(_value(checks.max_compression[e], f)), checks.max_compression_state[e],
                    cell(_value(checks.tension_resistance[e], f)), cell(_value(checks.euler_load[e], f)),
                    cell(_value(checks.compression_resistance[e], f)), cell(_value(checks.slenderness[e], 1.0)),
                    cell(_value(checks.tension_slenderness[e], 1.0))]
                   + [cell(_value(checks.utilisation[c][e], 1.0)) for c in CHECKS]
                   + [cell(_value(governing[e], 1.0)), checks.governing_check[e]])
    return buf.getvalue()
