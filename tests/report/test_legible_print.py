"""No printed text under 6 pt on any page of a built sheet set, at the template's paper size.

Two kinds of text reach a page, measured two ways:

- font text (tables, captions, title block, footer): read back from the PDF with
  pdfplumber (a test-only, independent reader). Its ``size`` is the size on the
  page: pdfminer multiplies the text matrix by the current transformation matrix
  (checked below on a PDF drawn with a scaled CTM);
- figure text, which the sheets draw as glyph outlines (paths, so no reader sees
  it as characters): each recorded figure notes the smallest type size it drew,
  and a spy on the figure flowable's ``draw`` records that size times the scale
  it is printed at, during the real build (in a fresh interpreter).

Text inside raster images (the off-screen 3D views) is pixels and is measured by
neither; those figures are the large-frame helper's (not covered here).
"""

from __future__ import annotations

import io
import json
import os
import subprocess
import sys
from pathlib import Path

import pdfplumber
import pytest
from girder_project import PROJECT, write_project
from reportlab.pdfgen.canvas import Canvas

from sheets.report import vector

ROOT = Path(__file__).resolve().parents[2]
DEMOS = ROOT / "demo_projects"
SMALLEST = 6.0  # points (the rule; common practice for printed drawings is 6 pt at least)
EVERY_DEMO = ["warehouse_roof", "market_canopy", "tensegrity_pavilion", "gallery_node", "atrium_grid"]


# Run in a fresh interpreter: the build draws figures in forked workers, and a process that has already
# rendered with the off-screen 3D library (other tests in this run) must not be forked.
BUILD_WITH_SPY = """
import json, sys
from sheets.build import build_sheets
from sheets.report import vector
printed = []
draw = vector.VectorFlowable.draw
def spy(self):
    printed.append(self.printed_text)
    return draw(self)
vector.VectorFlowable.draw = spy
result = build_sheets(sys.argv[1], sys.argv[2])
print(json.dumps({"pdf": str(result.pdf), "printed": printed}))
"""


def _build(project: Path, out: Path):
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT)] + [p for p in [os.environ.get("PYTHONPATH")] if p]))
    run = subprocess.run([sys.executable, "-c", BUILD_WITH_SPY, str(project), str(out)], capture_output=True, text=True,
                         env=env, timeout=1200)
    assert run.returncode == 0, run.stderr[-3000:]
    report = json.loads(run.stdout.strip().splitlines()[-1])
    with pdfplumber.open(report["pdf"]) as pdf:
        chars = [(page.page_number, c["size"], c["text"]) for page in pdf.pages for c in page.chars]
    return report["pdf"], chars, report["printed"]


@pytest.fixture(scope="module", params=EVERY_DEMO)
def demo_build(request, tmp_path_factory):
    folder = DEMOS / request.param
    project = next(folder.glob("*.toml"))
    return _build(project, tmp_path_factory.mktemp(request.param))


@pytest.fixture(scope="module", params=["a3-landscape", "letter-portrait"])
def template_build(request, tmp_path_factory):
    folder = tmp_path_factory.mktemp(request.param)
    path = write_project(folder, PROJECT.replace('template = "a4-portrait"', f'template = "{request.param}"'))
    return _build(path, folder / "out")


def test_pdfplumber_sizes_include_the_page_transform():
    buf = io.BytesIO()
    canvas = Canvas(buf)
    canvas.saveState()
    canvas.scale(0.5, 0.5)
    canvas.setFont("Helvetica", 10)
    canvas.drawString(100, 100, "x")
    canvas.restoreState()
    canvas.save()
    with pdfplumber.open(io.BytesIO(buf.getvalue())) as pdf:
        assert pdf.pages[0].chars[0]["size"] == pytest.approx(5.0)


def _check(build):
    result, chars, printed = build
    assert chars and printed  # something of each kind was measured
    small = [(page, round(size, 2), text) for page, size, text in chars if size < SMALLEST - 1e-6]
    assert not small, small[:20]
    assert min(printed) >= SMALLEST - 1e-6, sorted(printed)[:5]


@pytest.mark.slow
def test_no_text_under_6_pt_in_the_demo_sheet_sets(demo_build):
    _check(demo_build)


@pytest.mark.slow
def test_no_text_under_6_pt_on_a3_landscape_and_letter(template_build):
    _check(template_build)


def test_a_figure_shrunk_past_legibility_takes_more_of_the_page():
    from matplotlib.figure import Figure

    fig = Figure(figsize=(10, 2))
    fig.text(0.5, 0.5, "label", fontsize=6)
    recorded = vector.record(fig)
    assert recorded.smallest_text == pytest.approx(6.0)
    flow = vector.VectorFlowable(recorded, max_width=720, max_height=100)  # the height cap alone would print it at 4.2 pt
    flow.wrap(720, 600)
    assert flow.printed_text == pytest.approx(6.0)
