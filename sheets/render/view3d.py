"""3D views of a frame's form and force diagrams, rendered off-screen with pyvista (VTK), CPU only.

Each view is an orthographic (parallel-projection) render, so a scale bar is
exact for lengths parallel to the view plane. Members and force edges are
tubes whose radius is proportional to |force| (colour by sense; loads black,
reactions sky blue); labels carry member ids (form and force alike) and the
force diagram's points their lower-case Bow's-notation letters.

Public API:
    ``render_view(diagram, which, view, size=(640, 520))`` -> (RGB image array,
        pixels per metre (form) or per newton (force));
    ``view_png(diagram, which, view, path)`` -> path of one PNG view;
    ``views_figure(diagram, path, fmt=None, views=None)`` -> path: form (top
        row) and force diagram (bottom row) in the standard views plus the
        projection the embedding used, with a legend and scale bars (composed
        with matplotlib; PNG by default);
    ``force_views_figure(analysis, state_id, path, fmt=None)``: the report
        stage's adapter.

Headless rendering: with no DISPLAY and no backend chosen by the user, the
VTK OSMesa window (vtkOSOpenGLRenderWindow) is selected before the first
render, so VTK does not try X first; it needs the system library OSMesa
(Debian: libosmesa6). See docs/rendering.md.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from sheets.model.schema import NAMED_DIRECTIONS
from sheets.reciprocal.diagram import ForceDiagram, force_diagram
from sheets.reciprocal.projection import plane_basis, plane_name
from sheets.render import palette
from sheets.render.offscreen import offscreen_plotter
from sheets.render.diagram2d import FONT, ROLE_STYLE, _edge_tag, _round_length, _true_force, role_handles, save_figure
from sheets.render.triad import add_triad
DEFAULT_VIEWS = ("plan", "front", "side", "axonometric")


def _rgb(colour: str) -> tuple[float, float, float]:
    return tuple(int(colour[i: i + 2], 16) / 255 for i in (1, 3, 5))


def _scene(diagram: ForceDiagram, which: str, labels_up_to: int | None = None):
    """(segments (k, 2, 3), role per segment, |force| per segment, labels [(point, text)]) of one diagram;
    labels up to ``labels_up_to`` members (None: always). A force edge seen in a view is foreshortened,
    so its label carries the member's true force."""
    graph = diagram.graph
    m = graph.n_members
    labelled = labels_up_to is None or m <= labels_up_to
    if which == "form":
        coords = graph.coords
        segs = coords[np.stack([graph.tails[:m], graph.heads[:m]], axis=1)]
        roles = list(diagram.element_roles[:m])
        sizes = np.abs(graph.forces[:m])
        extent = float(np.ptp(coords, axis=0).max()) or 1.0
        arrows, arrow_roles, arrow_sizes = _force_arrows(diagram, extent)
        segs = np.concatenate([segs, arrows]) if len(arrows) else segs
        roles += arrow_roles
        sizes = np.r_[sizes, arrow_sizes]
        labels = [(segs[e].mean(axis=0), graph.element_ids[e]) for e in range(m)] if labelled else []
        return segs, roles, sizes, labels
    if which == "force":
        pts = diagram.points
        segs = np.stack([pts[diagram.faces.left], pts[diagram.faces.right]], axis=1)
        roles = list(diagram.role)
        sizes = np.abs(diagram.edge_forces)
        labels = []
        if labelled:
            seen = set()
            for k in range(diagram.n_edges):
                e = int(diagram.edge_element[k])
                key = (e, tuple(np.round(segs[k].mean(axis=0), 6)))
                if key not in seen and np.linalg.norm(segs[k, 1] - segs[k, 0]) > 0:
                    seen.add(key)
                    labels.append((segs[k].mean(axis=0), f"{_edge_tag(diagram, e)} {_true_force(diagram, e)}"))
            labels += [(pts[f], label.lower()) for f, label in enumerate(diagram.space_labels)]
        return segs, roles, sizes, labels
    raise ValueError(f"which must be 'form' or 'force', got {which!r}")


def _force_arrows(diagram: ForceDiagram, extent: float):
    """Loads and reactions as lines ending at their node (loads) or starting there (reactions)."""
    graph = diagram.graph
    segs, roles, sizes = [], [], []
    largest = float(graph.forces[graph.n_members:].max(initial=0.0)) or 1.0
    for r, node in enumerate(graph.external_nodes.tolist()):
        x = graph.coords[node]
        for vector, role, at_head in ((graph.external_loads[r], "load", True), (graph.external_reactions[r], "reaction", False)):
            size = float(np.linalg.norm(vector))
            if size <= 1e-12 * largest:
                continue
            d = vector / size * (0.05 + 0.12 * size / largest) * extent
            segs.append([x - d, x] if at_head else [x, x + d])
            roles.append(role)
            sizes.append(size)
    return np.array(segs).reshape(-1, 2, 3), roles, np.array(sizes)


TUBE_SIDES = 10  # sides of a member's tube
TUBE_SIDES_MANY = 6  # ... above TUBE_DETAIL_UP_TO segments, where a tube is a few pixels across
TUBE_DETAIL_UP_TO = 4000
TUBES_UP_TO = 50000  # above, segments are drawn as lines (width by |force|): tubes of half a million
# force-diagram edges cost minutes of software rendering, lines about a second a view
LINE_PIXELS = (1.0, 5.0)  # line width in pixels at zero and at the largest force
LINE_WIDTHS = 12  # width classes per role (one actor each)


def _tubes(segs: np.ndarray, roles: list[str], sizes: np.ndarray, extent: float, largest: float) -> list:
    """One mesh per role present and what to draw it with: tubes (radius proportional to |force|, one tube
    filter per role), or above TUBES_UP_TO segments lines in LINE_WIDTHS classes of width by |force|.
    Returns [(mesh, colour, line width in pixels or None for tubes)]."""
    import pyvista as pv

    lengths = np.linalg.norm(segs[:, 1] - segs[:, 0], axis=1) if len(segs) else np.zeros(0)
    roles = np.asarray(roles, dtype=object)
    sides = TUBE_SIDES if len(segs) <= TUBE_DETAIL_UP_TO else TUBE_SIDES_MANY
    meshes = []

    def lines_of(pick):
        cells = np.hstack([np.full((len(pick), 1), 2), np.arange(2 * len(pick)).reshape(-1, 2)]).ravel()
        return pv.PolyData(segs[pick].reshape(-1, 3), lines=cells)

    for role in ROLE_STYLE:
        pick = np.flatnonzero((roles == role) & (lengths > 1e-9 * extent))
        if not len(pick):
            continue
        colour = ROLE_STYLE[role][0]
        if len(segs) > TUBES_UP_TO:
            width_class = np.minimum((sizes[pick] / largest * LINE_WIDTHS).astype(np.int64), LINE_WIDTHS - 1)
            for c in range(LINE_WIDTHS):
                chosen = pick[width_class == c]
                if len(chosen):
                    thin, thick = LINE_PIXELS
                    meshes.append((lines_of(chosen), colour, thin + (thick - thin) * (c + 0.5) / LINE_WIDTHS))
            continue
        poly = lines_of(pick)
        poly.point_data["radius"] = np.repeat(0.0015 * extent + 0.009 * extent * sizes[pick] / largest, 2)
        meshes.append((poly.tube(scalars="radius", absolute=True, n_sides=sides, capping=True), colour, None))
    return meshes


def render_views(diagram: ForceDiagram, which: str, views, size=(640, 520), scene=None,
                 triad: bool = True) -> list[tuple[np.ndarray, float]]:
    """Orthographic renders of one diagram in each of ``views``, the scene built once and only the camera
    moved, every view at one scale (that of the view needing the most room): [(image (h, w, 3) uint8, pixels
    per drawing unit: m for form, N for force)], the same for every view. ``scene``: ``_scene(diagram, which)``
    where the caller has it already. ``triad``: an axis triad (sheets.render.triad) in the lower-right corner."""
    segs, roles, sizes, labels = scene if scene is not None else _scene(diagram, which)
    pts = segs.reshape(-1, 3)
    centre = (pts.min(axis=0) + pts.max(axis=0)) / 2 if len(pts) else np.zeros(3)
    extent = float(np.ptp(pts, axis=0).max()) if len(pts) else 1.0
    extent = extent or 1.0
    largest = float(sizes.max(initial=0.0)) or 1.0
    rendered = []
    plotter = offscreen_plotter(size)
    try:
        for mesh, colour, width in _tubes(segs, roles, sizes, extent, largest):
            if width is None:
                # mostly ambient light: the palette colours stay recognisable, with a little shading for depth
                plotter.add_mesh(mesh, color=_rgb(colour), smooth_shading=True, ambient=0.55, diffuse=0.5, specular=0.0)
            else:
                plotter.add_mesh(mesh, color=_rgb(colour), line_width=width, lighting=False)
        if labels:
            plotter.add_point_labels(np.array([p for p, _ in labels]), [t for _, t in labels], font_size=15,
                                     text_color=palette.LABEL, shape=None, show_points=False, always_visible=True)
        if triad:
            add_triad(plotter)
        plotter.enable_parallel_projection()
        rel = pts - centre
        aspect = size[0] / size[1]
        cameras = []
        for view in views:
            direction = NAMED_DIRECTIONS[view] if isinstance(view, str) else tuple(view)
            basis = plane_basis(direction, 2)
            d = np.asarray(direction, float) / np.linalg.norm(direction)
            half_w = float(np.abs(rel @ basis[0]).max(initial=0.0))
            half_h = float(np.abs(rel @ basis[1]).max(initial=0.0))
            cameras.append((d, basis, max(half_h, half_w / aspect, 1e-9 * extent) * 1.22))
        scale = max(c[2] for c in cameras) if cameras else 1.0  # one scale for every view
        for d, basis, _ in cameras:
            camera = plotter.camera
            camera.focal_point = tuple(centre)
            camera.position = tuple(centre + d * 3 * extent)
            camera.up = tuple(basis[1])
            camera.parallel_scale = scale
            plotter.reset_camera_clipping_range()
            plotter.render()  # a no-op before the first screenshot, which renders; needed for every later view
            rendered.append((np.asarray(plotter.screenshot(return_img=True)), size[1] / (2 * scale)))
    finally:
        plotter.close()
    return rendered


def render_view(diagram: ForceDiagram, which: str, view, size=(640, 520), triad: bool = True) -> tuple[np.ndarray, float]:
    """One orthographic render: (image (h, w, 3) uint8, pixels per drawing unit: m for form, N for force)."""
    return render_views(diagram, which, [view], size, triad=triad)[0]


def view_png(diagram: ForceDiagram, which: str, view, path: str | Path) -> Path:
    """One view as a PNG (with its legend and scale bar); returns the path written."""
    return views_figure(diagram, path, "png", views=(view,), rows=(which,))


def _view_label(view) -> str:
    """The view's name and, on a second line, the plane it projects onto."""
    direction = NAMED_DIRECTIONS[view] if isinstance(view, str) else view
    return (f"{view} view" if isinstance(view, str) else "view") + f"\n{plane_name(direction)}"


def _pixel_scale_bar(ax, image_shape, pixels_per_unit: float, unit: str, factor: float):
    """A bar of a round length in the bottom-left corner of an image panel."""
    height, width = image_shape[:2]
    span = 0.3 * width / pixels_per_unit / factor  # display units across 30 % of the panel
    length = _round_length(span * 3)
    px = length * factor * pixels_per_unit
    x0, y0 = 0.04 * width, 0.96 * height
    ax.plot([x0, x0 + px], [y0, y0], color=palette.LABEL, lw=1.2, solid_capstyle="butt")
    for x in (x0, x0 + px):
        ax.plot([x, x], [y0 - 0.012 * height, y0 + 0.012 * height], color=palette.LABEL, lw=0.8)
    ax.text(x0, y0 - 0.02 * height, f"{length:g} {unit}", ha="left", va="bottom", fontsize=FONT)


def views_figure(diagram: ForceDiagram, path: str | Path, fmt: str | None = None, views=None,
                 rows=("form", "force"), size=(560, 460), labels_up_to: int | None = None) -> Path:
    """Form and force diagram in the given views (default: the four standard views and the embedding's
    projection), one row each, every view of a row at one scale with one scale bar, an axis triad in every
    view, and a legend; labels up to ``labels_up_to`` members (None: always). Returns the path written
    (PNG by default)."""
    views = list(views or DEFAULT_VIEWS)
    projection = diagram.embedding.projection
    if projection.direction is not None and len(views) > 1:
        named = [NAMED_DIRECTIONS[v] if isinstance(v, str) else v for v in views]
        if not any(np.allclose(np.asarray(v) / np.linalg.norm(v), projection.direction) for v in named):
            views.append(tuple(projection.direction))
    units = diagram.units
    cols = len(views)
    fig = Figure(figsize=(2.6 * cols + 0.4, 2.35 * len(rows) + 1.0))
    top, bottom = 0.9, 0.16
    height = (top - bottom) / len(rows)
    lines = []  # rows drawn as lines (more than TUBES_UP_TO segments)
    for i, which in enumerate(rows):
        scene = _scene(diagram, which, labels_up_to)
        if len(scene[0]) > TUBES_UP_TO:
            lines.append(which)
        rendered = render_views(diagram, which, views, size, scene)
        for j, (view, (image, per_unit)) in enumerate(zip(views, rendered)):
            ax = fig.add_axes((j / cols + 0.005, top - (i + 1) * height + 0.01, 1 / cols - 0.01, height - 0.03))
            ax.imshow(image, interpolation="antialiased")
            ax.set_axis_off()
            used = projection.direction is not None and not isinstance(view, str)
            title = ("form" if which == "form" else "force") + ", " + (
                f"embedding projection ({projection.name}{', tilted' if projection.tilt_degrees else ''})" if used else _view_label(view))
            ax.set_title(title, fontsize=FONT + 0.5)
            if j == 0:  # the row's views share one scale: one bar says it
                kind = "length" if which == "form" else "force"
                note = " (every view in this row)" if cols > 1 else ""
                _pixel_scale_bar(ax, image.shape, per_unit, units.label(kind) + note, units.factor(kind))
    fig.suptitle(f"{diagram.title} - {diagram.state_kind} {diagram.state_id}: {diagram.state_title} (3D views)",
                 fontsize=FONT + 2.5, y=0.985)
    handles = role_handles(diagram, line_styles=False)  # tubes are solid whatever their sense
    handles = [h for h in handles if not h.get_label().startswith(("crossing", "edge passing", "width"))]
    drawn = "tube radius" if not lines else (f"line width (diagrams of more than {TUBES_UP_TO} edges are drawn as "
                                             "lines)" if len(lines) == len(rows) else f"tube radius ({', '.join(lines)}: line width)")
    fig.legend(handles=handles, loc="lower center", ncol=min(len(handles), 4), fontsize=FONT, frameon=False,
               bbox_to_anchor=(0.5, 0.0), title=f"{drawn} proportional to |force|; orthographic views, one scale per "
               "row, true for lengths parallel to the view; force labels give true forces", title_fontsize=FONT)
    return save_figure(fig, path, fmt or "png", dpi=150)


def force_views_figure(analysis, state_id: str, path: str | Path, fmt: str | None = None, diagram=None,
                       labels_up_to: int | None = None) -> Path:
    """``views_figure`` for one state of an analysis, in the project's [drawing] views."""
    project = analysis.project
    diagram = diagram or force_diagram(project, analysis.state(state_id))
    return views_figure(diagram, path, fmt, views=project.drawing.views or DEFAULT_VIEWS, labels_up_to=labels_up_to)
