"""Force diagrams of hand-solvable 2D trusses against closed-form member forces.

Reference: the method of joints and the method of sections for statically
determinate trusses (common practice; any statics textbook, e.g. Timoshenko &
Young, "Engineering Mechanics", ch. 4 - from memory). Each force-diagram edge
must be as long as the closed-form force and parallel to its member
(Maxwell (1864), "On reciprocal figures and diagrams of forces", Phil. Mag. 27
250-261; Cremona (1872), "Le figure reciproche nella statica grafica").
"""

import math

import numpy as np
import pytest

from reciprocal_frames import drawn_checks, king_post, parallel_chord_pratt
from sheets.analysis import analyse
from sheets.reciprocal.diagram import force_diagram


def _edge_length(diagram, member_id):
    """Length of the (single) force-diagram edge of a member, from the drawn points."""
    k = [i for i, eid in enumerate(diagram.edge_ids) if eid == member_id]
    assert len(k) == 1
    a, b = diagram.points[diagram.faces.left[k[0]]], diagram.points[diagram.faces.right[k[0]]]
    return float(np.linalg.norm(b - a))


def test_king_post_truss_edge_lengths_equal_the_closed_form_forces(frame):
    span, rise, apex, ceiling = 8.0, 3.0, 10e3, 4e3
    project = king_post(frame, span, rise, apex, ceiling)
    state = analyse(project).state("L")
    diagram = force_diagram(project, state)
    alpha = math.atan2(rise, span / 2)
    total = apex + ceiling
    rafter = total / (2 * math.sin(alpha))  # C = (P + Q) / (2 sin alpha), joint at a support
    tie = total / (2 * math.tan(alpha))  # T = (P + Q) / (2 tan alpha)
    post = ceiling  # the post hangs the ceiling load: T = Q
    expected = {"M1": tie, "M2": tie, "M3": rafter, "M4": rafter, "M5": post}
    for member, force in expected.items():
        assert _edge_length(diagram, member) == pytest.approx(force, rel=1e-12)
    # senses from the drawn diagram: y_R - y_L = t u, so its projection on u gives the sign
    signs = np.sign(state.forces)
    np.testing.assert_array_equal(signs, [1, 1, -1, -1, 1])
    assert max(drawn_checks(project, state, diagram)) < 1e-12


def test_king_post_load_line_and_points_match_the_hand_construction(frame):
    """Bow's notation and the load line as drawn by hand (common practice).

    Outer spaces clockwise from the left: A (left, above), B (right, above the
    right rafter), C (right, below), D (below, left of the ceiling load);
    inner spaces E (left triangle), F (right triangle). The load line is
    vertical: ab = P (apex load), bc = R, cd = Q (ceiling load), da = R with
    R = (P + Q) / 2; e and f sit one tie force off it at the heights of d and c.
    """
    span, rise, P, Q = 8.0, 3.0, 10e3, 4e3
    project = king_post(frame, span, rise, P, Q)
    diagram = force_diagram(project, analyse(project).state("L"))
    names = dict(zip(diagram.edge_ids, diagram.bow_names))
    assert names == {"M1": "DE", "M2": "CF", "M3": "AE", "M4": "BF", "M5": "EF",
                     "external:N1": "AD", "external:N2": "CD", "external:N3": "BC", "external:N4": "AB"}
    y = {label: diagram.space_point(label) for label in "ABCDEF"}
    R = (P + Q) / 2
    tie = (P + Q) / 2 * (span / 2) / rise
    assert np.allclose([y[s][0] for s in "ABCD"], y["A"][0], atol=1e-9)  # the load line is vertical
    assert abs(y["A"][1] - y["B"][1]) == pytest.approx(P)
    assert abs(y["B"][1] - y["C"][1]) == pytest.approx(R)
    assert abs(y["C"][1] - y["D"][1]) == pytest.approx(Q)
    assert abs(y["D"][1] - y["A"][1]) == pytest.approx(R)
    assert y["E"][1] == pytest.approx(y["D"][1]) and y["F"][1] == pytest.approx(y["C"][1])
    assert abs(y["E"][0] - y["A"][0]) == pytest.approx(tie) and abs(y["F"][0] - y["A"][0]) == pytest.approx(tie)


def test_parallel_chord_pratt_truss_by_the_method_of_sections(frame):
    """Chord force = bending moment of the simply supported span / depth; diagonal = shear / sin(theta)."""
    panels, w, h, W = 6, 2.0, 1.5, 10e3
    project = parallel_chord_pratt(frame, panels, w, h, W)
    state = analyse(project).state("L")
    diagram = force_diagram(project, state)
    R = W * (panels - 1) / 2

    def moment(k):  # at x = k w, loads W at x_1 .. x_{panels-1}
        return w * (R * k - W * k * (k - 1) / 2)

    sin_theta = h / math.hypot(w, h)
    top = lambda i: panels + i  # noqa: E731  top node above bottom node i
    by_ends = {tuple(sorted(map(int, e))): project.member_ids[k] for k, e in enumerate(project.ends)}
    expected = {}
    for j in range(panels // 2):  # left half; the right half mirrors it
        expected[(j, j + 1)] = moment(max(j, 1)) / h  # bottom chord, tension
        if j >= 1:
            expected[(top(j), top(j + 1))] = moment(j + 1) / h  # top chord, compression
            expected[(j + 1, top(j))] = (R - j * W) / sin_theta  # diagonal, tension
    expected[(0, top(1))] = R / sin_theta  # end diagonal, compression
    for ends, force in expected.items():
        member = by_ends[tuple(sorted(ends))]
        assert _edge_length(diagram, member) == pytest.approx(force, rel=1e-11), member
        assert abs(state.forces[project.member_ids.index(member)]) == pytest.approx(force, rel=1e-11)
    assert max(drawn_checks(project, state, diagram)) < 1e-12
    assert not diagram.crossings  # a planar truss loaded on its boundary needs no planarisation
