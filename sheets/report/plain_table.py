"""A table of single-line cells, laid out by arithmetic and drawn with a handful of PDF operators.

Most long tables on the sheets (members, nodes, forces, reactions, checks) hold
short text and numbers, one line per cell. reportlab's Table lays out and draws
each cell on its own (a text object and a font look-up per cell, in every pass of
the build), which made a 20,000-member set take minutes. Here every body row has
the same height, so the rows that fit a page are found by division, and a piece
of the table is drawn as one text object, one path of grid lines and one fill
per colour. It looks as reportlab's table of ``tables._grid`` does: the same
fonts, sizes, padding, colours, widths and alignment; ``tables.table`` decides
which of the two a table gets.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property
from weakref import WeakKeyDictionary

from reportlab.lib.rl_accel import escapePDF, fp_str
from reportlab.pdfbase.pdfmetrics import getFont
from reportlab.platypus import Flowable, Paragraph

from sheets.report.document import layout_only


@dataclass(frozen=True, eq=False)
class PlainLook:
    """What every piece of one table shares: type, padding, columns, caption and header."""

    font: str
    bold: str
    size: float
    leading: float
    pad: float  # top and bottom of every cell
    side: float  # left and right of every cell but the caption
    widths: tuple[float, ...]
    right: frozenset[int]  # right-aligned (numeric) columns
    header: tuple[Paragraph, ...]  # one per column, wrapped at its width
    caption: str
    continued: str  # the caption of the pieces after the first
    repeat: bool  # the caption and header on every piece
    line_width: float
    line_colour: object
    head_fill: object
    mark_fill: object
    text_colour: object
    space_after: float

    @cached_property
    def _starts(self) -> tuple[dict, dict | None]:
        """(cache of formatted starts of right-aligned text, a table that turns every digit into '0' if the
        font gives all digits one width: numbers of one shape, e.g. '-1,234.56', then share a start)."""
        font = getFont(self.font)
        same = len({font.stringWidth(d, 1.0) for d in "0123456789"}) == 1
        return {}, (str.maketrans("123456789", "000000000") if same else None)

    def right_start(self, column: int, end: float, text: str) -> str:
        """Where ``text`` starts, formatted, to end at ``end`` in ``column``."""
        cache, digits = self._starts
        key = (column, text.translate(digits) if digits else text)
        start = cache.get(key)
        if start is None:
            start = fp_str(end - getFont(self.font).stringWidth(text, self.size))
            if len(cache) < 100_000:  # shapes of numbers are few; other text need not be kept
                cache[key] = start
        return start

    @property
    def row_height(self) -> float:
        return self.leading + 2 * self.pad

    @cached_property  # the header paragraphs are wrapped once, at their column widths, and drawn as wrapped
    def header_heights(self) -> tuple[float, ...]:
        return tuple(p.wrap(w - 2 * self.side, 1e9)[1] for p, w in zip(self.header, self.widths))

    @property
    def header_height(self) -> float:
        return max(self.header_heights) + 2 * self.pad


class PlainTable(Flowable):
    """``rows`` of ``look``'s table (text and numbers, none longer than one line), under its caption and
    header; ``marked`` rows (indices into ``rows``) shaded. A piece after the first (``first`` False) carries
    the 'continued' caption, or neither caption nor header if the look does not repeat them."""

    def __init__(self, look: PlainLook, rows: list[list], marked: frozenset[int] = frozenset(), first: bool = True):
        super().__init__()
        self.look = look
        self.rows = rows
        self.marked = marked
        self.first = first
        self.hAlign = "LEFT"
        self.spaceAfter = look.space_after
        self._head = None

    def with_rows(self, rows: list[list]) -> PlainTable:
        """The same table (caption, header, widths) holding ``rows`` instead, unshaded."""
        return PlainTable(self.look, rows)

    @property
    def titled(self) -> bool:
        return self.first or self.look.repeat

    def heights(self) -> tuple[float, list[float]]:
        """(height of the caption and header rows, each body row's height)."""
        if self._head is None:
            self._head = (self.look.row_height + self.look.header_height) if self.titled else 0.0
        return self._head, [self.look.row_height] * len(self.rows)

    def wrap(self, aW, aH):
        head, _ = self.heights()
        self.width = sum(self.look.widths)
        self.height = head + self.look.row_height * len(self.rows)
        return self.width, self.height

    def split(self, aW, aH):
        head, _ = self.heights()
        step = self.look.row_height
        k = max(0, math.floor((aH - head) / step))
        while k > 0 and head + k * step > aH:  # the floor of a quotient can land one row high
            k -= 1
        if k == 0:
            return []  # not one row under the header: the table starts on the next page
        if k >= len(self.rows):
            return [self]
        top = PlainTable(self.look, self.rows[:k], frozenset(r for r in self.marked if r < k), self.first)
        top.spaceAfter = 0
        rest = PlainTable(self.look, self.rows[k:], frozenset(r - k for r in self.marked if r >= k), False)
        return [top, rest]

    def draw(self):
        canvas = self.canv
        if layout_only(canvas):
            return  # a pass that only finds where things land (see document.SheetDocument.multiBuild)
        look = self.look
        widths = look.widths
        edges = [0.0]
        for w in widths:
            edges.append(edges[-1] + w)
        total = edges[-1]
        step = look.row_height
        top = self.height
        head = look.header_height if self.titled else 0.0
        grid_top = top - (step if self.titled else 0.0)  # the caption row has no grid
        body_top = grid_top - head
        code = canvas._code  # reportlab's content stream of the page: operators appended in bulk
        canvas.saveState()
        # fills first, as reportlab's table paints its backgrounds under the text
        if self.titled:
            canvas.setFillColor(look.head_fill)
            code.append(f"{fp_str(0, body_top, total, head)} re f")
        if self.marked:
            canvas.setFillColor(look.mark_fill)
            code.append(" ".join(f"{fp_str(0, body_top - (r + 1) * step, total, step)} re" for r in sorted(self.marked)) + " f")
        canvas.setFillColor(look.text_colour)
        text = _TextWriter(canvas, look.size, look.leading)
        baseline = (step + look.leading) / 2 - look.size  # above a row's bottom: reportlab's middle alignment
        if self.titled:
            text.put(look.bold, fp_str(0.0, top - step + baseline), look.caption if self.first else look.continued)
        # a left-aligned cell starts at its column's edge; a right-aligned one ends at the next edge, and
        # starts where its text's width says (found once per shape of number: see PlainLook.right_start)
        starts = [fp_str(edges[c] + look.side) for c in range(len(widths))]
        ends = [edges[c + 1] - look.side if c in look.right else None for c in range(len(widths))]
        right_start = look.right_start
        put = text.writer(look.font)
        for i, row in enumerate(self.rows):
            y = " " + fp_str(body_top - (i + 1) * step + baseline)
            for c, (value, start, end) in enumerate(zip(row, starts, ends)):
                value = value if isinstance(value, str) else str(value)
                put((start if end is None else right_start(c, end, value)) + y, value)
        text.close()
        if self.titled:
            for p, x, h in zip(look.header, edges, look.header_heights):
                p.drawOn(canvas, x + look.side, body_top + (head - h) / 2)
        # the grid: each line stroked on its own, as reportlab does (where two strokes cross the viewer
        # shades the crossing twice; one path of every line would show lighter crossings), in one append
        canvas.setStrokeColor(look.line_colour)
        canvas.setLineWidth(look.line_width)
        canvas.setLineCap(1)
        canvas.setLineJoin(1)
        bottom = top - self.height
        ys = [grid_top] + ([body_top] if self.titled else []) + [body_top - (i + 1) * step for i in range(len(self.rows))]
        lines = [f"{fp_str(0, y)} m {fp_str(total, y)} l S" for y in ys]
        lines += [f"{fp_str(x, grid_top)} m {fp_str(x, bottom)} l S" for x in edges]
        code.append(" ".join(lines))
        canvas.restoreState()


class _TextWriter:
    """One PDF text object for many strings, each placed by its own text matrix, in embedded TrueType
    fonts. reportlab numbers a font's characters per document, in subsets of 256, as they are first
    used; ``_Codes`` keeps the first subset's codes as a translation table, so a string is encoded in
    one ``str.translate`` (reportlab's own route looks up every character in Python)."""

    def __init__(self, canvas, size: float, leading: float):
        self.canvas = canvas
        self.doc = canvas._doc
        self.codes = _CODES.setdefault(self.doc, {})
        self.tail = f" {fp_str(size)} Tf {fp_str(leading)} TL"
        self.current = None  # (font name, subset) selected in the text object
        self.parts = ["BT"]

    def _select(self, font, name: str, subset: int) -> None:
        if (name, subset) != self.current:
            self.parts.append(font.getSubsetInternalName(subset, self.doc) + self.tail)
            self.current = (name, subset)

    def writer(self, name: str):
        """``put`` for font ``name``, with the common case (every character in the first subset) inline."""
        codes = self._codes(name)
        parts, key, slow = self.parts, (name, 0), self.put

        def put(at: str, text: str) -> None:
            codes.missed = False
            encoded = text.translate(codes)
            if codes.missed or self.current != key:
                slow(name, at, text)
            else:
                parts.append(f"1 0 0 1 {at} Tm ({encoded}) Tj")
        return put

    def _codes(self, name: str) -> _Codes:
        codes = self.codes.get(name)
        if codes is None:
            codes = self.codes[name] = _Codes(getFont(name), self.doc)
        return codes

    def put(self, name: str, at: str, text: str) -> None:
        """``text`` in font ``name`` starting at ``at`` ('x y', formatted)."""
        codes = self._codes(name)
        codes.missed = False
        encoded = text.translate(codes)
        if not codes.missed:
            self._select(codes.font, name, 0)
            self.parts.append(f"1 0 0 1 {at} Tm ({encoded}) Tj")
            return
        self.parts.append(f"1 0 0 1 {at} Tm")
        for subset, chunk in codes.font.splitString(text, self.doc):
            self._select(codes.font, name, subset)
            self.parts.append(f"({escapePDF(chunk)}) Tj")

    def close(self) -> None:
        self.parts.append("ET")
        self.canvas._code.append(" ".join(self.parts))


class _Codes(dict):
    """ord(character) -> its code in the font's first subset in this document, escaped for a PDF string;
    filled on first use through reportlab (which assigns the code and embeds the glyph). A character of
    a later subset sets ``missed``: its string is then encoded by reportlab, subset by subset."""

    def __init__(self, font, doc):
        super().__init__()
        self.font = font
        self.doc = doc
        self.missed = False

    def __missing__(self, key: int) -> str:
        (subset, code), = self.font.splitString(chr(key), self.doc)
        if subset != 0:
            self.missed = True
            return ""
        self[key] = escaped = escapePDF(code)
        return escaped


_CODES: WeakKeyDictionary = WeakKeyDictionary()  # PDF document -> font name -> _Codes (one per document)
