"""An axis triad in the corner of every view of a 3D frame: x, y and z as three labelled arrows.

A projected drawing (a plan, an elevation, a projected force diagram) cannot be
read without knowing which way the global axes point in it; each view says so
in its lower-right corner. Colours: palette.AXIS_COLOURS (none of them is a
force colour). Two routes, one look:

- ``draw_triad(ax, basis)``: matplotlib panels; ``basis`` (2, 3) is the
  drawing plane (drawing coordinates = coords @ basis.T), so each arrow is the
  projection of a unit axis. An axis along the view direction shows as a ring
  with a dot (towards the viewer) or a cross (away).
- ``add_triad(plotter)``: pyvista renders; VTK's orientation marker (lower right)
  follows the camera of each view.

Both return True when they drew a triad, so callers (and tests) can tell.
"""

from __future__ import annotations

import numpy as np
from matplotlib.transforms import offset_copy

from sheets.render import palette

ARM_POINTS = 13.0  # length of a unit axis seen square-on, points
INSET_POINTS = 22.0  # the triad's origin from the lower-right corner of the panel, points
END_ON = 0.2  # an axis whose projection is shorter than this (x its length) is drawn end-on
FONT = 6.0


def draw_triad(ax, basis: np.ndarray) -> bool:
    """Three arrows from a point near the lower-right corner of ``ax``: the global axes as drawn."""
    basis = np.asarray(basis, dtype=float)
    if basis.shape != (2, 3):
        return False
    fig = ax.figure
    normal = np.cross(basis[0], basis[1])  # towards the viewer
    origin = (1.0, 0.0)
    at = offset_copy(ax.transAxes, fig=fig, x=-INSET_POINTS, y=INSET_POINTS, units="points")
    for k, (name, colour) in enumerate(palette.AXIS_COLOURS.items()):
        u = basis[:, k]
        length = float(np.hypot(*u))
        if length < END_ON:
            ax.plot([origin[0]], [origin[1]], transform=at, marker="o", ms=5, mfc="white", mec=colour, mew=0.9,
                    zorder=9, clip_on=False)
            ax.plot([origin[0]], [origin[1]], transform=at, marker="." if normal[k] > 0 else "x", ms=3 if normal[k] > 0 else 2.5,
                    color=colour, mew=0.8, zorder=9, clip_on=False)
            label = offset_copy(at, fig=fig, x=5.5, y=-5.5, units="points")
        else:
            head = offset_copy(at, fig=fig, x=ARM_POINTS * u[0], y=ARM_POINTS * u[1], units="points")
            ax.annotate("", xy=origin, xycoords=head, xytext=origin, textcoords=at, zorder=9, annotation_clip=False,
                        arrowprops=dict(arrowstyle="-|>", color=colour, lw=1.0, shrinkA=0, shrinkB=0, mutation_scale=6))
            tip = (ARM_POINTS + 4.5) / length
            label = offset_copy(at, fig=fig, x=tip * u[0], y=tip * u[1], units="points")
        ax.text(*origin, name, transform=label, fontsize=FONT, color=colour, ha="center", va="center", zorder=9,
                clip_on=False, fontweight="bold")
    return True


def add_triad(plotter) -> bool:
    """VTK's orientation marker in the lower-right corner of the plotter's active renderer, in the triad colours."""
    colours = palette.AXIS_COLOURS
    actor = plotter.add_axes(interactive=False, line_width=4, x_color=colours["x"], y_color=colours["y"],
                             z_color=colours["z"], xlabel="x", ylabel="y", zlabel="z", color=palette.LABEL,
                             viewport=(0.76, 0.0, 1.0, 0.3), cone_radius=0.5, label_size=(0.3, 0.12))
    for axis in "XYZ":  # flat colours (ambient light only): the arrows keep the palette's colours in every view
        for part in ("Shaft", "Tip"):
            prop = getattr(actor, f"Get{axis}Axis{part}Property")()
            prop.SetAmbient(1.0)
            prop.SetDiffuse(0.0)
            prop.SetSpecular(0.0)
    return True
