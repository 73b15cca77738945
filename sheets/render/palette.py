"""The project palette: the Okabe-Ito colour-vision-safe set (DESIGN.md).

Okabe & Ito (2008), "Color Universal Design: how to make figures and
presentations that are friendly to colorblind people" (colour values as
published there).
"""

from __future__ import annotations

TENSION = "#009E73"  # bluish green
COMPRESSION = "#D55E00"  # vermillion
LOAD = "#000000"  # black
REACTION = "#56B4E9"  # sky blue
ZERO_FORCE = "#999999"  # grey
NODE = "#000000"
LABEL = "#222222"
CROSSING = "#CC79A7"  # reddish purple: planarisation crossing vertices
FACE = "#F0E442"  # yellow, for highlighted faces/spaces
DISPLACED = "#0072B2"  # blue: the displaced shape

ZERO_FORCE_RELATIVE = 1e-9  # |t| below this x max|t| is drawn as zero-force


def force_colour(force: float, largest: float) -> str:
    if largest <= 0 or abs(force) <= ZERO_FORCE_RELATIVE * largest:
        return ZERO_FORCE
    return TENSION if force > 0 else COMPRESSION


def line_width(force: float, largest: float, thinnest: float = 0.6, thickest: float = 4.0) -> float:
    """Width proportional to |force| between a hairline and ``thickest`` (points)."""
    if largest <= 0:
        return thinnest
    return thinnest + (thickest - thinnest) * abs(force) / largest

# Axis triads (sheets.render.triad): three Okabe-Ito colours no force role uses
AXIS_COLOURS = {"x": "#0072B2", "y": "#E69F00", "z": "#CC79A7"}  # blue, orange, reddish purple
