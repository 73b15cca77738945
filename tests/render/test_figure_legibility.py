"""2D figures a reviewer can read in greyscale: colours, line styles, signs, labels, Bow's letters, scale, round-off."""

import dataclasses
import re
import sys
from pathlib import Path

import numpy as np
import pytest
from matplotlib.collections import LineCollection

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "reciprocal"))
from reciprocal_frames import king_post, parallel_chord_pratt  # noqa: E402

from sheets.analysis import analyse  # noqa: E402
from sheets.reciprocal.diagram import force_diagram  # noqa: E402
from sheets.render import palette  # noqa: E402
from sheets.render.diagram2d import form_force_chart, verification_chart  # noqa: E402
from sheets.render.form_figure import forces_figure  # noqa: E402

MINUS = "\u2212"


def _relative_luminance(hex_colour: str) -> float:
    """WCAG 2.1 definition of relative luminance (W3C, "Web Content Accessibility Guidelines 2.1", glossary)."""
    channels = [int(hex_colour[i:i + 2], 16) / 255 for i in (1, 3, 5)]
    linear = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in channels]
    return 0.2126 * linear[0] + 0.7152 * linear[1] + 0.0722 * linear[2]


def _contrast_on_white(hex_colour: str) -> float:
    """WCAG 2.1 contrast ratio (L1 + 0.05) / (L2 + 0.05), white has L = 1."""
    return 1.05 / (_relative_luminance(hex_colour) + 0.05)


def test_the_contrast_formula_matches_published_values():
    # WCAG 2.1 understanding note for 1.4.3 (from memory): #777777 on white is about 4.48:1, black 21:1.
    assert _contrast_on_white("#000000") == pytest.approx(21.0)
    assert _contrast_on_white("#777777") == pytest.approx(4.48, abs=0.01)


@pytest.mark.parametrize("colour", palette.LEGEND_COLOURS)
def test_every_legend_colour_has_at_least_4_5_to_1_on_white(colour):
    # WCAG 2.1 success criterion 1.4.3 (contrast minimum) asks 4.5:1 for normal-size text
    assert _contrast_on_white(colour) >= 4.5, colour


def test_sky_blue_of_the_published_set_would_fail_the_check():
    assert _contrast_on_white("#56B4E9") < 4.5  # the check can fail: why reactions are drawn in blue #0072B2
    assert palette.REACTION.upper() != "#56B4E9"


@pytest.fixture
def truss(frame):
    project = parallel_chord_pratt(frame)
    return project, analyse(project).state("L")


def test_tension_and_compression_differ_in_line_style_and_labels_carry_the_sign(truss):
    project, state = truss
    diagram = force_diagram(project, state)
    fig = form_force_chart(diagram)
    form = fig.axes[0]
    styles = {}
    for collection in form.collections:
        if isinstance(collection, LineCollection):
            for colour, style in zip(collection.get_edgecolor(), collection.get_linestyle()):
                styles.setdefault(tuple(np.round(colour[:3], 3)), set()).add(style[1] is not None and len(style[1]) > 0)
    from matplotlib.colors import to_rgb

    tension, compression = tuple(np.round(to_rgb(palette.TENSION), 3)), tuple(np.round(to_rgb(palette.COMPRESSION), 3))
    assert styles[tension] == {False} and styles[compression] == {True}  # solid against dashed
    shown = {t.get_text() for t in form.texts if t.get_visible()}
    for e, t in enumerate(state.forces):
        label = next((s for s in shown if s.split(" ")[0] == project.member_ids[e]), None)
        if label is None or abs(t) < 1e-6 * np.abs(state.forces).max():
            continue
        assert label.split(" ")[1][0] == ("+" if t > 0 else MINUS), label


def test_forces_figure_dashes_compression_and_signs_its_labels(truss):
    project, state = truss
    fig = forces_figure(project, state.forces, state.loads, state.reactions, "L")
    ax = fig.axes[0]
    members = next(c for c in ax.collections if isinstance(c, LineCollection))
    dashed = [s[1] is not None and len(s[1]) > 0 for s in members.get_linestyle()]
    zero = 1e-9 * np.abs(state.forces).max()  # rounding noise is a zero-force member: drawn solid grey
    assert dashed == [bool(t < -zero) for t in state.forces]
    texts = [t.get_text() for t in ax.texts if t.get_text().split(" ")[0] in project.member_ids]
    assert texts and all(re.fullmatch(r"\S+ ([+\u2212][0-9.e+-]+|0)", t) for t in texts), texts


def _label_boxes(fig):
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    return [t.get_window_extent(renderer) for ax in fig.axes for t in ax.texts
            if t.get_visible() and t.get_gid() != "scale-bar" and t.get_text().strip()]


def test_drawn_labels_never_overlap_and_the_figure_says_how_many_were_dropped(frame):
    project = parallel_chord_pratt(frame, panels=16, width=0.6, depth=0.5)  # dense: 61 members on 9.6 m
    diagram = force_diagram(project, analyse(project).state("L"))
    fig = form_force_chart(diagram)
    boxes = _label_boxes(fig)
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            assert not (a.x0 < b.x1 and b.x0 < a.x1 and a.y0 < b.y1 and b.y0 < a.y1), (a, b)
    asked = sum(1 for ax in fig.axes for t in ax.texts if t.get_gid() != "scale-bar" and t.get_text().strip())
    drawn = len(boxes)
    note = next(t.get_text() for t in fig.texts if t.get_gid() == "label-note")
    found = re.match(r"(\d+) of (\d+) labels left out", note)
    assert found, note
    assert int(found.group(2)) == asked and int(found.group(1)) == asked - drawn > 0


def _by_members(diagram):
    """Each space named by the sides of the members around it (left/right of each member piece)."""
    out = {}
    for k in np.flatnonzero(diagram.edge_is_member):
        e = int(diagram.edge_element[k])
        out.setdefault(diagram.space_labels[diagram.faces.left[k]], set()).add((e, "left"))
        out.setdefault(diagram.space_labels[diagram.faces.right[k]], set()).add((e, "right"))
    return out


def test_bow_letters_belong_to_the_frame_and_never_equal_a_node_id(frame):
    cases = {"L": {3: (0, -10e3), 1: (0, -4e3)}, "M": {3: (0, -2e3), 1: (0, -9e3)}}
    project = king_post(lambda c, m, f, _cases: frame(c, m, f, cases))
    project = dataclasses.replace(project, node_ids=("A", "B", "C", "D"))
    analysis = analyse(project)
    one, two = (force_diagram(project, analysis.state(s)) for s in ("L", "M"))
    ids = {i.upper() for i in project.node_ids}
    assert not ids & {label.upper() for label in one.space_labels + two.space_labels}

    assert _by_members(one) == _by_members(two)  # same loaded nodes, other loads: the same letters for the same spaces
    assert sorted(one.space_labels) == sorted(two.space_labels)


def test_a_load_point_empty_in_one_state_keeps_the_other_letters(frame):
    cases = {"L": {3: (0, -10e3), 1: (0, -4e3)}, "M": {3: (0, -10e3)}}
    project = king_post(lambda c, m, f, _cases: frame(c, m, f, cases))
    analysis = analyse(project)
    full, fewer = (force_diagram(project, analysis.state(s)) for s in ("L", "M"))
    lost = set(full.space_labels) - set(fewer.space_labels)
    assert len(lost) == 1  # only the space a missing load splits off loses its letter
    assert set(fewer.space_labels) < set(full.space_labels)
    sides_full, sides_fewer = _by_members(full), _by_members(fewer)
    for letter, sides in sides_fewer.items():  # every space keeps its letter (a merged one: the first of its parts)
        assert sides_full[letter] <= sides, letter
    merged = next(letter for letter, sides in sides_fewer.items() if sides != sides_full[letter])
    assert sides_fewer[merged] == sides_full[merged] | sides_full[lost.pop()]


def test_round_off_closure_is_one_line_of_text_and_a_real_error_still_gets_the_chart(truss):
    project, state = truss
    diagram = force_diagram(project, state)
    assert max(diagram.closure_error, diagram.vertex_error.max()) < 1e-9
    quiet = verification_chart(diagram)
    line = next(t.get_text() for t in quiet.texts if t.get_gid() == "round-off")
    found = re.search(r"Largest closure error ([0-9.e+-]+) of the largest force.*round-off", line)
    assert found and float(found.group(1)) == pytest.approx(max(diagram.closure_error, diagram.vertex_error.max()), rel=0.06)
    assert not any(ax.patches for ax in quiet.axes if ax.get_yscale() == "log")
    assert all(ax.get_yscale() != "log" for ax in quiet.axes)  # no bar panel of noise

    forces = state.forces.copy()
    forces[0] *= 1.01  # a member force off by 1 %: its node polygons no longer close
    wrong = dataclasses.replace(state, forces=forces)
    d = force_diagram(project, wrong)
    assert d.closure_error > 1e-4
    chart = verification_chart(d)
    assert not any(t.get_gid() == "round-off" for t in chart.texts)
    assert sum(ax.get_yscale() == "log" for ax in chart.axes) == 2


def test_one_scale_per_figure_agrees_with_its_scale_bars(truss):
    project, state = truss
    diagram = force_diagram(project, state)
    fig = form_force_chart(diagram)
    fig.canvas.draw()
    notes = [t.get_text() for t in fig.texts if "One scale" in t.get_text()]
    assert len(notes) == 1  # stated once
    per_metre, form_bar, force_bar = map(float, re.search(
        r"1 m of the form is drawn as long as ([0-9.e+-]+) kN .*bars ([0-9.e+-]+) m and ([0-9.e+-]+) kN", notes[0]).groups())
    assert not any(re.search(r"scale 1 m =", ax.get_title()) for ax in fig.axes)  # not stated a second time

    def bar_length(ax, label):
        """Display length of the bar whose value text reads ``label``."""
        text = next(t for t in ax.texts if t.get_gid() == "scale-bar")
        assert text.get_text().startswith(label)
        bar = next(line for line in ax.lines if len(line.get_xdata()) == 2 and line.get_linewidth() == 1.2)
        (x0, y0), (x1, y1) = ax.transData.transform(np.column_stack([bar.get_xdata(), bar.get_ydata()]))
        return float(np.hypot(x1 - x0, y1 - y0))

    form_ax, force_ax = fig.axes[:2]
    per_m = bar_length(form_ax, f"{form_bar:g} m") / form_bar
    per_kn = bar_length(force_ax, f"{force_bar:g} kN") / force_bar
    assert per_kn * per_metre == pytest.approx(per_m, rel=1e-6)  # 1 m of form = per_metre kN on the page
    # and the same holds in x and y (one scale in each panel)
    for ax in (form_ax, force_ax):
        (x0, y0), (x1, y1) = ax.transData.transform([[0, 0], [1, 1]])
        assert abs(x1 - x0) == pytest.approx(abs(y1 - y0), rel=1e-6)


def test_every_view_of_a_3d_frame_is_drawn_at_the_one_scale_of_its_one_bar(frame):
    from reciprocal_frames import space_truss

    project = space_truss(frame)
    project = dataclasses.replace(project, drawing=dataclasses.replace(project.drawing, views=("plan", "front", "side")))
    state = analyse(project).states[0]
    fig = forces_figure(project, state.forces, state.loads, state.reactions, "L")
    fig.canvas.draw()
    bars = [t for ax in fig.axes for t in ax.texts if t.get_gid() == "scale-bar"]
    assert len(bars) == 1 and bars[0].get_text().endswith("(every view)")  # one scale, stated once
    scales = set()
    for ax in fig.axes:
        (x0, y0), (x1, y1) = ax.transData.transform([[0, 0], [1, 1]])
        assert abs(x1 - x0) == pytest.approx(abs(y1 - y0), rel=1e-6)
        scales.add(round(abs(x1 - x0), 6))
    assert len(scales) == 1, scales  # display units per metre equal in every view
