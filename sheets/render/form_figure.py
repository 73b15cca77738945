"""Plain form-diagram figures for the sheets (matplotlib, vector, headless).

The figures, each a matplotlib Figure built without pyplot (no global state):

- ``model_figure``: the frame with node and member labels and the supports;
- ``loads_figure``: the frame in grey with the nodal loads of one load case;
- ``forces_figure``: the frame coloured by the member forces of one state
  (tension bluish green and solid, compression vermillion and dashed, zero-force
  grey; line width proportional to |force|; labels carry the signed force), with
  its loads (black) and reactions (blue);
- ``displaced_figure``: the displaced shape of one state over the frame as
  given, displacements exaggerated by a stated round factor;
- ``changes_figure``: the frame with the members and nodes changed from an
  earlier revision marked (``sheets build --compare``).

A 3D frame is drawn as orthographic projections (the project's [drawing]
views: plan, front, side, axonometric), one panel each, titled with the plane
it projects onto and carrying an axis triad; all panels share one scale.
Every figure has a legend and a scale: one length scale bar (true in every
view), and for forces the width and arrow scales.
Labels are drawn for frames up to ``labels_up_to`` members; larger frames are
drawn without them (the tables and CSV files carry every id).
"""

from __future__ import annotations

import math

import numpy as np
from matplotlib.collections import PolyCollection
from matplotlib.figure import Figure
from matplotlib.lines import Line2D

from sheets.model.project import Project
from sheets.model.schema import NAMED_DIRECTIONS
from sheets.reciprocal.projection import plane_basis, plane_name
from sheets.render import palette
from sheets.render.diagram2d import _add_lines, _markers
from sheets.render.labels import Labels, offset_text
from sheets.render.triad import draw_triad

PANEL_INCHES = 6.4  # width of a single-view figure
FONT = 6.5
NOTE_INCHES = 0.12  # a line under the legend for the labels left out
SMALL = 6.0  # the smallest text: at PANEL_INCHES the figure prints at 1:1 or larger on every template


def _views(project: Project) -> list[tuple[str, np.ndarray]]:
    """(name, (dim, 2) projection) for each panel."""
    if project.dim == 2:
        return [("", np.eye(2))]
    names = project.drawing.views or ("plan",)
    return [(name, plane_basis(NAMED_DIRECTIONS[name], project.vertical_axis).T) for name in names]


def _layout(project: Project):
    views = _views(project)
    cols = 1 if len(views) == 1 else 2
    rows = math.ceil(len(views) / cols)
    xy = [project.coords @ proj for _, proj in views]
    fig = Figure(figsize=(PANEL_INCHES, PANEL_INCHES))
    axes = []
    for k, (name, _) in enumerate(views):
        ax = fig.add_subplot(rows, cols, k + 1)
        ax.set_aspect("equal", adjustable="datalim")
        ax.set_axis_off()
        if name:
            ax.set_title(f"{name} view: {plane_name(NAMED_DIRECTIONS[name])}", fontsize=FONT + 1)
        axes.append(ax)
    return fig, axes, views, xy


def _legend(fig: Figure, handles, title: str, ncol: int) -> float:
    """A legend under the panels; returns the height it needs (inches)."""
    fig.legend(handles=handles, loc="lower center", ncol=ncol, fontsize=FONT, frameon=False, title=title, title_fontsize=FONT)
    rows = 1 + math.ceil(len(handles) / ncol)
    return rows * FONT * 1.8 / 72 + 0.08 + NOTE_INCHES


def _finish(fig: Figure, axes, legend_inches: float) -> Figure:
    """Size the figure, and each row of panels, to the drawing: every view at one common scale (so the one
    scale bar holds for all of them), rows as tall as their tallest view, no empty bands on the page."""
    spans = []
    for ax in axes:
        ax.margins(0.03)
        ax.autoscale_view()
        (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
        spans.append(((x0 + x1) / 2, (y0 + y1) / 2, max(x1 - x0, 1e-12), max(y1 - y0, 1e-12)))
    cols = 1 if len(axes) == 1 else 2
    panel = PANEL_INCHES / cols
    inner = panel - 0.04
    # inches per drawing unit, common to every view: the widest view fills its panel, none taller than 1.4 panels
    per_unit = min(min(inner / w, 1.4 * inner / h) for _, _, w, h in spans)
    rows = [spans[r:r + cols] for r in range(0, len(axes), cols)]
    title = 0.22 if len(axes) > 1 else 0.0
    heights = [max(max(h * per_unit for _, _, _, h in row), 0.12 * inner) for row in rows]
    height = sum(heights) + title * len(rows) + legend_inches
    fig.set_size_inches(PANEL_INCHES, height)
    for legend in fig.legends:  # above the line kept for the note of labels left out (``_placed``)
        legend.set_bbox_to_anchor((0.5, NOTE_INCHES / height), transform=fig.transFigure)
    top = height
    for r, row_height in enumerate(heights):
        top -= title
        for c in range(cols):
            k = r * cols + c
            if k < len(axes):
                cx, cy, _, _ = spans[k]
                axes[k].set_xlim(cx - inner / per_unit / 2, cx + inner / per_unit / 2)
                axes[k].set_ylim(cy - row_height / per_unit / 2, cy + row_height / per_unit / 2)
                axes[k].set_position(((c * panel + 0.02) / PANEL_INCHES, (top - row_height) / height,
                                      inner / PANEL_INCHES, row_height / height))
        top -= row_height
    return fig


def _extent(xy: np.ndarray) -> float:
    return float(np.ptp(xy, axis=0).max()) if len(xy) > 1 else 1.0


def _furniture(axes, views, xys, project: Project) -> None:
    """One length scale bar (all views share its scale, see ``_finish``) and an axis triad in every 3D view."""
    note = " (every view)" if len(axes) > 1 else ""
    _scale_bar(axes[0], xys[0], project.units.label("length"), project.units.factor("length"), note)
    if project.dim == 3:
        for ax, (_, proj) in zip(axes, views):
            draw_triad(ax, proj.T)


def _scale_bar(ax, xy: np.ndarray, unit: str, factor: float, note: str = ""):
    """A length scale bar under the frame: a round length in the display unit."""
    extent = _extent(xy) / factor
    step = 10 ** math.floor(math.log10(extent / 4)) if extent > 0 else 1.0
    for mult in (5, 2, 1):
        if mult * step <= extent / 3:
            step *= mult
            break
    x0, y0 = xy[:, 0].min(), xy[:, 1].min() - 0.08 * _extent(xy)
    length = step * factor
    ax.plot([x0, x0 + length], [y0, y0], color=palette.LABEL, lw=1.2, solid_capstyle="butt")
    for x in (x0, x0 + length):
        ax.plot([x, x], [y0 - 0.01 * _extent(xy), y0 + 0.01 * _extent(xy)], color=palette.LABEL, lw=0.8)
    ax.text(x0 + length / 2, y0 - 0.02 * _extent(xy), f"{step:g} {unit}{note}", ha="center", va="top", fontsize=FONT,
            gid="scale-bar")
    ax.update_datalim([[x0, y0 - 0.045 * _extent(xy)]])


def _members(ax, project: Project, xy: np.ndarray, colours, widths, zorder=2, styles="solid"):
    """Members as lines (one colour, width and style, or one per member: compression dashed); large frames
    gathered into a path per colour, style and width (diagram2d._add_lines), drawn in one go."""
    m = project.n_members
    colours = [colours] * m if isinstance(colours, str) else list(colours)
    widths = [float(widths)] * m if np.isscalar(widths) else list(widths)
    styles = [styles] * m if isinstance(styles, str) else list(styles)
    _add_lines(ax, xy[project.ends], colours, widths, styles, zorder=zorder)


def _labels(ax, project: Project, xy: np.ndarray, members: bool = True, nodes: bool = True, placer: Labels | None = None,
            texts=None, order=None):
    """Node ids, and member ids (or ``texts``, one per member, in ``order`` of importance)."""
    placer = placer if placer is not None else Labels()
    if nodes:
        for nid, (x, y) in zip(project.node_ids, xy):
            placer.add(offset_text(ax, (x, y), (2.5, 2.5), nid, fontsize=FONT, color=palette.NODE, ha="left",
                                   va="bottom"))
    if members:
        mid = xy[project.ends].mean(axis=1)
        texts = project.member_ids if texts is None else texts
        for e in (range(project.n_members) if order is None else order):
            placer.add(ax.text(mid[e, 0], mid[e, 1], texts[e], fontsize=SMALL, color=palette.LABEL, ha="center",
                               va="center", bbox=dict(boxstyle="round,pad=0.12", fc="white", ec="none", alpha=0.8),
                               zorder=5))


def _supports(ax, project: Project, xy: np.ndarray, proj: np.ndarray, size: float, placer: Labels | None = None):
    """A triangle under each supported node; its text (placed by ``placer`` where given) names the fixed axes."""
    supported = np.flatnonzero(project.fixed.any(axis=1))
    if not len(supported):
        return
    ax.scatter(xy[supported, 0], xy[supported, 1] - 0.0, marker="^", s=size, facecolor="white",
               edgecolor=palette.NODE, linewidths=0.8, zorder=4)
    if len(supported) <= (60 if project.dim == 2 else 16):
        for n in supported:
            axes = "".join(a for a, f in zip(project.axes, project.fixed[n]) if f)
            text = offset_text(ax, xy[n], (0, -9), axes, fontsize=SMALL, ha="center", va="top", color=palette.LABEL)
            if placer is not None:
                placer.add(text)


def _arrows(ax, points: np.ndarray, vectors: np.ndarray, colour: str, scale: float, head: float, tail_at_node: bool):
    """Force arrows: ``vectors`` (n, 2) in force units times ``scale`` (length per unit force).

    Loads point at their node (head at the node); reactions start at it. All arrows of a call
    are one collection of 7-point outlines (shaft and head), built with numpy: thousands of
    arrows on a large frame cost no more than one.
    """
    d = np.asarray(vectors, dtype=float).reshape(-1, 2) * scale
    length = np.hypot(d[:, 0], d[:, 1])
    keep = length > 1e-12
    if not keep.any():
        return
    d, length, p = d[keep], length[keep], np.asarray(points, dtype=float).reshape(-1, 2)[keep]
    start = p if tail_at_node else p - d
    u = d / length[:, None]
    n = np.stack([-u[:, 1], u[:, 0]], axis=1)
    head_length = np.minimum(head * 1.3, length * 0.6)[:, None]
    neck = start + u * (length[:, None] - head_length)
    shaft, barb = head * 0.09, head / 2
    outline = np.stack([start + n * shaft, neck + n * shaft, neck + n * barb, start + d,
                        neck - n * barb, neck - n * shaft, start - n * shaft], axis=1)
    ax.add_collection(PolyCollection(outline, facecolors=colour, edgecolors="none", zorder=6))
    ax.update_datalim(outline.reshape(-1, 2))


def _along_view(ax, points: np.ndarray, vectors: np.ndarray, projected: np.ndarray, largest: float):
    """Loads (nearly) along the view direction show as rings, area proportional to |load|."""
    size = np.linalg.norm(vectors, axis=1)
    along = np.linalg.norm(projected, axis=1) < 0.2 * size
    if along.any() and largest > 0:
        ax.scatter(points[along, 0], points[along, 1], s=60 * size[along] / largest, facecolor="none",
                   edgecolor=palette.LOAD, linewidths=0.8, zorder=6)


def _force_scale(vectors: list[np.ndarray], extent: float) -> tuple[float, float]:
    """Length per newton so the largest arrow is 12 % of the frame, and that largest force."""
    largest = max((float(np.linalg.norm(v, axis=1).max(initial=0.0)) for v in vectors), default=0.0)
    return (0.12 * extent / largest if largest > 0 else 0.0), largest


def model_figure(project: Project, labels_up_to: int = 120) -> Figure:
    """The frame with node and member labels and the supports."""
    fig, axes, views, xys = _layout(project)
    labelled = project.n_members <= labels_up_to
    placer = Labels()
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, palette.LABEL, 0.8 if labelled else 0.25)  # hairlines: a large grid stays a grid
        if labelled:
            ax.scatter(xy[:, 0], xy[:, 1], s=6, color=palette.NODE, zorder=3)
            _labels(ax, project, xy, placer=placer)
        _supports(ax, project, xy, proj, 40 if labelled else 12, placer)
    _furniture(axes, views, xys, project)
    handles = [Line2D([], [], color=palette.LABEL, lw=0.8, label="member"),
               Line2D([], [], marker="^", ls="", mfc="white", mec=palette.NODE, label="support (fixed axes named)")]
    note = "" if labelled else f" (labels omitted above {labels_up_to} members)"
    space = _legend(fig, handles, f"Form diagram, {project.n_nodes} nodes, {project.n_members} members{note}", 2)
    return _placed(_finish(fig, axes, space), placer)


def _placed(fig: Figure, placer: Labels) -> Figure:
    """Labels placed clear of each other once the panels are final; the count left out said under the legend."""
    placer.place(fig)
    if placer.dropped:
        fig.text(0.5, 0.002, placer.note(), ha="center", va="bottom", fontsize=SMALL, color=palette.LABEL,
                 gid="label-note")
    return fig


LOAD_CLASSES = 8  # magnitude classes of the load dots of a large frame


def _loads_summary(project: Project, loads: np.ndarray, title: str, labels_up_to: int) -> Figure:
    """A large frame's loads: a dot at each loaded node, darker for a larger load (a colour bar in force
    units), with the largest load and the resultant in the legend; arrows at thousands of nodes would be a mass."""
    from matplotlib.cm import ScalarMappable
    from matplotlib.colors import BoundaryNorm, LinearSegmentedColormap, to_hex

    fig, axes, views, xys = _layout(project)
    f_unit, f_factor = project.units.label("force"), project.units.factor("force")
    size = np.linalg.norm(loads, axis=1)
    loaded = np.flatnonzero(size > 0)
    largest = float(size.max(initial=0.0)) or 1.0
    cmap = LinearSegmentedColormap.from_list("sheets-loads", ["#C8C8C8", palette.LOAD])
    klass = np.minimum((size[loaded] / largest * LOAD_CLASSES).astype(np.int64), LOAD_CLASSES - 1)
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, palette.ZERO_FORCE, 0.3)
        _supports(ax, project, xy, proj, 8)
        for c in range(LOAD_CLASSES):  # one path per class, lighter under darker
            pick = loaded[klass == c]
            if len(pick):
                _markers(ax, xy[pick], "o", 3, colour=to_hex(cmap((c + 0.5) / LOAD_CLASSES)), zorder=5)
    _furniture(axes, views, xys, project)
    top = int(np.argmax(size))
    total = ", ".join(f"{v / f_factor:,.4g}" for v in loads.sum(axis=0))
    handles = [Line2D([], [], marker="o", ls="", ms=3, color=palette.LOAD,
                      label=f"loaded node ({len(loaded)}; largest {size[top] / f_factor:,.4g} {f_unit} at {project.node_ids[top]})"),
               Line2D([], [], color=palette.ZERO_FORCE, lw=0.7, label="member")]
    space = _legend(fig, handles, f"{title}\nresultant of the loads ({total}) {f_unit}; above {labels_up_to} members "
                                  "loads are dots, not arrows", 2)
    _finish(fig, axes, space + 0.7)  # room for the colour bar and its label over the legend
    height = fig.get_size_inches()[1]
    bar = fig.add_axes((0.2, (space + 0.42) / height, 0.6, 0.08 / height))
    colours = fig.colorbar(ScalarMappable(BoundaryNorm(np.linspace(0, largest / f_factor, LOAD_CLASSES + 1), cmap.N), cmap),
                           cax=bar, orientation="horizontal")
    colours.set_label(f"nodal load |P| ({f_unit})", fontsize=FONT)
    colours.ax.tick_params(labelsize=FONT - 0.5)
    return fig


def loads_figure(project: Project, loads: np.ndarray, title: str, labels_up_to: int | None = None) -> Figure:
    """The frame in grey with one load case's nodal loads (black), magnitudes labelled; above
    ``labels_up_to`` members (the set's label limit) a dot per loaded node coloured by magnitude instead."""
    if labels_up_to is not None and project.n_members > labels_up_to:
        return _loads_summary(project, loads, title, labels_up_to)
    fig, axes, views, xys = _layout(project)
    f_unit, f_factor = project.units.label("force"), project.units.factor("force")
    loaded = np.flatnonzero(np.abs(loads).max(axis=1) > 0)
    scale = largest = 0.0
    placer = Labels()
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, palette.ZERO_FORCE, 0.7)
        _supports(ax, project, xy, proj, 25 if project.n_members <= 300 else 10, placer)
        vecs = loads[loaded] @ proj
        scale, largest = _force_scale([loads[loaded]], _extent(xy))
        head = 0.025 * _extent(xy)
        _arrows(ax, xy[loaded], vecs, palette.LOAD, scale, head, tail_at_node=False)
        _along_view(ax, xy[loaded], loads[loaded], vecs, largest)
        if len(loaded) <= 40:
            for n, v in zip(loaded, loads[loaded]):
                tail = xy[n] - (v @ proj) * scale
                placer.add(offset_text(ax, tail, (0, 2), f"{np.linalg.norm(v) / f_factor:.3g}", fontsize=SMALL,
                                       ha="center", va="bottom"))
    _furniture(axes, views, xys, project)
    handles = [Line2D([], [], color=palette.LOAD, lw=2, label=f"load (arrow {0.12:.0%} of frame size = {largest / f_factor:.3g} {f_unit})"),
               Line2D([], [], color=palette.ZERO_FORCE, lw=0.7, label="member")]
    if project.dim == 3:
        handles.append(Line2D([], [], marker="o", ls="", mfc="none", mec=palette.LOAD,
                              label="load along the view direction (ring area proportional to |load|)"))
    return _placed(_finish(fig, axes, _legend(fig, handles, title, 2)), placer)


def forces_figure(project: Project, forces: np.ndarray, loads: np.ndarray, reactions: np.ndarray, title: str,
                  labels_up_to: int = 120) -> Figure:
    """The frame coloured by force: colour = sense, width proportional to |force|; loads and reactions."""
    fig, axes, views, xys = _layout(project)
    f_unit, f_factor = project.units.label("force"), project.units.factor("force")
    largest = float(np.abs(forces).max(initial=0.0))
    colours = [palette.force_colour(t, largest) for t in forces]
    widths = [palette.line_width(t, largest) for t in forces]
    styles = [palette.line_style(t, largest) for t in forces]
    signed = [f"{mid} {palette.signed(t / f_factor, largest=largest / f_factor)}" for mid, t in zip(project.member_ids, forces)]
    strongest = np.argsort(-np.abs(forces), kind="stable")
    placer = Labels()
    loaded = np.flatnonzero(np.abs(loads).max(axis=1) > 0)
    supported = np.flatnonzero(np.abs(reactions).max(axis=1) > 0)
    arrow_max = 0.0
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, colours, widths, styles=styles)
        scale, arrow_max = _force_scale([loads[loaded], reactions[supported]], _extent(xy))
        head = 0.02 * _extent(xy)
        _arrows(ax, xy[loaded], loads[loaded] @ proj, palette.LOAD, scale, head, tail_at_node=False)
        _arrows(ax, xy[supported], reactions[supported] @ proj, palette.REACTION, scale, head, tail_at_node=True)
        if project.n_members <= labels_up_to:
            _labels(ax, project, xy, nodes=False, placer=placer, texts=signed, order=strongest)
    _furniture(axes, views, xys, project)
    thick = palette.line_width(largest, largest)
    half = palette.line_width(largest / 2, largest)
    handles = [
        Line2D([], [], color=palette.TENSION, lw=half, label=f"tension (+, solid; labels: id and force in {f_unit})"),
        Line2D([], [], color=palette.COMPRESSION, lw=half, ls=palette.COMPRESSION_STYLE,
               label=f"compression ({palette.MINUS}, dashed)"),
        Line2D([], [], color=palette.ZERO_FORCE, lw=palette.line_width(0, largest), label="zero force"),
        Line2D([], [], color=palette.LABEL, lw=thick, label=f"width {thick:.1f} pt = {largest / f_factor:.4g} {f_unit}"),
        Line2D([], [], color=palette.LOAD, lw=2, label="load"),
        Line2D([], [], color=palette.REACTION, lw=2, label=f"reaction (longest arrow {arrow_max / f_factor:.4g} {f_unit})"),
    ]
    return _placed(_finish(fig, axes, _legend(fig, handles, title, 2)), placer)


def exaggeration(largest: float, extent: float, share: float = 0.08) -> float:
    """A round factor (1, 2 or 5 x 10^k) that draws the largest displacement at about ``share`` of the frame."""
    if largest <= 0 or extent <= 0:
        return 1.0
    target = share * extent / largest
    step = 10 ** math.floor(math.log10(target))
    return max(mult * step for mult in (1, 2, 5) if mult * step <= target)


def displaced_figure(project: Project, displacements: np.ndarray, title: str, labels_up_to: int = 120,
                     marked: str = "") -> Figure:
    """The frame as given (grey) and displaced (blue), the displacements drawn at a round exaggeration.

    ``marked``: a node id to ring (the node of the largest deflection).
    """
    fig, axes, views, xys = _layout(project)
    d_unit, d_factor = project.units.label("displacement"), project.units.factor("displacement")
    size = np.linalg.norm(displacements, axis=1)
    largest = float(size.max(initial=0.0))
    scale = exaggeration(largest, _extent(project.coords))
    moved = project.coords + scale * displacements
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, palette.ZERO_FORCE, 0.6, zorder=1)
        _members(ax, project, moved @ proj, palette.DISPLACED, 1.2)
        _supports(ax, project, xy, proj, 25 if project.n_members <= 300 else 10)
        if marked in project.node_ids:
            k = project.node_ids.index(marked)
            p = moved[k] @ proj
            ax.scatter([p[0]], [p[1]], s=40, facecolor="none", edgecolor=palette.DISPLACED, linewidths=1.0, zorder=6)
            ax.annotate(marked, (p[0], p[1]), xytext=(4, -8), textcoords="offset points", fontsize=FONT, color=palette.DISPLACED)
    _furniture(axes, views, xys, project)
    handles = [Line2D([], [], color=palette.ZERO_FORCE, lw=0.6, label="frame as given"),
               Line2D([], [], color=palette.DISPLACED, lw=1.2,
                      label=f"displaced, displacements drawn x {scale:g} (largest {largest / d_factor:.3g} {d_unit})")]
    if marked:
        handles.append(Line2D([], [], marker="o", ls="", mfc="none", mec=palette.DISPLACED, label=f"largest deflection, node {marked}"))
    return _finish(fig, axes, _legend(fig, handles, title, 2))


CHANGED_WIDTH, ADDED_STYLE, REMOVED_STYLE = 2.4, (0, (5.0, 1.2, 1.2, 1.2)), (0, (3.0, 2.0))
LABELLED_CHANGES = 80  # above this many marked members their ids are left to the tables


def changes_figure(project: Project, marks, title: str) -> Figure:
    """The frame of this revision with what changed from an earlier one marked (``marks``:
    sheets.revision.compare.FrameMarks): changed members heavy and reddish purple, added members heavy
    blue dash-dotted, removed members dashed grey where they were, the rest light grey; added nodes as
    squares, removed ones as crosses, moved ones as rings with a dotted line from where they stood."""
    fig, axes, views, xys = _layout(project)
    index = {mid: e for e, mid in enumerate(project.member_ids)}
    nodes = {nid: n for n, nid in enumerate(project.node_ids)}
    changed = [index[m] for m in marks.changed if m in index]
    added = [index[m] for m in marks.added_members if m in index]
    gone = np.array([[a, b] for _, a, b in marks.removed_members], dtype=float).reshape(-1, 2, project.dim)
    moved_from = np.array([xyz for _, xyz in marks.moved_nodes], dtype=float).reshape(-1, project.dim)
    moved_to = [nodes[n] for n, _ in marks.moved_nodes]
    gone_nodes = np.array([xyz for _, xyz in marks.removed_nodes], dtype=float).reshape(-1, project.dim)
    new_nodes = [nodes[n] for n in marks.added_nodes if n in nodes]
    marked = len(changed) + len(added) + len(gone)
    placer = Labels()
    for ax, (_, proj), xy in zip(axes, views, xys):
        _members(ax, project, xy, palette.UNCHANGED, 0.5, zorder=1)
        _supports(ax, project, xy, proj, 25 if project.n_members <= 300 else 10)
        if len(gone):
            _add_lines(ax, gone @ proj, [palette.REMOVED] * len(gone), [1.2] * len(gone), [REMOVED_STYLE] * len(gone), zorder=2)
        for pick, colour, style in ((changed, palette.CHANGED, "solid"), (added, palette.ADDED, ADDED_STYLE)):
            if pick:
                segs = xy[project.ends[pick]]
                _add_lines(ax, segs, [colour] * len(pick), [CHANGED_WIDTH] * len(pick), [style] * len(pick), zorder=3)
        if len(moved_to):
            old = moved_from @ proj
            _add_lines(ax, np.stack([old, xy[moved_to]], axis=1), [palette.CHANGED] * len(moved_to), [0.6] * len(moved_to),
                       [(0, (1.0, 1.5))] * len(moved_to), zorder=4)
            _markers(ax, xy[moved_to], "o", 40, facecolor="none", edgecolor=palette.CHANGED, lw=1.0, zorder=5)
        if new_nodes:
            _markers(ax, xy[new_nodes], "s", 22, colour=palette.ADDED, zorder=5)
        if len(gone_nodes):
            _markers(ax, gone_nodes @ proj, "x", 26, colour=palette.REMOVED, lw=1.0, zorder=5)
        if marked <= LABELLED_CHANGES:
            for e in changed + added:
                middle = xy[project.ends[e]].mean(axis=0)
                placer.add(offset_text(ax, middle, (0, 3), project.member_ids[e], fontsize=SMALL, ha="center", va="bottom",
                                       color=palette.LABEL))
            for (mid, _, _), seg in zip(marks.removed_members, gone @ proj):
                placer.add(offset_text(ax, seg.mean(axis=0), (0, 3), mid, fontsize=SMALL, ha="center", va="bottom",
                                       color=palette.REMOVED))
    _furniture(axes, views, xys, project)
    handles = [Line2D([], [], color=palette.CHANGED, lw=CHANGED_WIDTH, label=f"member changed ({len(changed)})"),
               Line2D([], [], color=palette.UNCHANGED, lw=0.5, label=f"unchanged ({project.n_members - len(changed) - len(added)})")]
    if added:
        handles.append(Line2D([], [], color=palette.ADDED, lw=CHANGED_WIDTH, ls=ADDED_STYLE, label=f"member added ({len(added)})"))
    if len(gone):
        handles.append(Line2D([], [], color=palette.REMOVED, lw=1.2, ls=REMOVED_STYLE,
                              label=f"member removed, where it was ({len(gone)})"))
    if new_nodes:
        handles.append(Line2D([], [], marker="s", ls="", color=palette.ADDED, label=f"node added ({len(new_nodes)})"))
    if len(gone_nodes):
        handles.append(Line2D([], [], marker="x", ls="", color=palette.REMOVED, label=f"node removed ({len(gone_nodes)})"))
    if moved_to:
        handles.append(Line2D([], [], marker="o", mfc="none", mec=palette.CHANGED, color=palette.CHANGED, lw=0.6, ls=":",
                              label=f"node moved, dotted from where it was ({len(moved_to)})"))
    note = "" if marked <= LABELLED_CHANGES else f"; ids of the {marked} marked members in the tables"
    return _placed(_finish(fig, axes, _legend(fig, handles, title + note, 2)), placer)
