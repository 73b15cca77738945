"""Where labels and force arrows go in the drawing plane (shared by figures and CAD export).

- ``space_anchors``: a point well inside each space (face) of a geometric
  embedding, for its Bow's-notation letter: the candidate (a grid over the
  face, its centroid and corner mean) farthest from the face's boundary. An
  outer space is closed by points out along the two rays that bound it.
- ``arrow_sides``: whether each external force is drawn pushing on its node
  (arrow head at the node, coming in along the ray) or pulling it (arrow tail
  at the node, going out along the ray).
"""

from __future__ import annotations

import numpy as np
from matplotlib.path import Path as PolygonPath

from sheets.reciprocal.faces import half_edge_tails

SAMPLES = 13  # grid candidates per side of a face's bounding box


def arrow_sides(diagram) -> np.ndarray:
    """(r,) +1 where the force points out along its ray (pull), -1 where it points in (push)."""
    graph, emb = diagram.graph, diagram.embedding
    forces = graph.vectors[graph.n_members:]
    if not len(forces):
        return np.zeros(0)
    drawn = emb.projection.apply(forces)
    along = (drawn * emb.ray_directions).sum(axis=1)
    return np.where(along > 1e-9 * np.linalg.norm(forces, axis=1), 1.0, -1.0)


def outer_reach(diagram) -> np.ndarray:
    """(r,) how far out from its node, along its ray, each outer space is closed for labelling."""
    points = diagram.embedding.points[: diagram.graph.n_nodes]
    extent = float(np.ptp(points, axis=0).max()) if len(points) else 1.0
    return diagram.embedding.ray_reach + 0.16 * (extent or 1.0)


def space_anchors(diagram, max_faces: int = 2000) -> np.ndarray:
    """(F, 2) label point of each space in the drawing plane; NaN where there is none.

    None for combinatorial embeddings (their faces are not regions of the
    drawing) or beyond ``max_faces`` spaces (too many to letter legibly).
    """
    emb, faces = diagram.embedding, diagram.faces
    out = np.full((faces.count, 2), np.nan)
    if emb.kind != "geometric" or faces.count > max_faces or not faces.count:
        return out
    m = diagram.graph.n_members
    reach = outer_reach(diagram)
    ray_nodes = diagram.graph.external_nodes
    h_tail = half_edge_tails(emb.tails, emb.heads)
    before = np.empty_like(faces.successor)
    before[faces.successor] = np.arange(len(faces.successor))
    for f in range(faces.count):
        polygon = []
        for h in faces.boundary(f).tolist():
            v = int(h_tail[h])
            if v != emb.ideal:
                polygon.append(emb.points[v])
                continue
            # a corner at infinity: close the space out along the ray it came in on and the one it leaves on
            for ray in (emb.element[before[h] // 2] - m, emb.element[h // 2] - m):
                polygon.append(emb.points[ray_nodes[ray]] + reach[ray] * emb.ray_directions[ray])
        polygon = np.array(polygon)
        out[f] = _outside_point(emb.points) if _clockwise(polygon) else _inner_point(polygon)
    return out


def _clockwise(polygon: np.ndarray) -> bool:
    """The one face of a frame with no external forces that surrounds it is traced clockwise."""
    closed = np.vstack([polygon, polygon[:1]])
    return float(np.sum(closed[:-1, 0] * closed[1:, 1] - closed[1:, 0] * closed[:-1, 1])) < 0


def _outside_point(points: np.ndarray) -> np.ndarray:
    lo, hi = points.min(axis=0), points.max(axis=0)
    return np.array([lo[0], hi[1]]) + 0.06 * float((hi - lo).max() or 1.0) * np.array([-1.0, 1.0])


def _inner_point(polygon: np.ndarray) -> np.ndarray:
    if len(polygon) < 3:
        return polygon.mean(axis=0) if len(polygon) else np.full(2, np.nan)
    lo, hi = polygon.min(axis=0), polygon.max(axis=0)
    gx, gy = np.meshgrid(np.linspace(lo[0], hi[0], SAMPLES)[1:-1], np.linspace(lo[1], hi[1], SAMPLES)[1:-1])
    closed = np.vstack([polygon, polygon[:1]])
    area2 = np.sum(closed[:-1, 0] * closed[1:, 1] - closed[1:, 0] * closed[:-1, 1])
    centroid = polygon.mean(axis=0)
    if abs(area2) > 0:
        cross = closed[:-1, 0] * closed[1:, 1] - closed[1:, 0] * closed[:-1, 1]
        centroid = np.array([np.sum((closed[:-1, 0] + closed[1:, 0]) * cross),
                             np.sum((closed[:-1, 1] + closed[1:, 1]) * cross)]) / (3 * area2)
    candidates = np.vstack([np.stack([gx.ravel(), gy.ravel()], axis=1), centroid, polygon.mean(axis=0)])
    inside = PolygonPath(closed, closed=True).contains_points(candidates)
    if not inside.any():
        return polygon.mean(axis=0)
    candidates = candidates[inside]
    a, b = closed[:-1], closed[1:]
    ab = b - a
    denom = np.maximum((ab * ab).sum(axis=1), 1e-300)
    rel = candidates[:, None, :] - a[None, :, :]
    t = np.clip((rel * ab[None]).sum(axis=2) / denom, 0.0, 1.0)
    dist = np.linalg.norm(rel - t[..., None] * ab[None], axis=2).min(axis=1)
    return candidates[int(np.argmax(dist))]
