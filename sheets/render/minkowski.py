"""Minkowski-sum figures (METHODS.md 8): every member a rectangle (2D) or prism (3D)
whose size is its share of the load path, with the totals beside Maxwell's
load path identity.

2D with matplotlib (PNG/SVG/PDF by suffix), 3D with pyvista off-screen (PNG).
Tension pieces bluish green, compression vermillion, node cells white/grey.
Each function takes (analysis, state_id, ..., path) and returns path.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from sheets.reciprocal.cells import node_cells
from sheets.reciprocal.minkowski_sum import MinkowskiView, minkowski_view
from sheets.render import palette
from sheets.render.triad import add_triad
from sheets.render.cells3d import SHADING, _plotter, _save, _save_figure, polygons_mesh


def totals_text(view: MinkowskiView, units) -> list[str]:
    """The totals and the load path identity, in display units."""
    lp_unit, lp = units.label("load_path"), units.factor("load_path")
    f_unit, f = units.label("force"), units.factor("force")
    what = "area" if view.dim == 2 else "volume"
    unit = "m^2" if view.dim == 2 else "m^3"
    k = "kappa" if view.dim == 2 else "kappa^2"
    scale = (f"kappa = {view.kappa * f:.4g} m per {f_unit}" if view.dim == 2
             else f"kappa = {view.kappa * np.sqrt(f):.4g} m per sqrt({f_unit})")
    return [
        f"s = {view.mix:g}; {scale}; layout: {view.layout}",
        f"member {what}s: total {view.total:.4g} {unit} = (1-s) s{'^2' if view.dim == 3 else ''} {k} x sum abs(t) L "
        f"(sum abs(t) L = {view.load_path / lp:.5g} {lp_unit}; difference {view.total_error:.1e})",
        f"tension {view.total_tension:.4g} - compression {view.total_compression:.4g} = factor x sum t L;",
        f"sum t L = {view.load_path_signed / lp:.5g}, sum f.x = {view.loads_term / lp:.5g} {lp_unit} "
        f"(Maxwell's load path theorem; difference {view.maxwell_error:.1e})",
    ]


def minkowski_figure(analysis, state_id: str, path, view: MinkowskiView | None = None, polar=None,
                     labels_up_to: int | None = None) -> Path:
    """The Minkowski-sum view of one state (2D: rectangles; 3D: prisms); 2D member labels up to
    ``labels_up_to`` members (the sheet set's label limit; None: always).

    2D frames use the state's connected force diagram (sheets.reciprocal.diagram)
    where it can be built, the separate node polygons otherwise; 3D frames use
    ``polar`` (a polarity diagram) where given, the per-node cells otherwise.
    """
    path = Path(path)
    if view is None:
        view = default_view(analysis, state_id, polar)
    if view.dim == 2:
        return _figure_2d(analysis, view, path, labels_up_to)
    return _figure_3d(analysis, view, path)


def default_view(analysis, state_id: str, polar=None) -> MinkowskiView:
    cells = node_cells(analysis, state_id)
    diagram = None
    if analysis.project.dim == 2:
        try:
            from sheets.reciprocal.diagram import force_diagram

            diagram = force_diagram(analysis.project, analysis.state(state_id))
            if not diagram.passed:
                diagram = None
        except Exception:  # no planar embedding: the separate polygons still show the load path
            diagram = None
    return minkowski_view(analysis, cells, polar=polar, diagram=diagram)


def _figure_2d(analysis, view: MinkowskiView, path: Path, labels_up_to: int | None = None) -> Path:
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch, Polygon

    from sheets.render.form_figure import _scale_bar

    project = analysis.project
    state = analysis.state(view.state)
    fig = Figure(figsize=(6.4, 5.6))
    ax = fig.add_subplot(1, 1, 1)
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_axis_off()
    largest = max((abs(p.force) for p in view.members), default=0.0)
    for piece in view.members:
        colour = palette.force_colour(piece.force, largest)
        for loop in piece.loops:
            ax.add_patch(Polygon(piece.vertices[list(loop)], closed=True, facecolor=colour, edgecolor=colour, alpha=0.55,
                                 lw=0.6, zorder=2))
    for piece in view.nodes:
        for loop in piece.loops:
            ax.add_patch(Polygon(piece.vertices[list(loop)], closed=True, facecolor="white", edgecolor=palette.LABEL,
                                 lw=0.6, zorder=3))
    shrunk = (1 - view.mix) * np.asarray(project.coords)
    for i, j in project.ends:
        ax.plot(*shrunk[[i, j]].T, color=palette.LABEL, lw=0.3, zorder=4)
    if labels_up_to is None or project.n_members <= labels_up_to:
        for piece in view.members:
            if piece.loops:
                c = piece.vertices[list(piece.loops[0])].mean(axis=0)
                ax.text(c[0], c[1], piece.id, fontsize=6, ha="center", va="center", zorder=5)
    allpts = np.vstack([p.vertices for p in view.members + view.nodes if len(p.vertices)] + [shrunk])
    _scale_bar(ax, allpts, project.units.label("length"), project.units.factor("length"))
    ax.autoscale_view()
    handles = [Patch(color=palette.TENSION, alpha=0.55, label="member in tension"),
               Patch(color=palette.COMPRESSION, alpha=0.55, label="member in compression"),
               Patch(facecolor="white", edgecolor=palette.LABEL, label="node: force polygon turned 90 degrees")]
    fig.legend(handles=handles, loc="lower center", ncol=3, fontsize=6, frameon=False,
               title=f"Minkowski sum (1-s) form + s force, state {state.id}: {state.title}", title_fontsize=6.5)
    fig.text(0.02, 0.985, "\n".join(totals_text(view, project.units)), fontsize=6, va="top", family="monospace")
    fig.subplots_adjust(left=0.02, right=0.98, top=0.9, bottom=0.1)
    return _save_figure(fig, path)


def _figure_3d(analysis, view: MinkowskiView, path: Path) -> Path:
    project = analysis.project
    state = analysis.state(view.state)
    largest = max((abs(p.force) for p in view.members), default=0.0)
    plotter = _plotter()
    pts, loops, colours = [], [], []
    for piece in view.members:
        if len(piece.vertices) and piece.loops:
            pts.append(piece.vertices)
            loops.append(list(piece.loops))
            colours.append([palette.force_colour(piece.force, largest)] * len(piece.loops))
    if pts:
        plotter.add_mesh(polygons_mesh(pts, loops, colours), scalars="rgb", rgb=True, opacity=0.8, show_edges=True,
                         edge_color="#444444", line_width=0.4, **SHADING)
    pts, loops, colours = [], [], []
    for piece in view.nodes:
        if len(piece.vertices) and piece.loops:
            pts.append(piece.vertices)
            loops.append(list(piece.loops))
            colours.append(["#F2F2F2"] * len(piece.loops))
    if pts:
        plotter.add_mesh(polygons_mesh(pts, loops, colours), scalars="rgb", rgb=True, opacity=0.9, show_edges=True,
                         edge_color="#777777", line_width=0.3, **SHADING)
    lines = [f"Minkowski sum (1-s) form + s force, state {state.id}: {state.title}"] + totals_text(view, project.units)
    if view.not_drawn:
        lines.append(f"not drawn (both end nodes flat, counted at their size): {', '.join(view.not_drawn[:10])}")
    plotter.add_text("\n".join(lines), position="upper_left", font_size=8, color="black")
    plotter.add_legend([["member in tension", palette.TENSION], ["member in compression", palette.COMPRESSION],
                        ["node force cell", "#BBBBBB"]], bcolor="white", face="rectangle", size=(0.3, 0.14), loc="lower left")
    add_triad(plotter)
    plotter.view_isometric()
    plotter.enable_parallel_projection()
    plotter.camera.zoom(0.8)  # room for the legend and the text block
    return _save(plotter, path)


def polyhedral_outputs(analysis, state_id: str, out_dir, stem: str, fmt: str = "png", cells: bool = True,
                       minkowski: bool = True, meshes: bool = False, prepared=None,
                       labels_up_to: int | None = None) -> list[Path]:
    """Every figure (and on request mesh file) of issue 4 for one state; returns the paths written.

    ``<stem>-cells`` and ``<stem>-cells-gallery`` (node cells), ``<stem>-polar`` (3D, where the
    project's [polyhedral] table gives a usable diagram), ``<stem>-minkowski``; 3D figures are
    PNG (pyvista), 2D ones take ``fmt``. ``meshes``: ``<stem>-cells.obj/.vtp`` and
    ``<stem>-minkowski.obj/.vtp`` (3D).
    """
    from sheets.export.meshes import cells_mesh, pieces_mesh, write_mesh
    from sheets.reciprocal.stage import state_diagrams
    from sheets.render.cells3d import cell_gallery_figure, node_cells_figure, polar_diagram_figure

    out = Path(out_dir)
    project = analysis.project
    suffix = "png" if project.dim == 3 else fmt
    # ``prepared``: the state's diagrams (sheets.reciprocal.stage) where the caller built them
    prepared = prepared or state_diagrams(analysis, state_id)
    if prepared.cells is None:
        raise ValueError(f"no force cells for state '{state_id}': {'; '.join(prepared.problems)}")
    node_set = prepared.cells
    polar = prepared.polar
    usable = polar.diagram if prepared.polar_usable else None
    files: list[Path] = []
    if cells:
        files.append(node_cells_figure(analysis, state_id, out / f"{stem}-cells.{suffix}", node_set))
        files.append(cell_gallery_figure(analysis, state_id, out / f"{stem}-cells-gallery.{suffix}", cells=node_set))
        if usable is not None:
            files.append(polar_diagram_figure(analysis, state_id, out / f"{stem}-polar.png", polar, labels_up_to))
    view = prepared.minkowski
    if minkowski:
        files.append(minkowski_figure(analysis, state_id, out / f"{stem}-minkowski.{suffix}", view,
                                      labels_up_to=labels_up_to))
    if meshes and project.dim == 3:
        mesh = cells_mesh(node_set)
        files += [write_mesh(mesh, out / f"{stem}-cells.obj"), write_mesh(mesh, out / f"{stem}-cells.vtp")]
        pieces = pieces_mesh(view)
        files += [write_mesh(pieces, out / f"{stem}-minkowski.obj"), write_mesh(pieces, out / f"{stem}-minkowski.vtp")]
    return files
