"""The project palette: the Okabe-Ito colour-vision-safe hues (DESIGN.md), dark enough to read.

Okabe & Ito (2008), "Color Universal Design: how to make figures and
presentations that are friendly to colorblind people" (hues as published
there). Every colour a legend names has a contrast ratio of at least 4.5:1 on
white (WCAG 2.1, success criterion 1.4.3, relative-luminance definition), so
labels drawn in it stay legible and a faded print keeps it apart from the
paper: where the published value is lighter, its RGB is scaled down (same hue
and saturation) until the ratio passes. Sense never rests on colour alone:
compression is also dashed and force labels carry their sign (see
``LINE_STYLE`` and ``signed``).
"""

from __future__ import annotations

TENSION = "#008561"  # bluish green #009E73 x 0.84: 4.6:1 on white
COMPRESSION = "#C05500"  # vermillion #D55E00 x 0.90: 4.6:1
LOAD = "#000000"  # black
REACTION = "#0072B2"  # Okabe-Ito blue as published: 5.2:1 (their sky blue #56B4E9 has 2.3:1)
ZERO_FORCE = "#747474"  # grey: 4.7:1
NODE = "#000000"
LABEL = "#222222"
CROSSING = "#A16084"  # reddish purple #CC79A7 x 0.79: 4.6:1; crossing vertices, overlaps
FACE = "#F0E442"  # yellow, for highlighted faces/spaces
DISPLACED = "#0072B2"  # blue: the displaced shape
# Revision comparison (sheets.render.form_figure.changes_figure): what changed stands out, the rest recedes
CHANGED = "#A16084"  # reddish purple, as CROSSING: a member changed from the earlier revision
ADDED = "#0072B2"  # blue: a member or node new in this revision
REMOVED = "#747474"  # grey, dashed: where a member or node of the earlier revision was
UNCHANGED = "#C8C8C8"  # light grey, context only: never carries a label or a legend's meaning alone

ZERO_FORCE_RELATIVE = 1e-9  # |t| below this x max|t| is drawn as zero-force
LEGEND_COLOURS = (TENSION, COMPRESSION, LOAD, REACTION, ZERO_FORCE, LABEL, CROSSING)

# Line style of each sense: tension solid, compression dashed (on/off in line widths, as matplotlib scales them).
TENSION_STYLE = "solid"
COMPRESSION_STYLE = (0, (3.0, 1.6))
MINUS = "\u2212"  # the typographic minus: a hyphen is easy to miss at 6 pt


def force_colour(force: float, largest: float) -> str:
    if largest <= 0 or abs(force) <= ZERO_FORCE_RELATIVE * largest:
        return ZERO_FORCE
    return TENSION if force > 0 else COMPRESSION


def line_style(force: float, largest: float):
    """Solid for tension and zero force, dashed for compression."""
    if largest > 0 and force < -ZERO_FORCE_RELATIVE * largest:
        return COMPRESSION_STYLE
    return TENSION_STYLE


def signed(value: float, digits: int = 3, largest: float = 0.0) -> str:
    """A force in display units with its sign always written: '+12.5', '\u22128.2', '0' (also for what
    ``force_colour`` draws as zero force, relative to ``largest`` in the same units)."""
    if abs(value) <= ZERO_FORCE_RELATIVE * largest:
        return "0"
    text = f"{abs(value):.{digits}g}"
    if float(text) == 0:
        return "0"
    return ("+" if value > 0 else MINUS) + text


def line_width(force: float, largest: float, thinnest: float = 0.6, thickest: float = 4.0) -> float:
    """Width proportional to |force| between a hairline and ``thickest`` (points)."""
    if largest <= 0:
        return thinnest
    return thinnest + (thickest - thinnest) * abs(force) / largest

# Axis triads (sheets.render.triad): three Okabe-Ito colours no force role uses
AXIS_COLOURS = {"x": "#0072B2", "y": "#E69F00", "z": "#CC79A7"}  # blue, orange, reddish purple
