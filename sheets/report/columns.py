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
                 measured: tuple[float, float, list[float], int] | None = None):
        super().__init__()
        self.make = make
        self.rows = rows
        self.spaceAfter = space_after
        # (width, header height, running sums of the row heights of the whole table, where this piece's rows
        # start in it): the pieces of a split share one measure, never laid out or summed again
        self._measured = measured

    def _column_width(self, avail: float) -> float:
        return (avail - GAP) / 2

    def _measure(self, avail: float) -> tuple[float, list[float], int]:
        """(header height, 0 and the running sums of the row heights at the column width, first row)."""
        if self._measured is None or self._measured[0] != avail:
            head, heights = row_heights(self.make(self.rows), self._column_width(avail))
            self._measured = (avail, head, [0.0, *accumulate(heights)], 0)
        return self._measured[1:]

    def _height(self, avail: float, k: int) -> float:
        """Height of a page holding rows[:k] on the left and rows[k:2k] on the right."""
        head, running, first = self._measure(avail)
        left = running[first + min(k, len(self.rows))]
        right = running[first + min(2 * k, len(self.rows))]
        return head + max(left - running[first], right - left)

    def wrap(self, aW, aH):
        self.width, self.height = aW, self._height(aW, math.ceil(len(self.rows) / 2))
        return self.width, self.height

    def split(self, aW, aH):
        # the rows a column takes, by halving: ``low`` always fits (or is 0), and with rows of one height (the
        # page height then grows with k) it is the most that fit
        low, high = 0, math.ceil(len(self.rows) / 2)
        while low < high:
            k = (low + high + 1) // 2
            if self._height(aW, k) <= aH:
                low = k
            else:
                high = k - 1
        k = low
        if k == 0:
            return []  # not even one row under the header: start on the next page
        if 2 * k >= len(self.rows):
            return [self]
        head, running, first = self._measure(aW)
        return [TwoColumnTable(self.make, self.rows[:2 * k], 0.0, (aW, head, running, first)),
                TwoColumnTable(self.make, self.rows[2 * k:], self.spaceAfter, (aW, head, running, first + 2 * k))]

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
