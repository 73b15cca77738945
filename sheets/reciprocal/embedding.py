"""Embeddings of the extended graph: the rotation system the faces are traced from.

METHODS.md section 5, step 2. Two kinds:

- **geometric**: the angular order of edges in the drawing plane (the frame's
  own plane in 2D, a projection in 3D, see ``projection.py``). Each external
  force edge is drawn as a ray from its node out to a circle around the whole
  frame and from there straight out to the ideal vertex "at infinity", so the
  order of external edges at the ideal vertex is the clockwise order of the
  points where the rays leave that circle. A ray runs along the force's line of
  action, on the side of its node that crosses fewer members (ties: the side
  facing away from the frame's centre), so a load on a top chord comes in from
  above and a reaction from below, as on a hand-drawn sheet; where the force points
  along the view (a vertical load seen in plan) the ray runs outwards from the
  centre, turned a little so that rays from nodes in a row do not run through
  each other. A ray that would pass through another node is turned further.
- **combinatorial**: any planar embedding of the extended graph, from the
  Left-Right planarity test (networkx ``check_planarity``; Brandes (2009),
  "The Left-Right Planarity Test"). Node positions are used only for drawing.

**Planarisation.** Where edges cross in the drawing plane (X-bracing, a load on
an interior node whose ray leaves across members, any non-planar graph such as
K5) a *crossing vertex* is inserted at each crossing and both edges are split
there. Each keeps its force through the vertex, so the vertex is in
equilibrium and stands for no node of the frame; the force diagram then shows
each split member once per piece, as equal parallel edges. Micheletti (2008),
"On generalized reciprocal diagrams for self-stressed frameworks", Int. J.
Space Struct. 23(3) 153-166. An edge that passes through a node in the view is
split at that node the same way (its two pieces cancel there), and collinear
overlaps reduce to that case; overlapping pieces between the same two vertices
are ordered as if each bulged to its left by a different infinitesimal amount
(its element index), which keeps the rotation system planar.

A combinatorial embedding of a non-planar graph falls back to the geometric,
planarised one; the note says so. Every embedding is checked with Euler's
formula before it is used (``faces.py``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components
from scipy.spatial import cKDTree

from sheets.model.project import DrawingOptions, frozen_array
from sheets.reciprocal.crossings import find_intersections
from sheets.reciprocal.faces import Faces, half_edge_tails, trace_faces
from sheets.reciprocal.graph import ExtendedGraph
from sheets.reciprocal.projection import Projection, choose_projection

SNAP = 1e-9  # crossing / on-segment tolerance, x the drawing's extent
RAY_CLEARANCE = 1e-6  # a ray passing closer than this x extent to another node is turned
RAY_TURNS_DEGREES = (4.0, -4.0, 8.0, -8.0, 13.0, -13.0, 21.0, -21.0)
RADIAL_TURN = 0.1  # radians: rays of forces along the view are turned this much off radial
IN_PLANE = 0.25  # a force whose drawn part is below this x its size points along the view


class EmbeddingError(RuntimeError):
    """An embedding that fails Euler's formula (numerically degenerate drawing)."""


@dataclass(frozen=True)
class Crossing:
    """A vertex of the planarised drawing where elements cross (or pass through a node)."""

    label: str  # "X1", "X2", ...
    vertex: int  # vertex index in the embedding (a node index where ``node`` is set)
    point: np.ndarray  # (2,) drawing-plane position
    elements: tuple[str, ...]  # ids of the elements through it
    node: str = ""  # the node an element passes through in the view; "" for a new crossing vertex


@dataclass(frozen=True)
class Embedding:
    """A planar rotation system of the (planarised) extended graph.

    Vertices: form nodes 0..n-1, then crossing vertices, then the ideal vertex.
    Edges ("pieces") are the elements of the extended graph, split at crossings;
    piece k runs ``tails[k] -> heads[k]`` in its element's direction and is the
    ``segment[k]``-th piece of element ``element[k]``.
    """

    kind: str  # "geometric" or "combinatorial"
    projection: Projection
    note: str
    points: np.ndarray  # (n + c, 2) drawing-plane positions of nodes and crossing vertices
    n_nodes: int
    crossings: tuple[Crossing, ...]
    tails: np.ndarray  # (k,)
    heads: np.ndarray  # (k,)
    element: np.ndarray  # (k,) element index in the extended graph
    segment: np.ndarray  # (k,) piece number along the element, from its tail
    rotation: np.ndarray  # (2k,) half-edges grouped by tail vertex, counter-clockwise
    ray_directions: np.ndarray  # (r,) x 2 unit drawing-plane direction of each external edge
    ray_reach: np.ndarray  # (r,) distance from the node past the ray's last crossing (0 if none)

    @property
    def ideal(self) -> int:
        return len(self.points)

    @property
    def n_vertices(self) -> int:
        return len(self.points) + 1

    @property
    def planarised(self) -> bool:
        return bool(self.crossings)


def embed(graph: ExtendedGraph, drawing: DrawingOptions | None = None, vertical_axis: int | None = None) -> tuple[Embedding, Faces]:
    """The embedding ``drawing`` asks for (kind, projection) and its faces."""
    drawing = drawing or DrawingOptions()
    axis = graph.dim - 1 if vertical_axis is None else vertical_axis
    projection = choose_projection(graph.coords, drawing.projection, drawing.projection_name, axis)
    if drawing.embedding == "combinatorial":
        return combinatorial_embedding(graph, projection)
    return geometric_embedding(graph, projection)


# -- geometric ---------------------------------------------------------------


def _turn(vectors: np.ndarray, angles) -> np.ndarray:
    c, s = np.cos(angles), np.sin(angles)
    return np.stack([c * vectors[:, 0] - s * vectors[:, 1], s * vectors[:, 0] + c * vectors[:, 1]], axis=1)


def _angle(vectors: np.ndarray) -> np.ndarray:
    # + 0.0 turns -0.0 into 0.0, so that atan2 gives pi, not -pi, for (-1, -0.0)
    return np.arctan2(vectors[:, 1] + 0.0, vectors[:, 0] + 0.0)


def _clip(start: np.ndarray, direction: np.ndarray, centre: np.ndarray, radius: float) -> np.ndarray:
    """Where rays from points inside the circle leave it."""
    rel = start - centre
    b = (rel * direction).sum(axis=1)
    c = (rel * rel).sum(axis=1) - radius**2
    s = -b + np.sqrt(np.maximum(b * b - c, 0.0))
    return start + s[:, None] * direction


def ray_directions(graph: ExtendedGraph, projection: Projection, points: np.ndarray, centre: np.ndarray) -> np.ndarray:
    """Drawing-plane direction of each external edge (see the module docstring)."""
    nodes = graph.external_nodes
    forces = graph.vectors[graph.n_members:]
    drawn = projection.apply(forces) if len(forces) else np.zeros((0, 2))
    drawn_size = np.linalg.norm(drawn, axis=1)
    size = np.linalg.norm(forces, axis=1)
    outward = points[nodes] - centre
    reach = np.linalg.norm(outward, axis=1)
    radial = np.where(reach[:, None] > 0, outward / np.where(reach > 0, reach, 1.0)[:, None], np.array([1.0, 0.0]))
    radial = _turn(radial, RADIAL_TURN)
    along = drawn_size > IN_PLANE * size
    line = drawn / np.where(drawn_size > 0, drawn_size, 1.0)[:, None]
    side = np.where((line * outward).sum(axis=1) > 0, 1.0, -1.0)
    return np.where(along[:, None], side[:, None] * line, radial), along


def _fewer_crossings(directions, along, graph: ExtendedGraph, points, centre, radius, tol, cell):
    """Flip a ray along a line of action to the other side of its node where that crosses fewer members."""
    pick = np.flatnonzero(along)
    if not len(pick):
        return directions
    m = graph.n_members
    nodes = graph.external_nodes[pick]
    starts = np.vstack([points[nodes], points[nodes]])
    trial = np.vstack([directions[pick], -directions[pick]])
    seg_p = np.vstack([points[graph.tails[:m]], starts])
    seg_q = np.vstack([points[graph.heads[:m]], _clip(starts, trial, centre, radius)])
    ends = np.vstack([np.stack([graph.tails[:m], graph.heads[:m]], axis=1),
                      np.stack([np.r_[nodes, nodes], np.full(2 * len(nodes), -1)], axis=1)])
    found = find_intersections(seg_p, seg_q, ends, points, tol, cell=cell, split=m)
    ray_side = found.seg_b - m  # seg_a < m <= seg_b: a member and a trial ray
    count = np.bincount(ray_side, minlength=2 * len(nodes))
    count += np.bincount(found.on_segment[found.on_segment >= m] - m, minlength=2 * len(nodes))
    flip = count[len(nodes):] < count[: len(nodes)]
    directions = directions.copy()
    directions[pick[flip]] = -directions[pick[flip]]
    return directions


def _clear_rays(directions, starts, nodes, points, centre, radius, extent, cell):
    """Turn rays that would pass (almost) through another node."""
    directions = directions.copy()
    clearance = RAY_CLEARANCE * extent
    ends = np.stack([nodes, np.full(len(nodes), -1)], axis=1)
    pending = np.arange(len(nodes))
    base = directions.copy()
    for turn in (0.0,) + RAY_TURNS_DEGREES:
        if turn:
            directions[pending] = _turn(base[pending], np.radians(turn))
        far = _clip(starts[pending], directions[pending], centre, radius)
        hits = find_intersections(starts[pending], far, ends[pending], points, clearance, crossings=False, cell=cell)
        pending = pending[np.unique(hits.on_segment)]
        if not len(pending):
            break
    return directions


def geometric_embedding(graph: ExtendedGraph, projection: Projection, snap: float = SNAP) -> tuple[Embedding, Faces]:
    points = projection.apply(graph.coords)
    n, m, k = graph.n_nodes, graph.n_members, graph.n_elements
    lo, hi = (points.min(axis=0), points.max(axis=0)) if n else (np.zeros(2), np.ones(2))
    extent = float((hi - lo).max()) or 1.0
    tol = snap * extent
    centre = (lo + hi) / 2
    radius = 0.5 * float(np.linalg.norm(hi - lo)) + 0.25 * extent

    # grid spacing for the crossing search: the typical drawn member (rays are long and few)
    drawn_length = np.linalg.norm(points[graph.heads[:m]] - points[graph.tails[:m]], axis=1)
    cell = float(np.median(drawn_length)) if m else extent

    ray_nodes = graph.external_nodes
    directions, along = ray_directions(graph, projection, points, centre)
    directions = _fewer_crossings(directions, along, graph, points, centre, radius, tol, cell)
    directions = _clear_rays(directions, points[ray_nodes], ray_nodes, points, centre, radius, extent, cell)
    far = _clip(points[ray_nodes], directions, centre, radius)

    seg_p = np.vstack([points[graph.tails[:m]], points[ray_nodes]])
    seg_q = np.vstack([points[graph.heads[:m]], far])
    seg_ends = np.stack([graph.tails, np.where(graph.heads == graph.ideal, -1, graph.heads)], axis=1)
    found = find_intersections(seg_p, seg_q, seg_ends, points, tol, cell=cell)

    cross_vertex, cross_points = _crossing_vertices(found.points, points, tol)
    ideal = n + len(cross_points)
    ev_seg = np.concatenate([found.seg_a, found.seg_b, found.on_segment])
    ev_t = np.concatenate([found.t_a, found.t_b, found.on_t])
    ev_v = np.concatenate([cross_vertex, cross_vertex, found.on_vertex])
    ev_seg, ev_t, ev_v = _unique_events(ev_seg, ev_t, ev_v, ideal)

    heads = np.where(graph.heads == graph.ideal, ideal, graph.heads)
    seq_seg = np.concatenate([np.arange(k), np.arange(k), ev_seg])
    seq_t = np.concatenate([np.zeros(k), np.ones(k), ev_t])
    seq_v = np.concatenate([graph.tails, heads, ev_v])
    order = np.lexsort((seq_t, seq_seg))
    seq_seg, seq_v = seq_seg[order], seq_v[order]
    link = np.flatnonzero(seq_seg[:-1] == seq_seg[1:])
    p_tail, p_head, p_elem = seq_v[link], seq_v[link + 1], seq_seg[link]
    first = np.searchsorted(p_elem, p_elem, side="left")
    p_seg = np.arange(len(p_elem)) - first

    all_points = np.vstack([points, cross_points]) if len(cross_points) else points
    rotation = _geometric_rotation(p_tail, p_head, p_elem, all_points, ideal, far, centre, m)
    faces = trace_faces(p_tail, p_head, rotation)
    if not faces.planar:
        if snap < 1e-6:
            return geometric_embedding(graph, projection, snap * 100)
        raise EmbeddingError(
            f"the drawing in {projection.description} is too degenerate to embed "
            f"(V - E + F = {faces.euler_characteristic}, expected {2 * faces.components})")

    reach = _ray_reach(ev_seg, ev_t, m, points[ray_nodes], far)
    crossings = _crossing_records(graph, ev_seg, ev_v, n, all_points)
    note = _geometric_note(graph, projection, crossings)
    embedding = Embedding("geometric", projection, note, frozen_array(all_points), n, crossings,
                          frozen_array(p_tail, np.int64), frozen_array(p_head, np.int64),
                          frozen_array(p_elem, np.int64), frozen_array(p_seg, np.int64),
                          frozen_array(rotation, np.int64), frozen_array(directions), frozen_array(reach))
    return embedding, faces


def _crossing_vertices(found_points: np.ndarray, points: np.ndarray, tol: float):
    """Vertex index of each crossing point: a node it falls on, or a new vertex (coincident points merged)."""
    n = len(points)
    c = len(found_points)
    if not c:
        return np.zeros(0, dtype=np.int64), np.zeros((0, 2))
    dist, near = cKDTree(points).query(found_points, distance_upper_bound=2 * tol)
    at_node = dist <= 2 * tol
    vertex = np.where(at_node, near, -1)
    free = np.flatnonzero(~at_node)
    if len(free):
        pairs = cKDTree(found_points[free]).query_pairs(2 * tol, output_type="ndarray")
        graph = sp.csr_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(len(free), len(free)))
        count, label = connected_components(graph, directed=False)
        # number clusters in order of first appearance, so vertex order follows the crossing order
        _, first = np.unique(label, return_index=True)
        rank = np.empty(count, dtype=np.int64)
        rank[np.argsort(first)] = np.arange(count)
        label = rank[label]
        sums = np.zeros((count, 2))
        np.add.at(sums, label, found_points[free])
        centres = sums / np.bincount(label, minlength=count)[:, None]
        vertex[free] = n + label
    else:
        centres = np.zeros((0, 2))
    return vertex, centres


def _unique_events(seg, t, v, ideal):
    """One event per (segment, vertex); a segment never gets an event at its own ends."""
    if not len(seg):
        return seg, t, v
    key = seg * (ideal + 1) + v
    _, keep = np.unique(key, return_index=True)
    return seg[keep], t[keep], v[keep]


def _geometric_rotation(tails, heads, elem, points, ideal, far, centre, m):
    """Half-edges sorted by tail, then counter-clockwise angle, ties by the infinitesimal-bulge rule."""
    to_ideal = heads == ideal
    far = far if len(far) else np.zeros((1, 2))
    head_xy = np.where(to_ideal[:, None], far[np.maximum(elem - m, 0)], points[np.minimum(heads, ideal - 1)])
    vec = head_xy - points[tails]
    forward = _angle(vec)
    backward = _angle(-vec)
    # at the ideal vertex (a point at infinity, orientation reversed): clockwise order of the exit points
    exit_angle = _angle(far[np.maximum(elem - m, 0)] - centre)
    backward = np.where(to_ideal, -exit_angle, backward)
    angle = np.stack([forward, backward], axis=1).reshape(-1)
    bulge = (elem + 1).astype(float)
    tie = np.stack([bulge, -bulge], axis=1).reshape(-1)
    return np.lexsort((tie, angle, half_edge_tails(tails, heads)))


def _ray_reach(ev_seg, ev_t, m, starts, far):
    reach = np.zeros(len(starts))
    is_ray = ev_seg >= m
    if is_ray.any():
        r = ev_seg[is_ray] - m
        length = np.linalg.norm(far - starts, axis=1)
        np.maximum.at(reach, r, ev_t[is_ray] * length[r])
    return reach


def _crossing_records(graph: ExtendedGraph, ev_seg, ev_v, n, all_points) -> tuple[Crossing, ...]:
    if not len(ev_v):
        return ()
    order = np.lexsort((ev_seg, ev_v))
    ev_seg, ev_v = ev_seg[order], ev_v[order]
    starts = np.flatnonzero(np.r_[True, ev_v[1:] != ev_v[:-1]])
    bounds = np.r_[starts, len(ev_v)].tolist()
    segs = ev_seg.tolist()
    vertices = ev_v[starts].tolist()
    points = frozen_array(all_points)  # each crossing's point is a read-only view into this
    ids, node_ids = graph.element_ids, graph.node_ids
    # new crossing vertices first (by vertex index), then elements passing through nodes
    ranked = sorted(range(len(vertices)), key=lambda i: (vertices[i] < n, vertices[i]))
    out = []
    for number, i in enumerate(ranked, start=1):
        v = vertices[i]
        through = tuple(ids[e] for e in segs[bounds[i]: bounds[i + 1]])
        out.append(Crossing(f"X{number}", v, points[v], through, node_ids[v] if v < n else ""))
    return tuple(out)


def _geometric_note(graph: ExtendedGraph, projection: Projection, crossings) -> str:
    text = f"geometric embedding: angular order of the edges in {projection.description}"
    if graph.n_elements > graph.n_members:
        text += "; external forces drawn as rays to the ideal vertex, in the order they leave the frame"
    new = sum(1 for c in crossings if not c.node)
    through = len(crossings) - new
    if new:
        text += f"; planarised with {new} crossing vert{'ices' if new != 1 else 'ex'}"
    if through:
        text += f"; {through} place{'s' if through != 1 else ''} where an edge passes through a node in the view"
    return text


# -- combinatorial -----------------------------------------------------------


def combinatorial_embedding(graph: ExtendedGraph, projection: Projection) -> tuple[Embedding, Faces]:
    """A planar embedding from the Left-Right planarity test; the geometric, planarised one if there is none."""
    import networkx as nx

    n, k = graph.n_nodes, graph.n_elements
    g = nx.Graph()
    g.add_nodes_from(range(n + 1))
    g.add_edges_from(zip(graph.tails.tolist(), graph.heads.tolist()))
    planar, plane = nx.check_planarity(g)
    if not planar:
        embedding, faces = geometric_embedding(graph, projection)
        note = "the extended graph is not planar, so no combinatorial embedding exists: " + embedding.note
        return _with_note(embedding, note), faces
    half = {}
    for e, (a, b) in enumerate(zip(graph.tails.tolist(), graph.heads.tolist())):
        half[(a, b)] = 2 * e
        half[(b, a)] = 2 * e + 1
    rotation = []
    for v in range(n + 1):
        if g.degree(v):
            rotation.extend(half[(v, w)] for w in reversed(list(plane.neighbors_cw_order(v))))
    rotation = np.array(rotation, dtype=np.int64)
    faces = trace_faces(graph.tails, graph.heads, rotation)
    if not faces.planar:  # cannot happen for an embedding networkx certifies; kept as a guard
        raise EmbeddingError("the planarity test's embedding fails Euler's formula")
    points = projection.apply(graph.coords)
    embedding = Embedding(
        "combinatorial", projection,
        "combinatorial embedding: a planar embedding of the extended graph from the Left-Right planarity test "
        "(the drawing shows the frame in " + projection.description + "; spaces are faces of the embedding, not regions of the drawing)",
        frozen_array(points), n, (), graph.tails, graph.heads,
        frozen_array(np.arange(k), np.int64), frozen_array(np.zeros(k), np.int64), frozen_array(rotation, np.int64),
        frozen_array(_plain_rays(graph, projection, points)), frozen_array(np.zeros(k - graph.n_members)))
    return embedding, faces


def _plain_rays(graph: ExtendedGraph, projection: Projection, points: np.ndarray) -> np.ndarray:
    centre = (points.min(axis=0) + points.max(axis=0)) / 2 if len(points) else np.zeros(2)
    return ray_directions(graph, projection, points, centre)[0]


def _with_note(embedding: Embedding, note: str) -> Embedding:
    from dataclasses import replace

    return replace(embedding, note=note)
