"""Read a frame drawn in CAD (a DXF file, through ezdxf) into plain frame data.

What counts in the drawing:

- members: LINE entities, and every straight segment of LWPOLYLINE and
  POLYLINE entities, on the member layers (all layers but the support layers
  when none are named). Arcs, text and the like are passed over and counted.
- supports: POINT entities and block references (INSERT) on support layers;
  the insertion point is the supported node. A support layer is named with the
  axes it fixes, ``LAYER=xy``; by default every layer whose name ends in
  ``supports-<axes>`` (``supports-xyz``, ``roof-supports-z``) is one.
- nodes: the ends of the members, merged when closer than the snap distance.
  An end that lands on the inside of another member splits that member there:
  in a pin-jointed frame a line drawn to the middle of another is a joint.

The drawing must state its units ($INSUNITS) or the caller must give them:
guessing millimetres against metres would scale the frame by a thousand.
Everything comes out in metres, with ids N1.. and M1.. numbered in a fixed
order of the geometry, so the same drawing always gives the same frame.
"""

from __future__ import annotations

import difflib
import re
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.spatial import cKDTree

from sheets.errors import Problem, ProjectError
from sheets.model.project import AXES

SUPPORT_LAYER = re.compile(r"(?:^|[-_ ])supports?[-_ ]([xyz]+|all)$", re.IGNORECASE)
LENGTH_UNITS = {"m": 1.0, "mm": 1e-3, "cm": 1e-2, "in": 0.0254, "ft": 0.3048}
# $INSUNITS codes of the DXF reference for the units above (0 means unitless)
INSUNITS = {6: "m", 4: "mm", 5: "cm", 1: "in", 2: "ft"}


@dataclass(frozen=True)
class DrawnFrame:
    source: str
    dim: int
    node_ids: tuple[str, ...]
    coords: np.ndarray  # (n, dim) metres
    member_ids: tuple[str, ...]
    ends: np.ndarray  # (m, 2) node indices
    member_layers: tuple[str, ...]
    supports: dict[str, str]  # node id -> fixed axes, e.g. "xy"
    unit: str  # the drawing's length unit
    notes: tuple[str, ...]  # what was passed over, merged or split


def read_dxf_frame(path: str | Path, member_layers=(), support_layers: dict[str, str] | None = None,
                   dimension: int | None = None, unit: str | None = None, snap: float | None = None) -> DrawnFrame:
    """The frame drawn in ``path``; a ProjectError lists every reason it cannot be read."""
    import ezdxf

    path = Path(path)
    file = str(path)
    try:
        doc = ezdxf.readfile(path)
    except OSError as exc:
        raise ProjectError([Problem(file, "", f"cannot read the drawing: {exc.strerror or exc}", "check the path")])
    except ezdxf.DXFError as exc:
        raise ProjectError([Problem(file, "", f"not a DXF drawing ezdxf can read: {exc}", "save it from CAD as DXF (R12 or later)")])
    unit = _unit(doc, unit, file)
    scale = LENGTH_UNITS[unit]
    layers = {layer.dxf.name for layer in doc.layers}
    supports_by_layer = _support_layers(layers, support_layers or {}, file)
    wanted = set(member_layers)
    missing = sorted(wanted - layers)
    if missing:
        raise ProjectError([_no_layer(file, name, layers) for name in missing])

    segments, seg_layers, support_points, support_axes = [], [], [], []
    passed_over: Counter[str] = Counter()
    for entity in doc.modelspace():
        kind, layer = entity.dxftype(), entity.dxf.layer
        if layer in supports_by_layer:
            if kind in ("POINT", "INSERT"):
                at = entity.dxf.location if kind == "POINT" else entity.dxf.insert
                support_points.append(tuple(at))
                support_axes.append(supports_by_layer[layer])
            else:
                passed_over[f"{kind} on support layer {layer}"] += 1
            continue
        if wanted and layer not in wanted:
            continue
        if kind == "LINE":
            segments.append((tuple(entity.dxf.start), tuple(entity.dxf.end)))
            seg_layers.append(layer)
        elif kind in ("LWPOLYLINE", "POLYLINE"):
            for a, b in _polyline_segments(entity, file):
                segments.append((a, b))
                seg_layers.append(layer)
        else:
            passed_over[kind] += 1
    if not segments:
        raise ProjectError([Problem(file, "", "no lines on the member layers", "name the layers the members are drawn on with --member-layer")])

    ends = np.array(segments, dtype=float) * scale  # (m, 2, 3)
    dim = dimension or (2 if np.ptp(ends[:, :, 2]) <= 1e-9 * max(np.ptp(ends[:, :, :2]), 1.0) else 3)
    if dim == 2 and np.ptp(ends[:, :, 2]) > 1e-9 * max(np.ptp(ends[:, :, :2]), 1.0):
        raise ProjectError([Problem(file, "", "the lines do not lie in one plane z = constant, so the frame is not 2D",
                                    "leave out --dimension 2 to read it as a 3D frame")])
    extent = float(np.ptp(ends.reshape(-1, 3), axis=0).max()) or 1.0
    snap = snap * scale if snap is not None else 1e-6 * extent
    frame = _frame(ends[:, :, :dim], seg_layers, snap)
    coords, pairs, layer_of, notes = frame
    notes += [f"{count} {what} passed over" for what, count in sorted(passed_over.items())]
    if unit != "m":
        notes.append(f"drawing units {unit}, converted to metres")

    node_ids = tuple(f"N{i + 1}" for i in range(len(coords)))
    supports = _supports(file, coords, node_ids, np.array(support_points, dtype=float).reshape(-1, 3)[:, :dim] * scale,
                         support_axes, snap, dim)
    return DrawnFrame(file, dim, node_ids, coords, tuple(f"M{k + 1}" for k in range(len(pairs))), pairs,
                      tuple(layer_of), supports, unit, tuple(notes))


def _no_layer(file: str, name: str, layers: set[str]) -> Problem:
    near = difflib.get_close_matches(name, sorted(layers), n=1)
    return Problem(file, "", f"no layer named '{name}' in the drawing",
                   f"did you mean '{near[0]}'?" if near else f"layers: {', '.join(sorted(layers))}")


def _unit(doc, unit: str | None, file: str) -> str:
    if unit is not None:
        if unit not in LENGTH_UNITS:
            raise ProjectError([Problem(file, "", f"unknown drawing unit '{unit}'", f"one of {', '.join(LENGTH_UNITS)}")])
        return unit
    code = doc.header.get("$INSUNITS", 0)
    if code in INSUNITS:
        return INSUNITS[code]
    raise ProjectError([Problem(file, "", f"the drawing does not state a length unit this reader knows ($INSUNITS = {code})",
                                f"give it with --unit ({', '.join(LENGTH_UNITS)})")])


def _support_layers(layers: set[str], named: dict[str, str], file: str) -> dict[str, str]:
    out = {}
    problems = []
    for layer, axes in named.items():
        if layer not in layers:
            problems.append(_no_layer(file, layer, layers))
        elif axes != "all" and (not axes or any(a not in AXES for a in axes)):
            problems.append(Problem(file, "", f"support layer '{layer}' fixes '{axes}'", "name the fixed axes, e.g. LAYER=xy, or LAYER=all"))
        else:
            out[layer] = axes
    if problems:
        raise ProjectError(problems)
    if not named:
        for layer in layers:
            found = SUPPORT_LAYER.search(layer)
            if found:
                out[layer] = found.group(1).lower()
    return out


def _polyline_segments(entity, file: str):
    if entity.dxftype() == "LWPOLYLINE":
        z = entity.dxf.elevation if entity.dxf.hasattr("elevation") else 0.0
        points = [(x, y, z) for x, y in entity.get_points("xy")]
        bulges = [b for *_xy, b in entity.get_points("xyb")]
    else:
        points = [tuple(v.dxf.location) for v in entity.vertices]
        bulges = [v.dxf.bulge if v.dxf.hasattr("bulge") else 0.0 for v in entity.vertices]
    if any(bulges):  # an arc segment is not a straight member
        raise ProjectError([Problem(file, "", f"a polyline on layer '{entity.dxf.layer}' has arc segments",
                                    "draw members as straight lines")])
    if entity.is_closed and len(points) > 2:
        points.append(points[0])
    return list(zip(points[:-1], points[1:]))


def _frame(ends: np.ndarray, layers: list[str], snap: float):
    """Merge ends into nodes, split members at nodes on their insides, drop repeats and null lines."""
    notes: list[str] = []
    points = ends.reshape(-1, ends.shape[2])
    groups = _cluster(points, snap)
    n = groups.max() + 1
    coords = np.zeros((n, points.shape[1]))
    np.add.at(coords, groups, points)
    coords /= np.bincount(groups, minlength=n)[:, None]
    # a fixed order of the geometry: the same drawing always numbers its nodes the same way
    order = np.lexsort(np.round(coords / snap).T[::-1])
    rank = np.empty(n, dtype=np.int64)
    rank[order] = np.arange(n)
    coords = coords[order]
    pairs = rank[groups].reshape(-1, 2)
    short = pairs[:, 0] == pairs[:, 1]
    if short.any():
        notes.append(f"{int(short.sum())} lines shorter than the snap distance passed over")
    split: list[tuple[int, int, str]] = []
    splits = 0
    for (a, b), layer in zip(pairs[~short].tolist(), [l for l, s in zip(layers, short) if not s]):
        inside = _nodes_inside(coords, a, b, snap)
        splits += len(inside)
        chain = [a, *inside, b]
        split.extend((p, q, layer) for p, q in zip(chain[:-1], chain[1:]))
    if splits:
        notes.append(f"{splits} members split where another member's end lands on them")
    seen: dict[tuple[int, int], str] = {}
    for p, q, layer in split:
        seen.setdefault((min(p, q), max(p, q)), layer)
    if len(seen) < len(split):
        notes.append(f"{len(split) - len(seen)} repeated lines merged")
    keys = sorted(seen)
    used = sorted({i for key in keys for i in key})
    if len(used) < n:  # ends of passed-over lines only
        remap = {old: new for new, old in enumerate(used)}
        coords = coords[used]
        keys = [(remap[p], remap[q]) for p, q in keys]
        seen = {(remap[p], remap[q]): layer for (p, q), layer in seen.items()}
    pairs_out = np.array(keys, dtype=np.int64).reshape(-1, 2)
    return coords, pairs_out, [seen[k] for k in keys], notes


def _cluster(points: np.ndarray, snap: float) -> np.ndarray:
    """Label of each point; points closer than ``snap`` (transitively) share one."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    pairs = cKDTree(points).query_pairs(snap, output_type="ndarray")
    graph = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(len(points),) * 2)
    _, labels = connected_components(graph, directed=False)
    return labels


def _nodes_inside(coords: np.ndarray, a: int, b: int, snap: float) -> list[int]:
    """Nodes within ``snap`` of the segment a-b, strictly between its ends, in order from a."""
    d = coords[b] - coords[a]
    length2 = float(d @ d)
    t = (coords - coords[a]) @ d / length2
    off = np.linalg.norm(coords - coords[a] - t[:, None] * d, axis=1)
    margin = snap / np.sqrt(length2)
    inside = np.flatnonzero((t > margin) & (t < 1 - margin) & (off <= snap))
    return inside[np.argsort(t[inside])].tolist()


def _supports(file: str, coords: np.ndarray, node_ids, points: np.ndarray, axes: list[str], snap: float, dim: int) -> dict[str, str]:
    out: dict[str, set[str]] = {}
    problems = []
    if len(points):
        distance, nearest = cKDTree(coords).query(points)
        for p, d, k, fixed in zip(points, distance, nearest, axes):
            if d > snap:
                problems.append(Problem(file, "", f"a support at {tuple(round(float(v), 6) for v in p)} m is at no member end "
                                        f"(nearest node {d:.3g} m away)", "snap the support to a joint, or raise --snap"))
                continue
            chosen = set(AXES[:dim]) if fixed == "all" else set(fixed)
            if not chosen <= set(AXES[:dim]):
                problems.append(Problem(file, "", f"a support fixes '{fixed}' in a {dim}D frame", f"name axes among {', '.join(AXES[:dim])}"))
                continue
            out.setdefault(node_ids[k], set()).update(chosen)
    if problems:
        raise ProjectError(problems)
    return {nid: "".join(a for a in AXES if a in fixed) for nid, fixed in sorted(out.items(), key=lambda kv: node_ids.index(kv[0]))}
