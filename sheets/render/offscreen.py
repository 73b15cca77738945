"""Off-screen pyvista plotters, the same way for every 3D figure and export.

With no DISPLAY and no backend chosen by the user, VTK's OSMesa window
(vtkOSOpenGLRenderWindow) is selected before the first render, so VTK does not
try X first; it needs the system library OSMesa (Debian: libosmesa6). See
docs/rendering.md. No GPU is used.
"""

from __future__ import annotations

import ctypes.util
import os


def prefer_offscreen_backend() -> None:
    """Choose VTK's OSMesa window where there is no display and the user chose nothing.

    Mesa's software rasteriser (llvmpipe) starts threads of its own at the first render, and
    threads do not survive fork: a figure worker forked from a process that has rendered would
    wait for them for ever. Unless the user says otherwise, it renders in the calling thread
    (LP_NUM_THREADS=0); the build draws figures in parallel by process instead.
    """
    os.environ.setdefault("LP_NUM_THREADS", "0")
    if "VTK_DEFAULT_OPENGL_WINDOW" in os.environ or os.environ.get("DISPLAY"):
        return
    if ctypes.util.find_library("OSMesa"):
        os.environ["VTK_DEFAULT_OPENGL_WINDOW"] = "vtkOSOpenGLRenderWindow"


def offscreen_plotter(window=(1024, 768), shape=(1, 1), background: str = "white"):
    import pyvista as pv

    prefer_offscreen_backend()
    plotter = pv.Plotter(off_screen=True, window_size=list(window), shape=shape, border=False)
    plotter.set_background(background)
    return plotter
