"""Matplotlib figures replayed as vector paths: positions, determinism, the .rlvec route."""

from __future__ import annotations

import pdfplumber
import pytest
from matplotlib.figure import Figure

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
