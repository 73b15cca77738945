"""Faces, crossings and labels of embeddings, against outside references.

- Euler's formula V - E + F = 2 for a connected plane graph (Euler 1758).
- Segment crossings against shapely (GEOS), used only in these tests.
- Bow's notation letters (Bow 1873; common practice).
"""

import itertools

import numpy as np
import pytest
import shapely

from reciprocal_frames import drawn_checks, equilibrium_state
from sheets.reciprocal.bow import letters, member_name
from sheets.reciprocal.crossings import find_intersections
from sheets.reciprocal.diagram import force_diagram
from sheets.reciprocal.faces import half_edge_tails, trace_faces


def _rotation(points, tails, heads):
    """Counter-clockwise rotation of a straight-line drawing, by brute force (a plain reference)."""
    half = []
    for k, (a, b) in enumerate(zip(tails, heads)):
        half.append((a, np.arctan2(*(points[b] - points[a])[::-1]), 2 * k))
        half.append((b, np.arctan2(*(points[a] - points[b])[::-1]), 2 * k + 1))
    return np.array([h for _, _, h in sorted(half)])


def test_faces_of_a_square_with_a_diagonal_satisfy_euler():
    points = np.array([(0, 0), (1, 0), (1, 1), (0, 1)], float)
    tails, heads = np.array([0, 1, 2, 3, 0]), np.array([1, 2, 3, 0, 2])
    faces = trace_faces(tails, heads, _rotation(points, tails, heads))
    assert faces.count == 3  # two triangles and the outside
    assert 4 - 5 + faces.count == 2 and faces.planar
    # the diagonal parts the two triangles; a chord edge has different faces on its sides
    assert faces.left[4] != faces.right[4]


def test_a_twisted_rotation_is_caught_by_euler():
    """K4 drawn with one vertex's rotation reversed is not a planar embedding."""
    points = np.array([(0, 0), (2, 0), (1, 2), (1, 0.7)], float)
    tails, heads = np.array([0, 1, 2, 0, 1, 2]), np.array([1, 2, 0, 3, 3, 3])
    rotation = _rotation(points, tails, heads)
    assert trace_faces(tails, heads, rotation).planar
    group = np.flatnonzero(half_edge_tails(tails, heads)[rotation] == 3)  # positions of vertex 3's half-edges
    twisted = rotation.copy()
    twisted[group] = twisted[group][::-1]
    assert not trace_faces(tails, heads, twisted).planar


def test_crossings_and_vertices_on_segments_match_shapely():
    rng = np.random.default_rng(7)
    p, q = rng.random((60, 2)) * 10, rng.random((60, 2)) * 10
    vertices = rng.random((15, 2)) * 10
    # put three vertices exactly on segments, midway
    vertices[:3] = (p[:3] + q[:3]) / 2
    ends = np.full((60, 2), -1)
    found = find_intersections(p, q, ends, vertices, 1e-9)
    lines = [shapely.LineString([a, b]) for a, b in zip(p, q)]
    expected = {(i, j) for i, j in itertools.combinations(range(60), 2) if lines[i].crosses(lines[j])}
    assert set(zip(found.seg_a.tolist(), found.seg_b.tolist())) == expected
    for a, b, point in zip(found.seg_a, found.seg_b, found.points):
        reference = lines[a].intersection(lines[b])
        assert np.allclose(point, [reference.x, reference.y], atol=1e-9)
    on = set(zip(found.on_segment.tolist(), found.on_vertex.tolist()))
    assert {(0, 0), (1, 1), (2, 2)} <= on
    for s, v in on:
        assert lines[s].distance(shapely.Point(vertices[v])) < 1e-9


def test_collinear_overlapping_members_are_split_and_still_close(frame):
    """N1-N2-N3 on a line with members N1-N2, N2-N3 and N1-N3: the long member passes through N2."""
    coords = [(0, 0), (2, 0), (5, 0), (2, 2)]
    members = [(0, 1), (1, 2), (0, 2), (0, 3), (1, 3), (2, 3)]
    project = frame(coords, members, {0: "xy", 2: "y"})
    state = equilibrium_state(project, [3e3, -2e3, 1.5e3, 4e3, -2.5e3, 1e3])
    diagram = force_diagram(project, state)
    assert any(c.node == "N2" and "M3" in c.elements for c in diagram.crossings)
    assert diagram.faces.planar
    assert max(drawn_checks(project, state, diagram)) < 1e-9


@pytest.mark.parametrize("index, text", [(0, "A"), (25, "Z"), (26, "AA"), (27, "AB"), (701, "ZZ"), (702, "AAA")])
def test_space_letters(index, text):
    assert letters(index) == text


def test_member_names_by_the_spaces_they_part():
    assert member_name("E", "A") == "AE"
    assert member_name("AB", "C") == "C-AB"
