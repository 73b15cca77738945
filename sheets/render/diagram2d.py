"""Form and force diagrams side by side, and the closure check, as 2D figures (matplotlib, headless).

Figures are built on ``matplotlib.figure.Figure`` without pyplot (no global
state, no display). A 3D frame is drawn in its embedding's projection: the
form as projected, the force diagram projected the same way, so every force
edge stays parallel to its member on the page.

Public API (also used by the report stage and the cells / Minkowski figures):

Axis-level helpers, drawing one diagram into a given ``Axes``:
    ``draw_form(ax, diagram, labels=None)``  members coloured by sense, widths
        proportional to |force|, load and reaction arrows along their rays,
        crossing vertices, member ids and Bow's-notation spaces (capitals);
    ``draw_force(ax, diagram, labels=None)``  the force diagram with each edge
        labelled by the member (or ``P@node`` / ``R@node``) it stands for and
        its points lettered in lower case;
    ``scale_bar(ax, points, unit, factor, note="")``  a round-length bar;
    ``role_handles(diagram)``  legend handles for the roles present.
Figure-level functions, each writing one file and returning its path:
    ``form_force_figure(diagram, path, fmt=None)``
    ``verification_figure(diagram, path, fmt=None)``
    ``save_figure(fig, path, fmt=None)``  deterministic bytes for png/svg/pdf
        (and the report stage's ``.rlvec``), written atomically.
Report-stage adapters ``f(analysis, state_id, path, fmt=None)``:
    ``reciprocal_figure`` and ``closure_figure``.

Labels are drawn up to ``labels_up_to`` members (the sheet template's
[tables] labels_up_to, the one limit of the whole set; None: always) and
SPACES_UP_TO spaces; beyond that the figure says they are left out (the
JSON/DXF exports carry every id). A 3D frame's diagrams are projections: each
panel names its plane and carries an axis triad, and as a projected force edge
is foreshortened its label gives the member's true force.
"""

from __future__ import annotations

import math
from pathlib import Path

import matplotlib
import numpy as np
from matplotlib.artist import Artist
from matplotlib.collections import LineCollection, PolyCollection
from matplotlib.colors import to_rgba
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.markers import MarkerStyle
from matplotlib.patches import FancyArrowPatch
from matplotlib.path import Path as MplPath
from matplotlib.transforms import IdentityTransform

from sheets.export.atomic import atomic_path
from sheets.reciprocal.anchors import arrow_sides, space_anchors
from sheets.reciprocal.diagram import ForceDiagram, force_diagram
from sheets.reciprocal.embedding import IN_PLANE
from sheets.reciprocal.projection import plane_name
from sheets.render import palette
from sheets.render.labels import Labels, offset_text
from sheets.render.triad import draw_triad

FONT = 6.5
SMALL = 6.0  # the smallest text drawn: figures are sized to print at 1:1 or larger (see FIGURE_WIDTH)
FIGURE_WIDTH = 7.0  # inches: the narrowest template's body (A4 or letter portrait) takes it without shrinking
WRAP = 125  # characters per line of SMALL text across FIGURE_WIDTH
ROUND_OFF = 1e-9  # closure errors all below this x the largest force are round-off: said in one line, not charted
SPACES_UP_TO = 80  # spaces beyond which Bow's-notation letters are left out
CROSSING_LIST = 10  # crossings listed by name under the figure

# Same input, same bytes: fixed SVG ids, text as paths, no dates in the metadata.
DETERMINISTIC_RC = {"svg.hashsalt": "sheets", "svg.fonttype": "path", "pdf.fonttype": 42, "ps.fonttype": 42}
METADATA = {
    "png": {"Software": None},
    "svg": {"Date": None, "Creator": None},
    "pdf": {"CreationDate": None, "ModDate": None, "Creator": None, "Producer": None},
}
ROLE_STYLE = {  # colour, dashes
    "tension": (palette.TENSION, "solid"),
    "compression": (palette.COMPRESSION, palette.COMPRESSION_STYLE),
    "zero": (palette.ZERO_FORCE, "solid"),
    "load": (palette.LOAD, "solid"),
    "reaction": (palette.REACTION, "solid"),
    "load+reaction": (palette.REACTION, (0, (5, 1.5, 1, 1.5))),  # dash-dot: apart from compression's dashes
}
ROLE_NAME = {
    "tension": "tension",
    "compression": "compression",
    "zero": "zero force",
    "load": "load",
    "reaction": "reaction",
    "load+reaction": "load + reaction at a support (their resultant)",
}
ROLE_LEGEND = {"tension": "tension (+, solid)", "compression": f"compression ({palette.MINUS}, dashed)",
               "load+reaction": "load + reaction at a support (their resultant, dash-dot)"}


# -- saving ------------------------------------------------------------------


def save_figure(fig: Figure, path: str | Path, fmt: str | None = None, dpi: int = 200) -> Path:
    """Write ``fig`` to ``path`` (format from ``fmt`` or the suffix), atomically and reproducibly."""
    path = Path(path)
    fmt = (fmt or path.suffix.lstrip(".") or "png").lower()
    if path.suffix.lstrip(".").lower() != fmt:
        path = path.with_name(path.name + "." + fmt) if not path.suffix else path.with_suffix("." + fmt)
    options = {"format": fmt, "dpi": dpi}
    if fmt in METADATA:
        options["metadata"] = METADATA[fmt]
    with matplotlib.rc_context(DETERMINISTIC_RC), atomic_path(path) as tmp:
        fig.savefig(tmp, **options)
    return path


# -- small helpers -----------------------------------------------------------


def _round_length(extent: float) -> float:
    """A round length (1, 2 or 5 x 10^k) of about a quarter of ``extent``."""
    if not extent > 0:
        return 1.0
    step = 10 ** math.floor(math.log10(extent / 4))
    for mult in (5, 2, 1):
        if mult * step <= extent / 3:
            return mult * step
    return step


def scale_bar(ax, points: np.ndarray, unit: str, factor: float, note: str = "") -> float:
    """A bar of a round length (display unit ``unit`` = ``factor`` SI units) under ``points``; returns that length."""
    points = np.asarray(points, dtype=float).reshape(-1, 2)
    extent = float(np.ptp(points, axis=0).max()) if len(points) > 1 else 0.0
    extent = extent or 1.0
    length = _round_length(extent / factor)
    size = length * factor
    bottom = points[:, 1].min()
    drawn = ax.dataLim
    if np.isfinite(drawn.y0) and drawn.height > 0:  # below whatever is drawn already (arrows included)
        bottom = min(bottom, drawn.y0)
    x0, y0 = points[:, 0].min(), bottom - 0.08 * extent
    tick = 0.012 * extent
    ax.plot([x0, x0 + size], [y0, y0], color=palette.LABEL, lw=1.2, solid_capstyle="butt")
    for x in (x0, x0 + size):
        ax.plot([x, x], [y0 - tick, y0 + tick], color=palette.LABEL, lw=0.8)
    ax.text(x0 + size / 2, y0 - 2 * tick, f"{length:g} {unit}{note}", ha="center", va="top", fontsize=FONT,
            gid="scale-bar")
    ax.update_datalim([[x0, y0 - 0.06 * extent]])
    return length


def _roles_present(diagram: ForceDiagram) -> list[str]:
    present = set(diagram.element_roles)
    return [r for r in ROLE_STYLE if r in present]


def role_handles(diagram: ForceDiagram, line_styles: bool = True) -> list[Line2D]:
    """Legend entries for every role in the diagram, crossings and the width scale; ``line_styles=False``
    for drawings whose lines are all solid (the 3D tube renders)."""
    largest = diagram.force_scale
    units = diagram.units
    handles = []
    present = _roles_present(diagram)
    graph = diagram.graph
    if "load" not in present and np.abs(graph.external_loads).max(initial=0.0) > 0:
        present.append("load")  # drawn as its own arrow in the form even where merged with a reaction
    if "reaction" not in present and np.abs(graph.external_reactions).max(initial=0.0) > 0:
        present.append("reaction")
    for role in [r for r in ROLE_STYLE if r in present]:
        colour, dashes = ROLE_STYLE[role]
        width = palette.line_width(0 if role == "zero" else largest / 2, largest)
        if line_styles:
            handles.append(Line2D([], [], color=colour, lw=width, ls=dashes, label=ROLE_LEGEND.get(role, ROLE_NAME[role])))
        else:
            handles.append(Line2D([], [], color=colour, lw=width, label=ROLE_NAME[role]))
    handles.append(Line2D([], [], color=palette.LABEL, lw=palette.line_width(largest, largest),
                          label=f"width {palette.line_width(largest, largest):.1f} pt = "
                                f"{units.to_display(largest, 'force'):.4g} {units.label('force')}"))
    if any(not c.node for c in diagram.crossings):
        handles.append(Line2D([], [], marker="o", ls="", ms=4, mfc="white", mec=palette.CROSSING, mew=1.2,
                              label="crossing vertex (X): edges cross in the view"))
    if any(c.node for c in diagram.crossings):
        handles.append(Line2D([], [], marker="o", ls="", ms=7, mfc="none", mec=palette.CROSSING, mew=1.0,
                              label="edge passing through a node in the view"))
    return handles


def _edge_tag(diagram: ForceDiagram, element: int) -> str:
    """Label of an element: the member id, or P@node / R@node / P+R@node for an external force."""
    graph = diagram.graph
    if element < graph.n_members:
        return graph.element_ids[element]
    node = graph.node_ids[graph.tails[element]]
    return {"load": "P", "reaction": "R"}.get(graph.kinds[element], "P+R") + "@" + node


def _drawing_points(diagram: ForceDiagram, vectors: np.ndarray) -> np.ndarray:
    """Force-diagram (or any force) vectors in the drawing plane."""
    return diagram.embedding.projection.apply(vectors) if diagram.dim == 3 else np.asarray(vectors, dtype=float)


def _show_labels(diagram: ForceDiagram, labels: bool | None, labels_up_to: int | None = None) -> bool:
    """``labels`` if given, else whether the frame is within ``labels_up_to`` members (None: no limit)."""
    if labels is not None:
        return labels
    return labels_up_to is None or diagram.graph.n_members <= labels_up_to


def _true_force(diagram: ForceDiagram, element: int) -> str:
    """An edge's true force in display units (tension positive): what a projected edge's label must say."""
    units = diagram.units
    return f"{units.to_display(float(diagram.graph.forces[element]), 'force'):.3g}"


def _projection_title(diagram: ForceDiagram) -> str:
    """The plane a 3D frame's diagrams are drawn on, in words (empty for a 2D frame)."""
    projection = diagram.embedding.projection
    if diagram.dim != 3 or projection.requested is None:
        return ""
    tilt = f", tilted {projection.tilt_degrees:g} deg" if projection.tilt_degrees else ""
    return f"{plane_name(projection.requested)}{tilt}"


def _text(ax, x, y, text, placer: Labels | None = None, **kw):
    style = dict(fontsize=SMALL, color=palette.LABEL, ha="center", va="center", zorder=7,
                 bbox=dict(boxstyle="round,pad=0.1", fc="white", ec="none", alpha=0.8))
    style.update(kw)
    artist = ax.text(x, y, text, **style)
    if placer is not None:
        placer.add(artist)
    return artist


def _member_label(diagram: ForceDiagram, e: int) -> str:
    """Member id and its force with the sign written out (tension +): the sense survives a greyscale print."""
    units = diagram.units
    force = units.to_display(diagram.graph.forces[e], "force")
    return f"{diagram.graph.element_ids[e]} {palette.signed(force, largest=units.to_display(diagram.force_scale, 'force'))}"


SEGMENTS_ONE_BY_ONE = 2000  # above this many lines, lines of one colour, style and width are drawn as one path
WIDTH_STEP = 0.05  # points: widths are rounded to this when lines are gathered (finer than the eye sees)


def _add_lines(ax, segs: np.ndarray, colours: list, widths: list, styles=None, zorder: float = 2) -> None:
    """Line segments (k, 2, 2), drawn in the given order (thin under thick where sorted by |force|).

    Up to SEGMENTS_ONE_BY_ONE one line per segment. Above, the segments of one colour, style and
    width (rounded to WIDTH_STEP) are joined into one polyline broken by NaNs, so a renderer walks a
    few dozen paths instead of one per member: same picture, a fraction of the time and file size.
    """
    styles = ["solid"] * len(segs) if styles is None else list(styles)
    if len(segs) <= SEGMENTS_ONE_BY_ONE:
        ax.add_collection(LineCollection(segs, colors=colours, linewidths=widths, linestyles=styles, capstyle="round",
                                         zorder=zorder))
        return
    steps = np.round(np.asarray(widths, dtype=float) / WIDTH_STEP).astype(np.int64)
    groups: dict[tuple, list[int]] = {}
    for k, key in enumerate(zip(steps.tolist(), colours, map(str, styles))):
        groups.setdefault(key, []).append(k)
    order = sorted(groups, key=lambda key: (key[0], min(groups[key])))  # thin first, as the segments came
    lines, group_colours, group_widths, group_styles = [], [], [], []
    for key in order:
        pick = np.asarray(groups[key])
        broken = np.concatenate([segs[pick], np.full((len(pick), 1, 2), np.nan)], axis=1).reshape(-1, 2)[:-1]
        lines.append(broken)
        group_colours.append(key[1])
        group_widths.append(key[0] * WIDTH_STEP)
        group_styles.append(styles[pick[0]])
    ax.add_collection(LineCollection(lines, colors=group_colours, linewidths=group_widths, linestyles=group_styles,
                                     capstyle="round", zorder=zorder))


MARKERS_ONE_BY_ONE = 500  # above this many equal markers, they are drawn as one path


class _MarkerCloud(Artist):
    """Many equal markers drawn as one compound path: a renderer walks one path instead of one per
    marker (what a scatter of thousands of points costs). Sizes in points, as for ``scatter``."""

    def __init__(self, xy: np.ndarray, marker: str, size: float, facecolor, edgecolor, lw: float, zorder: float):
        super().__init__()
        style = MarkerStyle(marker)
        self._xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        marker_path = style.get_path().transformed(style.get_transform().scale(math.sqrt(size)))
        if marker_path.codes is not None and (marker_path.codes >= MplPath.CURVE3).any() and style.is_filled():
            # a circle as a 16-sided polygon: the same at marker size, and straight segments are cheap to walk
            ring = marker_path.to_polygons(closed_only=True)[0]
            marker_path = MplPath(ring, np.r_[MplPath.MOVETO, [MplPath.LINETO] * (len(ring) - 2), MplPath.CLOSEPOLY])
        self._marker = marker_path
        self._filled = style.is_filled()
        self._face = None if facecolor in (None, "none") else to_rgba(facecolor)
        self._edge = to_rgba(edgecolor if edgecolor is not None else facecolor)
        self._lw = lw
        self.set_zorder(zorder)

    def draw(self, renderer):
        if not self.get_visible() or not len(self._xy):
            return
        at = self.axes.transData.transform(self._xy)
        verts = self._marker.vertices * renderer.points_to_pixels(1.0)
        codes = self._marker.codes
        if codes is None:
            codes = np.r_[MplPath.MOVETO, [MplPath.LINETO] * (len(verts) - 1)]
        path = MplPath((at[:, None, :] + verts[None]).reshape(-1, 2), np.tile(codes, len(at)))
        gc = renderer.new_gc()
        self._set_gc_clip(gc)
        gc.set_foreground(self._edge, isRGBA=True)
        gc.set_linewidth(self._lw)
        renderer.draw_path(gc, path, IdentityTransform(), self._face if self._filled else None)
        gc.restore()


def _markers(ax, xy: np.ndarray, marker: str, size: float, colour=None, facecolor=None, edgecolor=None, lw: float = 0.0,
             zorder: float = 3) -> None:
    """``ax.scatter`` of equal markers; above MARKERS_ONE_BY_ONE one path (_MarkerCloud), same look."""
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    if len(xy) <= MARKERS_ONE_BY_ONE:
        style = {"color": colour} if colour is not None else {"facecolor": facecolor, "edgecolor": edgecolor}
        ax.scatter(xy[:, 0], xy[:, 1], s=size, marker=marker, lw=lw, zorder=zorder, **style)
        return
    face = colour if colour is not None else facecolor
    edge = colour if colour is not None else edgecolor
    if not MarkerStyle(marker).is_filled():  # stroked markers ("x") take the colour as their line
        face, edge = None, edge if edge is not None else face
    ax.add_artist(_MarkerCloud(xy, marker, size, face, edge, lw, zorder))
    ax.update_datalim(xy)


# -- form ----------------------------------------------------------------------


def draw_form(ax, diagram: ForceDiagram, labels: bool | None = None, placer: Labels | None = None) -> float:
    """The form diagram of ``diagram`` in its drawing plane (see the module docstring); returns the scale
    bar's length (display units). Labels go to ``placer`` (most important first: spaces, then members by
    |force|) where one is given, for ``Labels.place`` once the figure is laid out."""
    graph, emb = diagram.graph, diagram.embedding
    m = graph.n_members
    pts = emb.points
    largest = diagram.force_scale
    extent = float(np.ptp(pts[: graph.n_nodes], axis=0).max()) or 1.0
    show = _show_labels(diagram, labels)

    order = np.argsort(np.abs(graph.forces[:m]), kind="stable")
    roles = diagram.element_roles
    segs = np.stack([pts[graph.tails[:m]], pts[graph.heads[:m]]], axis=1)[order]
    colours = [ROLE_STYLE[roles[e]][0] for e in order]
    styles = [ROLE_STYLE[roles[e]][1] for e in order]
    widths = [palette.line_width(graph.forces[e], largest) for e in order]
    _add_lines(ax, segs, colours, widths, styles)
    _markers(ax, pts[: graph.n_nodes], "o", 5 if show else 1, colour=palette.NODE, zorder=3)
    if show and diagram.faces.count <= SPACES_UP_TO:
        anchors = space_anchors(diagram)
        for f, label in enumerate(diagram.space_labels):
            if np.all(np.isfinite(anchors[f])):
                artist = ax.text(*anchors[f], label, fontsize=FONT + 1.5, fontweight="bold", color=palette.LABEL,
                                 ha="center", va="center", zorder=6)
                if placer is not None:
                    placer.add(artist)
    _external_arrows(ax, diagram, extent, show, placer)
    _crossing_marks(ax, diagram, show, placer)
    if show:
        mids = segs.mean(axis=1)
        for e, (x, y) in zip(order[::-1], mids[::-1]):  # strongest first: the first kept where labels crowd
            _text(ax, x, y, _member_label(diagram, int(e)), placer)
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_axis_off()
    units = diagram.units
    note = " (true length in the view plane)" if diagram.dim == 3 else ""
    return scale_bar(ax, pts[: graph.n_nodes], units.label("length"), units.factor("length"), note)


def _external_arrows(ax, diagram: ForceDiagram, extent: float, show: bool, placer: Labels | None = None) -> None:
    """Loads and reactions at their nodes, gathered into a few artists (one per colour and kind), so a
    frame with thousands of loaded nodes costs no more artists than one with a few."""
    graph, emb = diagram.graph, diagram.embedding
    m = graph.n_members
    if graph.n_elements == m:
        return
    pts = emb.points
    sides = arrow_sides(diagram)
    largest = float(graph.forces[m:].max(initial=0.0)) or 1.0
    routes = []  # dashed routes out to the ideal vertex
    along: dict[str, dict[bool, list]] = {}  # colour -> towards the viewer? -> points of forces along the view
    arrows = []  # (tail, head, width, colour)
    for r, node in enumerate(graph.external_nodes.tolist()):
        x = pts[node]
        ray = emb.ray_directions[r]
        if emb.ray_reach[r] > 0:  # the edge's route out to the ideal vertex crosses members: show it
            routes.append([x, x + ray * (emb.ray_reach[r] + 0.04 * extent)])
        parts = ((graph.external_loads[r], palette.LOAD, "P"), (graph.external_reactions[r], palette.REACTION, "R"))
        for vector, colour, tag in parts:
            size = float(np.linalg.norm(vector))
            if size <= 1e-12 * largest:
                continue
            drawn = _drawing_points(diagram, vector[None])[0]
            length = (0.05 + 0.13 * size / largest) * extent
            if np.linalg.norm(drawn) <= IN_PLANE * size:  # along the view: a circle with a dot (towards) or cross
                toward = float(np.asarray(emb.projection.direction) @ vector) > 0
                along.setdefault(colour, {}).setdefault(toward, []).append(x)
                label_at = x + ray * 0.04 * extent
            else:
                direction = drawn / np.linalg.norm(drawn)
                tail, head = (x, x + length * direction) if sides[r] > 0 else (x - length * direction, x)
                arrows.append((tail, head, palette.line_width(size, diagram.force_scale) * 0.7, colour, "solid"))
                label_at = tail if sides[r] < 0 else head
            if show:
                text = offset_text(ax, label_at, (0, 3), f"{tag}@{graph.node_ids[node]}", fontsize=SMALL, color=colour,
                                   ha="center", va="bottom", zorder=7)
                if placer is not None:
                    placer.add(text)
    if routes:
        ax.add_collection(LineCollection(routes, colors=palette.CROSSING, linewidths=0.6, linestyles=[(0, (2, 2))],
                                         zorder=1))
    for colour, by_sense in along.items():
        ring = np.array([p for points in by_sense.values() for p in points])
        _markers(ax, ring, "o", 40, facecolor="white", edgecolor=colour, lw=1.0, zorder=6)
        for toward, points in by_sense.items():
            _markers(ax, np.array(points), "." if toward else "x", 14 if toward else 22, colour=colour, lw=1.0, zorder=7)
    _draw_arrows(ax, arrows, extent)


ARROWS_ONE_BY_ONE = 200  # above this many load/reaction arrows, shafts and heads are drawn as two collections


def _draw_arrows(ax, arrows: list, extent: float, mutation_scale: float = 7, zorder: float = 5) -> None:
    """Arrows (tail, head, width, colour, line style): each its own patch for a few; for many, one line
    collection of shafts and one of filled heads sized to the drawing (a patch per arrow costs seconds per
    thousand)."""
    if len(arrows) <= ARROWS_ONE_BY_ONE:
        for tail, head, width, colour, style in arrows:
            ax.add_patch(FancyArrowPatch(tuple(tail), tuple(head), arrowstyle="-|>", mutation_scale=mutation_scale,
                                         lw=width, color=colour, ls=style, zorder=zorder, shrinkA=0, shrinkB=0))
        return
    tails = np.array([a[0] for a in arrows], dtype=float)
    heads = np.array([a[1] for a in arrows], dtype=float)
    along = heads - tails
    unit = along / np.maximum(np.linalg.norm(along, axis=1), 1e-300)[:, None]
    across = np.stack([-unit[:, 1], unit[:, 0]], axis=1)
    size = 0.012 * extent
    base = heads - size * unit
    colours = [a[3] for a in arrows]
    ax.add_collection(LineCollection(np.stack([tails, base], axis=1), colors=colours, linewidths=[a[2] for a in arrows],
                                     linestyles=[a[4] for a in arrows], capstyle="butt", zorder=zorder))
    triangles = np.stack([heads, base + 0.4 * size * across, base - 0.4 * size * across], axis=1)
    ax.add_collection(PolyCollection(triangles, facecolors=colours, edgecolors="none", zorder=zorder))


def _crossing_marks(ax, diagram: ForceDiagram, show: bool, placer: Labels | None = None) -> None:
    new = [c for c in diagram.crossings if not c.node]
    through = [c for c in diagram.crossings if c.node]
    if new:
        xy = np.array([c.point for c in new])
        _markers(ax, xy, "o", 16, facecolor="white", edgecolor=palette.CROSSING, lw=1.0, zorder=4)
    if through:
        xy = np.array([c.point for c in through])
        _markers(ax, xy, "o", 60, facecolor="none", edgecolor=palette.CROSSING, lw=0.9, zorder=4)
    if show and len(diagram.crossings) <= 3 * CROSSING_LIST:
        for c in diagram.crossings:
            text = offset_text(ax, c.point, (3, -3), c.label, fontsize=SMALL, color=palette.CROSSING, ha="left", va="top",
                               zorder=7)
            if placer is not None:
                placer.add(text)


# -- force ---------------------------------------------------------------------


def draw_force(ax, diagram: ForceDiagram, labels: bool | None = None, placer: Labels | None = None) -> float:
    """The force diagram of ``diagram`` (projected like the form for a 3D frame); returns the scale bar's
    length (display force units). Labels go to ``placer`` as in ``draw_form``."""
    pts = _drawing_points(diagram, diagram.points)
    left, right = diagram.faces.left, diagram.faces.right
    forces = diagram.edge_forces
    largest = diagram.force_scale
    roles = diagram.role
    order = np.argsort(np.abs(forces), kind="stable")
    segs = np.stack([pts[left], pts[right]], axis=1)[order]
    colours = [ROLE_STYLE[roles[k]][0] for k in order]
    styles = [ROLE_STYLE[roles[k]][1] for k in order]
    widths = [palette.line_width(forces[k], largest) for k in order]
    _add_lines(ax, segs, colours, widths, styles)
    _markers(ax, pts, "o", 4, colour=palette.NODE, zorder=3)
    extent = float(np.ptp(pts, axis=0).max()) if len(pts) > 1 else 0.0
    extent = extent or 1.0
    if _show_labels(diagram, labels):
        if diagram.faces.count <= SPACES_UP_TO:
            _point_labels(ax, diagram, pts, extent, placer)
        shown = set()
        for k in order[::-1]:  # strongest first, one label per element and position
            a, b = pts[left[k]], pts[right[k]]
            if np.linalg.norm(b - a) < 0.02 * extent:
                continue
            key = (diagram.edge_element[k], tuple(np.round((a + b) / (0.01 * extent))))
            if key in shown:
                continue
            shown.add(key)
            element = int(diagram.edge_element[k])
            tag = _edge_tag(diagram, element)
            _text(ax, *((a + b) / 2), f"{tag} {_true_force(diagram, element)}" if diagram.dim == 3 else tag, placer)
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_axis_off()
    units = diagram.units
    return scale_bar(ax, pts, units.label("force"), units.factor("force"),
                     " (projected lengths)" if diagram.dim == 3 else "")


def _point_labels(ax, diagram: ForceDiagram, pts: np.ndarray, extent: float, placer: Labels | None = None) -> None:
    """Lower-case space letters at the force-diagram points; coincident points share one label 'c=d'."""
    key = np.round(pts / (1e-6 * extent)).astype(np.int64)
    groups: dict[tuple, list[str]] = {}
    where: dict[tuple, np.ndarray] = {}
    for f, label in enumerate(diagram.space_labels):
        k = tuple(key[f])
        groups.setdefault(k, []).append(label.lower())
        where[k] = pts[f]
    for k, names in groups.items():
        names.sort(key=lambda s: (len(s), s))
        text = offset_text(ax, where[k], (3, 3), "=".join(names), fontsize=FONT + 0.5, fontstyle="italic",
                           color=palette.NODE, zorder=8)
        if placer is not None:
            placer.add(text)


# -- figures -------------------------------------------------------------------


def _subtitle(diagram: ForceDiagram) -> str:
    return f"{diagram.title} - {diagram.state_kind} {diagram.state_id}: {diagram.state_title}".strip(" -")


def _wrap(text: str, width: int = WRAP) -> str:
    import textwrap

    return "\n".join(textwrap.wrap(text, width))


def _crossing_text(diagram: ForceDiagram) -> str:
    if not diagram.crossings:
        return ""
    parts = []
    for c in diagram.crossings[:CROSSING_LIST]:
        what = " x ".join(_plain_id(e) for e in c.elements)
        parts.append(f"{c.label} {what}" + (f" (through node {c.node})" if c.node else ""))
    more = len(diagram.crossings) - CROSSING_LIST
    tail = f"; and {more} more (all in the JSON/DXF exports)" if more > 0 else ""
    return "Crossing vertices (in equilibrium, no node of the frame): " + "; ".join(parts) + tail


def _plain_id(element_id: str) -> str:
    return element_id.replace("external:", "external force at ")


LINE = 1.25 / 72  # inches of one line of text per point of font size


def _lines(text: str) -> int:
    return text.count("\n") + 1 if text else 0


class _Stack:
    """Figure bands laid out from the top in inches, placed once the figure's height is known."""

    def __init__(self, fig: Figure):
        self.fig, self.y, self.items = fig, 0.0, []

    def text(self, text: str, size: float, **style) -> None:
        if text:
            self.items.append((self.y, text, size, style))
            self.y += _lines(text) * size * LINE + 0.03

    def skip(self, inches: float) -> float:
        top = self.y
        self.y += inches
        return top

    def finish(self, bottom: float = 0.05) -> float:
        height = self.y + bottom
        self.fig.set_size_inches(FIGURE_WIDTH, height)
        for y, text, size, style in self.items:
            self.fig.text(0.5, 1 - y / height, text, ha="center", va="top", fontsize=size, color=palette.LABEL, **style)
        return height


PANEL_WIDTH = 0.47 * FIGURE_WIDTH  # inches: each of the two panels
PANEL_HEIGHT = (1.2, 3.6)  # inches: the panels' height follows the drawings' aspect within these


def _panel_height(ax_form, ax_force, force_per_metre: float) -> float:
    """The panels' height at which the wider-drawn of the two fills its width at the common scale."""
    spans = [(ax.dataLim, per) for ax, per in ((ax_form, 1.0), (ax_force, force_per_metre))]
    widest = max(max(lim.width / per, 1e-300) for lim, per in spans)
    tallest = max(lim.height / per for lim, per in spans)
    return float(np.clip(PANEL_WIDTH * tallest / widest / 0.9, *PANEL_HEIGHT))


def _one_scale(ax_form, ax_force, force_per_metre: float) -> None:
    """Limits that draw the force diagram at ``force_per_metre`` of the form's metres on the page: one scale
    for the figure, so the force bar and the stated scale agree (equal aspect in each panel)."""
    box = ax_form.get_position()
    width_in, height_in = box.width * ax_form.figure.get_figwidth(), box.height * ax_form.figure.get_figheight()
    spans = [(ax.dataLim, per) for ax, per in ((ax_form, 1.0), (ax_force, force_per_metre))]
    inch_per_metre = min(min(width_in / max(lim.width / per, 1e-300), height_in / max(lim.height / per, 1e-300))
                         for lim, per in spans) * 0.92
    for ax, (lim, per) in zip((ax_form, ax_force), spans):
        half_w, half_h = width_in * per / inch_per_metre / 2, height_in * per / inch_per_metre / 2
        cx, cy = (lim.x0 + lim.x1) / 2, (lim.y0 + lim.y1) / 2
        ax.set_aspect("auto")
        ax.set_xlim(cx - half_w, cx + half_w)
        ax.set_ylim(cy - half_h, cy + half_h)


def form_force_chart(diagram: ForceDiagram, labels: bool | None = None, labels_up_to: int | None = None) -> Figure:
    """Form and force diagram side by side at one scale, matching labels, legend and scale bars.
    ``labels``: force them on or off; else they are drawn up to ``labels_up_to`` members (None: always)."""
    labels = _show_labels(diagram, labels, labels_up_to)
    fig = Figure(figsize=(FIGURE_WIDTH, 5.0))
    units = diagram.units
    force_unit = units.label("force")
    per_metre = units.to_display(diagram.scale, "force")
    ax_form, ax_force = fig.add_axes((0.01, 0.3, 0.47, 0.5)), fig.add_axes((0.52, 0.3, 0.47, 0.5))
    placer = Labels()
    form_bar = draw_form(ax_form, diagram, labels, placer)
    force_bar = draw_force(ax_force, diagram, labels, placer)
    panel_height = _panel_height(ax_form, ax_force, diagram.scale)
    stack = _Stack(fig)
    stack.skip(0.05)
    stack.text(_wrap(_subtitle(diagram), 95), FONT + 1.5)
    stack.text(_wrap(diagram.embedding.note[:1].upper() + diagram.embedding.note[1:], WRAP), SMALL)
    titles = stack.skip(0.2 if diagram.dim == 2 else 0.34)  # a projection's force title takes two lines
    panel_top = stack.skip(panel_height)
    scale_at = stack.skip(SMALL * LINE + 0.06)
    handles = role_handles(diagram)
    legend_at = stack.skip(math.ceil(len(handles) / 2) * FONT * 1.55 / 72 + 0.06)
    labelled = _show_labels(diagram, labels)
    check = "closes" if diagram.passed else "DOES NOT CLOSE"
    footer = (f"Diagram {check} to {diagram.tolerance:g}: largest edge error {diagram.closure_error:.1e}, load line "
              f"{diagram.load_line_error:.1e}, largest node polygon {float(diagram.node_error.max(initial=0)):.1e} "
              f"(relative to the largest force, {units.to_display(diagram.force_scale, 'force'):.4g} {force_unit}). "
              f"Spaces A, B, ... (Bow's notation) in the form are points a, b, ... in the force diagram; "
              f"a member is named by the two spaces it parts. Member labels: id and force ({force_unit}), "
              f"tension +, compression {palette.MINUS}.")
    if not labelled:
        footer += f" Labels left out above {labels_up_to} members." if labels_up_to is not None else " Labels left out."
    elif diagram.faces.count > SPACES_UP_TO:
        footer += f" Space letters left out above {SPACES_UP_TO} spaces."
    crossing = _crossing_text(diagram)
    stack.text(_wrap(footer + (" " + crossing if crossing else ""), WRAP), SMALL)
    note_at = stack.skip(SMALL * LINE + 0.03)
    height = stack.finish()

    def frac(y):
        return 1 - y / height

    ax_form.set_position((0.01, frac(panel_top + panel_height), 0.47, panel_height / height))
    ax_force.set_position((0.52, frac(panel_top + panel_height), 0.47, panel_height / height))
    _one_scale(ax_form, ax_force, diagram.scale)
    plane = _projection_title(diagram)
    for x, title in ((0.25, "Form diagram" + (f", {plane}" if plane else "")),
                     (0.75, "Force diagram" + (f", {plane}\nedges foreshortened: labels give the true force ({force_unit})"
                                               if plane else ""))):
        fig.text(x, frac(titles), title, ha="center", va="top", fontsize=FONT + 1.5, color=palette.LABEL)
    if plane:
        for ax in (ax_form, ax_force):
            draw_triad(ax, diagram.embedding.projection.basis)
    fig.text(0.5, frac(scale_at), f"One scale: 1 {units.label('length')} of the form is drawn as long as {per_metre:g} "
             f"{force_unit} of the force diagram (bars {form_bar:g} {units.label('length')} and {force_bar:g} {force_unit}).",
             ha="center", va="top", fontsize=SMALL, color=palette.LABEL, gid="scale-note")
    fig.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, frac(legend_at)), ncol=2, fontsize=FONT,
               frameon=False, borderaxespad=0.0, handlelength=3.0)
    placer.place(fig)
    fig.text(0.5, frac(note_at), placer.note() or f"All {placer.asked} labels drawn.", ha="center", va="top",
             fontsize=SMALL, color=palette.LABEL, gid="label-note")
    return fig


def form_force_figure(diagram: ForceDiagram, path: str | Path, fmt: str | None = None, labels: bool | None = None,
                      labels_up_to: int | None = None) -> Path:
    """``form_force_chart`` written to ``path``; returns the path written."""
    return save_figure(form_force_chart(diagram, labels, labels_up_to), path, fmt)


def round_off(diagram: ForceDiagram) -> float | None:
    """The largest closure error (relative) where every one is round-off (below ROUND_OFF), else None."""
    largest = max(diagram.closure_error, float(diagram.vertex_error.max(initial=0.0)))
    return largest if largest < ROUND_OFF else None


def verification_chart(diagram: ForceDiagram) -> Figure:
    """The closure check: node polygons and load line, edge errors, and the load line drawn head to tail.

    Where every error is round-off, the two bar panels (a chart of noise) become one line of text."""
    noise = round_off(diagram)
    fig = Figure(figsize=(FIGURE_WIDTH, 5.0))
    stack = _Stack(fig)
    stack.skip(0.05)
    stack.text(_wrap(f"Closure of the force diagram - {_subtitle(diagram)}", 95), FONT + 1.5)
    placer = Labels()
    if noise is not None:
        stack.text(_wrap(f"Largest closure error {noise:.1e} of the largest force (node polygons, load line and every "
                         f"edge; tolerance {diagram.tolerance:g}): round-off.", WRAP), FONT, gid="round-off")
        bars = None
    else:
        legend_at = stack.skip(FONT * 1.6 / 72 + 0.05)
        bars = stack.skip(2.0)
        stack.skip(0.75 if max(diagram.graph.n_nodes, diagram.graph.n_elements) <= 40 else 0.3)  # item names under bars
    line_at = stack.skip(2.4)
    stack.skip(0.45)  # the closing gap, under the load line
    note_at = stack.skip(SMALL * LINE + 0.03)
    height = stack.finish()

    def frac(y):
        return 1 - y / height

    if bars is not None:
        ax_nodes = fig.add_axes((0.09, frac(bars + 2.0), 0.38, 1.8 / height))
        ax_edges = fig.add_axes((0.59, frac(bars + 2.0), 0.38, 1.8 / height))
        _closure_bars(ax_nodes, diagram)
        _edge_bars(ax_edges, diagram)
        handles = [Line2D([], [], color=palette.NODE, ls="--", lw=0.8, label=f"tolerance {diagram.tolerance:g} (relative)"),
                   Line2D([], [], color=palette.TENSION, lw=4, label="within tolerance"),
                   Line2D([], [], color=palette.COMPRESSION, lw=4, label="beyond tolerance"),
                   Line2D([], [], marker="o", ls="", color=palette.LABEL, ms=3, label="angle edge-member (rad)")]
        fig.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, frac(legend_at)), ncol=4, fontsize=FONT,
                   frameon=False, borderaxespad=0.0)
    ax_line = fig.add_axes((0.2, frac(line_at + 2.4), 0.6, 2.2 / height))
    _load_line(ax_line, diagram, placer)
    if diagram.dim == 3:
        draw_triad(ax_line, diagram.embedding.projection.basis)
    placer.place(fig)
    if placer.dropped:
        fig.text(0.5, frac(note_at), placer.note(), ha="center", va="top", fontsize=SMALL, color=palette.LABEL,
                 gid="label-note")
    return fig


def verification_figure(diagram: ForceDiagram, path: str | Path, fmt: str | None = None) -> Path:
    """``verification_chart`` written to ``path``; returns the path written."""
    return save_figure(verification_chart(diagram), path, fmt)


FLOOR = 1e-18  # exact zeros shown at this height on the log axes


def _bar_colours(values: np.ndarray, tolerance: float):
    return [palette.TENSION if v <= tolerance else palette.COMPRESSION for v in values]


BARS_UP_TO = 200  # items above which errors are drawn ranked, as one curve, instead of a bar each


def _log_axis(ax, labels: list[str], title: str, ylabel: str, tolerance: float, worst: str | None = None):
    ax.set_yscale("log")
    ax.set_ylim(FLOOR / 2, max(10 * tolerance, 1e-6))
    ax.axhline(tolerance, color=palette.NODE, ls="--", lw=0.8)
    ax.set_title(title, fontsize=FONT + 1)
    ax.set_ylabel(ylabel, fontsize=FONT)
    ax.tick_params(labelsize=SMALL)
    if len(labels) <= 40:
        ax.set_xticks(range(len(labels)))
        ax.set_xticklabels(labels, rotation=90, fontsize=SMALL)
    elif worst is None:
        ax.set_xlabel(f"{len(labels)} items, in file order", fontsize=FONT)
    else:
        ax.set_xlabel(f"{len(labels)} items, ranked by error, largest first (largest: {worst})", fontsize=FONT)


def _error_bars(ax, values: np.ndarray, labels: list[str], tolerance: float) -> str | None:
    """One bar per item in file order; above BARS_UP_TO items the errors ranked largest first, filled
    under one curve (coloured against the tolerance): a bar each would be thinner than a hairline.
    Returns the label of the largest error when ranked, else None."""
    if len(values) <= BARS_UP_TO:
        ax.bar(range(len(values)), values, color=_bar_colours(values, tolerance), width=0.8)
        return None
    rank = np.argsort(-values, kind="stable")
    ranked = values[rank]
    x = np.arange(len(ranked))
    within = ranked <= tolerance
    for mask, colour in ((~within, palette.COMPRESSION), (within, palette.TENSION)):
        if mask.any():
            ax.fill_between(x, FLOOR / 2, ranked, where=mask, step="mid", color=colour, lw=0)
    ax.set_xlim(-0.5, len(ranked) - 0.5)
    return labels[int(rank[0])]


def _closure_bars(ax, diagram: ForceDiagram) -> None:
    graph, emb = diagram.graph, diagram.embedding
    values = list(diagram.node_error)
    labels = list(graph.node_ids)
    if emb.ideal > emb.n_nodes:
        values.append(float(diagram.vertex_error[emb.n_nodes: emb.ideal].max()))
        labels.append("crossings (max)")
    values.append(diagram.load_line_error)
    labels.append("load line")
    values = np.maximum(np.array(values), FLOOR)
    worst = _error_bars(ax, values, labels, diagram.tolerance)
    _log_axis(ax, labels, "Force polygon of each node, and the load line", "|sum of forces| / largest force",
              diagram.tolerance, worst)


def _edge_bars(ax, diagram: ForceDiagram) -> None:
    graph = diagram.graph
    per_element = np.zeros(graph.n_elements)
    np.maximum.at(per_element, diagram.edge_element, diagram.edge_error)
    values = np.maximum(per_element, FLOOR)
    labels = [_edge_tag(diagram, e) for e in range(graph.n_elements)]
    worst = _error_bars(ax, values, labels, diagram.tolerance)
    angles = np.maximum(diagram.parallel_error[: graph.n_members], FLOOR)
    if worst is None:
        ax.plot(range(graph.n_members), angles, "o", ms=2, color=palette.LABEL)
    else:  # ranked on their own, a marker every few items
        ax.plot(np.sort(angles)[::-1], "o-", ms=2, lw=0.5, color=palette.LABEL, markevery=max(1, len(angles) // 60))
    _log_axis(ax, labels, "Each force edge against the analysed force", "|drawn - analysed| / largest force",
              diagram.tolerance, worst)


def _load_line(ax, diagram: ForceDiagram, placer: Labels | None = None) -> None:
    """External forces head to tail in their order around the frame, from point a: the gap is the closure."""
    placer = placer if placer is not None else Labels()
    graph, emb, faces = diagram.graph, diagram.embedding, diagram.faces
    units = diagram.units
    ax.set_aspect("equal", adjustable="datalim")
    ax.set_axis_off()
    ax.set_title("Load line, forces head to tail around the frame", fontsize=FONT + 1)
    tails = np.stack([emb.tails, emb.heads], axis=1).reshape(-1)
    around = emb.rotation[tails[emb.rotation] == emb.ideal]
    if not len(around):
        ax.text(0.5, 0.5, "no external forces: a self-stress state\n(the load line is empty)", ha="center", va="center",
                transform=ax.transAxes, fontsize=FONT + 1)
        return
    around = np.roll(around, 1)
    start_face = faces.face_of[around[0]]
    here = diagram.points[start_face].astype(float)
    pts = [here]
    face = start_face
    for h in around.tolist():
        k = h // 2
        w = graph.vectors[emb.element[k]]
        if faces.left[k] == face:
            here, face = here + w, faces.right[k]
        else:
            here, face = here - w, faces.left[k]
        pts.append(here)
    pts3 = np.array(pts)
    gap = float(np.linalg.norm(pts3[-1] - pts3[0])) / (diagram.force_scale or 1.0)
    xy = _drawing_points(diagram, pts3)
    largest = diagram.force_scale
    arrows = []
    for i, h in enumerate(around.tolist()):
        e = int(emb.element[h // 2])
        colour, dashes = ROLE_STYLE[graph.kinds[e]]
        arrows.append((xy[i], xy[i + 1], palette.line_width(graph.forces[e], largest), colour, dashes))
        if len(around) <= 40:  # labels alternate sides: collinear loads overlap on the line
            placer.add(offset_text(ax, (xy[i] + xy[i + 1]) / 2, (8 if i % 2 else -8, 0), _edge_tag(diagram, e),
                                   ha="left" if i % 2 else "right", va="center", fontsize=SMALL, color=colour, zorder=5))
    extent = float(np.ptp(xy, axis=0).max()) if len(xy) > 1 else 0.0
    _draw_arrows(ax, arrows, extent or 1.0, mutation_scale=8, zorder=3)
    ax.scatter(xy[:1, 0], xy[:1, 1], s=20, color=palette.NODE, zorder=4)
    ax.annotate(f"start/end: {diagram.space_labels[start_face].lower()}", xy[0], xytext=(4, 4), textcoords="offset points",
                fontsize=FONT, zorder=5)
    ax.update_datalim(xy)
    ax.autoscale_view()
    ax.text(0.5, -0.02, f"closing gap |sum of external forces|\n= {gap:.1e} x largest force "
                        f"({'closed' if gap <= diagram.tolerance else 'NOT closed'} to {diagram.tolerance:g})",
            ha="center", va="top", transform=ax.transAxes, fontsize=FONT)
    scale_bar(ax, xy, units.label("force"), units.factor("force"))


# -- report-stage adapters --------------------------------------------------------


def reciprocal_figure(analysis, state_id: str, path: str | Path, fmt: str | None = None, diagram=None,
                      labels_up_to: int | None = None) -> Path:
    """``form_force_figure`` for one state of an analysis (signature of the report's figure sources);
    ``diagram``: the state's force diagram where already built."""
    return form_force_figure(diagram or force_diagram(analysis.project, analysis.state(state_id)), path, fmt,
                             labels_up_to=labels_up_to)


def closure_figure(analysis, state_id: str, path: str | Path, fmt: str | None = None, diagram=None) -> Path:
    """``verification_figure`` for one state of an analysis."""
    return verification_figure(diagram or force_diagram(analysis.project, analysis.state(state_id)), path, fmt)
