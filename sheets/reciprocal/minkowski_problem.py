"""The Minkowski problem: the convex polyhedron with given face normals and areas.

Minkowski (1897), "Allgemeine Lehrsätze über die konvexen Polyeder", Nachr.
Ges. Wiss. Göttingen 198-219: unit normals n_i spanning R^3 and areas a_i > 0
with sum a_i n_i = 0 belong to exactly one convex polyhedron, up to translation.
Little (1983), "An iterative method for reconstructing convex polyhedra from
extended Gaussian images", Proc. AAAI-83, solves it by optimisation
over the support numbers; this module does the same with Newton's method.

For support numbers h, P(h) = {x : n_i . x <= h_i}. Its volume V(h) is
homogeneous of degree 3 with dV/dh_i = F_i(h), the area of face i, and V^(1/3)
is concave (Brunn-Minkowski). Hence

    g(h) = a . h - log V(h)

is convex; at its minimum F(h) = V(h) a, the wanted shape, which a scaling of h
brings to F = a. The Hessian is known in closed form from the face adjacency:
dF_i/dh_j = l_ij / sin(theta_ij) for adjacent faces (edge length l_ij, angle
theta_ij between the normals), dF_i/dh_i = -sum_j (dF_i/dh_j) cos(theta_ij).
So Newton's method is cheap (the systems are as small as the number of faces)
and converges quadratically from h_i = 1, where every face is present (each
plane n_i . x = 1 touches the unit sphere at n_i, inside every other plane).
Translations (h -> h + N c) leave g unchanged; steps are kept out of that
null space.

P(h) is built by polarity: with the origin inside (h > 0), the faces of P are
the vertices of the convex hull of the points n_i / h_i and its vertices are
the hull facets (scipy.spatial.ConvexHull, i.e. Qhull, as
scipy.spatial.HalfspaceIntersection does internally).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import ConvexHull, QhullError

TOLERANCE = 1e-12  # target: largest face-area error / largest area
STALL_TOLERANCE = 1e-7  # accepted when rounding stops progress (near-flat cells)
MAX_ITERATIONS = 100
SPAN_TOLERANCE = 1e-6  # smallest / largest singular value of the normals below this: flat


class MinkowskiError(ValueError):
    """The normals and areas describe no closed convex polyhedron (or the solve failed)."""


@dataclass(frozen=True)
class Polyhedron:
    """A convex polyhedron with faces in the order of the normals it was built from.

    ``faces[i]`` lists vertex indices counter-clockwise seen from outside; a face
    whose area came out as zero has an empty loop. Centroid at the origin.
    """

    vertices: np.ndarray  # (k, 3)
    faces: tuple[tuple[int, ...], ...]
    normals: np.ndarray  # (f, 3) unit outward normals asked for
    areas: np.ndarray  # (f,) areas measured on the face loops
    vector_areas: np.ndarray  # (f, 3) Newell vector area of each face loop (|.| = area, direction = normal)
    support: np.ndarray  # (f,) h_i = n_i . x on face i (centroid at the origin)
    volume: float
    iterations: int  # Newton iterations taken


@dataclass(frozen=True)
class _Shape:
    """P(h) for one h: what Newton's method needs."""

    corners: np.ndarray  # (T, 3) one vertex of P per facet of the dual hull (repeats allowed)
    simplices: np.ndarray  # (T, 3) dual hull facets: the three faces meeting at that vertex
    areas: np.ndarray  # (f,)
    hessian: np.ndarray  # (f, f) d areas / d h
    volume: float


def _shape(normals: np.ndarray, h: np.ndarray) -> _Shape | None:
    """P(h) for h > 0 (origin inside), or None when Qhull cannot build it."""
    dual = normals / h[:, None]
    try:
        hull = ConvexHull(dual)
    except (QhullError, ValueError):
        return None
    w, b = hull.equations[:, :3], hull.equations[:, 3]
    if np.any(b >= 0):
        return None
    corners = -w / b[:, None]
    f = len(h)
    simplices, neighbours = hull.simplices, hull.neighbors
    t_index = np.repeat(np.arange(len(simplices)), 3)
    k = np.tile(np.arange(3), len(simplices))
    g_index = neighbours.ravel()
    once = t_index < g_index
    t_index, k, g_index = t_index[once], k[once], g_index[once]
    i = simplices[t_index, (k + 1) % 3]
    j = simplices[t_index, (k + 2) % 3]
    length = np.linalg.norm(corners[t_index] - corners[g_index], axis=1)
    cos = np.einsum("ij,ij->i", normals[i], normals[j])
    sin = np.sqrt(np.maximum(1.0 - cos * cos, 1e-300))
    coupling = length / sin
    hessian = np.zeros((f, f))
    np.add.at(hessian, (i, j), coupling)
    np.add.at(hessian, (j, i), coupling)
    cos_all = normals @ normals.T
    # translation invariance: sum_j dF_i/dh_j n_j = 0, so the diagonal follows from the rest
    hessian[np.diag_indices(f)] = -np.sum(hessian * cos_all, axis=1)
    # F is homogeneous of degree 2 in h, so F = H h / 2 (Euler); V = h . F / 3.
    areas = 0.5 * hessian @ h
    volume = float(h @ areas) / 3.0
    return _Shape(corners, simplices, areas, hessian, volume)


def spans_space(normals: np.ndarray, tolerance: float = SPAN_TOLERANCE) -> bool:
    if len(normals) < 3:
        return False
    s = np.linalg.svd(np.asarray(normals, dtype=float), compute_uv=False)
    return bool(s[2] > tolerance * s[0])


def solve_minkowski(normals, areas, tolerance: float = TOLERANCE) -> Polyhedron:
    """The convex polyhedron with outward unit ``normals`` (f, 3) and face ``areas`` (f,).

    Normals must be distinct (merge equal ones first), span R^3, and the areas
    positive with sum a_i n_i = 0 (to rounding).
    """
    normals = np.asarray(normals, dtype=float)
    areas = np.asarray(areas, dtype=float)
    if normals.ndim != 2 or normals.shape[1] != 3 or len(areas) != len(normals):
        raise MinkowskiError("normals must be (f, 3) with one area per normal")
    if len(areas) < 4 or np.any(areas <= 0) or not np.all(np.isfinite(areas)):
        raise MinkowskiError("a closed polyhedron needs at least four faces with positive areas")
    normals = normals / np.linalg.norm(normals, axis=1)[:, None]
    if not spans_space(normals):
        raise MinkowskiError("the normals do not span space: the faces enclose no volume")
    closure = np.linalg.norm(areas @ normals) / areas.sum()
    if closure > 1e-6:
        raise MinkowskiError(f"the areas are not balanced: |sum a n| / sum a = {closure:.2e}")
    # Affine rounding. A linear map x -> L x turns face vector areas A_i into
    # det(L) L^-T A_i, so the problem for B_i = S A_i (S = L^-T up to scale) has the
    # solution Q with P = S^T Q / sqrt(det S). S = M^(-1/2), M = sum B B^T / |B|, makes
    # long or flat cells (a node with big forces nearly in a plane) round for Newton.
    vector = areas[:, None] * normals
    s_map = np.eye(3)
    for _ in range(2):
        b = vector @ s_map.T
        size = np.linalg.norm(b, axis=1)
        w, v = np.linalg.eigh((b.T / size) @ b)
        s_map = (v / np.sqrt(w)) @ v.T @ s_map
    b = vector @ s_map.T
    size = np.linalg.norm(b, axis=1)
    rounded = _solve_rounded(b / size[:, None], size, tolerance)
    det = float(np.linalg.det(s_map))
    linear = s_map.T / np.sqrt(det)
    vertices = rounded.vertices @ linear.T
    vector_areas = loops_vector_areas(vertices, rounded.faces)
    measured = np.linalg.norm(vector_areas, axis=1)
    support = np.array([float(normals[i] @ vertices[lp[0]]) if lp else np.nan for i, lp in enumerate(rounded.faces)])
    for arr in (vertices, measured, support, vector_areas):
        arr.setflags(write=False)
    return Polyhedron(vertices, rounded.faces, normals, measured, vector_areas, support, rounded.volume * det ** -0.5,
                      rounded.iterations)


def _solve_rounded(normals: np.ndarray, areas: np.ndarray, tolerance: float) -> Polyhedron:
    """Newton's method on g(h) for normals and (balanced) areas."""
    # Areas scaled so the optimum sits near h = 1: for a polyhedron circumscribed
    # about the unit sphere, V = S / 3, and F = V a then asks for sum a = 3.
    scale = areas.sum() / 3.0
    target = areas / scale
    q, _ = np.linalg.qr(normals)  # orthonormal basis of the translations N c
    projector = np.eye(len(target)) - q @ q.T
    # Remove the rounding left in sum a n (at most 1e-6 of sum a, checked above):
    # the projected areas balance exactly, so a . h ignores translations.
    target = projector @ target
    h = np.ones(len(target))
    shape = _shape(normals, h)
    if shape is None:
        raise MinkowskiError("the starting polyhedron could not be built")

    def objective(s: _Shape, hh: np.ndarray) -> float:
        return float(target @ hh) - np.log(s.volume)

    iterations, best, stalled = 0, np.inf, 0
    for iterations in range(1, MAX_ITERATIONS + 1):
        v = shape.volume
        error = _error(shape, target)
        if error <= tolerance:
            break
        grad = projector @ (target - shape.areas / v)
        hess = -shape.hessian / v + np.outer(shape.areas, shape.areas) / v**2
        diag_scale = max(np.abs(np.diag(hess)).max(), 1e-300)
        system = hess + diag_scale * (q @ q.T) + 1e-10 * diag_scale * np.eye(len(h))
        step = projector @ -np.linalg.solve(system, grad)
        slope = float(grad @ step)
        if slope >= 0:  # not a descent direction (should not happen): fall back to the gradient
            step, slope = -grad, -float(grad @ grad)
        f0 = objective(shape, h)
        alpha = 1.0
        while alpha > 1e-12:
            trial = h + alpha * step
            if np.all(trial > 0):
                s = _shape(normals, trial)
                if s is not None and s.volume > 0:
                    if objective(s, trial) <= f0 + 1e-4 * alpha * slope:
                        break
                    # Near the optimum g changes by ~error^2, below its rounding:
                    # judge the step by the area error instead.
                    if error < 1e-5 and _error(s, target) < error:
                        break
            alpha *= 0.5
        else:
            if error <= STALL_TOLERANCE:
                break
            raise MinkowskiError(f"line search failed after {iterations} iterations (area error {error:.1e})")
        h, shape = _recentred(normals, trial, s)
        best = min(best, error)
        stalled = stalled + 1 if error >= 0.5 * best else 0
        if stalled >= 3 and error <= STALL_TOLERANCE:
            break  # rounding floor reached: nothing left to gain
    else:
        raise MinkowskiError(f"no convergence in {MAX_ITERATIONS} iterations")

    h = h * np.sqrt(scale / shape.volume)
    final = _shape(normals, h)
    if final is None:
        raise MinkowskiError("the final polyhedron could not be built")
    return _polyhedron(normals, h, final, iterations)


def _error(shape: _Shape, target: np.ndarray) -> float:
    return float(np.abs(shape.areas / shape.volume - target).max() / target.max())


def _recentred(normals: np.ndarray, h: np.ndarray, shape: _Shape) -> tuple[np.ndarray, _Shape]:
    """Translate P so the mean of its vertices is at the origin (keeps h > 0 with margin).

    A translation changes neither areas nor their derivatives, only h and the vertices.
    """
    centre = shape.corners.mean(axis=0)
    moved = h - normals @ centre
    if not np.all(moved > 0):
        return h, shape
    return moved, _Shape(shape.corners - centre, shape.simplices, shape.areas, shape.hessian, shape.volume)


def _polyhedron(normals: np.ndarray, h: np.ndarray, shape: _Shape, iterations: int) -> Polyhedron:
    corners = shape.corners
    extent = float(np.ptp(corners, axis=0).max())
    # Merge corners that coincide (vertices where more than three faces meet).
    key = np.round(corners / (1e-9 * extent)).astype(np.int64)
    _, first, inverse = np.unique(key, axis=0, return_index=True, return_inverse=True)
    vertices = corners[first]
    # (face, vertex) incidences: each corner lies on the three faces of its dual facet
    pairs = np.unique(np.column_stack([shape.simplices.ravel(), np.repeat(inverse.ravel(), 3)]), axis=0)
    face, vert = pairs[:, 0], pairs[:, 1]
    f = len(normals)
    count = np.bincount(face, minlength=f)
    centre = np.zeros((f, 3))
    np.add.at(centre, face, vertices[vert])
    centre /= np.maximum(count, 1)[:, None]
    # an in-plane basis per face, then the vertices of each face sorted by angle (counter-clockwise from outside)
    helper = np.eye(3)[np.argmin(np.abs(normals), axis=1)]
    e1 = np.cross(normals, helper)
    e1 /= np.linalg.norm(e1, axis=1)[:, None]
    e2 = np.cross(normals, e1)
    rel = vertices[vert] - centre[face]
    angle = np.arctan2(np.einsum("ij,ij->i", rel, e2[face]), np.einsum("ij,ij->i", rel, e1[face]))
    order = np.lexsort((angle, face))
    face, vert = face[order], vert[order]
    starts = np.concatenate([[0], np.cumsum(count)])
    loops = tuple(tuple(int(x) for x in vert[starts[i]:starts[i + 1]]) if count[i] >= 3 else () for i in range(f))
    # Place the centroid (volume-weighted) at the origin; areas by Newell's method on each loop.
    nxt = np.arange(len(vert)) + 1
    last = np.r_[face[1:] != face[:-1], True]
    nxt[last] = starts[face[last]]  # each face's last vertex closes to its first
    tri_area = 0.5 * np.cross(vertices[vert], vertices[vert[nxt]])
    keep = count[face] >= 3
    vector_areas = np.zeros((f, 3))
    np.add.at(vector_areas, face[keep], tri_area[keep])
    inner = vertices.mean(axis=0)
    a = centre[face] - inner
    b = vertices[vert] - inner
    c = vertices[vert[nxt]] - inner
    vols = np.where(keep, np.einsum("ij,ij->i", a, np.cross(b, c)) / 6.0, 0.0)
    volume = float(vols.sum())
    centroid = inner + (vols[:, None] * (a + b + c) / 4.0).sum(axis=0) / volume
    vertices = vertices - centroid
    h = h - normals @ centroid
    areas = np.linalg.norm(vector_areas, axis=1)
    return Polyhedron(vertices, loops, normals.copy(), areas, vector_areas, h, volume, iterations)


def loops_vector_areas(vertices: np.ndarray, loops) -> np.ndarray:
    """Newell vector areas of many loops at once (zero for loops of fewer than three points)."""
    sizes = np.array([len(lp) if len(lp) >= 3 else 0 for lp in loops], dtype=np.int64)
    out = np.zeros((len(loops), 3))
    if not sizes.sum():
        return out
    flat = np.fromiter((x for lp in loops if len(lp) >= 3 for x in lp), dtype=np.int64, count=int(sizes.sum()))
    owner = np.repeat(np.arange(len(loops)), sizes)
    starts = np.concatenate([[0], np.cumsum(sizes)])
    nxt = np.arange(len(flat)) + 1
    last = np.r_[owner[1:] != owner[:-1], True]
    nxt[last] = starts[owner[last]]
    np.add.at(out, owner, 0.5 * np.cross(vertices[flat], vertices[flat[nxt]]))
    return out


def loop_vector_area(points: np.ndarray) -> np.ndarray:
    """Vector area of a closed loop of points (Newell's method): |A| = area, A/|A| = normal."""
    nxt = np.roll(points, -1, axis=0)
    return 0.5 * np.cross(points, nxt).sum(axis=0)


def loop_area(points: np.ndarray) -> float:
    return float(np.linalg.norm(loop_vector_area(points)))
