"""Minkowski-sum views: the load path made visible (METHODS.md 8).

"Maxwell and Rankine reciprocal diagrams via Minkowski sums for
two-dimensional and three-dimensional trusses under load", Int. J. Solids
Struct. 85-86 (2016) 142-154.

The sum (1 - s) form + s force places, for mixing parameter s in (0, 1):

- each node v: its force cell (3D) or force polygon turned 90 degrees (2D),
  scaled by s kappa, at (1 - s) x_v;
- each member e = (i, j): the face (3D) or edge (2D) that stands for it in the
  cell of its start node, swept along the member by (1 - s) L_e: a prism of
  volume (1 - s) L_e s^2 kappa^2 |t_e|, or a rectangle of area
  (1 - s) L_e s kappa |t_e|.

kappa turns force into drawing length: metres per newton in 2D (force polygon
edges are forces), metres per sqrt(newton) in 3D (cell faces are forces). So
every member's piece measures (1 - s) s kappa |t_e| L_e (2D) or
(1 - s) s^2 kappa^2 |t_e| L_e (3D), and the pieces add up to that factor times
the load path sum |t_e| L_e. Tension pieces less compression pieces give the
same factor times sum t_e L_e = sum f . x (Maxwell's load path theorem; Maxwell
1870, Trans. R. Soc. Edinburgh 26 1-40).

Where the diagram is connected (the 3D polarity diagram of
sheets.reciprocal.polarity) the pieces tile exactly: node cells, member prisms
and the form's cells fit face to face ("connected" layout). With the per-node
cells of section 6 each cell has its own shape and the pieces are laid out in
the same places without fitting ("separate cells" layout); their sizes, and so
the totals, are the same.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.reciprocal.cells import NodeCell, NodeCells
from sheets.reciprocal.minkowski_problem import loop_vector_area
from sheets.render.palette import ZERO_FORCE_RELATIVE

PIECE_TOLERANCE = 1e-6  # relative: measured piece size vs (1-s) s^k kappa^k |t| L


@dataclass(frozen=True)
class Piece:
    """One member (or node) of the Minkowski sum, measured on its own geometry."""

    kind: str  # "member" or "node"
    id: str
    force: float  # N, members only (0 for nodes)
    vertices: np.ndarray  # (k, dim) m
    loops: tuple[tuple[int, ...], ...]  # 2D: one outline; 3D: face loops (outward)
    measure: float  # m^2 (2D) or m^3 (3D), measured
    expected: float  # members: (1-s) s^k kappa^k |t| L; nodes: cell size x (s kappa)^dim


@dataclass(frozen=True)
class MinkowskiView:
    state: str
    dim: int
    mix: float  # s
    kappa: float  # m per N (2D) or m per sqrt(N) (3D)
    layout: str  # "connected" or "separate cells"
    members: tuple[Piece, ...]
    nodes: tuple[Piece, ...]
    load_path: float  # sum |t| L, N m
    load_path_signed: float  # sum t L, N m
    loads_term: float  # sum f . x, N m (reactions included)

    @property
    def factor(self) -> float:
        """Measure per unit of |t| L: (1-s) s kappa (2D) or (1-s) s^2 kappa^2 (3D)."""
        k = self.dim - 1
        return (1 - self.mix) * (self.mix * self.kappa) ** k

    @property
    def not_drawn(self) -> tuple[str, ...]:
        """Members with a force but no piece (3D: both end nodes flat, so no face to sweep)."""
        return tuple(p.id for p in self.members if p.expected > 0 and not p.loops)

    def _counted(self, p: Piece) -> float:
        """Measured size, or the expected one for a member that could not be drawn."""
        return p.expected if (p.expected > 0 and not p.loops) else p.measure

    @property
    def total(self) -> float:
        """Sum over members of the measured pieces (undrawn members counted at their expected size)."""
        return float(sum(self._counted(p) for p in self.members))

    @property
    def total_tension(self) -> float:
        return float(sum(self._counted(p) for p in self.members if p.force > 0))

    @property
    def total_compression(self) -> float:
        return float(sum(self._counted(p) for p in self.members if p.force < 0))

    @property
    def piece_error(self) -> float:
        """Largest |measured - expected| / expected over member pieces (zero-force members aside)."""
        largest = max((abs(p.force) for p in self.members), default=0.0)
        errs = [abs(p.measure - p.expected) / p.expected for p in self.members
                if p.expected > 0 and p.loops and abs(p.force) > ZERO_FORCE_RELATIVE * largest]
        return max(errs, default=0.0)

    @property
    def total_error(self) -> float:
        """|total - factor x load path| / (factor x load path)."""
        ref = self.factor * self.load_path
        return abs(self.total - ref) / ref if ref > 0 else 0.0

    @property
    def maxwell_error(self) -> float:
        """|(tension - compression) / factor - sum f . x| / load path."""
        if self.load_path <= 0:
            return 0.0
        return abs((self.total_tension - self.total_compression) / self.factor - self.loads_term) / self.load_path

    @property
    def passed(self) -> bool:
        return max(self.piece_error, self.total_error, self.maxwell_error) <= PIECE_TOLERANCE


def default_kappa(lengths: np.ndarray, forces: np.ndarray, dim: int) -> float:
    """Force-to-length scale: the largest force drawn about as large as a median member."""
    largest = float(np.abs(forces).max(initial=0.0))
    if largest == 0:
        return 1.0
    typical = float(np.median(lengths))
    # 3D pieces are fatter for the same kappa (a face is kappa^2 |t|): half the size reads better
    return typical / largest if dim == 2 else 0.5 * typical / np.sqrt(largest)


def minkowski_view(analysis, cells: NodeCells, mix: float | None = None, kappa: float | None = None,
                   polar=None, diagram=None) -> MinkowskiView:
    """The Minkowski-sum view of one state from its node cells.

    ``polar`` (3D, a sheets.reciprocal.polarity.PolarDiagram) or ``diagram``
    (2D, a sheets.reciprocal.diagram.ForceDiagram of the same state) give the
    connected layout, in which the pieces fit edge to edge.
    """
    project = analysis.project
    state = analysis.state(cells.state)
    s = project.drawing.minkowski_mix if mix is None else mix
    lengths = np.asarray(analysis.equilibrium.lengths)
    forces = np.asarray(state.forces)
    dim = project.dim
    if kappa is None:
        kappa = default_kappa(lengths, forces, dim)
    coords = np.asarray(project.coords)
    k = dim - 1
    factor = (1 - s) * (s * kappa) ** k
    nodes, members = [], []
    if diagram is not None and dim == 2:
        layout = "connected"
        nodes, members = _connected_2d(project, diagram, forces, lengths, s, kappa, factor)
    elif polar is not None and dim == 3:
        layout = "connected"
        dual = polar.points * (s * kappa)
        for v, nid in enumerate(project.node_ids):
            cell_ids = sorted({c for c, cell in enumerate(polar.complex.cells) if v in cell})
            pts = (1 - s) * coords[v] + dual[cell_ids] if cell_ids else np.zeros((0, 3))
            nodes.append(Piece("node", nid, 0.0, pts, (), 0.0, 0.0))
        for e, mid in enumerate(project.member_ids):
            face = dual[list(polar.complex.polygons[e])]
            i, j = project.ends[e]
            members.append(_prism(mid, float(polar.forces[e]), face + (1 - s) * coords[i], (1 - s) * (coords[j] - coords[i]),
                                  factor * abs(polar.forces[e]) * lengths[e]))
    else:
        layout = "separate cells"
        by_node = {c.node: c for c in cells.cells}
        scale = s * kappa
        for v, nid in enumerate(project.node_ids):
            cell = by_node[nid]
            nodes.append(_node_piece(cell, (1 - s) * coords[v], scale, dim))
        for e, mid in enumerate(project.member_ids):
            i, j = (int(x) for x in project.ends[e])
            t = float(forces[e])
            expected = factor * abs(t) * lengths[e]
            # the member's face from its start node's cell, else (3D, flat start node) from its end node's
            ends = [(i, j), (j, i)] if dim == 3 else [(i, j)]
            piece = None
            for a, b in ends:
                cell = by_node[project.node_ids[a]]
                facet = cell.facet_of_member(mid)
                if mid in cell.zero_members:
                    piece = Piece("member", mid, t, np.zeros((0, dim)), (), 0.0, 0.0)  # zero force: nothing to draw
                    break
                if facet is None or not cell.loops or len(cell.loops[facet]) < dim:
                    continue
                # the member's share of a merged facet: scaled along the edge (2D) / uniformly (3D)
                share = abs(t) / cell.expected[facet]
                pts = cell.vertices[list(cell.loops[facet])]
                centre = pts.mean(axis=0)
                pts = centre + (pts - centre) * (share if dim == 2 else np.sqrt(share))
                base = (1 - s) * coords[a] + scale * pts
                sweep = (1 - s) * (coords[b] - coords[a])
                piece = _rectangle(mid, t, base, sweep, expected) if dim == 2 else _prism(mid, t, base, sweep, expected)
                break
            if piece is None:  # both end nodes flat: no face to sweep (listed as not drawn)
                piece = Piece("member", mid, t, np.zeros((0, dim)), (), 0.0, expected)
            members.append(piece)
    external = np.asarray(state.external)
    if layout == "connected" and polar is not None and dim == 3:
        # the pieces stand for the polarity diagram's forces: the totals must too
        forces, external = np.asarray(polar.forces), np.asarray(polar.external)
    return MinkowskiView(
        state=state.id, dim=dim, mix=float(s), kappa=float(kappa), layout=layout,
        members=tuple(members), nodes=tuple(nodes),
        load_path=float(np.abs(forces) @ lengths), load_path_signed=float(forces @ lengths),
        loads_term=float(np.sum(external * coords)),
    )


def _turned(points: np.ndarray) -> np.ndarray:
    """Force-diagram points turned 90 degrees counter-clockwise (perpendicular convention)."""
    return np.column_stack([-points[:, 1], points[:, 0]])


def _connected_2d(project, diagram, forces, lengths, s, kappa, factor):
    """Rectangles between the turned force-diagram edge and the member, node polygons from the spaces around each node."""
    emb, faces = diagram.embedding, diagram.faces
    y = s * kappa * _turned(np.asarray(diagram.points))
    at = (1 - s) * np.asarray(emb.points)
    m = project.n_members
    members = []
    parts: dict[int, list[np.ndarray]] = {}
    for k in range(len(emb.element)):
        e = int(emb.element[k])
        if e >= m:
            continue
        tail, head = int(emb.tails[k]), int(emb.heads[k])
        yl, yr = y[faces.left[k]], y[faces.right[k]]
        parts.setdefault(e, []).append(np.array([at[tail] + yl, at[tail] + yr, at[head] + yr, at[head] + yl]))
    for e, mid in enumerate(project.member_ids):
        t = float(forces[e])
        pieces = parts.get(e, [])
        area = sum(abs(_area2d(p)) for p in pieces)
        pts = np.vstack(pieces) if pieces else np.zeros((0, 2))
        loops = tuple(tuple(range(4 * q, 4 * q + 4)) for q in range(len(pieces)))
        members.append(Piece("member", mid, t, pts, loops, area, factor * abs(t) * lengths[e]))
    half_tails = np.stack([emb.tails, emb.heads], axis=1).reshape(-1)
    nodes = []
    for v, nid in enumerate(project.node_ids):
        around = [h for h in np.asarray(emb.rotation).tolist() if half_tails[h] == v]
        spaces = [int(faces.face_of[h]) for h in around]
        pts = at[v] + y[spaces] if spaces else np.zeros((0, 2))
        loops = (tuple(range(len(spaces))),) if len(spaces) >= 3 else ()
        nodes.append(Piece("node", nid, 0.0, pts, loops, abs(_area2d(pts)) if len(spaces) >= 3 else 0.0, 0.0))
    return nodes, members


def _node_piece(cell: NodeCell, at: np.ndarray, scale: float, dim: int) -> Piece:
    if not len(cell.vertices):
        return Piece("node", cell.node, 0.0, np.zeros((0, dim)), (), 0.0, 0.0)
    pts = at + scale * cell.vertices
    if cell.kind == "cell":
        loops = tuple(lp for lp in cell.loops if len(lp) >= 3)
        return Piece("node", cell.node, 0.0, pts, loops, _volume(pts, loops), cell.volume * scale**3)
    if cell.kind == "polygon" and dim == 2:
        return Piece("node", cell.node, 0.0, pts, (tuple(range(len(pts))),), abs(_area2d(pts)), abs(cell.volume) * scale**2)
    return Piece("node", cell.node, 0.0, pts, (tuple(range(len(pts))),), 0.0, 0.0)


def _rectangle(mid: str, t: float, edge: np.ndarray, sweep: np.ndarray, expected: float) -> Piece:
    """The edge (2 points) swept by ``sweep``: a rectangle when the edge is perpendicular to it."""
    a, b = edge[0], edge[1]
    pts = np.array([a, b, b + sweep, a + sweep])
    if _area2d(pts) < 0:
        pts = pts[::-1]
    return Piece("member", mid, t, pts, ((0, 1, 2, 3),), abs(_area2d(pts)), expected)


def _prism(mid: str, t: float, face: np.ndarray, sweep: np.ndarray, expected: float) -> Piece:
    """The polygon ``face`` (k, 3) swept by ``sweep``; loops oriented outward."""
    k = len(face)
    if k < 3:
        return Piece("member", mid, t, np.zeros((0, 3)), (), 0.0, expected)
    if loop_vector_area(face) @ sweep > 0:
        face = face[::-1]  # the start face must face backwards (outward)
    pts = np.vstack([face, face + sweep])
    loops = [tuple(range(k)), tuple(range(2 * k - 1, k - 1, -1))]
    for a in range(k):
        b = (a + 1) % k
        loops.append((b, a, a + k, b + k))
    loops = tuple(loops)
    return Piece("member", mid, t, pts, loops, abs(_volume(pts, loops)), expected)


def _area2d(pts: np.ndarray) -> float:
    x, y = pts[:, 0], pts[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def _volume(pts: np.ndarray, loops) -> float:
    """Volume enclosed by outward face loops (divergence theorem, fan triangles)."""
    total = 0.0
    origin = pts.mean(axis=0)
    for loop in loops:
        p = pts[list(loop)] - origin
        total += float(p[0] @ np.cross(p[1:-1], p[2:]).sum(axis=0)) / 6.0
    return total
