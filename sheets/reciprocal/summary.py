"""The polyhedral results as plain dicts for the results JSON (keys in docs/polyhedral.md).

Values are in the project's display units, like the rest of the results
document: forces and face areas in the force unit (a face's area stands for a
force), lengths in the length unit, volumes in the volume unit.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from sheets.analysis.sizing import size_members, sizing_results
from sheets.export.results import _num, _vec
from sheets.reciprocal.cells import CHECK_TOLERANCE, NodeCells, node_cells
from sheets.reciprocal.minkowski_sum import MinkowskiView, minkowski_view
from sheets.reciprocal.polarity import ProjectPolarity, height_factor, project_complex, project_polarity

CONVENTION = ("At each node a member's face has area |t| and outward normal sign(t) d, d pointing from the node "
              "along the member: a tension face faces the member, a compression face faces away. The external "
              "force p (loads and reactions) has a face of area |p|, normal p/|p|. Sum of area x normal = 0 is "
              "nodal equilibrium.")


def cells_results(cells: NodeCells, units, detail: bool = True) -> dict[str, Any]:
    f = units.factor("force")
    doc: dict[str, Any] = {
        "passed": bool(cells.passed),
        "tolerance": CHECK_TOLERANCE,
        "normal_error": _num(cells.normal_error),
        "area_error": _num(cells.size_error),
        "closed_cells": len(cells.of_kind("cell")),
        "flat_nodes": list(cells.of_kind("polygon")),
        "collinear_nodes": list(cells.of_kind("segment")),
        "unloaded_nodes": list(cells.of_kind("none")),
        "failed_nodes": {c.node: c.note for c in cells.cells if c.kind == "failed"},
    }
    if detail:
        doc["nodes"] = {
            c.node: {
                "kind": c.kind,
                "newton_iterations": c.iterations,
                "zero_force_members": list(c.zero_members),
                "faces": [
                    {
                        "members": [p.id for p in parts if p.kind == "member"],
                        "external": any(p.kind == "external" for p in parts),
                        "forces": [_num(p.force / f) for p in parts],
                        "size": _num(size / f),
                        "normal": _vec(n),
                    }
                    for parts, size, n in zip(c.parts, c.sizes, c.normals)
                ],
            }
            for c in cells.cells
        }
    return doc


def minkowski_results(view: MinkowskiView, units) -> dict[str, Any]:
    lp = units.factor("load_path")
    length = units.factor("length")
    measure = length ** (2 if view.dim == 2 else 3)
    return {
        "mix": _num(view.mix),
        "kappa_si": _num(view.kappa),
        "kappa_unit": "m/N" if view.dim == 2 else "m/sqrt(N)",
        "layout": view.layout,
        "measure": "area" if view.dim == 2 else "volume",
        "factor_si": _num(view.factor),
        "total": _num(view.total / measure),
        "tension": _num(view.total_tension / measure),
        "compression": _num(view.total_compression / measure),
        "load_path": _num(view.load_path / lp),
        "sum_t_L": _num(view.load_path_signed / lp),
        "sum_f_x": _num(view.loads_term / lp),
        "piece_error": _num(view.piece_error),
        "total_error": _num(view.total_error),
        "maxwell_error": _num(view.maxwell_error),
        "passed": bool(view.passed),
        "not_drawn": list(view.not_drawn),
        "members": {p.id: _num(p.measure / measure) for p in view.members},
    }


def polarity_results(polar: ProjectPolarity, project) -> dict[str, Any]:
    units = project.units
    f = units.factor("force")
    doc: dict[str, Any] = {"requested": polar.requested, "use": polar.use, "note": polar.note,
                           "usable": polar.usable}
    if polar.complex is not None:
        doc["cells"] = polar.complex.n_cells
        doc["complex_from"] = polar.complex.source
    if polar.fit is not None:
        doc["fits"] = bool(polar.fit.fits)
    if polar.diagram is not None:
        doc["misfit_to_state"] = _num(polar.state_misfit)
        doc["matches_state"] = polar.matches_state
    d = polar.diagram
    if d is not None:
        hf = height_factor(units)
        doc.update({
            "heights": {nid: _num(z / hf) for nid, z in zip(project.node_ids, d.heights)},
            "forces": {mid: _num(t / f) for mid, t in zip(project.member_ids, d.forces)},
            "external": {nid: _vec(p / f) for nid, p in zip(project.node_ids, d.external) if np.abs(p).max() > 0},
            "sign": d.sign,
            "inverted_nodes": [project.node_ids[v] for v in d.inverted_nodes],
            "checks": {
                "interior_closure": _num(d.interior_closure),
                "perpendicularity": _num(d.perpendicularity),
                "planarity": _num(d.planarity),
            },
        })
    return doc


def polyhedral_results(analysis, state_ids=None, detail: bool = True) -> dict[str, Any]:
    """Node cells, Minkowski view, polarity (where asked) per state, and the sizing, as plain data."""
    project = analysis.project
    wanted = tuple(state_ids or project.drawing.states or (s.id for s in analysis.states))
    complex_ = None
    if project.dim == 3 and (project.polyhedral.cells or project.polyhedral.find_tetrahedra):
        try:
            complex_ = project_complex(project)
        except Exception:  # reported per state by project_polarity
            complex_ = None
    states = {}
    for sid in wanted:
        cells = node_cells(analysis, sid)
        entry: dict[str, Any] = {"node_cells": cells_results(cells, project.units, detail)}
        polar = project_polarity(analysis, sid, complex_) if project.dim == 3 else None
        view = minkowski_view(analysis, cells, polar=polar.diagram if polar is not None and polar.matches_state else None)
        entry["minkowski"] = minkowski_results(view, project.units)
        if polar is not None and polar.requested:
            entry["polarity"] = polarity_results(polar, project)
        states[sid] = entry
    return {
        "convention": CONVENTION,
        "states": states,
        "sizing": sizing_results(size_members(analysis), project.units),
    }
