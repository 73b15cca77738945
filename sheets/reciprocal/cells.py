"""One closed force cell per node: Rankine's polyhedra, disjointed (METHODS.md 6).

Rankine (1864), "Principle of the equilibrium of polyhedral frames", Phil. Mag.
27 92; "On the equilibrium of funicular polyhedral frames and convex polyhedral
force diagrams", Computer-Aided Design 63 (2015) 118-128; per-node cells:
"Disjointed force polyhedra", Computer-Aided Design 99 (2018) 11-28.

Convention. At node v a member e to node w has direction d_e = (x_w - x_v)/L_e
and pulls the node with t_e d_e (tension positive). With the external force p_v
(loads and reactions, ``State.external``) nodal equilibrium reads

    sum_e t_e d_e + p_v = 0,

which is the closure sum a_k n_k = 0 of a convex polyhedron whose faces are

- one per member: area |t_e|, outward normal n_e = sign(t_e) d_e, i.e. the face
  of a tension member faces along the member, towards the far node; the face of
  a compression member faces away from it;
- one for the external force: area |p_v|, outward normal p_v / |p_v|.

Faces with equal normals are merged (their areas add; the face lists every
member it stands for) and zero forces are dropped. Minkowski's theorem then
gives a unique convex cell up to translation (sheets.reciprocal.minkowski_problem).
A face of area a (m^2 in the cell's own space) stands for a force of a newtons:
cell lengths are in sqrt(N).

Where the forces at a node are coplanar (always, in a 2D frame) the cell is
flat: a convex polygon in that plane whose edges are perpendicular to the
forces and as long as them, i.e. the node's force polygon turned 90 degrees in
its plane (edges taken in angular order). Collinear forces give a segment.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.reciprocal.minkowski_problem import MinkowskiError, loop_vector_area, solve_minkowski, spans_space
from sheets.render.palette import ZERO_FORCE_RELATIVE

CHECK_TOLERANCE = 1e-6  # relative: face area vs force, and |normal - expected normal|
MERGE_TOLERANCE = 1e-9  # |n_i - n_j| below this: one face
FLAT_TOLERANCE = 1e-6  # smallest / largest singular value of the normals: flat node


@dataclass(frozen=True)
class FacetPart:
    """What one face (or polygon edge) stands for."""

    kind: str  # "member" or "external" (loads and reactions at the node)
    id: str  # member id, or node id for the external force
    force: float  # N: member force (tension positive) or |external force|


@dataclass(frozen=True)
class NodeCell:
    """The force cell of one node.

    ``kind``: "cell" (closed polyhedron; facets are faces, sizes areas),
    "polygon" (flat node; facets are edges, sizes lengths), "segment" (two equal
    and opposite forces), "none" (no force at the node), "failed" (see ``note``).
    Vertices are in the frame's dimension, centroid at the origin.
    """

    node: str
    kind: str
    vertices: np.ndarray  # (k, dim)
    loops: tuple[tuple[int, ...], ...]  # per facet: face loop (cell) or edge end points (polygon)
    normals: np.ndarray  # (f, dim) outward unit normals asked for
    sizes: np.ndarray  # (f,) measured on the geometry: area (cell) or length (polygon, segment)
    expected: np.ndarray  # (f,) sum of |force| of the parts, N
    parts: tuple[tuple[FacetPart, ...], ...]
    zero_members: tuple[str, ...]
    normal_error: float  # largest |measured normal - sign(t) d| over facets and parts
    size_error: float  # largest |size - expected| / expected
    iterations: int = 0
    note: str = ""

    @property
    def passed(self) -> bool:
        return self.kind != "failed" and max(self.normal_error, self.size_error) <= CHECK_TOLERANCE

    @property
    def volume(self) -> float:
        """Cell volume (sqrt(N)^3) or polygon area (N^2); zero for lower kinds."""
        if self.kind == "cell":
            total = 0.0
            for loop in self.loops:
                if len(loop) >= 3:
                    p = self.vertices[list(loop)]
                    total += float(p[0] @ np.cross(p[1:-1], p[2:]).sum(axis=0)) / 6.0
            return total
        if self.kind == "polygon":
            p = self.vertices
            if p.shape[1] == 2:
                return 0.5 * float(np.sum(p[:, 0] * np.roll(p[:, 1], -1) - np.roll(p[:, 0], -1) * p[:, 1]))
            return float(np.linalg.norm(loop_vector_area(p)))
        return 0.0

    def facet_of_member(self, member_id: str) -> int | None:
        for k, parts in enumerate(self.parts):
            if any(p.kind == "member" and p.id == member_id for p in parts):
                return k
        return None


@dataclass(frozen=True)
class NodeCells:
    state: str
    dim: int
    cells: tuple[NodeCell, ...]  # in node order

    @property
    def passed(self) -> bool:
        return all(c.passed or c.kind in ("none",) for c in self.cells)

    @property
    def normal_error(self) -> float:
        return max((c.normal_error for c in self.cells), default=0.0)

    @property
    def size_error(self) -> float:
        return max((c.size_error for c in self.cells), default=0.0)

    def of_kind(self, kind: str) -> tuple[str, ...]:
        return tuple(c.node for c in self.cells if c.kind == kind)

    def cell(self, node_id: str) -> NodeCell:
        for c in self.cells:
            if c.node == node_id:
                return c
        raise KeyError(node_id)


def node_cells(analysis, state_id: str) -> NodeCells:
    """The force cell of every node for one state of an Analysis."""
    project = analysis.project
    state = analysis.state(state_id)
    cells = cells_for_forces(project.node_ids, project.member_ids, project.coords, project.ends,
                             np.asarray(state.forces), np.asarray(state.external))
    return NodeCells(state.id, project.dim, cells)


def cells_for_forces(node_ids, member_ids, coords, ends, forces, external) -> tuple[NodeCell, ...]:
    """Cells for member forces ``forces`` (m,) and external nodal forces ``external`` (n, dim)."""
    coords = np.asarray(coords, dtype=float)
    ends = np.asarray(ends)
    n, dim = coords.shape
    delta = coords[ends[:, 1]] - coords[ends[:, 0]]
    unit = delta / np.linalg.norm(delta, axis=1)[:, None]
    ext_size = np.linalg.norm(external, axis=1)
    scale = max(float(np.abs(forces).max(initial=0.0)), float(ext_size.max(initial=0.0)))
    zero = ZERO_FORCE_RELATIVE * scale
    # incidence: for each node, (member, direction sign) pairs; d_e = +u at the start, -u at the end
    node_of = np.concatenate([ends[:, 0], ends[:, 1]])
    member_of = np.concatenate([np.arange(len(ends))] * 2)
    sign_of = np.concatenate([np.ones(len(ends)), -np.ones(len(ends))])
    order = np.argsort(node_of, kind="stable")
    starts = np.searchsorted(node_of[order], np.arange(n + 1))
    out = []
    for v in range(n):
        sel = order[starts[v]:starts[v + 1]]
        normals, sizes, parts, zeros = [], [], [], []
        for e, sgn in zip(member_of[sel], sign_of[sel]):
            t = float(forces[e])
            if abs(t) <= zero:
                zeros.append(member_ids[e])
                continue
            normals.append(np.sign(t) * sgn * unit[e])
            sizes.append(abs(t))
            parts.append(FacetPart("member", member_ids[e], t))
        if ext_size[v] > zero:
            normals.append(external[v] / ext_size[v])
            sizes.append(float(ext_size[v]))
            parts.append(FacetPart("external", node_ids[v], float(ext_size[v])))
        out.append(_cell(node_ids[v], dim, np.array(normals, dtype=float).reshape(-1, dim),
                         np.array(sizes, dtype=float), parts, tuple(zeros)))
    return tuple(out)


def _merge(normals: np.ndarray, sizes: np.ndarray, parts: list[FacetPart]):
    """Faces with equal outward normals become one; their areas add."""
    groups: list[list[int]] = []
    for k in range(len(normals)):
        for g in groups:
            if np.linalg.norm(normals[g[0]] - normals[k]) <= MERGE_TOLERANCE:
                g.append(k)
                break
        else:
            groups.append([k])
    merged_normals = np.array([normals[g].sum(axis=0) / np.linalg.norm(normals[g].sum(axis=0)) for g in groups]).reshape(-1, normals.shape[1])
    merged_sizes = np.array([sizes[g].sum() for g in groups])
    merged_parts = tuple(tuple(parts[k] for k in g) for g in groups)
    return merged_normals, merged_sizes, merged_parts


def _cell(node: str, dim: int, normals: np.ndarray, sizes: np.ndarray, parts: list[FacetPart], zeros: tuple[str, ...]) -> NodeCell:
    normals, sizes, groups = _merge(normals, sizes, parts)
    empty = np.zeros((0, dim))
    if len(sizes) == 0:
        return NodeCell(node, "none", empty, (), empty, np.zeros(0), np.zeros(0), (), zeros, 0.0, 0.0,
                        note="no force reaches this node")
    closure = float(np.linalg.norm(sizes @ normals) / sizes.sum())
    if closure > CHECK_TOLERANCE:
        return NodeCell(node, "failed", empty, (), normals, np.zeros(len(sizes)), sizes, groups, zeros, np.inf, np.inf,
                        note=f"forces at the node do not balance (|sum| / sum|f| = {closure:.1e})")
    full3 = np.zeros((len(sizes), 3))
    full3[:, :dim] = normals
    if dim == 3 and spans_space(full3, FLAT_TOLERANCE):
        try:
            poly = solve_minkowski(full3, sizes)
        except MinkowskiError as exc:
            return NodeCell(node, "failed", empty, (), normals, np.zeros(len(sizes)), sizes, groups, zeros, np.inf, np.inf,
                            note=f"Minkowski solve failed: {exc}")
        size = np.linalg.norm(poly.vector_areas, axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            measured_normals = np.where(size[:, None] > 0, poly.vector_areas / size[:, None], np.nan)
        return _checked(NodeCell(node, "cell", poly.vertices, poly.faces, normals, poly.areas, sizes, groups, zeros,
                                 0.0, 0.0, poly.iterations), measured_normals)
    return _flat(node, dim, full3, normals, sizes, groups, zeros)


def _flat(node, dim, full3, normals, sizes, groups, zeros) -> NodeCell:
    """Coplanar forces: the polygon with edges perpendicular to them, as long as them."""
    _, s, vt = np.linalg.svd(full3)
    collinear = len(s) < 2 or s[1] <= FLAT_TOLERANCE * s[0]
    plane = np.array([0.0, 0.0, 1.0]) if dim == 2 else vt[2]
    if dim == 3 and collinear:
        # any plane through the line will do; take the one closest to containing z (for drawing)
        helper = np.eye(3)[int(np.argmin(np.abs(vt[0])))]
        plane = _unit(np.cross(vt[0], helper))
    e1 = _unit(np.cross(plane, np.array([1.0, 0.0, 0.0]) if abs(plane[0]) < 0.9 else np.array([0.0, 1.0, 0.0])))
    if dim == 2:
        e1 = np.array([1.0, 0.0, 0.0])
    e2 = np.cross(plane, e1)
    order = np.argsort(np.arctan2(full3 @ e2, full3 @ e1), kind="stable")
    edges = sizes[order, None] * np.cross(plane, full3[order])  # edge of facet k runs along plane x n_k
    points = np.vstack([np.zeros(3), np.cumsum(edges, axis=0)[:-1]])
    points -= points.mean(axis=0) if collinear else _polygon_centroid(points, plane)
    k = len(order)
    loops = [()] * k
    measured_sizes = np.zeros(k)
    measured_normals = np.zeros((k, 3))
    for pos, facet in enumerate(order):
        a, b = pos, (pos + 1) % k
        loops[facet] = (a, b)
        vec = points[b] - points[a]
        measured_sizes[facet] = np.linalg.norm(vec)
        measured_normals[facet] = _unit(np.cross(vec, plane))
    vertices = points[:, :dim] if dim == 2 else points
    kind = "segment" if collinear else "polygon"
    note = "forces at the node are collinear" if collinear else ("" if dim == 2 else "members and forces at the node are coplanar: flat cell")
    cell = NodeCell(node, kind, vertices, tuple(loops), normals, measured_sizes, sizes, groups, zeros, 0.0, 0.0, note=note)
    return _checked(cell, measured_normals)


def _checked(cell: NodeCell, measured_normals: np.ndarray) -> NodeCell:
    """Measure every facet against what it stands for; return the cell with its errors."""
    dim = cell.normals.shape[1]
    normal_error = 0.0
    for k, parts in enumerate(cell.parts):
        m = measured_normals[k, :dim]
        if not np.all(np.isfinite(m)):
            normal_error = np.inf
            continue
        normal_error = max(normal_error, float(np.linalg.norm(m - cell.normals[k])))
    size_error = float(np.max(np.abs(cell.sizes - cell.expected) / cell.expected)) if len(cell.expected) else 0.0
    vertices = np.ascontiguousarray(cell.vertices)
    vertices.setflags(write=False)
    return NodeCell(cell.node, cell.kind, vertices, cell.loops, cell.normals, cell.sizes, cell.expected, cell.parts,
                    cell.zero_members, normal_error, size_error, cell.iterations, cell.note)


def _unit(v: np.ndarray) -> np.ndarray:
    n = np.linalg.norm(v)
    return v / n if n > 0 else v


def _polygon_centroid(points: np.ndarray, plane: np.ndarray) -> np.ndarray:
    a = np.cross(points, np.roll(points, -1, axis=0)) @ plane
    total = a.sum()
    if abs(total) <= 1e-300:
        return points.mean(axis=0)
    return ((points + np.roll(points, -1, axis=0)) * a[:, None]).sum(axis=0) / (3.0 * total)
