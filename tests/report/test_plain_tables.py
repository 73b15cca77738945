"""Tables of one-line cells are drawn by ``PlainTable``; reportlab's own Table is the reference for how they look.

Each table is drawn both ways on a page of its own and the two PDFs are compared: the same words in the same
fonts at the same places (pdfplumber), and the same picture (rendered through pypdfium2; only anti-aliasing
may differ by a few levels of grey).
"""

from __future__ import annotations

import io

import numpy as np
import pdfplumber
import pytest
from reportlab.lib.pagesizes import A4
from reportlab.pdfbase.pdfmetrics import getFont
from reportlab.platypus import SimpleDocTemplate

from sheets.report.fonts import register_fonts
from sheets.report.plain_table import PlainTable
from sheets.report.tables import _grid, make_styles, table

HEADER = ["Member", "Force [kN]", "State", "A long header that wraps"]
ROWS = [[f"M{i:03d}", f"{(i - 7) * 12.345:,.2f}", "tension" if i % 3 else "compression", i * 7] for i in range(24)]
WIDTHS = [60.0, 80.0, 70.0, 90.0]


def _pdf(flowable) -> bytes:
    buffer = io.BytesIO()
    SimpleDocTemplate(buffer, pagesize=A4, invariant=1).build([flowable])
    return buffer.getvalue()


def _words(pdf: bytes) -> list[list[tuple]]:
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        return [sorted((w["text"], round(w["x0"], 2), round(w["top"], 2), w["fontname"][7:], round(w["size"], 2))
                       for w in page.extract_words(extra_attrs=["fontname", "size"])) for page in doc.pages]


def _pixels(pdf: bytes) -> list[np.ndarray]:
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        return [np.asarray(page.to_image(resolution=110).original.convert("L"), dtype=int) for page in doc.pages]


@pytest.mark.parametrize("compact", [False, True])
def test_a_plain_table_looks_as_reportlabs_table(compact):
    styles = make_styles(register_fonts(), 8.0)
    plain = table(styles, HEADER, ROWS, numeric={1, 3}, widths=WIDTHS, highlight=[2, 5], title="Forces", compact=compact)
    assert isinstance(plain, PlainTable)
    reference = _grid(styles, "Table 1. Forces", HEADER, ROWS, {1, 3}, WIDTHS, [2, 5], True, compact)
    ours, theirs = _pdf(plain), _pdf(reference)
    assert _words(ours) == _words(theirs)
    for a, b in zip(_pixels(ours), _pixels(theirs), strict=True):
        assert np.abs(a - b).max() <= 48  # anti-aliasing of line ends; a missing fill or line differs by 100 and more
        assert (np.abs(a - b) > 8).mean() < 0.001


def test_a_long_plain_table_continues_under_its_caption_and_header():
    styles = make_styles(register_fonts(), 8.0)
    rows = [[f"R{i:04d}", f"{i * 0.5:.1f}"] for i in range(300)]
    long = table(styles, ["Row", "Value"], rows, numeric={1}, widths=[60.0, 60.0], title="Every row")
    with pdfplumber.open(io.BytesIO(_pdf(long))) as doc:
        pages = [page.extract_text() for page in doc.pages]
    assert len(pages) > 2
    printed = [w for text in pages for w in text.split() if len(w) == 5 and w.startswith("R") and w[1:].isdigit()]
    assert printed == [f"R{i:04d}" for i in range(300)]
    assert pages[0].startswith("Table 1. Every row\nRow Value")
    assert all(text.startswith("Table 1 (continued).\nRow Value") for text in pages[1:])


def test_cells_that_wrap_keep_reportlabs_table():
    styles = make_styles(register_fonts(), 8.0)
    rows = [["M1", "a reason long enough to wrap in its narrow cell"]]
    assert not isinstance(table(styles, ["Member", "Why"], rows, widths=[40.0, 80.0]), PlainTable)
    assert not isinstance(table(styles, ["Member", "Why"], [["M1", "short"]]), PlainTable)  # no widths: reportlab sizes


def test_text_beyond_a_fonts_first_256_characters_prints_the_same():
    # 300 letters the font has fill reportlab's first subset of it: later ones go in a second subset, which
    # the table must select in mid-text
    styles = make_styles(register_fonts(), 8.0)
    glyphs = getFont(styles.fonts.regular).face.charToGlyph
    letters = [chr(c) for c in range(0x100, 0x2000) if c in glyphs and chr(c).isalpha()][:300]
    rows = [[f"C{i:02d}", "".join(letters[10 * i:10 * i + 10])] for i in range(30)]
    plain = table(styles, ["Row", "Letters"], rows, widths=[40.0, 120.0], title="Letters")
    assert isinstance(plain, PlainTable)
    reference = _grid(styles, "Table 1. Letters", ["Row", "Letters"], rows, set(), [40.0, 120.0], [], True, False)
    ours = _words(_pdf(plain))
    assert ours == _words(_pdf(reference))
    assert set(letters) <= set("".join(w[0] for w in ours[0]))  # every letter read back, none lost
