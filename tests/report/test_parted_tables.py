"""A long table of cells that wrap is laid out in parts: every row printed once, in order, starting anywhere on a page."""

from __future__ import annotations

import io

import pdfplumber
from reportlab.lib.pagesizes import A4
from reportlab.platypus import Paragraph, SimpleDocTemplate

from sheets.report.fonts import register_fonts
from sheets.report.tables import CHUNK_ROWS, PartedTable, make_styles, table


def test_a_long_table_prints_every_row_once_in_order():
    styles = make_styles(register_fonts(), 8.0)
    n = 2 * CHUNK_ROWS + 37
    # a note long enough to wrap makes it a reportlab table (one-line cells make a PlainTable)
    rows = [[f"R{i:04d}", f"{i * 0.5:.1f}", "a note long enough to wrap in its cell" if i % 40 == 0 else "-"] for i in range(n)]
    long = table(styles, ["Row", "Value", "Note"], rows, numeric={1}, title="Every row", highlight=[3, CHUNK_ROWS + 1])
    assert isinstance(long, PartedTable) and len(long.parts) == 3
    buffer = io.BytesIO()
    story = [Paragraph("A paragraph first, so the table starts part way down the page.", styles.body)] * 12 + [long]
    SimpleDocTemplate(buffer, pagesize=A4).build(story)
    with pdfplumber.open(buffer) as pdf:
        words = [w["text"] for page in pdf.pages for w in page.extract_words()]
    printed = [w for w in words if len(w) == 5 and w.startswith("R") and w[1:].isdigit()]
    assert printed == [f"R{i:04d}" for i in range(n)]
    text = " ".join(words)
    assert "Table 1. Every row" in text and "Table 1 (continued)." in text  # later parts say they continue it
