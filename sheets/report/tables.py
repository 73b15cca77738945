"""Paragraph styles, number formats and table flowables shared by every section.

Numbers on the sheets use fixed formats (``FORMATS``) so a reviewer can compare
columns, and so the tests can read them back and compare them with the results
JSON to the printed precision.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import Flowable, Paragraph, Table, TableStyle

from sheets.report.fonts import Fonts
from sheets.report.plain_table import PlainLook, PlainTable

GRID = colors.HexColor("#999999")
HEAD_FILL = colors.HexColor("#E8E8E8")
FAIL_FILL = colors.HexColor("#F6D5C0")  # light vermillion: a check above its limit
PASS_TEXT = colors.HexColor("#006B4F")

FORMATS = {
    "force": "{:,.2f}",
    "length": "{:,.3f}",
    "ratio": "{:.3f}",
    "small": "{:.1e}",
    "slenderness": "{:,.1f}",
    "load_path": "{:,.2f}",
    "area": "{:,.0f}",
    "second_moment": "{:.3e}",
    "stress": "{:,.1f}",
    "volume": "{:.4g}",
    "displacement": "{:,.2f}",
    "factor": "{:g}",
    # input echoed as given: 12 significant digits reproduce any value typed in the file while
    # hiding the last-bit noise of the unit conversion (e.g. 1.008 kN -> N -> kN)
    "given": "{:.12g}",
    "significant6": "{:.6g}",  # a derived value (self-weight) to 6 significant digits
}

COMPACT_FONT = 6.5  # points: the smallest type a long table is set in (printed text stays at or above 6 pt)


def fmt(value, kind: str) -> str:
    """A number in the sheets' fixed format for its kind; '-' for a missing value."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "-"
    text = FORMATS[kind].format(value)
    return "0" + text[2:] if text.startswith("-0") and float(text.replace(",", "")) == 0 else text


class Numbering:
    """Figure and table numbers through the whole sheet set, in reading order: the one place they are
    counted (the sections are built once, in the order they are read)."""

    def __init__(self):
        self.counts: dict[str, int] = {}

    def next(self, kind: str) -> str:
        """'Figure 3': the number of the next figure (or 'Table'), counted."""
        self.counts[kind] = self.counts.get(kind, 0) + 1
        return f"{kind} {self.counts[kind]}"

    def ahead(self, kind: str, count: int = 1) -> str:
        """How text refers to the next ``count`` items of ``kind`` before they are placed: 'Figure 4',
        'Figures 4 and 5', 'Figures 4 to 7'."""
        first = self.counts.get(kind, 0) + 1
        last = first + count - 1
        if count <= 1:
            return f"{kind} {first}"
        return f"{kind}s {first} and {last}" if count == 2 else f"{kind}s {first} to {last}"


@dataclass(frozen=True)
class Styles:
    body: ParagraphStyle
    small: ParagraphStyle
    cell: ParagraphStyle
    cell_head: ParagraphStyle
    caption: ParagraphStyle
    h0: ParagraphStyle
    h1: ParagraphStyle
    h2: ParagraphStyle
    cover_title: ParagraphStyle
    caution: ParagraphStyle
    fonts: Fonts
    numbering: Numbering = field(default_factory=Numbering, compare=False)


SMALLEST = 6.0  # points: no printed text is smaller


def make_styles(fonts: Fonts, size: float) -> Styles:
    def smaller(by: float) -> float:
        return max(SMALLEST, size - by)

    def style(name, **kw):
        base = dict(fontName=fonts.regular, bulletFontName=fonts.regular, fontSize=size, leading=size * 1.3, alignment=TA_LEFT)
        base.update(kw)
        return ParagraphStyle(name, **base)

    return Styles(
        body=style("body", spaceAfter=size * 0.5),
        small=style("small", fontSize=smaller(1.5), leading=smaller(1.5) * 1.3, spaceAfter=size * 0.4),
        cell=style("cell", fontSize=smaller(1), leading=smaller(1) * 1.2),
        cell_head=style("cell_head", fontName=fonts.bold, fontSize=smaller(1), leading=smaller(1) * 1.2),
        caption=style("caption", fontSize=smaller(1), leading=smaller(1) * 1.3, textColor=colors.HexColor("#333333"),
                      spaceBefore=2, spaceAfter=size),
        h0=style("h0", fontName=fonts.bold, fontSize=size + 5, leading=(size + 5) * 1.25, spaceBefore=0,
                 spaceAfter=size * 0.8, keepWithNext=1),
        h1=style("h1", fontName=fonts.bold, fontSize=size + 2.5, leading=(size + 2.5) * 1.25, spaceBefore=size,
                 spaceAfter=size * 0.5, keepWithNext=1),
        h2=style("h2", fontName=fonts.bold, fontSize=size + 0.5, leading=(size + 0.5) * 1.25, spaceBefore=size * 0.8,
                 spaceAfter=size * 0.3, keepWithNext=1),
        cover_title=style("cover_title", fontName=fonts.bold, fontSize=size + 10, leading=(size + 10) * 1.2,
                          spaceAfter=size),
        caution=style("caution", fontSize=size, leading=size * 1.35, leftIndent=10, bulletIndent=0, spaceAfter=size * 0.6),
        fonts=fonts,
    )


_SUPERSCRIPT = str.maketrans({"2": "²", "3": "³", "4": "⁴"})


def ulabel(units, kind: str) -> str:
    """A display unit as printed on the sheets: 'mm^2' -> 'mm²'."""
    return re.sub(r"\^([234])\b", lambda m: m.group(1).translate(_SUPERSCRIPT), units.label(kind))


def escape(text: str) -> str:
    return str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


CHUNK_ROWS = 250  # rows of one part of a long table (see ``PartedTable``)
WRAP_ABOVE = 28  # characters: longer text is set as a paragraph that wraps in its cell
PAD_SIDE = 3.0  # points of cell padding left and right


class PartedTable(Flowable):
    """A long reportlab table given to the page layout as consecutive parts of CHUNK_ROWS rows, each with
    the caption (marked 'continued') and header. reportlab splits one table at a page end by laying out all
    the rows left again, so a table of n rows costs time growing as n squared; parts keep it linear. Only
    tables with cells that wrap need it (``PlainTable`` splits by arithmetic). Never drawn whole: the frame
    always splits it into its parts."""

    def __init__(self, parts: list[Table]):
        super().__init__()
        self.parts = parts

    def wrap(self, aW, aH):
        return aW, aH + 1

    def split(self, aW, aH):
        # the page layout wants the first piece to fit where it stands: the first part whole, or split
        first, rest = self.parts[0], list(self.parts[1:])
        if first.wrap(aW, aH)[1] <= aH:
            return [first] + rest
        pieces = first.split(aW, aH)
        return pieces + rest if pieces else []

    def draw(self):  # pragma: no cover - split, never drawn
        pass


def table(styles: Styles, header: list[str], rows: list[list], *, numeric: set[int] | None = None,
          widths: list[float] | None = None, highlight: list[int] | None = None, total_width: float | None = None,
          repeat: bool = True, compact: bool = False, title: str = "", number: str | None = None,
          whole: bool = False) -> Flowable:
    """A numbered grid table ('Table N. title' above it) with a shaded header repeated on every page;
    ``numeric`` columns right-aligned.

    ``highlight`` rows (0-based, excluding the header) are shaded to flag a check above its limit. The
    number comes from ``styles.numbering``; text that refers to the table takes it first with
    ``styles.numbering.ahead("Table")``. A table set in parts (two columns a page) takes its number
    once and passes it as ``number``. ``compact`` sets a long table in smaller type with tighter
    padding, so every row fits in fewer pages.

    The one place that decides how a table is made: with its column widths known and every cell one
    short line, a ``PlainTable`` (pieces after the first captioned 'Table N (continued).'); else
    reportlab's Table, laid out above CHUNK_ROWS rows in parts (``PartedTable``) with one set of column
    widths, unless ``whole`` asks for one Table (for a caller that measures and places the rows itself).
    """
    number = number or styles.numbering.next("Table")
    caption = f"{number}." + (f" {title}" if title else "")  # plain text: fits any column widths
    if widths is None and total_width is not None:
        widths = _auto_widths(header, rows, total_width)
    if widths is not None and _single_lines(rows):
        return PlainTable(_plain_look(styles, caption, f"{number} (continued).", header, numeric or set(), widths, repeat,
                                      compact), rows, frozenset(highlight or ()))
    if whole or len(rows) <= CHUNK_ROWS:
        return _grid(styles, caption, header, rows, numeric or set(), widths, highlight or [], repeat, compact)
    parts = []
    for start in range(0, len(rows), CHUNK_ROWS):
        marked = [r - start for r in highlight or [] if start <= r < start + CHUNK_ROWS]
        parts.append(_grid(styles, caption if start == 0 else f"{number} (continued).", header, rows[start:start + CHUNK_ROWS],
                           numeric or set(), widths, marked, repeat, compact))
    for part in parts[:-1]:
        part.spaceAfter = 0
    return PartedTable(parts)


def _single_lines(rows: list[list]) -> bool:
    """True if every cell is text or a number printed on one line (none long enough to wrap)."""
    for row in rows:
        for v in row:
            if isinstance(v, Flowable) or isinstance(v, (list, tuple)):
                return False
            text = v if isinstance(v, str) else str(v)
            if len(text) > WRAP_ABOVE or "\n" in text:
                return False
    return True


def _cell_styles(styles: Styles, compact: bool) -> tuple[ParagraphStyle, ParagraphStyle, float]:
    """(body cell style, header cell style, top and bottom padding) of a table, compact or not."""
    cell, cell_head, pad = styles.cell, styles.cell_head, 1.5
    if compact:
        small = min(cell.fontSize, max(COMPACT_FONT, cell.fontSize - 1))
        cell = ParagraphStyle("cell_compact", parent=cell, fontSize=small, leading=small * 1.15)
        cell_head = ParagraphStyle("cell_head_compact", parent=cell_head, fontSize=small, leading=small * 1.15)
        pad = 0.8
    return cell, cell_head, pad


def _plain_look(styles: Styles, caption: str, continued: str, header: list[str], numeric: set[int], widths, repeat: bool,
                compact: bool) -> PlainLook:
    cell, cell_head, pad = _cell_styles(styles, compact)
    return PlainLook(font=styles.fonts.regular, bold=styles.fonts.bold, size=cell.fontSize, leading=cell.leading, pad=pad,
                     side=PAD_SIDE, widths=tuple(widths), right=frozenset(numeric),
                     header=tuple(Paragraph(escape(h), cell_head) for h in header), caption=caption, continued=continued,
                     repeat=repeat, line_width=0.3, line_colour=GRID, head_fill=HEAD_FILL, mark_fill=FAIL_FILL,
                     text_colour=colors.black, space_after=styles.body.fontSize * 0.8)


def _grid(styles: Styles, caption: str, header: list[str], rows: list[list], numeric: set[int], widths, highlight: list[int],
          repeat: bool, compact: bool) -> Table:
    cell, cell_head, pad = _cell_styles(styles, compact)
    head = [Paragraph(escape(h), cell_head) for h in header]
    body = [[Paragraph(escape(v), cell) if isinstance(v, str) and len(v) > WRAP_ABOVE else v for v in row] for row in rows]
    # splitByRow: a table longer than the page continues on the next one, under its repeated caption and header
    t = Table([[caption] + [""] * (len(header) - 1), head] + body, colWidths=widths, repeatRows=2 if repeat else 0,
              hAlign="LEFT", splitByRow=1)
    size = cell.fontSize
    commands = [
        ("FONT", (0, 0), (-1, -1), styles.fonts.regular, size, cell.leading),  # the header too: no cell falls back to Helvetica
        ("FONT", (0, 0), (-1, 0), styles.fonts.bold, size, cell.leading),
        ("SPAN", (0, 0), (-1, 0)),  # the caption row: one cell across, no grid
        ("GRID", (0, 1), (-1, -1), 0.3, GRID),
        ("BACKGROUND", (0, 1), (-1, 1), HEAD_FILL),
        ("VALIGN", (0, 0), (-1, -1), "MIDDLE"),
        ("TOPPADDING", (0, 0), (-1, -1), pad),
        ("BOTTOMPADDING", (0, 0), (-1, -1), pad),
        ("LEFTPADDING", (0, 0), (-1, -1), PAD_SIDE),
        ("RIGHTPADDING", (0, 0), (-1, -1), PAD_SIDE),
        ("LEFTPADDING", (0, 0), (0, 0), 0),
    ]
    for c in sorted(numeric):
        commands.append(("ALIGN", (c, 2), (c, -1), "RIGHT"))
    for r in highlight:
        commands.append(("BACKGROUND", (0, r + 2), (-1, r + 2), FAIL_FILL))
    t.setStyle(TableStyle(commands))
    t.spaceAfter = styles.body.fontSize * 0.8
    return t


def _auto_widths(header: list[str], rows: list[list], total: float) -> list[float]:
    """Column widths proportional to the longest text in each column (header words count less)."""
    n = len(header)
    longest = [max([min(len(w), 14) for w in h.split()] + [4]) for h in header]
    for row in rows[:200]:
        for c, v in enumerate(row):
            longest[c] = max(longest[c], min(len(str(v)), 40))
    weight = [max(x, 4) for x in longest]
    scale = total / sum(weight)
    return [w * scale for w in weight][:n]


def key_value(styles: Styles, pairs: list[tuple[str, str]], width: float, label_share: float = 0.38) -> Table:
    """A two-column table of labels and values (no header)."""
    rows = [[Paragraph(escape(k), styles.cell_head), Paragraph(escape(v), styles.cell)] for k, v in pairs]
    t = Table(rows, colWidths=[width * label_share, width * (1 - label_share)], hAlign="LEFT")
    t.setStyle(TableStyle([
        ("FONT", (0, 0), (-1, -1), styles.fonts.regular, styles.cell.fontSize),
        ("GRID", (0, 0), (-1, -1), 0.3, GRID),
        ("BACKGROUND", (0, 0), (0, -1), HEAD_FILL),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("TOPPADDING", (0, 0), (-1, -1), 1.5),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5),
    ]))
    t.spaceAfter = styles.body.fontSize * 0.8
    return t
