"""A long, narrow table set in two columns per page, so every row is printed in half the pages.

Rows read down the left column, then down the right one, page by page; each
column carries the table's header row. The rows of one page are decided when
the frame splits the flowable, from the row heights of the table as laid out at
the column width, so nothing is ever cut or reordered.
"""

from __future__ import annotations

import math
from itertools import accumulate
from typing import Callable

from reportlab.platypus import Flowable, Table

from sheets.report.document import layout_only
from sheets.report.plain_table import PlainTable

GAP = 10.0  # points between the two columns


class TwoColumnTable(Flowable):
    """``make(rows)`` builds one column's table (header included, fixed column widths) of ``rows``."""

    def __init__(self, make: Callable[[list], Table | PlainTable], rows: list, space_after: float = 0.0,
                 measured: tuple[float, tuple[float, list[float]]] | None = None):
        super().__init__()
        self.make = make
        self.rows = rows
        self.spaceAfter = space_after
        # (width, (header height, row heights)): the pieces of a split keep their rows' heights, not laid out again
        self._width, self._heights = measured if measured is not None else (None, None)

    def _column_width(self, avail: float) -> float:
        return (avail - GAP) / 2

    def _measure(self, avail: float) -> tuple[float, list[float]]:
        """(header height, each row's height) at the column width."""
        if self._heights is None or self._width != avail:
            self._heights, self._width = row_heights(self.make(self.rows), self._column_width(avail)), avail
        return self._heights

    @staticmethod
    def _height(head: float, running: list[float], k: int) -> float:
        """Height of a page holding rows[:k] on the left and rows[k:2k] on the right (``running``: 0, then the
        running sums of the row heights)."""
        k2 = min(2 * k, len(running) - 1)
        return head + max(running[k], running[k2] - running[k])

    def wrap(self, aW, aH):
        head, rows = self._measure(aW)
        self.width, self.height = aW, self._height(head, [0.0, *accumulate(rows)], math.ceil(len(rows) / 2))
        return self.width, self.height

    def split(self, aW, aH):
        head, rows = self._measure(aW)
        running = [0.0, *accumulate(rows)]
        k = 0
        while 2 * k < len(rows) and self._height(head, running, k + 1) <= aH:
            k += 1
        if k == 0:
            return []  # not even one row under the header: start on the next page
        if 2 * k >= len(self.rows):
            return [self]
        return [TwoColumnTable(self.make, self.rows[:2 * k], 0.0, (aW, (head, rows[:2 * k]))),
                TwoColumnTable(self.make, self.rows[2 * k:], self.spaceAfter, (aW, (head, rows[2 * k:])))]

    def draw(self):
        if layout_only(self.canv):
            return  # a pass that only finds where things land (see document.SheetDocument.multiBuild)
        k = math.ceil(len(self.rows) / 2)
        col = self._column_width(self.width)
        for i, part in enumerate((self.rows[:k], self.rows[k:])):
            if not part:
                continue
            t = self.make(part)
            _, h = t.wrap(col, self.height)
            t.drawOn(self.canv, i * (col + GAP), self.height - h)


def row_heights(t: Table | PlainTable, width: float) -> tuple[float, list[float]]:
    """(height of the caption and header rows every column repeats, each body row's height) at ``width``."""
    if isinstance(t, PlainTable):
        return t.heights()
    t.wrap(width, 1e9)
    heights = list(t._rowHeights)
    return sum(heights[:t.repeatRows]), heights[t.repeatRows:]
