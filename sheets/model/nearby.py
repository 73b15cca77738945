"""Pairs of points closer than a tolerance, with numpy alone.

The loader checks every project for coincident nodes; a spatial-index library would cost
`sheets check` more to import than the check itself takes. Points are binned in cubic cells
of side ``tol``: two points within ``tol`` of each other lie in the same cell or in
neighbouring ones (offset -1, 0 or +1 along each axis), so each point is compared only with
the points of its cell and of the neighbouring cells that come after it in a fixed order.
The loader's tolerance is 1e-9 of the frame's extent, so a cell holds one point except where
points (nearly) coincide, and the work is linear in the number of points.
"""

from __future__ import annotations

from itertools import product

import numpy as np


def close_pairs(points: np.ndarray, tol: float) -> list[tuple[int, int]]:
    """Sorted pairs (i, j), i < j, of rows of ``points`` (n, dim) at a distance of at most ``tol`` > 0."""
    n, dim = points.shape
    if n < 2:
        return []
    cells = np.floor((points - points.min(axis=0)) / tol).astype(np.int64)
    # Each axis's distinct cell values, numbered: a cell is then one int64 key below n ** dim.
    values = [np.unique(cells[:, a]) for a in range(dim)]

    def keys(offset: tuple[int, ...]) -> np.ndarray:
        """Key of each point's cell moved by ``offset``; -1 where no point lies in that cell."""
        key = np.zeros(n, dtype=np.int64)
        found = np.ones(n, dtype=bool)
        for a, shift in enumerate(offset):
            target = cells[:, a] + shift
            rank = np.minimum(np.searchsorted(values[a], target), len(values[a]) - 1)
            found &= values[a][rank] == target
            key = key * len(values[a]) + rank
        return np.where(found, key, -1)

    own = keys((0,) * dim)
    order = np.argsort(own, kind="stable")
    sorted_keys = own[order]
    firsts, seconds = [], []
    # the cell itself, then half of the neighbour offsets (the other half finds the same pairs)
    for offset in [o for o in product((-1, 0, 1), repeat=dim) if o >= (0,) * dim]:
        key = keys(offset)
        lo = np.searchsorted(sorted_keys, key, "left")
        count = np.where(key >= 0, np.searchsorted(sorted_keys, key, "right") - lo, 0)
        first = np.repeat(np.arange(n), count)
        within = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
        second = order[np.repeat(lo, count) + within]
        keep = first < second if not any(offset) else first != second
        firsts.append(first[keep])
        seconds.append(second[keep])
    first, second = np.concatenate(firsts), np.concatenate(seconds)
    close = np.linalg.norm(points[first] - points[second], axis=1) <= tol
    pairs = zip(np.minimum(first, second)[close].tolist(), np.maximum(first, second)[close].tolist())
    return sorted(set(pairs))
