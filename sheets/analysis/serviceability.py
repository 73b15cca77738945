"""Displacements of the serviceability combinations: largest deflection, span / deflection, support movements.

- span: the largest horizontal distance between two supported nodes
  (horizontal = perpendicular to [geometry] vertical_axis);
- deflection: the displacement component along the vertical axis of largest
  magnitude (signed), and the largest total displacement |d|;
- span / |deflection|, against ``[design] deflection_limit`` n (span / n) where given;
- support movements: displacements of supported nodes along the directions
  their support leaves free (a sliding bearing's travel).

The displacements are the analysis' own (linear-elastic, small displacement):
the stiffness method for indeterminate frames, compatibility with the member
elongations t L / EA for determinate ones (sheets.analysis.solvers). They need
EA for every member; where a state has none the sheets say so.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import ConvexHull, QhullError
from scipy.spatial.distance import pdist, squareform

from sheets.analysis.design_states import design_states
from sheets.export.results import _num
from sheets.model.project import AXES

MOVEMENT_EPS = 1e-9  # |d| below this x the largest displacement of the state counts as no movement


@dataclass(frozen=True)
class StateDisplacements:
    state: str
    available: bool  # False where the analysis has no displacements for the state (``note`` says why)
    note: str
    deflection: float  # m, signed component along the vertical axis of largest magnitude
    deflection_node: str
    total: float  # m, largest |d|
    total_node: str
    ratio: float | None  # span / |deflection|; None without a span or with no deflection
    passed: bool | None  # ratio >= limit; None without a limit (or a ratio)
    support_movements: tuple[tuple[str, str, float], ...]  # (node, axis, m), largest first


@dataclass(frozen=True)
class Serviceability:
    states: tuple[StateDisplacements, ...]
    span: float | None  # m
    span_nodes: tuple[str, str]
    limit: float | None  # n in span / n
    note: str  # why there is nothing to show, where so

    @property
    def failing(self) -> tuple[StateDisplacements, ...]:
        return tuple(s for s in self.states if s.passed is False)


def support_span(project) -> tuple[float | None, tuple[str, str]]:
    """The largest horizontal distance between two supported nodes, and those nodes."""
    supported = np.flatnonzero(project.fixed.any(axis=1))
    if len(supported) < 2:
        return None, ("", "")
    horizontal = np.delete(project.coords[supported], project.vertical_axis, axis=1)
    candidates = _outline(horizontal)  # the farthest pair lies on the convex outline
    distances = squareform(pdist(horizontal[candidates]))
    i, j = np.unravel_index(int(distances.argmax()), distances.shape)
    if distances[i, j] <= 0:
        return None, ("", "")
    a, b = supported[candidates[i]], supported[candidates[j]]
    return float(distances[i, j]), (project.node_ids[a], project.node_ids[b])


def _outline(points: np.ndarray) -> np.ndarray:
    """Indices of the points on the convex outline (all of them where there are few, or they are collinear)."""
    if len(points) <= 64 or points.shape[1] == 1:
        return np.arange(len(points)) if points.shape[1] > 1 else np.array([points[:, 0].argmin(), points[:, 0].argmax()])
    try:
        return ConvexHull(points).vertices
    except QhullError:  # collinear in plan: the two ends along the line
        along = (points - points.mean(axis=0)) @ np.linalg.svd(points - points.mean(axis=0), full_matrices=False)[2][0]
        return np.array([along.argmin(), along.argmax()])


def state_displacements(project, state, span: float | None, limit: float | None) -> StateDisplacements:
    d = state.displacements
    if d is None:
        return StateDisplacements(state.id, False, "no displacements: they need the axial stiffness EA of every member "
                                  "(an area and a material, or axial_stiffness, on every section)",
                                  float("nan"), "", float("nan"), "", None, None, ())
    vertical = d[:, project.vertical_axis]
    k = int(np.abs(vertical).argmax())
    size = np.linalg.norm(d, axis=1)
    t = int(size.argmax())
    largest = float(size[t])
    ratio = span / abs(vertical[k]) if span is not None and abs(vertical[k]) > 0 else None
    passed = None if limit is None or ratio is None else bool(ratio >= limit)
    free_at_support = project.fixed.any(axis=1)[:, None] & ~project.fixed
    nodes, axes = np.nonzero(free_at_support & (np.abs(d) > MOVEMENT_EPS * largest))
    order = np.argsort(-np.abs(d[nodes, axes]), kind="stable")
    moves = tuple((project.node_ids[nodes[i]], AXES[axes[i]], float(d[nodes[i], axes[i]])) for i in order)
    return StateDisplacements(state.id, True, "", float(vertical[k]), project.node_ids[k], largest, project.node_ids[t],
                              ratio, passed, moves)


def serviceability(analysis) -> Serviceability:
    project = analysis.project
    span, ends = support_span(project)
    limit = project.design.deflection_limit
    states = design_states(analysis).serviceability
    note = "" if states else "no combination is tagged purpose = \"serviceability\": no displacement check is made"
    return Serviceability(tuple(state_displacements(project, s, span, limit) for s in states), span, ends, limit, note)


def serviceability_results(result: Serviceability, units) -> dict:
    """Plain numbers in display units for the results document (section "serviceability")."""
    disp, length = units.factor("displacement"), units.factor("length")
    value = lambda x: None if x is None or not np.isfinite(x) else _num(x)
    return {
        "note": result.note,
        "span": None if result.span is None else _num(result.span / length),
        "span_nodes": list(result.span_nodes) if result.span is not None else [],
        "deflection_limit": result.limit,
        "states": [
            {
                "state": s.state,
                "available": s.available,
                "note": s.note,
                "largest_deflection": value(s.deflection / disp),
                "largest_deflection_node": s.deflection_node,
                "largest_displacement": value(s.total / disp),
                "largest_displacement_node": s.total_node,
                "span_over_deflection": value(s.ratio),
                "passed": s.passed,
                "support_movements": [{"node": n, "axis": a, "displacement": _num(v / disp)} for n, a, v in s.support_movements],
            }
            for s in result.states
        ],
    }
