"""The contents page read back: every entry's page number is the page where its heading is printed.

The sheet set is laid out in passes that draw nothing until the page numbers settle (document.SheetDocument);
this reads the finished PDF with pdfplumber and finds each heading by its type size, independently of how
the numbers were found.
"""

from __future__ import annotations

import re
from itertools import takewhile
import statistics

import pdfplumber

ENTRY = re.compile(r"^(?P<title>.+?)\s*(?:\.\s*){3,}(?P<page>\d+)$")  # "Envelopes . . . . 81"


def _heading_lines(page, body_size: float) -> list[str]:
    """The lines of a page set larger than the body text: its headings (the running head is smaller)."""
    lines: dict[float, list] = {}
    for w in page.extract_words(extra_attrs=["size"]):
        if w["size"] > body_size + 1.0:
            lines.setdefault(round(w["top"]), []).append(w)
    return [" ".join(w["text"] for w in sorted(ws, key=lambda w: w["x0"])) for _, ws in sorted(lines.items())]


def test_contents_page_numbers_are_where_the_headings_land(built):
    _, result = built
    with pdfplumber.open(result.pdf) as pdf:
        sizes = [w["size"] for page in pdf.pages for w in page.extract_words(extra_attrs=["size"])]
        body = statistics.median(sizes)  # most words are body and table text
        text = next(t for t in (page.extract_text().split("\n") for page in pdf.pages) if "Contents" in t)
        start = text.index("Contents") + 1
        entries = [(m["title"], int(m["page"])) for m in takewhile(bool, (ENTRY.match(line.strip()) for line in text[start:]))]
        assert len(entries) >= 8  # every section, and the load cases under the forces
        headings = [_heading_lines(page, body) for page in pdf.pages]
    for title, number in entries:
        where = [i + 1 for i, lines in enumerate(headings) if any(line.startswith(title) for line in lines)]
        assert where and where[0] == number, (title, number, where)
