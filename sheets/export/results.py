"""The results contract: a versioned JSON document and the same data as CSV tables.

Schema "sheets.results/1", documented in docs/results-schema.md. Values are in
the project's display units, named in the document's "units" block. Later
stages add their own top-level sections through ``extra`` without changing
what is here.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any, Iterable, Mapping

import numpy as np

from sheets import __version__
from sheets.analysis.analyse import Analysis, case_self_weight
from sheets.analysis.states import State
from sheets.export.atomic import write_atomic
from sheets.export.json_text import json_text
from sheets.model.project import AXES

SCHEMA = "sheets.results/1"


def _num(value: float) -> float:
    """Plain float for JSON; -0.0 printed as 0.0 so equal results give equal bytes."""
    v = float(value)
    return 0.0 if v == 0 else v


def _vec(values: Iterable[float]) -> list[float]:
    return [_num(v) for v in values]


def _state(analysis: Analysis, state: State) -> dict[str, Any]:
    p = analysis.project
    u = p.units
    force, disp = u.factor("force"), u.factor("displacement")
    fixed_nodes = np.flatnonzero(p.fixed.any(axis=1))
    loaded = np.flatnonzero(np.abs(state.loads).max(axis=1) > 0)
    c = state.checks
    return {
        "id": state.id,
        "kind": state.kind,
        "title": state.title,
        "factors": {cid: _num(f) for cid, f in state.factors},
        "method": state.method,
        "forces": {mid: _num(t / force) for mid, t in zip(p.member_ids, state.forces)},
        "reactions": {p.node_ids[i]: _vec(state.reactions[i] / force) for i in fixed_nodes},
        "loads": {p.node_ids[i]: _vec(state.loads[i] / force) for i in loaded},
        "displacements": None
        if state.displacements is None
        else {nid: _vec(d / disp) for nid, d in zip(p.node_ids, state.displacements)},
        "load_path": _num(analysis.load_path(state) / u.factor("load_path")),
        "checks": {
            "passed": bool(c.passed),
            "tolerance": _num(c.tolerance),
            "nodal_residual": _num(c.residual),
            "resultant": _num(c.resultant),
            "moment": _num(c.moment),
            "load_path_members": _num(c.load_path_members / u.factor("load_path")),
            "load_path_loads": _num(c.load_path_loads / u.factor("load_path")),
            "load_path_error": _num(c.load_path_error),
        },
    }


def _determinacy(analysis: Analysis) -> dict[str, Any]:
    d = analysis.determinacy
    return {
        "nodes": d.n_nodes,
        "members": d.n_members,
        "fixed_translations": d.n_fixed,
        "free_translations": d.n_free,
        "rank": d.rank,
        "self_stress_states": d.self_stress,
        "mechanisms": d.mechanisms,
        "maxwell_rule": {"m_minus_dn_plus_fixed": d.maxwell, "s_minus_k": d.self_stress - d.mechanisms, "holds": d.maxwell_holds},
        "largest_singular_value": _num(d.largest_singular),
        "smallest_kept_singular_value": _num(d.smallest_kept_singular),
        "conditioning": _num(d.conditioning),
        "rank_tolerance": _num(d.tolerance),
        "null_space_residual": _num(d.null_residual),
        "null_spaces_verified": d.bases_verified,
        "route": d.route,
        "classification": d.classification,
    }




def _basis(info) -> dict[str, Any] | None:
    b = info.basis
    if b is None:
        return None
    return {"design_code": b.design_code, "assumptions": list(b.assumptions),
            "load_derivation": list(b.load_derivation), "notes": list(b.notes)}


def _input_loads(analysis: Analysis) -> list[dict[str, Any]]:
    """Each load case's nodal loads as given, and its self-weight apart (the states' ``loads`` hold their sum)."""
    p = analysis.project
    force = p.units.factor("force")
    out = []
    for case in p.cases:
        weight = case_self_weight(p, case)
        out.append({
            "id": case.id,
            "title": case.title,
            "self_weight": bool(case.self_weight),
            "applied": {p.node_ids[i]: _vec(case.loads[i] / force) for i in np.flatnonzero(np.abs(case.loads).max(axis=1) > 0)},
            "self_weight_loads": {p.node_ids[i]: _vec(weight[i] / force) for i in np.flatnonzero(np.abs(weight).max(axis=1) > 0)},
        })
    return out


def results_document(analysis: Analysis, extra: Mapping[str, Any] | None = None) -> dict[str, Any]:
    p = analysis.project
    u = p.units
    length = u.factor("length")
    env = analysis.envelope
    force = u.factor("force")
    info = p.info
    doc: dict[str, Any] = {
        "schema": SCHEMA,
        "generator": {"name": "sheets", "version": __version__},
        "project": {
            "title": info.title,
            "number": info.number,
            "client": info.client,
            "calculation": info.calculation,
            "revision": info.revision,
            "date": info.date,
            "prepared_by": info.prepared_by,
            "checked_by": info.checked_by,
            "status": info.status,
            "source": Path(p.source).name,
            "fingerprint": p.fingerprint,
            "basis": _basis(info),
        },
        "units": dict(u.units),
        "dimension": p.dim,
        "nodes": [
            {"id": nid, "coordinates": _vec(xyz / length), "fixed": [a for a, f in zip(AXES, p.fixed[i]) if f]}
            for i, (nid, xyz) in enumerate(zip(p.node_ids, p.coords))
        ],
        "members": [
            {
                "id": mid,
                "start": p.node_ids[a],
                "end": p.node_ids[b],
                "length": _num(L / length),
                "section": p.member_sections[e],
                "role": p.member_roles[e],
                "group": p.member_groups[e],
            }
            for e, (mid, (a, b), L) in enumerate(zip(p.member_ids, p.ends, analysis.equilibrium.lengths))
        ],
        "load_cases": _input_loads(analysis),
        "determinacy": _determinacy(analysis),
        "states": [_state(analysis, s) for s in analysis.states],
        "envelope": {
            "over": list(env.over),
            "members": {
                mid: {
                    "max_tension": _num(env.max_tension[e] / force),
                    "max_tension_state": env.max_tension_state[e],
                    "max_compression": _num(env.max_compression[e] / force),
                    "max_compression_state": env.max_compression_state[e],
                }
                for e, mid in enumerate(p.member_ids)
            },
        },
        "checks_passed": bool(analysis.passed),
    }
    if extra:
        clash = set(extra) & set(doc)
        if clash:
            raise ValueError(f"extra results sections clash with the core schema: {sorted(clash)}")
        doc.update(extra)
    return doc


def results_json(analysis: Analysis, extra: Mapping[str, Any] | None = None) -> str:
    return json_text(results_document(analysis, extra), levels=2)


def _csv_text(header: list[str], rows: Iterable[list[Any]]) -> str:
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(header)
    for row in rows:
        writer.writerow([repr(_num(v)) if isinstance(v, (float, np.floating)) else v for v in row])
    return buf.getvalue()


def results_tables(analysis: Analysis) -> dict[str, str]:
    """File name -> CSV text, the same data as the JSON document."""
    p = analysis.project
    u = p.units
    force, length, disp = u.factor("force"), u.factor("length"), u.factor("displacement")
    states = analysis.states
    ids = [s.id for s in states]
    f_unit, d_unit, l_unit = u.label("force"), u.label("displacement"), u.label("length")
    tables = {
        "nodes.csv": _csv_text(
            ["node"] + [f"{a} [{l_unit}]" for a in p.axes] + [f"fixed {a}" for a in p.axes],
            ([nid] + list(xyz / length) + [bool(f) for f in p.fixed[i]] for i, (nid, xyz) in enumerate(zip(p.node_ids, p.coords))),
        ),
        "loads.csv": _csv_text(
            ["case", "node"] + [f"applied f{a} [{f_unit}]" for a in p.axes] + [f"self-weight f{a} [{f_unit}]" for a in p.axes],
            _load_rows(analysis),
        ),
        "members.csv": _csv_text(
            ["member", "start", "end", f"length [{l_unit}]", "section", "role", "group"],
            ([mid, p.node_ids[a], p.node_ids[b], L / length, p.member_sections[e], p.member_roles[e], p.member_groups[e]]
             for e, (mid, (a, b), L) in enumerate(zip(p.member_ids, p.ends, analysis.equilibrium.lengths))),
        ),
        "forces.csv": _csv_text(
            ["member"] + [f"{i} [{f_unit}]" for i in ids],
            ([mid] + [s.forces[e] / force for s in states] for e, mid in enumerate(p.member_ids)),
        ),
        "reactions.csv": _csv_text(
            ["node", "axis"] + [f"{i} [{f_unit}]" for i in ids],
            ([p.node_ids[n], AXES[a]] + [s.reactions[n, a] / force for s in states] for n, a in zip(*np.nonzero(p.fixed))),
        ),
        "envelope.csv": _csv_text(
            ["member", f"max tension [{f_unit}]", "tension state", f"max compression [{f_unit}]", "compression state"],
            ([mid, analysis.envelope.max_tension[e] / force, analysis.envelope.max_tension_state[e],
              analysis.envelope.max_compression[e] / force, analysis.envelope.max_compression_state[e]]
             for e, mid in enumerate(p.member_ids)),
        ),
        "checks.csv": _csv_text(
            ["state", "kind", "passed", "nodal residual", "resultant", "moment", f"load path members [{u.label('load_path')}]",
             f"load path loads [{u.label('load_path')}]", "load path error", "method"],
            ([s.id, s.kind, s.checks.passed, s.checks.residual, s.checks.resultant, s.checks.moment,
              s.checks.load_path_members / u.factor("load_path"), s.checks.load_path_loads / u.factor("load_path"),
              s.checks.load_path_error, s.method] for s in states),
        ),
        "determinacy.csv": _csv_text(
            ["quantity", "value"],
            [[k, v] for k, v in _determinacy(analysis).items() if not isinstance(v, dict)],
        ),
    }
    with_d = [s for s in states if s.displacements is not None]
    if with_d:
        tables["displacements.csv"] = _csv_text(
            ["node", "axis"] + [f"{s.id} [{d_unit}]" for s in with_d],
            ([nid, AXES[a]] + [s.displacements[n, a] / disp for s in with_d]
             for n, nid in enumerate(p.node_ids) for a in range(p.dim)),
        )
    return tables


def _load_rows(analysis: Analysis):
    """One row per case and loaded node: the loads as given and the self-weight apart, in the force unit."""
    p = analysis.project
    force = p.units.factor("force")
    for case in p.cases:
        weight = case_self_weight(p, case)
        for n in np.flatnonzero((np.abs(case.loads).max(axis=1) > 0) | (np.abs(weight).max(axis=1) > 0)):
            yield [case.id, p.node_ids[n]] + list(case.loads[n] / force) + list(weight[n] / force)


def write_results_json(analysis: Analysis, path: str | Path, extra: Mapping[str, Any] | None = None) -> Path:
    return write_atomic(path, results_json(analysis, extra))


def write_results_csv(analysis: Analysis, folder: str | Path) -> list[Path]:
    folder = Path(folder)
    return [write_atomic(folder / name, text) for name, text in results_tables(analysis).items()]
