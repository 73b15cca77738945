"""The Minkowski problem solver against closed-form polyhedra and an independent hull library.

Minkowski (1897), "Allgemeine Lehrsätze über die konvexen Polyeder", Nachr. Ges.
Wiss. Göttingen 198-219: balanced areas on spanning normals give exactly one
convex polyhedron up to translation. Little (1983), "An iterative method for reconstructing convex polyhedra from
extended Gaussian images", Proc. AAAI-83:
reconstruction by optimisation over support numbers (the method under test).
Areas and volumes are re-measured with scipy.spatial.ConvexHull (Qhull), not
with the package's own measures.
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy.spatial import ConvexHull

from sheets.reciprocal.minkowski_problem import MinkowskiError, solve_minkowski


def _hull_faces(points):
    """(normals, areas) of a convex hull, coplanar triangles merged (reference, via Qhull)."""
    hull = ConvexHull(points)
    normals, areas = [], []
    for simplex, eq in zip(hull.simplices, hull.equations):
        a = 0.5 * np.linalg.norm(np.cross(points[simplex[1]] - points[simplex[0]], points[simplex[2]] - points[simplex[0]]))
        for k, n in enumerate(normals):
            if np.linalg.norm(n - eq[:3]) < 1e-10:
                areas[k] += a
                break
        else:
            normals.append(eq[:3])
            areas.append(a)
    return np.array(normals), np.array(areas), hull


def _centroid(points):
    """Volume centroid of the convex hull (fan of tetrahedra from an inner point)."""
    hull = ConvexHull(points)
    inner = points[hull.vertices].mean(axis=0)
    tri = points[hull.simplices] - inner
    vol = np.abs(np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2]))) / 6
    return inner + (vol[:, None] * tri.sum(axis=1) / 4).sum(axis=0) / vol.sum()


def test_regular_tetrahedron_closed_form():
    # Closed form: a regular tetrahedron of edge a has faces of area sqrt(3)/4 a^2,
    # volume a^3 / (6 sqrt 2), outward normals (1,1,1), (1,-1,-1), (-1,1,-1), (-1,-1,1) / sqrt 3.
    a = 2.5
    normals = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]]) / np.sqrt(3)
    areas = np.full(4, np.sqrt(3) / 4 * a**2)
    poly = solve_minkowski(normals, areas)
    edges = [np.linalg.norm(poly.vertices[i] - poly.vertices[j]) for i in range(4) for j in range(i + 1, 4)]
    assert len(poly.vertices) == 4
    assert np.allclose(edges, a, rtol=1e-9)
    hull = ConvexHull(poly.vertices)
    assert hull.volume == pytest.approx(a**3 / (6 * np.sqrt(2)), rel=1e-9)
    assert hull.area == pytest.approx(np.sqrt(3) * a**2, rel=1e-9)


def test_box_closed_form():
    # Closed form: a box lx x ly x lz has faces ly lz (normal +-x), lx lz (+-y), lx ly (+-z).
    lx, ly, lz = 3.0, 0.4, 1.7
    normals = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1.0]])
    areas = np.array([ly * lz, ly * lz, lx * lz, lx * lz, lx * ly, lx * ly])
    poly = solve_minkowski(normals, areas)
    assert np.allclose(np.ptp(poly.vertices, axis=0), [lx, ly, lz], rtol=1e-9)
    hull = ConvexHull(poly.vertices)
    assert hull.volume == pytest.approx(lx * ly * lz, rel=1e-9)
    assert hull.area == pytest.approx(areas.sum(), rel=1e-9)
    assert np.allclose(poly.areas, areas, rtol=1e-9)


def test_random_polytopes_are_recovered_up_to_translation():
    # Minkowski's uniqueness: the reconstruction is the original polytope, moved.
    rng = np.random.default_rng(7)
    for _ in range(25):
        pts = rng.normal(size=(int(rng.integers(5, 30)), 3)) * (0.2 + rng.random(3) * 3)
        normals, areas, hull = _hull_faces(pts)
        poly = solve_minkowski(normals, areas)
        original = pts[hull.vertices] - _centroid(pts[hull.vertices])
        rebuilt = poly.vertices - _centroid(poly.vertices)
        # every vertex of each has one of the other at the same place (near-coincident corners may split)
        gaps = np.linalg.norm(original[:, None, :] - rebuilt[None, :, :], axis=2)
        size = np.ptp(original, axis=0).max()
        assert gaps.min(axis=1).max() <= 1e-7 * size
        assert gaps.min(axis=0).max() <= 1e-7 * size
        assert ConvexHull(poly.vertices).volume == pytest.approx(hull.volume, rel=1e-8)


@st.composite
def balanced_sets(draw):
    """Random balanced sets: k - 1 random faces, the last one closes sum a n = 0."""
    k = draw(st.integers(min_value=3, max_value=14))
    seed = draw(st.integers(min_value=0, max_value=2**31 - 1))
    rng = np.random.default_rng(seed)
    normals = rng.normal(size=(k, 3))
    normals /= np.linalg.norm(normals, axis=1)[:, None]
    areas = rng.uniform(0.05, 5.0, size=k)
    rest = -(areas @ normals)
    return np.vstack([normals, rest / np.linalg.norm(rest)]), np.append(areas, np.linalg.norm(rest))


def _merge_close(normals, areas):
    keep_n, keep_a = [], []
    for n, a in zip(normals, areas):
        for k, m in enumerate(keep_n):
            if np.linalg.norm(n - m) < 1e-9:
                keep_a[k] += a
                break
        else:
            keep_n.append(n)
            keep_a.append(a)
    return np.array(keep_n), np.array(keep_a)


@settings(max_examples=60, deadline=None)
@given(balanced_sets())
def test_property_balanced_sets_give_their_areas_and_normals(data):
    normals, areas = _merge_close(*data)
    s = np.linalg.svd(normals, compute_uv=False)
    if s[2] < 1e-3 * s[0] or np.min(1 - (normals @ normals.T)[np.triu_indices(len(normals), 1)]) < 1e-6:
        return  # nearly flat or nearly parallel sets are exercised elsewhere
    poly = solve_minkowski(normals, areas)
    normals_hull, areas_hull, hull = _hull_faces(poly.vertices)
    # every face asked for is a face of the hull (a face may come out with zero area: none here)
    for n, a in zip(normals, areas):
        k = int(np.argmin(np.linalg.norm(normals_hull - n, axis=1)))
        assert np.linalg.norm(normals_hull[k] - n) < 1e-6
        assert areas_hull[k] == pytest.approx(a, rel=1e-6)
    assert hull.area == pytest.approx(areas.sum(), rel=1e-8)


def test_refuses_unbalanced_and_flat_sets():
    normals = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0.0]])
    with pytest.raises(MinkowskiError, match="span"):
        solve_minkowski(normals, np.ones(4))
    tet = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]]) / np.sqrt(3)
    with pytest.raises(MinkowskiError, match="balanced"):
        solve_minkowski(tet, np.array([1.0, 1.0, 1.0, 2.0]))
