"""The member forces of a large frame at a glance: one summary figure instead of unreadable masses.

Above the sheet template's label limit a state's form and force figures give
way to this one (sheets.report.figures): the form drawn in the project's views
with every member coloured by its force on a diverging scale centred at zero
(vermillion compression, bluish green tension, palette.py, at the ends; light
grey at zero), one colour bar in force units; a histogram of the member forces
with tension and compression apart; and a short table of the extreme members.
The force diagram itself (hundreds of thousands of edges once planarised) is not
drawn: ``sheets draw`` draws it on request and the results carry its numbers.

``force_summary_figure(project, forces, title, rows=5, note="")`` -> Figure;
``summary_scale(forces)`` -> (colour map, boundaries) the figure uses.
"""

from __future__ import annotations

import numpy as np
from matplotlib.cm import ScalarMappable
from matplotlib.colors import BoundaryNorm, LinearSegmentedColormap, to_hex
from matplotlib.figure import Figure

from sheets.model.project import Project
from sheets.render import palette
from sheets.render.diagram2d import _add_lines
from sheets.render.form_figure import FONT, _finish, _furniture, _layout, _supports

CLASSES_PER_SIDE = 8  # colour classes on each side of zero: few enough to merge lines of one colour on the page
MIDDLE = "#EEEEEE"  # zero force: light grey, fading into the page like a member that does nothing
BAND_INCHES = 2.5  # colour bar, histogram and table under the views
BINS_PER_SIDE = 20


def summary_scale(forces: np.ndarray) -> tuple[LinearSegmentedColormap, np.ndarray]:
    """The diverging map (compression, zero, tension) and its class boundaries, symmetric about zero (N)."""
    largest = float(np.abs(forces).max(initial=0.0)) or 1.0
    cmap = LinearSegmentedColormap.from_list("sheets-forces", [palette.COMPRESSION, MIDDLE, palette.TENSION])
    return cmap, np.linspace(-largest, largest, 2 * CLASSES_PER_SIDE + 1)


def _classes(forces: np.ndarray, bounds: np.ndarray) -> np.ndarray:
    """Class index of each force (0 .. 2 CLASSES_PER_SIDE - 1), the extremes in the end classes."""
    return np.clip(np.searchsorted(bounds, forces, side="right") - 1, 0, len(bounds) - 2)


def _members(ax, project: Project, xy: np.ndarray, forces: np.ndarray, cmap, bounds) -> None:
    """Members coloured by class, weak under strong; one class is one colour and one width, so a large
    frame's members are drawn as one path per class (diagram2d._add_lines)."""
    klass = _classes(forces, bounds)
    strength = np.abs(klass - (CLASSES_PER_SIDE - 0.5))  # 0.5 near zero .. CLASSES_PER_SIDE - 0.5 at the ends
    order = np.lexsort((klass, strength))
    centres = (bounds[:-1] + bounds[1:]) / 2
    hexes = [to_hex(c) for c in cmap(BoundaryNorm(bounds, cmap.N)(centres))]
    widths = 0.25 + 1.0 * strength / CLASSES_PER_SIDE
    _add_lines(ax, xy[project.ends[order]], [hexes[k] for k in klass[order]], widths[order].tolist())


def _histogram(ax, forces: np.ndarray, factor: float, unit: str) -> None:
    largest = float(np.abs(forces).max(initial=0.0)) or 1.0
    zero = np.abs(forces) <= palette.ZERO_FORCE_RELATIVE * largest
    edges = np.linspace(-largest, largest, 2 * BINS_PER_SIDE + 1) / factor
    shown = forces / factor
    for pick, colour, name in ((~zero & (forces < 0), palette.COMPRESSION, "compression"),
                               (~zero & (forces > 0), palette.TENSION, "tension")):
        if pick.any():
            extreme = shown[pick][np.argmax(np.abs(shown[pick]))]
            ax.hist(shown[pick], bins=edges, color=colour, log=True,
                    label=f"{name}: {int(pick.sum())} members, largest {extreme:,.4g} {unit}")
    if zero.any():
        ax.bar([0.0], [int(zero.sum())], width=(edges[1] - edges[0]) * 0.4, color=palette.ZERO_FORCE,
               label=f"zero force: {int(zero.sum())} members")
    ax.set_xlim(edges[0], edges[-1])
    ax.set_ylim(0.7, ax.get_ylim()[1] * 30)  # counts on a log scale (the few extreme members stay visible); room for the legend
    ax.set_xlabel(f"member force ({unit}), tension positive", fontsize=FONT)
    ax.set_ylabel("members (log scale)", fontsize=FONT)
    ax.tick_params(labelsize=FONT - 0.5)
    ax.legend(fontsize=FONT - 0.5, frameon=False, loc="upper left")
    ax.set_title("Histogram of member forces", fontsize=FONT + 1)


def extreme_rows(forces: np.ndarray, ids, rows: int) -> list[tuple[str, str, float]]:
    """The ``rows`` largest tensions and compressions: [(sense, member id, force N)], largest first."""
    order = np.argsort(forces, kind="stable")
    compression = [(palette_name(forces[k]), ids[k], float(forces[k])) for k in order[:rows] if forces[k] < 0]
    tension = [(palette_name(forces[k]), ids[k], float(forces[k])) for k in order[::-1][:rows] if forces[k] > 0]
    return tension + compression


def palette_name(force: float) -> str:
    return "tension" if force > 0 else "compression" if force < 0 else "zero"


def _table(ax, forces: np.ndarray, ids, factor: float, unit: str, rows: int) -> None:
    ax.set_axis_off()
    ax.set_title(f"Extreme members ({unit})", fontsize=FONT + 1)
    lines = extreme_rows(forces, ids, rows)
    cells = [[mid, f"{t / factor:,.4g}", sense] for sense, mid, t in lines]
    if not cells:
        ax.text(0.5, 0.5, "every member is at zero force", ha="center", va="center", fontsize=FONT, transform=ax.transAxes)
        return
    table = ax.table(cellText=cells, colLabels=["member", "force", "sense"], bbox=(0.0, 0.0, 1.0, 1.0), cellLoc="left",
                     colLoc="left", edges="horizontal")
    table.auto_set_font_size(False)
    table.set_fontsize(FONT)
    for (r, c), cell in table.get_celld().items():
        cell.set_linewidth(0.3)
        if r > 0 and c == 2:
            cell.get_text().set_color(palette.TENSION if lines[r - 1][2] > 0 else palette.COMPRESSION)


def force_summary_figure(project: Project, forces: np.ndarray, title: str, rows: int = 5, note: str = "") -> Figure:
    """The summary of one state's member forces (see the module docstring); ``note``: a line under the title
    (e.g. how the force diagram closes, where it is not drawn)."""
    forces = np.asarray(forces, dtype=float)
    unit, factor = project.units.label("force"), project.units.factor("force")
    cmap, bounds = summary_scale(forces)
    fig, axes, views, xys = _layout(project)
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, forces, cmap, bounds)
        _supports(ax, project, xy, proj, 8)
    _furniture(axes, views, xys, project)
    head = 0.45 if note else 0.3
    _finish(fig, axes, BAND_INCHES + head)
    height = fig.get_size_inches()[1]
    # shift the views down under the title lines
    for ax in axes:
        x0, y0, w, h = ax.get_position().bounds
        ax.set_position((x0, y0 - head / height, w, h))
    fig.suptitle(title, fontsize=FONT + 2, y=1 - 0.06 / height, va="top")
    if note:
        fig.text(0.5, 1 - 0.3 / height, note, ha="center", va="top", fontsize=FONT, color=palette.LABEL, wrap=True)
    band = BAND_INCHES / height
    bar = fig.add_axes((0.06, band - 0.3 / height, 0.88, 0.1 / height))
    colourbar = fig.colorbar(ScalarMappable(BoundaryNorm(bounds / factor, cmap.N), cmap), cax=bar,
                             orientation="horizontal", ticks=bounds[:: CLASSES_PER_SIDE // 2] / factor)
    colourbar.ax.tick_params(labelsize=FONT - 0.5)
    colourbar.set_label(f"member force ({unit}): vermillion compression, bluish green tension; line width grows with "
                        f"|force|", fontsize=FONT)
    top = band - 1.05 / height  # under the colour bar and its label, room for the titles
    _histogram(fig.add_axes((0.08, 0.42 / height, 0.5, top - 0.42 / height)), forces, factor, unit)
    _table(fig.add_axes((0.62, 0.1 / height, 0.36, top - 0.1 / height)), forces, project.member_ids, factor, unit, rows)
    return fig
