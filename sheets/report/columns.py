"""A long, narrow table set in two columns per page, so every row is printed in half the pages.

Rows read down the left column, then down the right one, page by page; each
column carries the table's header row. The rows of one page are decided when
the frame splits the flowable, from the row heights of the table as laid out at
the column width, so nothing is ever cut or reordered.
"""

from __future__ import annotations

import math
from typing import Callable

from reportlab.platypus import Flowable, Table

GAP = 10.0  # points between the two columns


class TwoColumnTable(Flowable):
    """``make(rows)`` builds one column's table (header included, fixed column widths) of ``rows``."""

    def __init__(self, make: Callable[[list], Table], rows: list, space_after: float = 0.0,
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
            t = self.make(self.rows)
            t.wrap(self._column_width(avail), 1e9)
            heights = list(t._rowHeights)
            top = t.repeatRows  # the caption and header rows every column repeats
            self._heights, self._width = (sum(heights[:top]), heights[top:]), avail
        return self._heights

    def _height(self, head: float, rows: list[float], k: int) -> float:
        """Height of a page holding rows[:k] on the left and rows[k:2k] on the right."""
        return head + max(sum(rows[:k]), sum(rows[k:2 * k]))

    def wrap(self, aW, aH):
        head, rows = self._measure(aW)
        self.width, self.height = aW, self._height(head, rows, math.ceil(len(rows) / 2))
        return self.width, self.height

    def split(self, aW, aH):
        head, rows = self._measure(aW)
        k = 0
        while 2 * k < len(rows) and self._height(head, rows, k + 1) <= aH:
            k += 1
        if k == 0:
            return []  # not even one row under the header: start on the next page
        if 2 * k >= len(self.rows):
            return [self]
        return [TwoColumnTable(self.make, self.rows[:2 * k], 0.0, (aW, (head, rows[:2 * k]))),
                TwoColumnTable(self.make, self.rows[2 * k:], self.spaceAfter, (aW, (head, rows[2 * k:])))]

    def draw(self):
        k = math.ceil(len(self.rows) / 2)
        col = self._column_width(self.width)
        for i, part in enumerate((self.rows[:k], self.rows[k:])):
            if not part:
                continue
            t = self.make(part)
            _, h = t.wrap(col, self.height)
            t.drawOn(self.canv, i * (col + GAP), self.height - h)
