"""Labels that never overlap: each is placed at its anchor or a nearby spot, or left out and counted.

A figure asks for its labels through a ``Labels`` set, most important first,
while it draws; once the axes are final (limits, aspect), ``place`` draws the
figure once, measures every label in display coordinates and keeps a label
only where its box is clear of the labels kept before it and of the other
text already on the axes (titles, scale-bar values). A label that does not fit
at its anchor is tried a little above, below, right and left of it; where none
of these is clear it is hidden. The figure then states how many were left out
(``note``), so a reader knows the drawing is not showing every id.

Measured boxes scale with the figure as a whole, so a figure that fits here
fits at every print size and resolution.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.text import Text
from matplotlib.transforms import Bbox, ScaledTranslation

GAP = 1.0  # points of white kept around each label
# Nearby spots tried in turn, in label heights (dy) and label widths (dx) from the anchor.
SHIFTS = ((0.0, 0.0), (0.0, 1.0), (0.0, -1.0), (0.65, 0.0), (-0.65, 0.0), (0.65, 1.0), (-0.65, -1.0))


def offset_text(ax, at, offset_points: tuple[float, float], text: str, **style) -> Text:
    """``ax.text`` at data point ``at`` moved by ``offset_points``: a plain Text the placer can move."""
    dx, dy = offset_points
    shift = ScaledTranslation(dx / 72, dy / 72, ax.figure.dpi_scale_trans)
    return ax.text(float(at[0]), float(at[1]), text, transform=ax.transData + shift, **style)


@dataclass
class Labels:
    """The labels of one figure, in order of importance (first asked, first placed)."""

    texts: list[Text] = field(default_factory=list)
    drawn: int = 0
    placed: bool = False

    def add(self, text: Text) -> Text:
        self.texts.append(text)
        return text

    @property
    def asked(self) -> int:
        return len(self.texts)

    @property
    def dropped(self) -> int:
        return self.asked - self.drawn

    def place(self, fig: Figure) -> int:
        """Move or hide labels so that none overlaps another; returns how many were left out."""
        if not isinstance(fig.canvas, FigureCanvasAgg):
            FigureCanvasAgg(fig)
        fig.draw_without_rendering()
        renderer = fig.canvas.get_renderer()
        ours = {id(t) for t in self.texts}
        taken = [_box(t, renderer, fig) for ax in fig.axes for t in ax.texts
                 if id(t) not in ours and t.get_visible() and t.get_text().strip()]
        taken += [_box(ax.title, renderer, fig) for ax in fig.axes if ax.get_title()]
        self.drawn = 0
        page = fig.bbox
        for text in self.texts:
            if _settle(text, renderer, fig, taken, page):
                self.drawn += 1
            else:
                text.set_visible(False)
        self.placed = True
        return self.dropped

    def note(self) -> str:
        """The sentence a figure prints about the labels it left out ('' when none was)."""
        if not self.dropped:
            return ""
        return (f"{self.dropped} of {self.asked} labels left out where they would overlap "
                f"({self.drawn} drawn; the tables and exports carry every id).")


def _box(text: Text, renderer, fig: Figure) -> Bbox:
    pad = GAP * fig.dpi / 72
    return text.get_window_extent(renderer).expanded(1, 1).padded(pad)


def _clear(box: Bbox, taken: list[Bbox]) -> bool:
    return not any(box.overlaps(other) for other in taken)


def _settle(text: Text, renderer, fig: Figure, taken: list[Bbox], page: Bbox) -> bool:
    """Try the anchor and the nearby spots; keep the first clear one on the page (and mark it taken)."""
    if not text.get_visible() or not text.get_text().strip():
        return False
    start = np.asarray(text.get_position(), dtype=float)
    transform = text.get_transform()
    at = transform.transform(start)
    box = text.get_window_extent(renderer)
    for dx, dy in SHIFTS:
        shifted = at + (dx * box.width, dy * box.height)
        text.set_position(tuple(transform.inverted().transform(shifted)))
        candidate = _box(text, renderer, fig)
        inside = page.x0 <= candidate.x0 and candidate.x1 <= page.x1 and page.y0 <= candidate.y0 and candidate.y1 <= page.y1
        if inside and _clear(candidate, taken):
            taken.append(candidate)
            return True
    text.set_position(tuple(start))
    return False
