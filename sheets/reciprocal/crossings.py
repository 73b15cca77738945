"""Where straight segments of a drawing meet: crossings, and vertices lying on segments.

A uniform grid (spatial hashing) keeps this near-linear in the number of
segments plus crossings instead of testing all pairs: each segment is entered
in every cell it passes through (the points where it crosses grid lines, each
widened by the tolerance so that a crossing on a cell corner is not missed),
and only segments sharing a cell are tested. Every step is a numpy operation
over all segments at once.

Two tests, both with an absolute length tolerance ``tol``:

- a *proper crossing* of two segments that share no end vertex: each has its
  ends strictly on both sides of the other's line, farther than ``tol``;
- a *vertex on a segment*: a vertex (not an end of the segment) closer than
  ``tol`` to the segment, strictly between its ends. This covers a member that
  passes through a node in a projection, and collinear overlaps (each overlap
  ends at a vertex lying on the other segment).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Intersections:
    seg_a: np.ndarray  # (c,) proper crossings: first segment
    seg_b: np.ndarray  # (c,) second segment (seg_a < seg_b)
    t_a: np.ndarray  # (c,) parameter along seg_a, in (0, 1)
    t_b: np.ndarray  # (c,) parameter along seg_b
    points: np.ndarray  # (c, 2)
    on_segment: np.ndarray  # (o,) segment with a vertex in its interior
    on_vertex: np.ndarray  # (o,) that vertex
    on_t: np.ndarray  # (o,) parameter of the vertex's foot along the segment


def _distinct(values: np.ndarray) -> np.ndarray:
    """Sorted distinct values (a sort and a mask: faster here than numpy's hashing unique)."""
    values = np.sort(values)
    return values[np.r_[True, values[1:] != values[:-1]]] if len(values) else values


def _pairs_within_groups(sizes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Positions (a, b), a < b, of every pair inside consecutive groups of the given sizes."""
    total = int(sizes.sum())
    starts = np.cumsum(sizes) - sizes
    position = np.arange(total) - np.repeat(starts, sizes)
    partners = np.repeat(sizes, sizes) - 1 - position
    a = np.repeat(np.arange(total), partners)
    offset = np.arange(len(a)) - np.repeat(np.cumsum(partners) - partners, partners)
    return a, a + 1 + offset


def _segment_cells(p: np.ndarray, q: np.ndarray, cell: float, eps: float) -> tuple[np.ndarray, np.ndarray]:
    """(segment, cell index pair) for every grid cell each segment passes through."""
    s = len(p)
    d = q - p
    seg_parts, pts_parts = [np.arange(s), np.arange(s)], [p, q]
    for axis in (0, 1):
        i0 = np.floor(p[:, axis] / cell).astype(np.int64)
        i1 = np.floor(q[:, axis] / cell).astype(np.int64)
        count = np.abs(i1 - i0)
        seg = np.repeat(np.arange(s), count)
        k = np.arange(len(seg)) - np.repeat(np.cumsum(count) - count, count)
        line = (np.minimum(i0, i1)[seg] + 1 + k) * cell
        t = (line - p[seg, axis]) / d[seg, axis]
        pts = p[seg] + t[:, None] * d[seg]
        pts[:, axis] = line  # exactly on the grid line
        seg_parts.append(seg)
        pts_parts.append(pts)
    seg = np.concatenate(seg_parts)
    pts = np.concatenate(pts_parts)
    return _widened_cells(seg, pts, cell, eps)


def _widened_cells(ids: np.ndarray, pts: np.ndarray, cell: float, eps: float) -> tuple[np.ndarray, np.ndarray]:
    """The cells within ``eps`` of each point (up to four), tagged with the point's id."""
    lo = np.floor((pts - eps) / cell).astype(np.int64)
    hi = np.floor((pts + eps) / cell).astype(np.int64)
    ix = np.concatenate([lo[:, 0], lo[:, 0], hi[:, 0], hi[:, 0]])
    iy = np.concatenate([lo[:, 1], hi[:, 1], lo[:, 1], hi[:, 1]])
    return np.tile(ids, 4), np.stack([ix, iy], axis=1)


def find_intersections(p, q, ends, vertices, tol: float, crossings: bool = True, cell: float | None = None,
                       split: int | None = None) -> Intersections:
    """Proper crossings between segments (unless ``crossings`` is False) and vertices lying on segments.

    p, q (s, 2) segment ends; ends (s, 2) the vertex index at each end or -1
    where the end is no vertex; vertices (v, 2); tol an absolute length;
    cell the grid spacing (default: the median segment length); with
    ``split``, only crossings between a segment below that index and one at
    or above it are looked for.
    """
    p = np.asarray(p, dtype=float)
    q = np.asarray(q, dtype=float)
    ends = np.asarray(ends, dtype=np.int64)
    vertices = np.asarray(vertices, dtype=float).reshape(-1, 2)
    s = len(p)
    empty_i, empty_f = np.zeros(0, dtype=np.int64), np.zeros(0)
    if s == 0:
        return Intersections(empty_i, empty_i, empty_f, empty_f, np.zeros((0, 2)), empty_i, empty_i, empty_f)
    if cell is None:
        cell = float(np.median(np.linalg.norm(q - p, axis=1)))
    cell = max(cell, 64 * tol, 1e-300)

    seg, cells = _segment_cells(p, q, cell, tol)
    base = cells.min(axis=0)
    span = cells.max(axis=0) - base + 1
    key = (cells[:, 0] - base[0]) * span[1] + (cells[:, 1] - base[1])
    combined = _distinct(key * s + seg)  # each (cell, segment) once, sorted by cell
    cell_key, seg_sorted = combined // s, combined % s

    found = _proper_crossings(p, q, ends, cell_key, seg_sorted, tol, split) if crossings else (empty_i, empty_i, empty_f, empty_f, np.zeros((0, 2)))
    touches = _vertices_on_segments(p, q, ends, vertices, cell_key, seg_sorted, cell, base, span, tol)
    return Intersections(*found, *touches)


def _proper_crossings(p, q, ends, cell_key, seg_sorted, tol, split=None):
    s = len(p)
    sizes = np.diff(np.flatnonzero(np.r_[True, cell_key[1:] != cell_key[:-1], True]))  # cell_key is sorted
    ia, ib = _pairs_within_groups(sizes)
    a, b = seg_sorted[ia], seg_sorted[ib]
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    if split is not None:
        across = (lo < split) & (hi >= split)
        lo, hi = lo[across], hi[across]
    pair = _distinct(lo * s + hi)
    a, b = pair // s, pair % s
    share = ((ends[a, :, None] == ends[b, None, :]) & (ends[a, :, None] >= 0)).any(axis=(1, 2))
    a, b = a[~share], b[~share]

    da, db = q[a] - p[a], q[b] - p[b]
    la, lb = np.linalg.norm(da, axis=1), np.linalg.norm(db, axis=1)

    def side(origin, direction, length, point):  # signed distance of point from the line
        rel = point - origin
        return (direction[:, 0] * rel[:, 1] - direction[:, 1] * rel[:, 0]) / length

    d1, d2 = side(p[a], da, la, p[b]), side(p[a], da, la, q[b])
    d3, d4 = side(p[b], db, lb, p[a]), side(p[b], db, lb, q[a])
    clear = (np.abs(d1) > tol) & (np.abs(d2) > tol) & (np.abs(d3) > tol) & (np.abs(d4) > tol)
    proper = clear & (np.sign(d1) != np.sign(d2)) & (np.sign(d3) != np.sign(d4))
    a, b = a[proper], b[proper]
    t_a = d3[proper] / (d3[proper] - d4[proper])
    t_b = d1[proper] / (d1[proper] - d2[proper])
    points = p[a] + t_a[:, None] * (q[a] - p[a])
    return a, b, t_a, t_b, points


def _vertices_on_segments(p, q, ends, vertices, cell_key, seg_sorted, cell, base, span, tol):
    if not len(vertices):
        z = np.zeros(0, dtype=np.int64)
        return z, z, np.zeros(0)
    vid, vcells = _widened_cells(np.arange(len(vertices)), vertices, cell, tol)
    inside = np.all((vcells >= base) & (vcells < base + span), axis=1)
    vid, vcells = vid[inside], vcells[inside]
    vkey = (vcells[:, 0] - base[0]) * span[1] + (vcells[:, 1] - base[1])
    first = np.searchsorted(cell_key, vkey, side="left")
    last = np.searchsorted(cell_key, vkey, side="right")
    count = last - first
    v = np.repeat(vid, count)
    pos = np.repeat(first, count) + (np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count))
    sg = seg_sorted[pos]
    pair = _distinct(sg * len(vertices) + v)
    sg, v = pair // len(vertices), pair % len(vertices)
    keep = (ends[sg, 0] != v) & (ends[sg, 1] != v)
    sg, v = sg[keep], v[keep]

    d = q[sg] - p[sg]
    length = np.linalg.norm(d, axis=1)
    rel = vertices[v] - p[sg]
    along = (rel * d).sum(axis=1) / length
    off = np.abs(d[:, 0] * rel[:, 1] - d[:, 1] * rel[:, 0]) / length
    on = (off <= tol) & (along > tol) & (along < length - tol)
    return sg[on], v[on], along[on] / length[on]
