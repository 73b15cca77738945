"""Matplotlib figures replayed as vector paths: positions, determinism, the .rlvec route."""

from __future__ import annotations

import numpy as np
import pdfplumber
import pytest
from matplotlib.figure import Figure

from sheets.report import vector
from sheets.report.vector import read_vector_file, record


def _line_figure():
    fig = Figure(figsize=(2, 1))  # 144 x 72 pt
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_axis_off()
    ax.set_xlim(0, 1)
    ax.set_ylim(0, 1)
    ax.plot([0.25, 0.75], [0.25, 0.75], color="#D55E00", lw=2)
    ax.fill([0.1, 0.2, 0.2], [0.8, 0.8, 0.9], color="#009E73", alpha=0.5)
    ax.text(0.5, 0.1, "N1", fontsize=8)
    return fig


def test_a_line_lands_where_the_axes_put_it(tmp_path):
    vector = record(_line_figure())
    assert (vector.width, vector.height) == (144, 72)
    path = tmp_path / "line.pdf"
    path.write_bytes(vector.pdf_bytes("line"))
    with pdfplumber.open(path) as pdf:
        page = pdf.pages[0]
        assert not page.images
        segments = page.lines + page.curves
        # data (0.25, 0.25)-(0.75, 0.75) in a unit axes filling a 144 x 72 pt page: (36, 18)-(108, 54) from the lower left
        hit = [s for s in segments if s["x0"] == pytest.approx(36, abs=0.05) and s["x1"] == pytest.approx(108, abs=0.05)
               and s["y0"] == pytest.approx(18, abs=0.05) and s["y1"] == pytest.approx(54, abs=0.05)]
        assert hit, segments
        # vermillion stroke, 2 pt wide
        assert tuple(round(c, 3) for c in hit[0]["stroking_color"]) == pytest.approx((0.835, 0.369, 0.0), abs=0.002)
        assert hit[0]["linewidth"] == pytest.approx(2.0)
        assert page.extract_text() == ""  # text drawn as outlines


def test_recording_is_deterministic():
    assert record(_line_figure()).pdf_bytes("x") == record(_line_figure()).pdf_bytes("x")


def test_savefig_rlvec_round_trip(tmp_path):
    fig = _line_figure()
    path = tmp_path / "fig.part.rlvec"
    fig.savefig(path, dpi=200, metadata={})
    assert read_vector_file(path) == record(_line_figure())


def _collections_figure():
    """Every kind of collection the sheets draw: lines of many colours, widths and dashes (some running off
    the page), translucent and opaque filled polygons, unfilled closed polygons, and a scatter (offsets)."""
    from matplotlib.collections import LineCollection, PolyCollection

    rng = np.random.default_rng(7)
    segs = rng.uniform(-0.1, 1.1, (300, 2, 2))
    polys = rng.uniform(0, 1, (40, 5, 2))
    fig = Figure(figsize=(3, 2))
    ax = fig.add_axes((0.05, 0.05, 0.9, 0.9))
    ax.set_xlim(0, 1)
    ax.set_ylim(0, 1)
    ax.add_collection(LineCollection(segs, colors=["#009E73", "#D55E00", "#999999"] * 100,
                                     linewidths=np.repeat([0.5, 1.0, 2.0], 100), linestyles=["solid", "dashed"] * 150))
    ax.add_collection(LineCollection(segs[:50, :, ::-1], colors="#000000", linewidths=0.8))  # one style: merged
    ax.add_collection(PolyCollection(polys[:20], facecolors=["#56B4E9", "#000000"], edgecolors="none", alpha=0.6))
    ax.add_collection(PolyCollection(polys[20:], facecolors="none", edgecolors="#222222", linewidths=0.7))
    ax.scatter(*rng.uniform(0, 1, (2, 30)), s=8, color="#CC79A7")
    ax.set_title("collections")
    return fig


def test_bulk_collections_record_exactly_what_one_path_at_a_time_records():
    fast = record(_collections_figure())
    slow = record(_collections_figure(), bulk=False)
    assert fast == slow  # the same operators, byte for byte: the same drawing
    assert fast.pdf_bytes("c") == slow.pdf_bytes("c")


def test_bulk_route_is_taken_and_strokes_of_one_style_are_merged(monkeypatch):
    calls = []
    original = vector.Recorder.draw_path

    def counting(self, *args, **kw):
        calls.append(1)
        return original(self, *args, **kw)

    monkeypatch.setattr(vector.Recorder, "draw_path", counting)
    fig = _collections_figure()
    vector.record(fig)
    bulk_calls = len(calls)
    calls.clear()
    vector.record(_collections_figure(), bulk=False)
    assert bulk_calls < len(calls) - 300  # the 300 lines (and 40 polygons) skipped draw_path
    # merging: consecutive opaque strokes of one style become one path whose subpaths are the originals
    ops = [("path", "0 0 m 1 1 l", "s", (1.0, 1.0), "S", None), ("path", "2 2 m 3 3 l", "s", (1.0, 1.0), "S", None),
           ("path", "4 4 m 5 5 l", "s", (0.5, 0.5), "S", None), ("path", "6 6 m 7 7 l h", "s", (1.0, 1.0), "f", None)]
    merged = vector.merge_strokes(ops)
    assert merged[0] == ("path", "0 0 m 1 1 l 2 2 m 3 3 l", "s", (1.0, 1.0), "S", None)
    assert merged[1:] == ops[2:]  # translucent strokes and fills stay apart


def test_long_paths_formatted_in_one_go_match_the_segment_walk():
    from matplotlib.path import Path as MplPath
    from matplotlib.transforms import Affine2D

    rng = np.random.default_rng(3)
    pts = rng.uniform(-20, 180, (3000, 2))
    pts[::7] = np.nan  # NaN breaks, as diagram2d._add_lines joins segments
    closed = MplPath([(10, 10), (50, 10), (50, 40), (0, 0)], [1, 2, 2, 79])
    move = Affine2D().scale(0.9).translate(3, -2)
    for path in (MplPath(pts), MplPath(pts[:60]), closed):
        for clip, simplify in (((-1.0, -1.0, 145.0, 73.0), True), (None, False)):
            assert vector._code(path, move, clip, simplify) == vector._walk(path, move, clip, simplify)
