"""Stage 4, render: figures of form, force and load-path, headless (matplotlib, pyvista off-screen).

This file imports nothing, so the command line can name the figure formats without
loading matplotlib.
"""

DRAW_FORMATS = ("png", "svg", "pdf")  # the figure formats `sheets draw` writes
