"""One connected polyhedral force diagram by polarity, from a 4D stress function (METHODS.md 7).

"Polarities in structural analysis and design: n-dimensional graphic statics
and structural transformations", Int. J. Solids Struct. 152-153 (2018)
272-293; "The geometry of structural equilibrium", R. Soc. Open Sci. 4 (2017)
160759; algebraic formulation: "Algebraic 3D graphic statics: reciprocal
constructions", Computer-Aided Design 108 (2019) 30-41.

The frame is the edge set of a cell complex (tetrahedra, or convex cells). Each
node is lifted to a height z_v; on each cell c the stress function is the
affine phi_c(x) = a_c . x + b_c through the lifted nodes (exact for tetrahedra,
least squares otherwise, with the residual reported). The polarity about
w = |x|^2 / 2 maps the hyperplane of c to the point a_c: the force-diagram
vertex of the cell.

- Two cells sharing a face have a_c - a_c' parallel to the face normal (phi is
  continuous across it), so the vertices of the cells around a member form a
  planar polygon perpendicular to the member.
- Ordered counter-clockwise about the member direction u_e (start to end), the
  polygon's vector area is alpha_e u_e. Around a node the polygons of its
  members close into a polyhedral surface, whose vector areas sum to zero:
  sum_e alpha_e d_e = 0. So t_e = sigma alpha_e is in equilibrium at every
  node, by construction.
- The overall sign sigma is fixed as in section 6 (sheets.reciprocal.cells): a
  face whose outward normal points along its member, away from the node,
  stands for tension. sigma is chosen so that the node cells have positive
  volume; nodes whose cell then comes out inverted are reported.
- Outside the complex: beyond each boundary face f the stress function takes
  the slope g_f = a_c + lambda_f n_f (continuous across f). Boundary members
  close their polygons through these exterior vertices, and each boundary
  node receives the external force that closes its cell. By default lambda_f
  makes g_f the projection of one exterior slope (the plane that best fits the
  lifted boundary nodes); when the lifted boundary nodes lie on one plane the
  frame is self-stressed (no external force).

Forces are quadratic in the heights: a face of area a stands for a force of a
newtons when heights are in m sqrt(N). The project file gives heights in
(display length) x sqrt(display force), e.g. m sqrt(kN).

Analysis use: heights (and exterior slopes lambda) are fitted to the analysed
forces by nonlinear least squares (scipy.optimize.least_squares, analytic
Jacobian). The fit residual is reported; where no lift reproduces the forces
the caller falls back to the per-node cells of section 6.
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import combinations

import numpy as np
import scipy.sparse as sp
from scipy.optimize import least_squares
from scipy.spatial import ConvexHull, Delaunay, QhullError

FIT_TOLERANCE = 1e-6  # largest |t_fit - t| / largest |t| for "a lift reproduces the forces"
FIT_NODE_LIMIT = 400  # larger complexes are not fitted (the sheets say so)


class ComplexError(ValueError):
    """The cells given (or found) are not a cell complex whose edges are the members."""


@dataclass(frozen=True)
class CellComplex:
    """Cells of the form, their faces and which members they meet.

    Dual vertices are numbered cells first (0..C-1), then exterior slopes, one
    per boundary face (C..C+B-1).
    """

    cells: tuple[tuple[int, ...], ...]  # node indices per cell
    faces: tuple[tuple[int, ...], ...]  # node loops of every face
    face_cells: tuple[tuple[int, ...], ...]  # 1 (boundary) or 2 cells per face
    face_normals: np.ndarray  # (F, 3) unit, outward from face_cells[f][0]
    boundary_faces: np.ndarray  # (B,) face indices on the boundary
    polygons: tuple[tuple[int, ...], ...]  # per member: dual vertex ids, CCW about u_e
    boundary_nodes: np.ndarray  # (n,) bool
    source: str  # "cells" or "tetrahedra found"

    @property
    def n_cells(self) -> int:
        return len(self.cells)


@dataclass(frozen=True)
class PolarDiagram:
    complex: CellComplex
    heights: np.ndarray  # (n,) m sqrt(N)
    exterior: np.ndarray  # (B,) lambda per boundary face
    points: np.ndarray  # (C+B, 3) dual vertices, sqrt(N)
    forces: np.ndarray  # (m,) N, tension positive
    external: np.ndarray  # (n, 3) N, the external force each node needs
    sign: int  # sigma
    inverted_nodes: tuple[int, ...]  # node cells with negative volume under sigma
    planarity: float  # largest height misfit of a non-tetrahedral cell / largest |height|
    perpendicularity: float  # largest |(p - p0) . u_e| / polygon size
    interior_closure: float  # largest |sum_e t_e d_e| at interior nodes / largest |t|

    def polygon(self, e: int) -> np.ndarray:
        return self.points[list(self.complex.polygons[e])]


@dataclass(frozen=True)
class Fit:
    diagram: PolarDiagram | None
    misfit: float  # largest |t_fit - t| / largest |t|
    fits: bool
    note: str


# -- building the complex -------------------------------------------------------------


def _convex_faces(coords: np.ndarray, cell: tuple[int, ...]) -> list[tuple[tuple[int, ...], np.ndarray]]:
    """Faces of a convex cell as (node loop, outward unit normal); coplanar hull triangles merged."""
    pts = coords[list(cell)]
    hull = ConvexHull(pts)
    if len(hull.vertices) != len(cell):
        raise ComplexError("a cell lists a node inside its own hull")
    groups: list[tuple[np.ndarray, float, set[int]]] = []
    for simplex, eq in zip(hull.simplices, hull.equations):
        for normal, offset, nodes in groups:
            if np.linalg.norm(normal - eq[:3]) < 1e-9 and abs(offset - eq[3]) < 1e-9 * (1 + abs(offset)):
                nodes.update(int(x) for x in simplex)
                break
        else:
            groups.append((eq[:3].copy(), float(eq[3]), {int(x) for x in simplex}))
    out = []
    for normal, _, nodes in groups:
        local = np.array(sorted(nodes))
        p = pts[local]
        centre = p.mean(axis=0)
        e1 = p[0] - centre
        e1 /= np.linalg.norm(e1)
        e2 = np.cross(normal, e1)
        order = np.argsort(np.arctan2((p - centre) @ e2, (p - centre) @ e1))
        out.append((tuple(int(cell[k]) for k in local[order]), normal / np.linalg.norm(normal)))
    return out


def build_complex(coords, ends, cells, source: str = "cells") -> CellComplex:
    """Check the cells form a complex whose edges are exactly the members; order the polygons."""
    coords = np.asarray(coords, dtype=float)
    ends = np.asarray(ends)
    if coords.shape[1] != 3:
        raise ComplexError("a cell complex needs a 3D frame")
    face_index: dict[frozenset, int] = {}
    faces, face_cells, face_normals = [], [], []
    for c, cell in enumerate(cells):
        try:
            cell_faces = _convex_faces(coords, cell)
        except QhullError:
            raise ComplexError(f"cell {c + 1} is flat (its nodes lie in one plane)") from None
        for loop, normal in cell_faces:
            key = frozenset(loop)
            if key in face_index:
                f = face_index[key]
                if len(face_cells[f]) == 2:
                    raise ComplexError(f"face {_names(loop)} is shared by more than two cells")
                if normal @ face_normals[f] > -1 + 1e-9:
                    raise ComplexError(f"cells {face_cells[f][0] + 1} and {c + 1} overlap across face {_names(loop)}")
                face_cells[f] = face_cells[f] + (c,)
            else:
                face_index[key] = len(faces)
                faces.append(loop)
                face_cells.append((c,))
                face_normals.append(normal)
    # every face edge must be a member, and every member a face edge
    member_of = {frozenset((int(a), int(b))): e for e, (a, b) in enumerate(ends)}
    edge_faces: dict[int, list[int]] = {e: [] for e in range(len(ends))}
    missing = set()
    for f, loop in enumerate(faces):
        for a, b in zip(loop, loop[1:] + loop[:1]):
            e = member_of.get(frozenset((a, b)))
            if e is None:
                missing.add(frozenset((a, b)))
            else:
                edge_faces[e].append(f)
    if missing:
        raise ComplexError(f"{len(missing)} cell edge(s) are not members, e.g. nodes {sorted(next(iter(missing)))}")
    loose = [e for e, fs in edge_faces.items() if not fs]
    if loose:
        raise ComplexError(f"{len(loose)} member(s) are not edges of any cell, e.g. member number {loose[0] + 1}")
    boundary = np.array([f for f, cs in enumerate(face_cells) if len(cs) == 1], dtype=np.int64)
    exterior_id = {int(f): len(cells) + k for k, f in enumerate(boundary)}
    boundary_nodes = np.zeros(len(coords), dtype=bool)
    for f in boundary:
        boundary_nodes[list(faces[f])] = True
    centroids = np.array([coords[list(c)].mean(axis=0) for c in cells])
    polygons = []
    for e, (a, b) in enumerate(ends):
        polygons.append(_edge_polygon(coords, int(a), int(b), edge_faces[e], face_cells, exterior_id, centroids, faces))
    normals = np.array(face_normals)
    normals.setflags(write=False)
    return CellComplex(tuple(tuple(int(x) for x in c) for c in cells), tuple(faces), tuple(face_cells), normals,
                       boundary, tuple(polygons), boundary_nodes, source)


def _edge_polygon(coords, a, b, faces_here, face_cells, exterior_id, centroids, faces) -> tuple[int, ...]:
    """Dual vertex ids around member (a, b), counter-clockwise about u = x_b - x_a.

    Cells are ordered by the angle of their centroids about the member. Where two
    neighbours in that order share no face (a boundary member), the polygon
    leaves the first through its boundary face into the exterior slope there,
    then comes back through the next cell's boundary face.
    """
    u = coords[b] - coords[a]
    u /= np.linalg.norm(u)
    ref = np.cross(u, [1.0, 0.0, 0.0]) if abs(u[0]) < 0.9 else np.cross(u, [0.0, 1.0, 0.0])
    ref /= np.linalg.norm(ref)
    ref2 = np.cross(u, ref)

    def angle(point):
        d = point - coords[a]
        return float(np.arctan2(d @ ref2, d @ ref))

    cells_here = sorted({c for f in faces_here for c in face_cells[f]})
    order = sorted(cells_here, key=lambda c: angle(centroids[c]))
    shared: dict[frozenset, int] = {}  # pairs of cells meeting across a face on this member
    for f in faces_here:
        if len(face_cells[f]) == 2:
            key = frozenset(face_cells[f])
            shared[key] = shared.get(key, 0) + 1
    boundary_here = [f for f in faces_here if len(face_cells[f]) == 1]
    face_angle = {f: angle(coords[list(faces[f])].mean(axis=0)) for f in boundary_here}
    two_pi = 2 * np.pi
    k = len(order)
    out: list[int] = []
    gaps = 0
    for pos, c in enumerate(order):
        out.append(c)
        nxt = order[(pos + 1) % k]
        if k > 1 and shared.get(frozenset((c, nxt)), 0) > 0:
            shared[frozenset((c, nxt))] -= 1
            continue
        gaps += 1
        own = [f for f in boundary_here if face_cells[f][0] == c]
        f_out = min(own, key=lambda f: (face_angle[f] - angle(centroids[c])) % two_pi)
        into = [f for f in boundary_here if face_cells[f][0] == nxt and f != f_out]
        f_in = min(into, key=lambda f: (angle(centroids[nxt]) - face_angle[f]) % two_pi)
        out.extend((exterior_id[f_out], exterior_id[f_in]))
    if gaps > 1 or (gaps == 1) != bool(boundary_here):
        raise ComplexError(f"the cells around the member between nodes {a} and {b} do not form one fan")
    return tuple(out)


def _names(loop) -> str:
    return "-".join(str(x) for x in loop)


def find_tetrahedra(coords, ends) -> tuple[tuple[int, ...], ...]:
    """The tetrahedral subdivision whose edge set is the members, if there is one.

    First the Delaunay tetrahedralisation (scipy.spatial.Delaunay); if its edges
    differ from the members, the 4-cliques of the member graph that hold no
    other node are tried as a tiling of the hull (faces shared by at most two,
    volumes adding to the hull volume).
    """
    coords = np.asarray(coords, dtype=float)
    members = {frozenset((int(a), int(b))) for a, b in ends}
    hull_volume = ConvexHull(coords).volume
    try:
        tri = Delaunay(coords)
        tets = [tuple(int(x) for x in s) for s in tri.simplices if _tet_volume(coords, s) > 1e-12 * hull_volume]
        if _edges(tets) == members:
            return tuple(tets)
    except QhullError:
        pass
    neighbours: dict[int, set[int]] = {}
    for a, b in ends:
        neighbours.setdefault(int(a), set()).add(int(b))
        neighbours.setdefault(int(b), set()).add(int(a))
    cliques = set()
    for a, b in ends:
        common = neighbours[int(a)] & neighbours[int(b)]
        for c, d in combinations(sorted(common), 2):
            if d in neighbours[c]:
                cliques.add(tuple(sorted((int(a), int(b), c, d))))
    tets = []
    for t in sorted(cliques):
        vol = _tet_volume(coords, t)
        if vol <= 1e-12 * hull_volume:
            continue
        others = np.setdiff1d(np.arange(len(coords)), t)
        if len(others) and np.any(_inside_tet(coords[list(t)], coords[others])):
            continue
        tets.append(t)
    total = sum(_tet_volume(coords, t) for t in tets)
    if abs(total - hull_volume) > 1e-9 * hull_volume or _edges(tets) != members:
        raise ComplexError("the members are not the edges of a tetrahedral subdivision of the frame's hull")
    return tuple(tets)


def _tet_volume(coords, t) -> float:
    p = coords[list(t)]
    return abs(float(np.linalg.det(p[1:] - p[0]))) / 6.0


def _inside_tet(corners: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Points inside or on the tetrahedron but not at a corner."""
    m = (corners[1:] - corners[0]).T
    lam = np.linalg.solve(m, (points - corners[0]).T).T
    bary = np.column_stack([1 - lam.sum(axis=1), lam])
    tol = 1e-9
    return np.all(bary >= -tol, axis=1)


def _edges(tets) -> set:
    return {frozenset((t[i], t[j])) for t in tets for i in range(len(t)) for j in range(i + 1, len(t))}


# -- from heights to forces ----------------------------------------------------------


@dataclass(frozen=True)
class _Operators:
    """Linear maps from (heights, lambda) to dual vertices, and the polygon edges."""

    lift: sp.csr_matrix  # (3 (C+B), n + B): stacked dual vertex coordinates
    residual: sp.csr_matrix  # planarity residual of non-tetrahedral cells (rows, n)
    pair_member: np.ndarray  # per polygon edge: member
    pair_from: np.ndarray
    pair_to: np.ndarray
    unit: np.ndarray  # (m, 3)


def _operators(coords, ends, cx: CellComplex) -> _Operators:
    n = len(coords)
    C, B = cx.n_cells, len(cx.boundary_faces)
    rows, cols, vals = [], [], []
    res_rows, res_cols, res_vals, res_count = [], [], [], 0
    grad_of_cell = []
    for c, cell in enumerate(cx.cells):
        idx = list(cell)
        m = np.column_stack([coords[idx], np.ones(len(idx))])
        pinv = np.linalg.pinv(m)  # (4, k): [a; b] = pinv z_cell
        grad_of_cell.append((idx, pinv[:3]))
        for d in range(3):
            rows.extend([3 * c + d] * len(idx))
            cols.extend(idx)
            vals.extend(pinv[d])
        if len(idx) > 4:
            proj = np.eye(len(idx)) - m @ pinv  # z - M [a;b]
            for r in range(len(idx)):
                res_rows.extend([res_count] * len(idx))
                res_cols.extend(idx)
                res_vals.extend(proj[r])
                res_count += 1
    for k, f in enumerate(cx.boundary_faces):
        c = cx.face_cells[f][0]
        idx, grad = grad_of_cell[c]
        normal = cx.face_normals[f]
        for d in range(3):
            rows.extend([3 * (C + k) + d] * len(idx))
            cols.extend(idx)
            vals.extend(grad[d])
            rows.append(3 * (C + k) + d)
            cols.append(n + k)
            vals.append(normal[d])
    lift = sp.csr_matrix((vals, (rows, cols)), shape=(3 * (C + B), n + B))
    residual = sp.csr_matrix((res_vals, (res_rows, res_cols)), shape=(res_count, n))
    pm, pf, pt = [], [], []
    for e, poly in enumerate(cx.polygons):
        for i, j in zip(poly, poly[1:] + poly[:1]):
            pm.append(e)
            pf.append(i)
            pt.append(j)
    delta = coords[ends[:, 1]] - coords[ends[:, 0]]
    unit = delta / np.linalg.norm(delta, axis=1)[:, None]
    return _Operators(lift, residual, np.array(pm, dtype=np.int64), np.array(pf, dtype=np.int64),
                      np.array(pt, dtype=np.int64), unit)


def _alpha(ops: _Operators, points: np.ndarray, m: int) -> np.ndarray:
    """alpha_e = u_e . (1/2) sum_k p_k x p_{k+1}: signed polygon areas."""
    u = ops.unit[ops.pair_member]
    terms = 0.5 * np.einsum("ij,ij->i", np.cross(points[ops.pair_from], points[ops.pair_to]), u)
    return np.bincount(ops.pair_member, terms, minlength=m)


def _alpha_jacobian(ops: _Operators, points: np.ndarray, m: int) -> sp.csr_matrix:
    """d alpha / d (stacked points): d/dp_i of (p_i x p_j).u = p_j x u; d/dp_j = u x p_i."""
    u = ops.unit[ops.pair_member]
    d_from = 0.5 * np.cross(points[ops.pair_to], u)
    d_to = 0.5 * np.cross(u, points[ops.pair_from])
    rows = np.repeat(ops.pair_member, 3)
    cols_from = (3 * ops.pair_from[:, None] + np.arange(3)).ravel()
    cols_to = (3 * ops.pair_to[:, None] + np.arange(3)).ravel()
    n_points = points.shape[0]
    return sp.csr_matrix((np.concatenate([d_from.ravel(), d_to.ravel()]),
                          (np.concatenate([rows, rows]), np.concatenate([cols_from, cols_to]))),
                         shape=(m, 3 * n_points))


def default_exterior(coords, cx: CellComplex, heights: np.ndarray) -> np.ndarray:
    """lambda_f making each exterior slope the projection of the best-fit plane of the lifted boundary."""
    ops_points = _cell_gradients(coords, cx, heights)
    idx = np.flatnonzero(cx.boundary_nodes)
    if len(idx) < 4:
        return np.zeros(len(cx.boundary_faces))
    m = np.column_stack([coords[idx], np.ones(len(idx))])
    slope = np.linalg.lstsq(m, heights[idx], rcond=None)[0][:3]
    lam = []
    for f in cx.boundary_faces:
        c = cx.face_cells[f][0]
        lam.append(float(cx.face_normals[f] @ (slope - ops_points[c])))
    return np.array(lam)


def _cell_gradients(coords, cx: CellComplex, heights) -> np.ndarray:
    out = []
    for cell in cx.cells:
        idx = list(cell)
        m = np.column_stack([coords[idx], np.ones(len(idx))])
        out.append(np.linalg.lstsq(m, heights[idx], rcond=None)[0][:3])
    return np.array(out)


def polar_diagram(coords, ends, cx: CellComplex, heights, exterior=None, sign: int | None = None) -> PolarDiagram:
    """The force diagram and the forces implied by the lift ``heights`` (n,) in m sqrt(N)."""
    coords = np.asarray(coords, dtype=float)
    ends = np.asarray(ends)
    heights = np.asarray(heights, dtype=float)
    ops = _operators(coords, ends, cx)
    if exterior is None:
        exterior = default_exterior(coords, cx, heights)
    exterior = np.asarray(exterior, dtype=float)
    m = len(ends)
    points = (ops.lift @ np.concatenate([heights, exterior])).reshape(-1, 3)
    alpha = _alpha(ops, points, m)
    volumes = _node_volumes(coords, ends, cx, points, len(coords))
    if sign is None:
        sign = 1 if volumes.sum() >= 0 else -1
    forces = sign * alpha
    inverted = tuple(int(v) for v in np.flatnonzero(sign * volumes < -1e-12 * max(np.abs(volumes).max(initial=0.0), 1e-300)))
    delta = coords[ends[:, 1]] - coords[ends[:, 0]]
    unit = delta / np.linalg.norm(delta, axis=1)[:, None]
    pull = np.zeros((len(coords), 3))
    np.add.at(pull, ends[:, 0], forces[:, None] * unit)
    np.add.at(pull, ends[:, 1], -forces[:, None] * unit)
    external = -pull  # sum_e t_e d_e + p = 0
    scale = max(float(np.abs(forces).max(initial=0.0)), 1e-300)
    interior = ~cx.boundary_nodes
    closure = float(np.linalg.norm(external[interior], axis=1).max(initial=0.0)) / scale
    perp = 0.0
    for e, poly in enumerate(cx.polygons):
        p = points[list(poly)]
        size = max(float(np.ptp(p, axis=0).max()), 1e-300)
        perp = max(perp, float(np.abs((p - p[0]) @ unit[e]).max()) / size)
    planarity = 0.0
    if ops.residual.shape[0]:
        planarity = float(np.abs(ops.residual @ heights).max()) / max(float(np.abs(heights).max()), 1e-300)
    for arr in (points, forces, external):
        arr.setflags(write=False)
    return PolarDiagram(cx, heights, exterior, points, forces, external, int(sign), inverted, planarity, perp, closure)


def _node_volumes(coords, ends, cx: CellComplex, points: np.ndarray, n: int) -> np.ndarray:
    """Signed volume of each node's dual cell, faces oriented counter-clockwise about d_e.

    Boundary nodes' cells are closed by a cap over the loop of polygon edges used
    only once (the hole where the external force acts).
    """
    faces_at: dict[int, list[tuple[int, ...]]] = {v: [] for v in range(n)}
    for e, (a, b) in enumerate(ends):
        poly = cx.polygons[e]
        faces_at[int(a)].append(poly)
        faces_at[int(b)].append(tuple(reversed(poly)))
    out = np.zeros(n)
    for v, loops in faces_at.items():
        directed: dict[tuple[int, int], int] = {}
        for loop in loops:
            for i, j in zip(loop, loop[1:] + loop[:1]):
                directed[(i, j)] = directed.get((i, j), 0) + 1
        hole = [(j, i) for (i, j), k in directed.items() if directed.get((j, i), 0) < k]
        all_loops = list(loops)
        if hole:
            # cap: fan from the hole's mean point, edges reversed (stored as triangles)
            centre = np.mean([points[i] for i, _ in hole], axis=0)
            vol_cap = sum(float(centre @ np.cross(points[i], points[j])) for i, j in hole) / 6.0
        else:
            vol_cap = 0.0
        vol = 0.0
        for loop in all_loops:
            p = points[list(loop)]
            vol += float(p[0] @ np.cross(p[1:-1], p[2:]).sum(axis=0)) / 6.0 if len(loop) >= 3 else 0.0
        out[v] = vol + vol_cap
    return out


# -- fitting heights to forces ---------------------------------------------------------


def fit_heights(coords, ends, cx: CellComplex, forces, *, tolerance: float = FIT_TOLERANCE) -> Fit:
    """Heights and exterior slopes whose diagram carries ``forces`` (N), by nonlinear least squares."""
    coords = np.asarray(coords, dtype=float)
    ends = np.asarray(ends)
    target = np.asarray(forces, dtype=float)
    n, m = len(coords), len(ends)
    scale = float(np.abs(target).max(initial=0.0))
    if scale == 0:
        zero = polar_diagram(coords, ends, cx, np.zeros(n), np.zeros(len(cx.boundary_faces)))
        return Fit(zero, 0.0, True, "no force: the flat lift")
    if n > FIT_NODE_LIMIT:
        return Fit(None, np.inf, False, f"complex too large to fit ({n} nodes > {FIT_NODE_LIMIT})")
    ops = _operators(coords, ends, cx)
    B = len(cx.boundary_faces)
    weight = 1.0 / scale

    best: Fit | None = None
    centred = coords - coords.mean(axis=0)
    size = float(np.ptp(coords, axis=0).max())
    for sgn in (1, -1):
        for start in range(3):
            z0 = _start_heights(centred, size, start)
            lam0 = default_exterior(coords, cx, z0)
            x0 = np.concatenate([z0, lam0])
            a0 = np.abs(_alpha(ops, (ops.lift @ x0).reshape(-1, 3), m))
            k = np.sqrt(np.mean(np.abs(target)) / max(np.mean(a0), 1e-300))
            x0 = x0 * k

            def residual(x, sgn=sgn):
                pts = (ops.lift @ x).reshape(-1, 3)
                r = (sgn * _alpha(ops, pts, m) - target) * weight
                if ops.residual.shape[0]:
                    r = np.concatenate([r, ops.residual @ x[:n] * (1.0 / size)])
                return r

            def jacobian(x, sgn=sgn):
                pts = (ops.lift @ x).reshape(-1, 3)
                j = (sgn * weight) * (_alpha_jacobian(ops, pts, m) @ ops.lift)
                if ops.residual.shape[0]:
                    j = sp.vstack([j, sp.hstack([ops.residual * (1.0 / size), sp.csr_matrix((ops.residual.shape[0], B))])])
                return j.tocsr()

            sol = least_squares(residual, x0, jac=jacobian, method="trf", x_scale="jac", ftol=1e-15, xtol=1e-15,
                                gtol=1e-15, max_nfev=400)
            diagram = polar_diagram(coords, ends, cx, sol.x[:n], sol.x[n:], sign=sgn)
            misfit = float(np.abs(diagram.forces - target).max()) / scale
            if best is None or misfit < best.misfit:
                best = Fit(diagram, misfit, misfit <= tolerance, "")
            if misfit <= tolerance:
                break
        if best is not None and best.fits:
            break
    assert best is not None
    note = (f"a lift reproduces the forces (largest misfit {best.misfit:.1e} of the largest force)" if best.fits else
            f"no lift found that reproduces the forces (largest misfit {best.misfit:.1e} of the largest force): "
            "per-node cells are shown instead")
    return Fit(best.diagram, best.misfit, best.fits, note)


def _start_heights(centred: np.ndarray, size: float, start: int) -> np.ndarray:
    """Convex paraboloid, then deterministic perturbations of it."""
    base = 0.5 * np.sum(centred**2, axis=1) / size
    if start == 0:
        return base
    rng = np.random.default_rng(start)
    return base * (1.0 + 0.3 * rng.standard_normal(len(base)))


# -- from a project ---------------------------------------------------------------------


@dataclass(frozen=True)
class ProjectPolarity:
    """What the [polyhedral] table asked for, for one state."""

    requested: bool
    use: str  # "generative" (heights given), "analysis" (heights fitted), or "" (not requested / failed)
    complex: CellComplex | None
    diagram: PolarDiagram | None
    fit: Fit | None
    note: str
    state_misfit: float = np.inf  # largest |t_diagram - t_state| / largest |t_state|

    @property
    def usable(self) -> bool:
        """A diagram to draw: given heights, or a fit that reproduces the analysed forces."""
        return self.diagram is not None and (self.use == "generative" or (self.fit is not None and self.fit.fits))

    @property
    def matches_state(self) -> bool:
        """The diagram carries the analysed forces of the state (so it may stand in for its cells)."""
        return self.diagram is not None and self.state_misfit <= FIT_TOLERANCE


def height_factor(units) -> float:
    """SI (m sqrt(N)) per unit of the heights in the file: display length x sqrt(display force)."""
    return units.factor("length") * float(np.sqrt(units.factor("force")))


def project_complex(project) -> CellComplex:
    spec = project.polyhedral
    index = {nid: i for i, nid in enumerate(project.node_ids)}
    if spec.cells:
        cells = tuple(tuple(index[n] for n in cell) for cell in spec.cells)
        return build_complex(project.coords, project.ends, cells, "cells")
    return build_complex(project.coords, project.ends, find_tetrahedra(project.coords, project.ends), "tetrahedra found")


def project_polarity(analysis, state_id: str, cx: CellComplex | None = None) -> ProjectPolarity:
    """The polarity diagram of a project: from its heights, or fitted to the state's forces."""
    project = analysis.project
    spec = project.polyhedral
    if project.dim != 3 or not (spec.cells or spec.find_tetrahedra):
        return ProjectPolarity(False, "", None, None, None, "no cell complex given ([polyhedral] cells or find_tetrahedra)")
    try:
        cx = cx or project_complex(project)
    except (ComplexError, QhullError) as exc:
        return ProjectPolarity(True, "", None, None, None, f"no polyhedral force diagram: {exc}; per-node cells shown instead")
    if spec.heights:
        given = dict(spec.heights)
        missing = [n for n in project.node_ids if n not in given]
        if missing:
            return ProjectPolarity(True, "", cx, None, None,
                                   f"heights missing for node(s) {', '.join(missing[:8])}: every node needs one")
        z = np.array([given[n] for n in project.node_ids]) * height_factor(project.units)
        diagram = polar_diagram(project.coords, project.ends, cx, z)
        forces = np.asarray(analysis.state(state_id).forces)
        scale = float(np.abs(forces).max(initial=0.0))
        misfit = float(np.abs(diagram.forces - forces).max()) / scale if scale > 0 else np.inf
        note = ("forces implied by the given heights: they match the analysed state" if misfit <= FIT_TOLERANCE else
                f"forces implied by the given heights (they differ from the analysed state by up to {misfit:.1e} "
                "of its largest force)")
        return ProjectPolarity(True, "generative", cx, diagram, None, note, misfit)
    fit = fit_heights(project.coords, project.ends, cx, analysis.state(state_id).forces)
    return ProjectPolarity(True, "analysis", cx, fit.diagram, fit, fit.note, fit.misfit)
