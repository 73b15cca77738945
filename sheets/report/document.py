"""Page layout of a sheet set: body frame, title block and footer on every page.

Every page carries the title block (fields and labels from the template, e.g.
project, number, calculation, sheet n of N, revision, date, prepared by,
checked by), a running head naming the section, and a footer with the short
caution and the input fingerprint. Headings become PDF bookmarks (outline) and
contents entries. "Sheet n of N" needs N before the last page is laid out:
the document is laid out in passes (reportlab's multiBuild) until the contents
and the page count agree with the previous pass. Those passes only find where
things land: tables, figures and page decorations skip drawing in them
(``layout_only``), and one last pass, laid out as the settled one, draws the
whole set. A rebuild starts from where the last build's pages fell
(``multiBuild(seed=...)``): while they fall alike, the drawing pass is the only one.

Bytes are deterministic: reportlab's invariant mode, and the PDF creation date
taken from the project's date, never the clock.
"""

from __future__ import annotations

import io
import re
from contextlib import contextmanager
from dataclasses import dataclass

from reportlab import rl_config
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.platypus import BaseDocTemplate, Frame, PageTemplate, Paragraph
from reportlab.platypus.flowables import Flowable
from reportlab.platypus.tableofcontents import TableOfContents

from sheets.model.project import ProjectInfo
from sheets.report.fonts import Fonts
from sheets.report.templates import FOOTER_SIZE, Template

LINE = colors.HexColor("#444444")
LABEL_SIZE = 6.0  # no printed text under 6 pt
VALUE_SIZE = 7.5
ROW_HEIGHT = 19.0  # points per title-block row
FOOTER_HEIGHT = 17.0
HEAD_HEIGHT = 14.0


LAYOUT_ONLY = "sheets_layout_only"  # set on the canvas of a pass that lays out and draws nothing costly


def layout_only(canvas) -> bool:
    """True while the document is laid out to find page numbers: a flowable may skip drawing."""
    return getattr(canvas, LAYOUT_ONLY, False)


@contextmanager
def binary_streams():
    """Compressed streams without ASCII85 on top: a quarter smaller, and far faster to write.

    reportlab reads this switch from its module-level config when each stream is made, so it is
    set for the duration of one PDF and then put back.
    """
    saved = rl_config.useA85
    rl_config.useA85 = 0
    try:
        yield
    finally:
        rl_config.useA85 = saved


class Heading(Paragraph):
    """A section heading: becomes a bookmark, an outline entry and a contents line."""

    def __init__(self, text: str, style, level: int, key: str):
        super().__init__(text, style)
        self.level = level
        self.key = key
        self.plain = re.sub(r"<[^>]+>", "", text)


class PageCount(Flowable):
    """Zero-size marker that keeps the multi-pass build going until "of N" is right."""

    def __init__(self, doc: "SheetDocument"):
        super().__init__()
        self.doc = doc
        self.width = self.height = 0

    def isIndexing(self):
        return 1

    def isSatisfied(self):
        return self.doc.total_pages == self.doc.pages_seen

    def beforeBuild(self):
        self.doc.total_pages = self.doc.pages_seen or None
        self.doc.pages_seen = 0

    def afterBuild(self):
        pass

    def notify(self, kind, stuff):
        pass

    def draw(self):
        pass


@dataclass(frozen=True)
class Layout:
    """Where a set's pages fell: the entries (level, text, page, key) of each contents list, and the page count."""

    contents: tuple[tuple[tuple, ...], ...]  # per contents list in the story
    pages: int


@dataclass(frozen=True)
class Metadata:
    title: str
    author: str
    subject: str
    keywords: tuple[str, ...]
    date: str  # ISO date from the project file, or ""


def pdf_date(iso: str):
    """A reportlab date formatter giving the project's date at midnight UTC (None: reportlab's fixed date)."""
    m = re.fullmatch(r"(\d{4})-(\d{2})-(\d{2}).*", iso.strip())
    if not m:
        return None
    y, mo, d = m.groups()
    return lambda *_args: f"D:{y}{mo}{d}000000+00'00'"


class SheetDocument(BaseDocTemplate):
    def __init__(self, buffer, template: Template, info: ProjectInfo, fingerprint: str, fonts: Fonts,
                 metadata: Metadata, version: str):
        self.template = template
        self.info = info
        self.fingerprint = fingerprint
        self.fonts = fonts
        self.metadata = metadata
        self.version = version
        self.total_pages: int | None = None
        self.pages_seen = 0
        self.running_head = ""
        self.drawing = True  # False in the passes that only lay out
        self.layout: Layout | None = None  # where the pages fell, once built (multiBuild)
        width, height = template.page_size
        m = template.margin
        rows = self.block_rows()
        self.block_height = ROW_HEIGHT * len(rows)
        super().__init__(
            buffer,
            pagesize=template.page_size,
            leftMargin=m,
            rightMargin=m,
            topMargin=m,
            bottomMargin=m,
            title=metadata.title,
            author=metadata.author,
            subject=metadata.subject,
            keywords=list(metadata.keywords),
            creator=f"sheets {version}",
            invariant=1,
            pageCompression=1,
            initialFontName=fonts.regular,  # else every page names Helvetica, a font that is not embedded
        )
        bottom = m + FOOTER_HEIGHT + self.block_height + 8
        top = height - m - HEAD_HEIGHT
        body = Frame(m, bottom, width - 2 * m, top - bottom, id="body", leftPadding=0, rightPadding=0,
                     topPadding=4, bottomPadding=4)
        self.addPageTemplates([PageTemplate(id="sheet", frames=[body], onPageEnd=self._decorate)])

    @property
    def body_width(self) -> float:
        return self.template.page_size[0] - 2 * self.template.margin

    @property
    def body_height(self) -> float:
        return self.template.page_size[1] - 2 * self.template.margin - FOOTER_HEIGHT - self.block_height - 8 - HEAD_HEIGHT - 8

    # -- build hooks ------------------------------------------------------------
    def multiBuild(self, story, maxPasses=10, seed: Layout | None = None, **kw):
        """Lay out without drawing until the contents and page count settle, then build once more, drawing.

        reportlab's own multiBuild draws every pass. This loop follows it (indexing flowables told before
        and after each pass, its edits to the story undone between passes) but gives the passes before the
        layout settles a canvas marked ``layout_only`` that writes to a scratch buffer. The settled pass
        leaves every indexing flowable with what it found, so the drawing pass lays out the same pages and
        is satisfied at once; were it not, the loop lays out again until it settles.

        ``seed``: the layout of an earlier build of this set (``self.layout`` after a build). The first pass
        then draws, starting from it: where the pages fall as they did, that one pass is the whole build.
        Its bytes are those of a build from nothing, because the layout that satisfies the passes is one
        only: no flowable's size depends on a page number (the contents list draws its numbers after its
        lines are laid out), so the pages fall alike whatever numbers the passes start from. Returns the
        passes made."""
        self._indexingFlowables = [f for f in story if f.isIndexing()]
        self._doSave = 0  # the canvas is saved here, once, after the drawing pass
        edits: list = []
        self._multiBuildEdits = edits.append
        self.drawing = seed is not None and self._start_from(seed)
        try:
            for passes in range(1, maxPasses + 2):
                for f in self._indexingFlowables:
                    f.beforeBuild()
                self.build(story[:], None if self.drawing else io.BytesIO(), **kw)
                for f in self._indexingFlowables:
                    f.afterBuild()
                settled = self._allSatisfied()
                if settled and self.drawing:
                    self.canv.save()
                    self.layout = Layout(self._contents(), self.pages_seen)
                    return passes
                while edits:  # undo what the pass changed on the story's flowables (e.g. keepWithNext)
                    edit = edits.pop(0)
                    edit[0](*edit[1:])
                self.drawing = settled  # draw after a settled layout; after a drawing pass that was not, lay out again
            raise IndexError(f"the contents and page count did not settle in {maxPasses} passes")
        finally:
            self.drawing = True
            del self._multiBuildEdits

    def _contents_lists(self) -> list[TableOfContents]:
        return [f for f in self._indexingFlowables if isinstance(f, TableOfContents)]

    def _contents(self) -> tuple[tuple[tuple, ...], ...]:
        return tuple(tuple(tuple(entry) for entry in toc._entries) for toc in self._contents_lists())

    def _start_from(self, seed: Layout) -> bool:
        """Give the indexing flowables what an earlier build found, as if a pass had just found it
        (False, nothing given, where the story's contents lists are not those of the seed)."""
        tocs = self._contents_lists()
        if len(tocs) != len(seed.contents):
            return False
        for toc, entries in zip(tocs, seed.contents):
            toc.clearEntries()
            toc.addEntries(list(entries))
        self.pages_seen = seed.pages
        return True

    def beforeDocument(self):
        setattr(self.canv, LAYOUT_ONLY, not self.drawing)
        formatter = pdf_date(self.metadata.date)
        if formatter is not None:
            self.canv.setDateFormatter(formatter)
        self.canv.setProducer(f"sheets {self.version} (reportlab)")
        self.running_head = ""

    def afterPage(self):
        self.pages_seen = self.page

    def afterFlowable(self, flowable):
        if isinstance(flowable, Heading):
            key = flowable.key
            self.canv.bookmarkPage(key)
            self.canv.addOutlineEntry(flowable.plain, key, level=flowable.level, closed=flowable.level > 0)
            self.notify("TOCEntry", (flowable.level, flowable.plain, self.page, key))
            if flowable.level == 0:
                self.running_head = flowable.plain

    # -- the decoration of every page -------------------------------------------
    def block_rows(self) -> list[list]:
        rows, row, used = [], [], 0
        for f in self.template.fields:
            if used + f.span > self.template.columns:
                rows.append(row)
                row, used = [], 0
            row.append(f)
            used += f.span
        if row:
            rows.append(row)
        return rows

    def field_value(self, field: str, page: int) -> str:
        if field == "sheet":
            total = self.total_pages if self.total_pages and self.total_pages >= page else "?"
            return f"{page} of {total}"
        if field == "fingerprint":
            return self.fingerprint[:16]
        return str(getattr(self.info, field, "") or "-")

    def _decorate(self, canvas, doc):
        if layout_only(canvas):
            return
        t = self.template
        width, height = t.page_size
        m = t.margin
        f = self.fonts
        canvas.saveState()
        # running head
        canvas.setFont(f.regular, 7)
        canvas.setFillColor(LINE)
        canvas.drawString(m, height - m - 8, _fit(self.info.title, f.regular, 7, (width - 2 * m) * 0.6))
        canvas.drawRightString(width - m, height - m - 8, _fit(self.running_head, f.regular, 7, (width - 2 * m) * 0.38))
        canvas.setStrokeColor(LINE)
        canvas.setLineWidth(0.4)
        canvas.line(m, height - m - HEAD_HEIGHT + 2, width - m, height - m - HEAD_HEIGHT + 2)
        # title block
        block_top = m + FOOTER_HEIGHT + self.block_height
        cell = (width - 2 * m) / t.columns
        canvas.setLineWidth(0.6)
        canvas.rect(m, m + FOOTER_HEIGHT, width - 2 * m, self.block_height)
        canvas.setLineWidth(0.3)
        for r, row in enumerate(self.block_rows()):
            y = block_top - (r + 1) * ROW_HEIGHT
            x = m
            if r:
                canvas.line(m, y + ROW_HEIGHT, width - m, y + ROW_HEIGHT)
            for i, field in enumerate(row):
                w = cell * field.span
                if r == len(self.block_rows()) - 1 and i == len(row) - 1:
                    w = width - m - x  # last cell takes what is left
                if x > m:
                    canvas.line(x, y, x, y + ROW_HEIGHT)
                canvas.setFont(f.regular, LABEL_SIZE)
                canvas.setFillColor(LINE)
                canvas.drawString(x + 2.5, y + ROW_HEIGHT - 7, field.label)
                canvas.setFillColor(colors.black)
                value = self.field_value(field.field, doc.page)
                size = _fitting_size(value, f.bold, VALUE_SIZE, w - 5)
                canvas.setFont(f.bold, size)
                canvas.drawString(x + 2.5, y + 4, _fit(value, f.bold, size, w - 5))
                x += w
        # footer: the caution on its own line, then the input fingerprint
        canvas.setFont(f.regular, FOOTER_SIZE)
        canvas.setFillColor(colors.black)
        canvas.drawString(m, m + FOOTER_HEIGHT - 7, t.footer_caution)  # the template check makes sure it fits
        canvas.setFont(f.mono, 6.0)
        canvas.setFillColor(LINE)
        canvas.drawString(m, m + 1, f"Input fingerprint (SHA-256): {self.fingerprint}")
        canvas.drawRightString(width - m, m + 1, f"sheets {self.version}")
        canvas.restoreState()


def _fitting_size(text: str, font: str, size: float, width: float, smallest: float = 6.0) -> float:
    """``size`` shrunk until ``text`` fits ``width``, but never under ``smallest`` (then ``_fit`` cuts it)."""
    w = stringWidth(text, font, size)
    if w <= width:
        return size
    return max(smallest, size * width / w)


def _fit(text: str, font: str, size: float, width: float) -> str:
    """Cut ``text`` with an ellipsis so it fits ``width`` points."""
    if stringWidth(text, font, size) <= width:
        return text
    while text and stringWidth(text + "…", font, size) > width:
        text = text[:-1]
    return text + "…"
