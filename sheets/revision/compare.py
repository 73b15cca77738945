"""What changed between two revisions of a design, read from their results documents.

Both sides are results documents (schema sheets.results/1: a results.json, or
the document of a project solved in memory), so a project file can be compared
with the results issued for an earlier revision. Values are compared in SI, so
two revisions written in different display units compare correctly.

A member's force counts as changed when it moves by more than ``force_change``
times the largest force of that state (in either revision); its utilisation
when the governing utilisation of the indicative checks moves by more than
``utilisation_change``; a node moved when it moves by more than a millionth of
the frame's size.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np

from sheets.model.units import si_factor

SCHEMA = "sheets.comparison/1"
RESULTS_SCHEMA = "sheets.results/1"


@dataclass(frozen=True)
class Change:
    """One thing that changed: where (state, id), what, and the old and new values (SI or text)."""

    what: str  # e.g. "node moved", "member force", "load"
    item: str  # node or member id
    state: str = ""
    old: Any = None
    new: Any = None
    kind: str = ""  # the unit kind of old and new ("force", "length", "load_path"), "" for words and ratios


@dataclass(frozen=True)
class Comparison:
    old: str  # "revision A (fingerprint 1a2b3c4d)"
    new: str
    geometry: tuple[Change, ...]  # nodes, supports, members, sections, roles
    loads: tuple[Change, ...]
    states: tuple[Change, ...]  # states added or removed
    forces: tuple[Change, ...]  # member forces beyond the threshold, per state
    utilisations: tuple[Change, ...]
    determinacy: tuple[Change, ...]
    load_paths: tuple[Change, ...]
    thresholds: Mapping[str, float] = field(default_factory=dict)
    units: Mapping[str, str] = field(default_factory=dict)  # the new revision's display units, for printing

    @property
    def changed_members(self) -> tuple[str, ...]:
        """Every member named by a geometry, force or utilisation change, sorted (for figures)."""
        members = {c.item for c in self.geometry if c.what.startswith("member")}
        members |= {c.item for c in self.forces + self.utilisations}
        return tuple(sorted(members))

    @property
    def empty(self) -> bool:
        return not (self.geometry or self.loads or self.states or self.forces or self.utilisations or self.determinacy)


def _label(doc: Mapping) -> str:
    project = doc.get("project", {})
    revision = project.get("revision") or "(no revision)"
    return f"{project.get('title', '')} revision {revision} (fingerprint {str(project.get('fingerprint', ''))[:12]})".strip()


def _factor(doc: Mapping, kind: str) -> float:
    return si_factor(doc["units"][kind], kind)


def _nodes(doc: Mapping) -> dict[str, tuple[np.ndarray, tuple[str, ...]]]:
    f = _factor(doc, "length")
    return {n["id"]: (np.asarray(n["coordinates"], float) * f, tuple(n["fixed"])) for n in doc["nodes"]}


def _members(doc: Mapping) -> dict[str, dict]:
    return {m["id"]: m for m in doc["members"]}


def compare_results(old: Mapping, new: Mapping, force_change: float = 0.01, utilisation_change: float = 0.01) -> Comparison:
    """The changes from ``old`` to ``new`` (two results documents)."""
    for doc in (old, new):
        if doc.get("schema") != RESULTS_SCHEMA:
            raise ValueError(f"not a results document of schema {RESULTS_SCHEMA}: {doc.get('schema')!r}")
    return Comparison(
        old=_label(old),
        new=_label(new),
        geometry=tuple(_geometry(old, new)),
        loads=tuple(_loads(old, new)),
        states=tuple(_states(old, new)),
        forces=tuple(_forces(old, new, force_change)),
        utilisations=tuple(_utilisations(old, new, utilisation_change)),
        determinacy=tuple(_determinacy(old, new)),
        load_paths=tuple(_load_paths(old, new)),
        thresholds={"force_change": force_change, "utilisation_change": utilisation_change},
        units=dict(new["units"]),
    )


def _added_removed(what: str, old: Mapping, new: Mapping, describe=lambda value: (None, "")):
    """Items only in ``new`` (added) or only in ``old`` (removed); ``describe(value)`` gives the
    (value, kind) recorded with them, so a removed item can still be drawn where it was."""
    for item in sorted(set(new) - set(old)):
        value, kind = describe(new[item])
        yield Change(f"{what} added", item, new=value, kind=kind)
    for item in sorted(set(old) - set(new)):
        value, kind = describe(old[item])
        yield Change(f"{what} removed", item, old=value, kind=kind)


def _geometry(old: Mapping, new: Mapping):
    a, b = _nodes(old), _nodes(new)
    points = [xyz for xyz, _ in list(a.values()) + list(b.values())]
    size = float(np.ptp(np.array(points), axis=0).max()) if points else 1.0
    yield from _added_removed("node", a, b, lambda node: (node[0].tolist(), "length"))
    for nid in sorted(set(a) & set(b)):
        (xa, fa), (xb, fb) = a[nid], b[nid]
        if xa.shape != xb.shape or np.linalg.norm(xb - xa) > 1e-6 * (size or 1.0):
            yield Change("node moved", nid, old=xa.tolist(), new=xb.tolist(), kind="length")
        if fa != fb:
            yield Change("support changed", nid, old="".join(fa) or "free", new="".join(fb) or "free")
    ma, mb = _members(old), _members(new)
    yield from _added_removed("member", ma, mb, lambda m: ([m["start"], m["end"]], ""))
    for mid in sorted(set(ma) & set(mb)):
        ea, eb = ma[mid], mb[mid]
        if {ea["start"], ea["end"]} != {eb["start"], eb["end"]}:
            yield Change("member reconnected", mid, old=f"{ea['start']}-{ea['end']}", new=f"{eb['start']}-{eb['end']}")
        for key in ("section", "role"):
            if ea[key] != eb[key]:
                yield Change(f"member {key} changed", mid, old=ea[key], new=eb[key])


def _states_by_id(doc: Mapping) -> dict[str, dict]:
    return {s["id"]: s for s in doc["states"]}


def _states(old: Mapping, new: Mapping):
    yield from _added_removed("state", _states_by_id(old), _states_by_id(new))


def _common_states(old: Mapping, new: Mapping):
    a, b = _states_by_id(old), _states_by_id(new)
    return [(sid, a[sid], b[sid]) for sid in b if sid in a]


def _loads(old: Mapping, new: Mapping):
    fa, fb = _factor(old, "force"), _factor(new, "force")
    for sid, sa, sb in _common_states(old, new):
        if sb["kind"] == "combination":  # its loads follow from its cases and factors
            if sa.get("factors") != sb.get("factors"):
                yield Change("combination factors", sid, sid, sa.get("factors"), sb.get("factors"))
            continue
        la = {n: np.asarray(v, float) * fa for n, v in sa["loads"].items()}
        lb = {n: np.asarray(v, float) * fb for n, v in sb["loads"].items()}
        scale = max([float(np.abs(v).max()) for v in list(la.values()) + list(lb.values())] or [1.0])
        for nid in sorted(set(la) | set(lb)):
            va, vb = la.get(nid), lb.get(nid)
            if va is None or vb is None or va.shape != vb.shape or np.abs(vb - va).max() > 1e-9 * scale:
                yield Change("load", nid, sid, None if va is None else va.tolist(), None if vb is None else vb.tolist(), "force")


def _forces(old: Mapping, new: Mapping, threshold: float):
    fa, fb = _factor(old, "force"), _factor(new, "force")
    for sid, sa, sb in _common_states(old, new):
        ta = {m: v * fa for m, v in sa["forces"].items()}
        tb = {m: v * fb for m, v in sb["forces"].items()}
        largest = max([abs(v) for v in list(ta.values()) + list(tb.values())] or [0.0])
        for mid in tb:
            if mid in ta and abs(tb[mid] - ta[mid]) > threshold * largest:
                yield Change("member force", mid, sid, ta[mid], tb[mid], "force")


def _governing(doc: Mapping) -> dict[str, float]:
    members = (doc.get("member_checks") or {}).get("members") or {}
    return {mid: row.get("governing") for mid, row in members.items() if row.get("governing") is not None}


def _utilisations(old: Mapping, new: Mapping, threshold: float):
    ua, ub = _governing(old), _governing(new)
    for mid in sorted(set(ua) & set(ub)):
        if abs(ub[mid] - ua[mid]) > threshold:
            yield Change("utilisation", mid, old=ua[mid], new=ub[mid])


def _determinacy(old: Mapping, new: Mapping):
    da, db = old["determinacy"], new["determinacy"]
    for key in ("rank", "self_stress_states", "mechanisms", "classification"):
        if da.get(key) != db.get(key):
            yield Change("determinacy", key, old=da.get(key), new=db.get(key))


def _load_paths(old: Mapping, new: Mapping):
    fa, fb = _factor(old, "load_path"), _factor(new, "load_path")
    for sid, sa, sb in _common_states(old, new):
        yield Change("load path", sid, sid, sa["load_path"] * fa, sb["load_path"] * fb, "load_path")


def summary(c: Comparison) -> str:
    """One sentence for a cover or a console: which revision, and how much changed beyond the thresholds."""
    if c.empty:
        return f"Compared with {c.old}: no change in geometry, loads, states, member forces, utilisations or determinacy."
    n = len(c.changed_members)
    counts = [f"{len(x)} {name} change{'s' if len(x) != 1 else ''}" for name, x in
              (("geometry", c.geometry), ("load", c.loads), ("state", c.states), ("determinacy", c.determinacy)) if x]
    return (f"Compared with {c.old}: {n} member{'s' if n != 1 else ''} changed (geometry, or force beyond "
            f"{c.thresholds['force_change'] * 100:g} % of a state's largest, or utilisation beyond "
            f"{c.thresholds['utilisation_change']:g})" + ("; " + ", ".join(counts) if counts else "") + ".")


@dataclass(frozen=True)
class FrameMarks:
    """What a figure of the new frame marks: members and nodes by id, and where removed ones were (SI)."""

    changed: tuple[str, ...]  # members in both revisions, changed in geometry, force or utilisation
    added_members: tuple[str, ...]
    removed_members: tuple[tuple[str, tuple, tuple], ...]  # (id, start, end coordinates in the old revision)
    added_nodes: tuple[str, ...]
    removed_nodes: tuple[tuple[str, tuple], ...]  # (id, old coordinates)
    moved_nodes: tuple[tuple[str, tuple], ...]  # (id, old coordinates)


def frame_marks(c: Comparison, coordinates: Mapping[str, Any]) -> FrameMarks:
    """The marks of ``c`` on the new frame, whose node coordinates (SI, by id) are ``coordinates``."""
    def ids(what: str) -> tuple[str, ...]:
        return tuple(x.item for x in c.geometry if x.what == what)

    moved = tuple((x.item, tuple(x.old)) for x in c.geometry if x.what == "node moved")
    removed_nodes = tuple((x.item, tuple(x.old)) for x in c.geometry if x.what == "node removed")
    # where each node of the old revision stood: as now, unless it moved or is gone
    old_position = {nid: tuple(xyz) for nid, xyz in coordinates.items()} | dict(moved) | dict(removed_nodes)
    removed_members = tuple((x.item, old_position[x.old[0]], old_position[x.old[1]])
                            for x in c.geometry if x.what == "member removed")
    added, gone = ids("member added"), {m for m, _, _ in removed_members}
    changed = tuple(m for m in c.changed_members if m not in gone and m not in added)
    return FrameMarks(changed, added, removed_members, ids("node added"), removed_nodes, moved)


def display_value(change_value: Any, kind: str, units: Mapping[str, str]) -> Any:
    """An SI value (or list of them) of ``kind`` in the display unit of ``units``."""
    if not kind or change_value is None:
        return change_value
    f = si_factor(units[kind], kind)
    return [v / f for v in change_value] if isinstance(change_value, list) else change_value / f


def comparison_document(c: Comparison) -> dict[str, Any]:
    """The comparison as plain JSON data (schema sheets.comparison/1), values in SI."""
    def rows(changes):
        return [{"what": x.what, "item": x.item, "state": x.state, "old": x.old, "new": x.new, "kind": x.kind} for x in changes]

    return {
        "schema": SCHEMA,
        "units": "SI: force N, length m, load path N*m",
        "old": c.old,
        "new": c.new,
        "thresholds": dict(c.thresholds),
        "geometry": rows(c.geometry),
        "loads": rows(c.loads),
        "states": rows(c.states),
        "member_forces": rows(c.forces),
        "utilisations": rows(c.utilisations),
        "determinacy": rows(c.determinacy),
        "load_paths": rows(c.load_paths),
        "changed_members": list(c.changed_members),
    }
