"""Large frames: every table prints every row, continued over pages; nothing is left to the CSV files alone."""

from __future__ import annotations

import re
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np
import pdfplumber
import pytest
from matplotlib.colors import to_hex

from sheets.analysis import analyse
from sheets.analysis.member_checks import member_checks
from sheets.model import load_project
from sheets.reciprocal.stage import project_diagrams
from sheets.render import palette
from sheets.render.force_summary import force_summary_figure
from sheets.report import figures
from sheets.report.assemble import assemble
from sheets.report.templates import load_template

PANELS = 60


def _long_truss(folder):
    """An invented 60-panel Pratt truss (241 members): long enough that every table is cut."""
    nodes = [f'L{i} = [{i * 2.0}, 0]' for i in range(PANELS + 1)] + [f'U{i} = [{i * 2.0}, 2.5]' for i in range(PANELS + 1)]
    members = []
    for i in range(PANELS):
        members.append(f'B{i} = {{ ends = ["L{i}", "L{i + 1}"], group = "bottom" }}')
        members.append(f'T{i} = {{ ends = ["U{i}", "U{i + 1}"], group = "top" }}')
        a, b = (f"L{i}", f"U{i + 1}") if i < PANELS // 2 else (f"U{i}", f"L{i + 1}")
        members.append(f'D{i} = {{ ends = ["{a}", "{b}"], group = "web" }}')
    for i in range(PANELS + 1):
        members.append(f'V{i} = {{ ends = ["L{i}", "U{i}"], group = "web" }}')
    loads = ", ".join(f"U{i} = [0, -10]" for i in range(1, PANELS))
    text = f"""
[project]
title = "Long test truss"
date = "2026-01-05"
revision = "A"

[materials.steel]
elastic_modulus = "210 GPa"
yield_strength = "355 MPa"

[sections.S]
material = "steel"
area = "3000 mm^2"
second_moment = "9e6 mm^4"

[member_defaults]
section = "S"

[nodes]
{chr(10).join(nodes)}

[members]
{chr(10).join(members)}

[supports]
L0 = "xy"
L{PANELS} = "y"

[cases.G]
title = "Roof load"
loads = {{ {loads} }}

[design]
partial_factor = 1.0
effective_length_factor = 1.0
slenderness_limit = 200
"""
    path = folder / "long.toml"
    path.write_text(text)
    return path


def _reading_order(pages: list[str], row: str) -> list[tuple]:
    """Rows of a table set in one or two columns a page: down the left column, then down the right one."""
    out = []
    for text in pages:
        left, right = [], []
        for line in text.splitlines():
            found = re.findall(row, line)
            left += found[:1]
            right += found[1:]
        out += left + right
    return out


def test_tables_list_every_member_in_order(tmp_path):
    analysis = analyse(load_project(_long_truss(tmp_path)))
    checks = member_checks(analysis)
    template = load_template("a4-portrait")
    pdf = tmp_path / "long.pdf"
    pdf.write_bytes(assemble(analysis, checks, (), template))
    with pdfplumber.open(pdf) as doc:
        pages = [page.extract_text() or "" for page in doc.pages]
    text = "\n".join(pages)
    p = analysis.project
    assert p.n_members > template.table_rows  # long enough that the old sheets cut the tables
    # the member forces table prints every member, in the project's order, with its force to the printed precision
    printed = _reading_order(pages, r"(\w+) (L\d+|U\d+)-(L\d+|U\d+) [\d.]+ (-?[\d,.]+) (?:tension|compression|zero)")
    assert [row[0] for row in printed] == list(p.member_ids)
    forces = analysis.states[0].forces / p.units.factor("force")
    assert np.allclose([float(row[3].replace(",", "")) for row in printed], forces, atol=0.006)
    assert "are shown; all of them are in" not in text
    # the envelope and the member checks list every member too (one row each)
    flat = " ".join(text.split())
    assert "Every member checked, largest utilisation first" in flat
    for mid in p.member_ids:
        assert len(re.findall(rf"(?:^| ){mid} ", text, re.M)) >= 3, mid  # the members, forces and envelope tables


# -- frames above the label limit: a force summary, not their diagrams ------------

BENCH = Path(__file__).resolve().parents[2] / "bench"


def _grid_analysis(folder, bays=12):
    """The benchmark's double-layer roof grid (bench/grids.py, invented), 8 x bays^2 members."""
    sys.path.insert(0, str(BENCH))
    try:
        from grids import double_layer_grid, write_project
    finally:
        sys.path.remove(str(BENCH))
    return analyse(load_project(write_project(double_layer_grid(bays, bays), folder)))


@pytest.fixture(scope="module")
def grid(tmp_path_factory):
    return _grid_analysis(tmp_path_factory.mktemp("grid"))


def test_a_large_frame_gets_the_summary_not_its_diagrams(grid):
    template = load_template("a4-portrait")
    assert grid.project.n_members == 1152 > template.labels_up_to
    ids = [s.id for s in figures.drawn_states(grid)]
    diagrams = project_diagrams(grid, ids, members_up_to=template.labels_up_to)
    assert all(d.force is None and d.cells is None and d.minkowski is None for d in diagrams.values())
    assert all("label limit of 120" in d.problems[0] for d in diagrams.values())
    sources = tuple(s for s in figures.SOURCES if s.name != "model" and s.name != "loads")
    found, notes = figures.collect_figures(grid, template, workers=1, sources=sources, diagrams=diagrams)
    assert [f.key for f in found] == [f"summary-{sid}" for sid in ids] and notes == ()
    summary = found[0]
    assert summary.part == "force_diagram" and summary.vector is not None
    assert "not drawn" in summary.caption and "sheets draw" in summary.caption
    # the same frame under a template whose limit it fits gets the full diagrams again
    roomy = replace(template, labels_up_to=grid.project.n_members)
    assert not figures.summarised(grid, roomy) and figures.summarised(grid, template)


def test_the_summary_scales_carry_the_extremes_of_the_forces(grid):
    state = grid.state("gravity")
    t = np.asarray(state.forces)
    factor = grid.project.units.factor("force")  # kN
    fig = force_summary_figure(grid.project, t, "gravity")
    views = len(grid.project.drawing.views)
    colour_bar, histogram, table = fig.axes[views:]
    # colour bar: symmetric about zero, ends at the largest |force|
    assert colour_bar.get_xlim() == pytest.approx((-np.abs(t).max() / factor, np.abs(t).max() / factor))
    # histogram: tension and compression apart, every member counted once, extremes inside the end bars
    zero = np.abs(t) <= palette.ZERO_FORCE_RELATIVE * np.abs(t).max()
    by_colour = {}
    for bar in histogram.patches:
        colour = to_hex(bar.get_facecolor())
        by_colour.setdefault(colour, []).append((bar.get_x(), bar.get_x() + bar.get_width(), bar.get_height()))
    tension, compression = by_colour[palette.TENSION.lower()], by_colour[palette.COMPRESSION.lower()]
    assert sum(h for *_, h in tension) == np.sum((t > 0) & ~zero)
    assert sum(h for *_, h in compression) == np.sum((t < 0) & ~zero)
    low = min(x0 for x0, _, h in compression if h > 0)
    high = max(x1 for _, x1, h in tension if h > 0)
    assert low <= t.min() / factor < low + (high - low) / 10 and high - (high - low) / 10 < t.max() / factor <= high
    legend = [x.get_text() for x in histogram.get_legend().get_texts()]
    assert f"largest {t.max() / factor:,.4g}" in legend[1] and f"largest {t.min() / factor:,.4g}" in legend[0]
    # the table of extremes: the largest tension first, the largest compression after the tensions
    cells = {(r, c): cell.get_text().get_text() for (r, c), cell in table.tables[0].get_celld().items()}
    ids = grid.project.member_ids
    assert cells[(1, 0)] == ids[int(np.argmax(t))] and cells[(6, 0)] == ids[int(np.argmin(t))]
    assert float(cells[(1, 1)].replace(",", "")) == pytest.approx(t.max() / factor, rel=1e-3)


def test_roundoff_closure_is_one_line_of_text():
    assert "round-off only" in figures.closure_line(3e-14, 1e-6)
    assert "within the tolerance" in figures.closure_line(2e-8, 1e-6)
    assert "BEYOND THE TOLERANCE" in figures.closure_line(1e-3, 1e-6)


def test_a_large_frames_loads_are_dots_scaled_to_the_largest_load(grid):
    from matplotlib.collections import PolyCollection

    from sheets.render.form_figure import loads_figure

    loads = np.asarray(grid.state("snow").loads)
    size = np.linalg.norm(loads, axis=1)
    factor = grid.project.units.factor("force")
    fig = loads_figure(grid.project, loads, "snow", labels_up_to=120)
    panels = [ax for ax in fig.axes if ax.get_title()]
    assert not any(isinstance(c, PolyCollection) for ax in panels for c in ax.collections)  # no arrows
    colour_bar = fig.axes[-1]
    assert colour_bar.get_xlim() == pytest.approx((0.0, size.max() / factor))
    legend = " ".join(t.get_text() for t in fig.legends[0].get_texts()) + fig.legends[0].get_title().get_text()
    assert grid.project.node_ids[int(np.argmax(size))] in legend and f"({int((size > 0).sum())};" in legend
    assert f"{loads[:, 2].sum() / factor:,.4g}" in legend  # the resultant's vertical component
    # under the limit the same loads are arrows again
    small = loads_figure(grid.project, loads, "snow", labels_up_to=grid.project.n_members)
    assert any(isinstance(c, PolyCollection) for ax in small.axes for c in ax.collections)
