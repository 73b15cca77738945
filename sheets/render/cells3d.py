"""Figures of the per-node force cells (METHODS.md 6), rendered off-screen.

- ``node_cells_figure``: the frame (members coloured by force, width by
  |force|) with every node's cell drawn at the node, all at one scale;
- ``cell_gallery_figure``: the cells of chosen nodes side by side, each face
  labelled with the member it stands for.

3D frames are drawn with pyvista (VTK, off-screen; PNG), 2D frames with
matplotlib (the cells are then polygons). Face colours: tension bluish green,
compression vermillion, external force black (sky blue where the node has a
reaction), as in sheets.render.palette. Every figure carries a legend and its
scales. Each function takes (analysis, state_id, ..., path) and returns path.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from sheets.export.atomic import atomic_path
from sheets.reciprocal.cells import NodeCell, NodeCells, node_cells
from sheets.render import palette
from sheets.render.triad import add_triad
from sheets.render.offscreen import offscreen_plotter

WINDOW = (1600, 1200)
CELL_FRACTION = 0.35  # largest cell drawn this fraction of the median member length
SHADING = {"ambient": 0.45, "diffuse": 0.6, "specular": 0.0}  # flat-looking palette colours, still readable as 3D


def facet_colour(cell: NodeCell, k: int, has_reaction: bool) -> str:
    parts = cell.parts[k]
    members = [p for p in parts if p.kind == "member"]
    if members:
        return palette.TENSION if members[0].force > 0 else palette.COMPRESSION
    return palette.REACTION if has_reaction else palette.LOAD


def cell_scale(analysis, cells: NodeCells) -> float:
    """Drawing length per unit of cell length, common to every cell."""
    lengths = np.asarray(analysis.equilibrium.lengths)
    size = max((float(np.ptp(c.vertices, axis=0).max()) for c in cells.cells if len(c.vertices) > 1), default=0.0)
    return CELL_FRACTION * float(np.median(lengths)) / size if size > 0 else 1.0


def _force_unit(analysis) -> tuple[str, float]:
    u = analysis.project.units
    return u.label("force"), u.factor("force")


def _cell_mesh(cell: NodeCell, at: np.ndarray, scale: float):
    import pyvista as pv

    loops = [lp for lp in cell.loops if len(lp) >= 3]
    faces = np.concatenate([[len(lp), *lp] for lp in loops]) if loops else np.zeros(0, dtype=np.int64)
    mesh = pv.PolyData(at + scale * np.asarray(cell.vertices), faces=faces)
    return mesh, [k for k, lp in enumerate(cell.loops) if len(lp) >= 3]


def _plotter(window=WINDOW, shape=(1, 1)):
    return offscreen_plotter(window, shape)


def _rgb(colour: str) -> list[int]:
    return [int(colour[k:k + 2], 16) for k in (1, 3, 5)]


def polygons_mesh(points: list[np.ndarray], loops: list[list[tuple[int, ...]]], colours: list[list[str]]):
    """One PolyData of many polygon sets, faces coloured (cell data "rgb")."""
    import pyvista as pv

    verts, faces, rgb, offset = [], [], [], 0
    for pts, lps, cols in zip(points, loops, colours):
        for lp, c in zip(lps, cols):
            faces.extend([len(lp), *(offset + x for x in lp)])
            rgb.append(_rgb(c))
        verts.append(np.asarray(pts, dtype=float))
        offset += len(pts)
    mesh = pv.PolyData(np.vstack(verts) if verts else np.zeros((0, 3)), faces=np.array(faces, dtype=np.int64))
    mesh.cell_data["rgb"] = np.array(rgb, dtype=np.uint8).reshape(-1, 3)
    return mesh


def _members(plotter, analysis, forces: np.ndarray, shift: float = 1.0):
    """Members as tubes, radius growing with |force|, coloured by sign."""
    import pyvista as pv

    project = analysis.project
    coords = shift * np.asarray(project.coords, dtype=float)
    largest = float(np.abs(forces).max(initial=0.0))
    lengths = np.asarray(analysis.equilibrium.lengths)
    r_max = 0.02 * float(np.median(lengths))
    for colour in (palette.TENSION, palette.COMPRESSION, palette.ZERO_FORCE):
        sel = [e for e in range(project.n_members) if palette.force_colour(forces[e], largest) == colour]
        if not sel:
            continue
        ends = project.ends[sel]
        lines = np.column_stack([np.full(len(sel), 2), 2 * np.arange(len(sel)), 2 * np.arange(len(sel)) + 1]).ravel()
        mesh = pv.PolyData(coords[ends.reshape(-1)], lines=lines)
        # radius proportional to |force| (with a thin minimum), the same scale for every group
        radii = np.array([r_max * palette.line_width(forces[e], largest, 0.15, 1.0) for e in sel])
        mesh.cell_data["radius"] = radii
        mesh = mesh.cell_data_to_point_data()
        tube = mesh.tube(scalars="radius", absolute=True, n_sides=10)
        plotter.add_mesh(tube, color=colour, **SHADING)


def _save(plotter, path: Path) -> Path:
    with atomic_path(path) as tmp:
        plotter.screenshot(str(tmp))
    plotter.close()
    return path


def node_cells_figure(analysis, state_id: str, path, cells: NodeCells | None = None) -> Path:
    """The frame with each node's force cell at the node, one scale for all."""
    path = Path(path)
    cells = cells or node_cells(analysis, state_id)
    if analysis.project.dim == 2:
        return _cells_2d(analysis, state_id, cells, path)
    state = analysis.state(state_id)
    project = analysis.project
    scale = cell_scale(analysis, cells)
    reactions = np.abs(state.reactions).max(axis=1) > 0
    plotter = _plotter()
    _members(plotter, analysis, np.asarray(state.forces))
    pts, loops, colours = [], [], []
    for v, cell in enumerate(cells.cells):
        if cell.kind != "cell":
            continue
        facets = [k for k, lp in enumerate(cell.loops) if len(lp) >= 3]
        pts.append(project.coords[v] + scale * np.asarray(cell.vertices))
        loops.append([cell.loops[k] for k in facets])
        colours.append([facet_colour(cell, k, bool(reactions[v])) for k in facets])
    if pts:
        plotter.add_mesh(polygons_mesh(pts, loops, colours), scalars="rgb", rgb=True, opacity=0.9, show_edges=True,
                         edge_color="#333333", line_width=0.5, **SHADING)
    flat = [c.node for c in cells.cells if c.kind in ("polygon", "segment")]
    unit, factor = _force_unit(analysis)
    area_unit = scale**2  # drawing m^2 per N
    lines = [f"Force cells, state {state.id}: {state.title}",
             f"scale: 1 m^2 of face on the drawing = {1.0 / area_unit / factor:.4g} {unit}"]
    if flat:
        lines.append(f"flat nodes (polygon, drawn in the gallery): {', '.join(flat[:12])}{' ...' if len(flat) > 12 else ''}")
    plotter.add_text("\n".join(lines), position="upper_left", font_size=9, color="black")
    plotter.add_legend(_legend_entries(), bcolor="white", face="rectangle", size=(0.36, 0.18), loc="lower left")
    add_triad(plotter)
    plotter.view_isometric()
    plotter.enable_parallel_projection()
    plotter.camera.zoom(0.8)  # room for the legend and the text block
    return _save(plotter, path)


def _legend_entries():
    return [["face of a member in tension", palette.TENSION],
            ["face of a member in compression", palette.COMPRESSION],
            ["face of the external force (load)", palette.LOAD],
            ["... (load and reaction)", palette.REACTION]]


def cell_gallery_figure(analysis, state_id: str, path, nodes=None, cells: NodeCells | None = None,
                        max_cells: int = 9) -> Path:
    """The cells of ``nodes`` (default: the most loaded) side by side, faces labelled by member id."""
    path = Path(path)
    cells = cells or node_cells(analysis, state_id)
    state = analysis.state(state_id)
    project = analysis.project
    if nodes is None:
        ranked = sorted((c for c in cells.cells if c.kind in ("cell", "polygon")), key=lambda c: -float(c.expected.sum()))
        nodes = [c.node for c in ranked[:max_cells]]
    chosen = [cells.cell(n) for n in nodes][:max_cells]
    if project.dim == 2 or not any(c.kind == "cell" for c in chosen):
        return _gallery_2d(analysis, state_id, chosen, path)
    cols = min(3, len(chosen))
    rows = -(-len(chosen) // cols)
    plotter = _plotter((500 * cols, 480 * rows), (rows, cols))
    unit, factor = _force_unit(analysis)
    node_index = {nid: i for i, nid in enumerate(project.node_ids)}
    size = max(float(np.ptp(c.vertices, axis=0).max()) for c in chosen if len(c.vertices) > 1)
    for k, cell in enumerate(chosen):
        plotter.subplot(k // cols, k % cols)
        v = node_index[cell.node]
        has_reaction = bool(np.abs(state.reactions[v]).max() > 0)
        if cell.kind == "cell":
            mesh, facets = _cell_mesh(cell, np.zeros(3), 1.0)
            for idx, f in enumerate(facets):
                plotter.add_mesh(mesh.extract_cells([idx]), color=facet_colour(cell, f, has_reaction), opacity=0.9,
                                 show_edges=True, edge_color="#333333", **SHADING)
            centres, labels = [], []
            for f in facets:
                pts = cell.vertices[list(cell.loops[f])]
                centres.append(pts.mean(axis=0) + 0.02 * size * cell.normals[f])
                labels.append(_facet_label(cell, f, factor))
            plotter.add_point_labels(np.array(centres), labels, font_size=11, point_size=1, shape_opacity=0.6,
                                     always_visible=True)
        plotter.add_text(f"node {cell.node} ({cell.kind})", font_size=10, color="black")
        add_triad(plotter)
        plotter.view_isometric()
        plotter.enable_parallel_projection()
        plotter.camera.parallel_scale = 0.75 * size
    plotter.subplot(0, 0)
    plotter.add_text(f"\n\nstate {state.id}; face area = force ({unit}; common scale, "
                     f"largest cell {size:.3g} sqrt(N) across)", font_size=8, color="black", position="lower_left")
    plotter.add_legend(_legend_entries(), bcolor="white", face="rectangle", size=(0.6, 0.25), loc="lower right")
    return _save(plotter, path)


def _facet_label(cell: NodeCell, k: int, factor: float) -> str:
    names = ", ".join(p.id if p.kind == "member" else "external" for p in cell.parts[k])
    return f"{names}: {cell.expected[k] / factor:.3g}"


# -- 2D frames and flat nodes: matplotlib -----------------------------------------------


def _polygon_axes(ax, cell: NodeCell, at: np.ndarray, scale: float, has_reaction: bool, label: bool, factor: float):
    from matplotlib.patches import Polygon

    pts2 = _in_plane(cell)
    if len(pts2) >= 2:
        ax.add_patch(Polygon(at + scale * pts2, closed=True, facecolor="white", edgecolor="none", alpha=0.8, zorder=3))
    for k, loop in enumerate(cell.loops):
        if len(loop) != 2:
            continue
        seg = at + scale * pts2[list(loop)]
        ax.plot(seg[:, 0], seg[:, 1], color=facet_colour(cell, k, has_reaction), lw=1.6, zorder=4,
                solid_capstyle="butt")
        if label:
            mid = seg.mean(axis=0)
            ax.annotate(_facet_label(cell, k, factor), mid, fontsize=6, ha="center", va="center",
                        xytext=tuple(6 * _in_plane_normal(cell, k)), textcoords="offset points")


def _in_plane(cell: NodeCell) -> np.ndarray:
    """Polygon vertices in 2D: as they are for 2D frames, in the polygon's own plane for 3D."""
    pts = np.asarray(cell.vertices)
    if pts.shape[1] == 2 or len(pts) < 2:
        return pts[:, :2] if len(pts) else np.zeros((0, 2))
    centred = pts - pts.mean(axis=0)
    _, _, vt = np.linalg.svd(centred)
    return centred @ vt[:2].T


def _in_plane_normal(cell: NodeCell, k: int) -> np.ndarray:
    n = np.asarray(cell.normals[k])
    if n.shape[0] == 2:
        return n
    pts = np.asarray(cell.vertices)
    _, _, vt = np.linalg.svd(pts - pts.mean(axis=0))
    v = vt[:2] @ n
    return v / (np.linalg.norm(v) or 1.0)


def _save_figure(fig, path: Path) -> Path:
    with atomic_path(path) as tmp:
        fig.savefig(tmp, dpi=200, metadata=_metadata(path.suffix))
    return path


def _metadata(suffix: str) -> dict:
    """No dates or versions in the file, so equal inputs give equal bytes."""
    s = suffix.lower()
    if s == ".pdf":
        return {"CreationDate": None, "Producer": None, "Creator": None}
    if s == ".svg":
        return {"Date": None, "Creator": None}
    if s == ".png":
        return {"Software": None}
    return {}


def _cells_2d(analysis, state_id: str, cells: NodeCells, path: Path) -> Path:
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    from sheets.render.form_figure import _scale_bar

    project = analysis.project
    state = analysis.state(state_id)
    forces = np.asarray(state.forces)
    largest = float(np.abs(forces).max(initial=0.0))
    lengths = np.asarray(analysis.equilibrium.lengths)
    size = max((float(np.ptp(c.vertices, axis=0).max()) for c in cells.cells if len(c.vertices) > 1), default=1.0)
    scale = CELL_FRACTION * float(np.median(lengths)) / size
    fig = Figure(figsize=(6.4, 5.2))
    ax = fig.add_subplot(1, 1, 1)
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_axis_off()
    xy = np.asarray(project.coords)[:, :2]
    for e, (i, j) in enumerate(project.ends):
        ax.plot(*xy[[i, j]].T, color=palette.force_colour(forces[e], largest), lw=palette.line_width(forces[e], largest),
                zorder=2)
    unit, factor = _force_unit(analysis)
    for v, cell in enumerate(cells.cells):
        if cell.kind in ("polygon", "segment"):
            _polygon_axes(ax, cell, xy[v], scale, bool(np.abs(state.reactions[v]).max() > 0), False, factor)
    _scale_bar(ax, xy, project.units.label("length"), project.units.factor("length"))
    ax.autoscale_view()
    handles = [Line2D([], [], color=palette.TENSION, lw=2, label="tension"),
               Line2D([], [], color=palette.COMPRESSION, lw=2, label="compression"),
               Line2D([], [], color=palette.LOAD, lw=2, label="external force (load)"),
               Line2D([], [], color=palette.REACTION, lw=2, label="external force (with reaction)")]
    fig.legend(handles=handles, loc="lower center", ncol=4, fontsize=6.5, frameon=False,
               title=(f"Node force polygons (turned 90 degrees), state {state.id}; "
                      f"polygon edge 1 m on the drawing = {1.0 / scale / factor:.4g} {unit}"), title_fontsize=6.5)
    fig.subplots_adjust(left=0.02, right=0.98, top=0.97, bottom=0.14)
    return _save_figure(fig, path)


def _gallery_2d(analysis, state_id: str, chosen, path: Path) -> Path:
    from matplotlib.figure import Figure

    state = analysis.state(state_id)
    project = analysis.project
    node_index = {nid: i for i, nid in enumerate(project.node_ids)}
    cols = min(3, max(len(chosen), 1))
    rows = max(-(-len(chosen) // cols), 1)
    fig = Figure(figsize=(2.3 * cols, 2.3 * rows + 0.5))
    size = max((float(np.ptp(c.vertices, axis=0).max()) for c in chosen if len(c.vertices) > 1), default=1.0)
    unit, factor = _force_unit(analysis)
    for k, cell in enumerate(chosen):
        ax = fig.add_subplot(rows, cols, k + 1)
        ax.set_aspect("equal", adjustable="datalim")
        ax.set_axis_off()
        v = node_index[cell.node]
        _polygon_axes(ax, cell, np.zeros(2), 1.0, bool(np.abs(state.reactions[v]).max() > 0), True, factor)
        ax.set_title(f"node {cell.node}", fontsize=7)
        ax.set_xlim(-0.7 * size, 0.7 * size)
        ax.set_ylim(-0.7 * size, 0.7 * size)
    fig.suptitle(f"Node force polygons, state {state.id}: edge length = force ({unit}), edges perpendicular to the members",
                 fontsize=7)
    return _save_figure(fig, path)


def polar_diagram_figure(analysis, state_id: str, path, polar, labels_up_to: int | None = None) -> Path:
    """The connected polyhedral force diagram (polarity): one polygon per member, coloured by force, labelled
    up to ``labels_up_to`` members (the sheet set's label limit; None: always).

    ``polar`` is a sheets.reciprocal.polarity.ProjectPolarity with a diagram.
    """
    path = Path(path)
    project = analysis.project
    diagram = polar.diagram
    largest = float(np.abs(diagram.forces).max(initial=0.0))
    plotter = _plotter()
    pts, loops, colours, centres, labels = [], [], [], [], []
    unit, factor = _force_unit(analysis)
    for e, mid in enumerate(project.member_ids):
        poly = diagram.polygon(e)
        if len(poly) < 3 or abs(diagram.forces[e]) <= palette.ZERO_FORCE_RELATIVE * largest:
            continue
        pts.append(poly)
        loops.append([tuple(range(len(poly)))])
        colours.append([palette.force_colour(diagram.forces[e], largest)])
        centres.append(poly.mean(axis=0))
        labels.append(f"{mid}: {diagram.forces[e] / factor:.3g}")
    if pts:
        plotter.add_mesh(polygons_mesh(pts, loops, colours), scalars="rgb", rgb=True, opacity=0.75, show_edges=True,
                         edge_color="#333333", line_width=0.6, **SHADING)
        if labels_up_to is None or project.n_members <= labels_up_to:
            plotter.add_point_labels(np.array(centres), labels, font_size=10, point_size=1, shape_opacity=0.5,
                                     always_visible=True)
    use = "from the given heights" if polar.use == "generative" else "fitted to the analysed forces"
    lines = [f"Polyhedral force diagram by polarity ({use}), state {state_id}",
             f"polygon area = member force ({unit}); coordinates in sqrt(N)",
             polar.note]
    if diagram.inverted_nodes:
        lines.append("node cells turned inside out: " + ", ".join(project.node_ids[v] for v in diagram.inverted_nodes[:10]))
    plotter.add_text("\n".join(lines), position="upper_left", font_size=9, color="black")
    plotter.add_legend([["member in tension", palette.TENSION], ["member in compression", palette.COMPRESSION]],
                       bcolor="white", face="rectangle", size=(0.3, 0.1), loc="lower left")
    add_triad(plotter)
    plotter.view_isometric()
    plotter.enable_parallel_projection()
    plotter.camera.zoom(0.8)  # room for the legend and the text block
    return _save(plotter, path)
