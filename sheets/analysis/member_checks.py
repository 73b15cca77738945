"""Indicative member checks (METHODS.md section 9): a pure stage Analysis -> MemberChecks.

Code-neutral and indicative only. Every factor comes from the project's
[design] table; a factor the file does not give leaves out the check that needs
it, and ``omitted`` says so. Nothing here is a built-in code value.

- tension:      t <= A f_y / gamma
- compression:  |t| <= min(A f_y, N_cr) / gamma,  N_cr = pi^2 E I / L_b^2
  (Euler's critical load of a pin-ended strut, Euler 1744, with the
  buckling length L_b = K L), or with ``compression_method = "buckling_curve"``
  |t| <= chi A f_y / gamma (sheets.analysis.buckling). N_cr is taken about
  both buckling axes (in plane and out of plane: each its own L_b and I) and
  the lower governs; K per member or group, or a buckling length per axis,
  may replace the one K of [design];
- slenderness:  L_b / r (the larger over the axes) against ``slenderness_limit``
  for members that see compression, L / r against ``tension_slenderness_limit``
  for members that see only tension, with r = sqrt(I / A).

Demands are the largest tension and compression of each member over the
strength states (sheets.analysis.design_states: the combinations tagged
"strength", else every state but the serviceability ones). Cables take no compression and
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
from sheets.analysis.buckling import imperfection_factor, reduction_factor, relative_slenderness
from sheets.analysis.design_states import design_states
from sheets.model.project import DesignOptions

CHECKS = ("tension", "compression", "slenderness", "tension_slenderness")
CHECK_TITLES = {
    "tension": "tension resistance",
    "compression": "compression resistance (squash and Euler buckling)",
    "slenderness": "slenderness L_b/r of compression members",
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
    basis: str = ""  # which states the demands come from, in words (sheets.analysis.design_states)
    buckling_length_in_plane: np.ndarray | None = None  # (m,) m, K L or the length the project gives
    buckling_length_out_of_plane: np.ndarray | None = None  # (m,) m
    euler_load_in_plane: np.ndarray | None = None  # (m,) N
    euler_load_out_of_plane: np.ndarray | None = None  # (m,) N
    buckling_axis: tuple[str, ...] = ()  # the axis with the lower critical load: "in plane", "out of plane", ...
    relative_slenderness: np.ndarray | None = None  # (m,) sqrt(A f_y / N_cr), buckling curve method only
    reduction_factor: np.ndarray | None = None  # (m,) chi, buckling curve method only
    imperfection_factor: float | None = None  # alpha, where the buckling curve method is used
    compression_partial_factor: float | None = None  # gamma on the compression resistance

    @property
    def compression_method(self) -> str:
        return "buckling_curve" if self.imperfection_factor is not None else "euler"

    def title(self, check: str) -> str:
        """The check's title as made here (the compression title names the method used)."""
        if check == "compression" and self.compression_method == "buckling_curve":
            return "compression resistance (buckling curve)"
        return CHECK_TITLES[check]

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


def _per_member(project, entries, values: np.ndarray) -> np.ndarray:
    """Write each (member or group id, value) entry into ``values`` (a copy): a member's own entry wins over its group's."""
    out = values.copy()
    index = {mid: e for e, mid in enumerate(project.member_ids)}
    groups = np.array(project.member_groups)
    for name, value in sorted(entries, key=lambda entry: entry[0] in index):  # groups first, then members
        if value is None:
            continue
        if name in index:
            out[index[name]] = value
        else:
            out[groups == name] = value
    return out


def buckling_lengths(project, lengths: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """In-plane and out-of-plane buckling lengths per member (m; NaN where the project gives no way to find one).

    K L with K from [design.effective_length_factors] (member, then group) or [design] effective_length_factor;
    a length given in [design.buckling_lengths] for an axis replaces K L on that axis.
    """
    d = project.design
    k = np.full(project.n_members, np.nan if d.effective_length_factor is None else d.effective_length_factor)
    k = _per_member(project, d.effective_length_factors, k)
    in_plane = _per_member(project, [(n, a) for n, a, _ in d.buckling_lengths], k * lengths)
    out_of_plane = _per_member(project, [(n, b) for n, _, b in d.buckling_lengths], k * lengths)
    return in_plane, out_of_plane


def _axis_second_moments(analysis: Analysis, inertia: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Second moment per buckling axis (m^4): the section's per-axis value where given, else its second_moment."""
    p = analysis.project
    both = []
    for key in ("second_moment_in_plane", "second_moment_out_of_plane"):
        given = np.array([np.nan if p.sections.get(s) is None or getattr(p.sections[s], key) is None
                          else getattr(p.sections[s], key) for s in p.member_sections], dtype=float).reshape(-1)
        both.append(np.where(np.isnan(given), inertia, given))
    return both[0], both[1]


def member_checks(analysis: Analysis) -> MemberChecks:
    p = analysis.project
    d = p.design
    m = p.n_members
    lengths = analysis.equilibrium.lengths
    basis = design_states(analysis)
    env = make_envelope(p, basis.strength)
    tension, compression = env.max_tension, env.max_compression
    scale = max(float(np.abs(tension).max(initial=0.0)), float(np.abs(compression).max(initial=0.0)))
    in_tension = tension > FORCE_EPS * scale
    in_compression = compression < -FORCE_EPS * scale
    roles = np.array(p.member_roles)
    cable = roles == "cable"

    area, inertia, fy, modulus = _section_properties(analysis)
    i_in, i_out = _axis_second_moments(analysis, inertia)
    with np.errstate(invalid="ignore", divide="ignore"):
        r_in, r_out = np.sqrt(i_in / area), np.sqrt(i_out / area)
        radius = np.fmin(r_in, r_out)
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

    # compression takes gamma_b = buckling_partial_factor with the buckling curve method, where given
    alpha = imperfection_factor(d) if d.compression_method == "buckling_curve" else None
    gamma = d.partial_factor if alpha is None or d.buckling_partial_factor is None else d.buckling_partial_factor

    # tension
    t_res = nan.copy()
    if d.partial_factor is None:
        what = "Tension and compression resistance" if gamma is None else "Tension resistance"
        omitted.append(f"{what}: the project gives no partial_factor in [design].")
    else:
        ok = missing(in_tension, {"area": area, "yield strength": fy}, "tension")
        t_res[ok] = area[ok] * fy[ok] / d.partial_factor
        util["tension"][ok] = tension[ok] / t_res[ok]

    # compression (cables cannot take it: a role conflict, below), about the weaker buckling axis
    struts = in_compression & ~cable
    len_in, len_out = buckling_lengths(p, lengths)
    n_cr, n_in, n_out, c_res, lam, chi = (nan.copy() for _ in range(6))
    axis = [""] * m
    has_length = np.isfinite(len_in) & np.isfinite(len_out)
    if not (np.isfinite(len_in) | np.isfinite(len_out)).any():
        omitted.append("Buckling and the slenderness of compression members: the project gives no "
                       "effective_length_factor (or buckling lengths) in [design].")
        if gamma is not None:
            omitted.append("Compression resistance: it needs the Euler load, so also the effective_length_factor.")
    else:
        for e in np.flatnonzero(struts & ~has_length):
            which = "in-plane" if np.isnan(len_in[e]) else "out-of-plane"
            unchecked.append((int(e), f"{CHECK_TITLES['compression']}: no effective length factor or {which} buckling length"))
        ok = missing(struts & has_length, {"second moment of area": i_in, "second moment of area (out of plane)": i_out,
                                           "elastic modulus": modulus}, "compression")
        n_in[ok] = euler_load(modulus[ok], i_in[ok], len_in[ok])
        n_out[ok] = euler_load(modulus[ok], i_out[ok], len_out[ok])
        n_cr[ok] = np.minimum(n_in[ok], n_out[ok])
        for e in np.flatnonzero(ok):
            axis[e] = ("both axes alike" if math.isclose(n_in[e], n_out[e], rel_tol=1e-12)
                       else "in plane" if n_in[e] < n_out[e] else "out of plane")
        if gamma is not None:
            ok2 = missing(ok, {"area": area, "yield strength": fy}, "compression")
            squash = area[ok2] * fy[ok2]
            if alpha is None:
                c_res[ok2] = np.minimum(squash, n_cr[ok2]) / gamma
            else:
                lam[ok2] = relative_slenderness(squash, n_cr[ok2])
                chi[ok2] = reduction_factor(lam[ok2], alpha)
                c_res[ok2] = chi[ok2] * squash / gamma
            util["compression"][ok2] = -compression[ok2] / c_res[ok2]

    # slenderness: the larger of L_b / r per axis for compression members, L / r (smaller r) for tension-only members
    slender = nan.copy()
    t_slender = nan.copy()
    ok = struts & has_length & ~np.isnan(r_in) & ~np.isnan(r_out)
    slender[ok] = np.maximum(len_in[ok] / r_in[ok], len_out[ok] / r_out[ok])
    if has_length.any():
        if d.slenderness_limit is None:
            omitted.append("Slenderness of compression members against a limit: the project gives no slenderness_limit in [design].")
        else:
            ok = missing(struts & has_length, {"area": area, "second moment of area": inertia}, "slenderness")
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
    for arr in (area, inertia, radius, fy, modulus, t_res, n_cr, c_res, slender, t_slender, len_in, len_out, n_in, n_out,
                lam, chi, *util.values()):
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
        basis=basis.note,
        buckling_length_in_plane=len_in,
        buckling_length_out_of_plane=len_out,
        euler_load_in_plane=n_in,
        euler_load_out_of_plane=n_out,
        buckling_axis=tuple(axis),
        relative_slenderness=lam,
        reduction_factor=chi,
        imperfection_factor=alpha,
        compression_partial_factor=gamma,
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
    f, L = project.units.factor("force"), project.units.factor("length")
    d = checks.design
    worst = checks.worst
    governing = checks.governing
    return {
        "indicative": True,
        "note": "Indicative checks with the project's factors; not a code check. The governing code is for the engineer.",
        "over": list(checks.over),
        "states_basis": checks.basis,
        "compression_method": checks.compression_method,
        "imperfection_factor": checks.imperfection_factor,
        "compression_partial_factor": checks.compression_partial_factor,
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
                "buckling_length_in_plane": _value(checks.buckling_length_in_plane[e], L),
                "buckling_length_out_of_plane": _value(checks.buckling_length_out_of_plane[e], L),
                "euler_load_in_plane": _value(checks.euler_load_in_plane[e], f),
                "euler_load_out_of_plane": _value(checks.euler_load_out_of_plane[e], f),
                "buckling_axis": checks.buckling_axis[e],
                "relative_slenderness": _value(checks.relative_slenderness[e], 1.0),
                "reduction_factor": _value(checks.reduction_factor[e], 1.0),
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
                f"compression resistance [{fu}]", f"buckling length in plane [{u.label('length')}]",
                f"buckling length out of plane [{u.label('length')}]", "buckling axis", "relative slenderness",
                "reduction factor chi", "KL/r", "L/r", "u tension", "u compression", "u slenderness",
                "u tension slenderness", "u governing", "governing check"])
    cell = lambda v: "" if v is None else repr(v)
    governing = checks.governing
    for e, mid in enumerate(project.member_ids):
        w.writerow([mid, project.member_groups[e], project.member_sections[e], project.member_roles[e],
                    cell(_value(lengths[e], L)), cell(_value(checks.max_tension[e], f)), checks.max_tension_state[e],
                    cell(_value(checks.max_compression[e], f)), checks.max_compression_state[e],
                    cell(_value(checks.tension_resistance[e], f)), cell(_value(checks.euler_load[e], f)),
                    cell(_value(checks.compression_resistance[e], f)),
                    cell(_value(checks.buckling_length_in_plane[e], L)), cell(_value(checks.buckling_length_out_of_plane[e], L)),
                    checks.buckling_axis[e], cell(_value(checks.relative_slenderness[e], 1.0)),
                    cell(_value(checks.reduction_factor[e], 1.0)), cell(_value(checks.slenderness[e], 1.0)),
                    cell(_value(checks.tension_slenderness[e], 1.0))]
                   + [cell(_value(checks.utilisation[c][e], 1.0)) for c in CHECKS]
                   + [cell(_value(governing[e], 1.0)), checks.governing_check[e]])
    return buf.getvalue()
