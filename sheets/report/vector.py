"""Matplotlib figures on the PDF page as vector paths, with no extra dependency.

Route: a small matplotlib renderer (``Recorder``) draws the figure once into a
list of path operations in points (figure dpi set to 72), with text turned into
glyph outlines by matplotlib's own TextToPath. The list (a ``VectorFigure``)
becomes one compressed PDF form XObject (sheets.report.pdf_form), placed on any
reportlab canvas: into the sheet set, where it scales to the frame, and into a
one-page PDF saved in figures/. Lines stay lines at every zoom, the bytes are
deterministic (no clock, no random ids), and the figure is drawn by matplotlib
and encoded only once however many layout passes the document needs.

Figures drawn by other render modules that save to a path (``fig.savefig(path)``)
are taken the same way: ``read_vector_file`` asks them for a path ending in
``.rlvec``, a file format registered with matplotlib here (its canvas records
the figure and pickles the VectorFigure); the sheets read it back at once.

What is supported is what the sheets' figures use: filled and stroked paths
with alpha, dashes, caps and joins, clip rectangles and clip paths, markers,
collections, text (as paths) and images (embedded as raster, e.g. a colour
bar). Hatching is not drawn.
"""

from __future__ import annotations

import io
import pickle
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path

import numpy as np
from matplotlib.backend_bases import FigureCanvasBase, RendererBase, register_backend
from matplotlib.figure import Figure
from matplotlib.path import Path as MplPath
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import Flowable

from sheets.report.document import layout_only
from sheets.report.pdf_form import PdfForm, draw_form, pdf_form
from sheets.report.pdf_image import from_pixels

_CAP = {"butt": 0, "round": 1, "projecting": 2}
_JOIN = {"miter": 0, "round": 1, "bevel": 2}


@dataclass(frozen=True)
class _Style:
    stroke: tuple[float, float, float, float] | None
    fill: tuple[float, float, float, float] | None
    width: float
    cap: int
    join: int
    dashes: tuple[float, tuple[float, ...]] | None


@dataclass(frozen=True)
class VectorFigure:
    """A figure as recorded path operations, in points, origin at the lower left."""

    width: float  # pt
    height: float  # pt
    # ("path", path operators, style operators, (fill alpha, stroke alpha), paint operator, clip)
    # | ("image", x, y, w, h, PdfImage, clip); clip is a path in operators, or None
    ops: tuple
    smallest_text: float = float("inf")  # pt at scale 1: the smallest type size drawn (as glyph outlines)

    @cached_property
    def form(self) -> PdfForm:
        """The figure as one PDF form XObject, compressed (sheets.report.pdf_form); made on first use, and
        pickled with the figure from then on (the worker that draws a figure makes it)."""
        return pdf_form(self.width, self.height, self.ops)

    def draw(self, canvas: Canvas, x: float, y: float, scale: float = 1.0) -> None:
        """Place the figure on ``canvas`` at (x, y), scaled."""
        draw_form(canvas, self.form, x, y, scale)

    def pdf_bytes(self, title: str = "", author: str = "") -> bytes:
        """A one-page PDF of just this figure (deterministic bytes)."""
        from sheets.report.document import binary_streams
        from sheets.report.fonts import register_fonts

        buf = io.BytesIO()
        with binary_streams():
            canvas = Canvas(buf, pagesize=(self.width, self.height), invariant=1, pageCompression=1,
                            initialFontName=register_fonts().regular)
            canvas.setTitle(title)
            canvas.setAuthor(author)
            canvas.setCreator("sheets")
            self.draw(canvas, 0, 0)
            canvas.showPage()
            canvas.save()
        return buf.getvalue()


def _style_operators(style: _Style) -> str:
    """PDF operators that set one path's colours, width, caps, joins and dashes."""
    ops = []
    if style.fill is not None:
        ops.append("%.4f %.4f %.4f rg" % style.fill[:3])
    if style.stroke is not None:
        ops.append("%.4f %.4f %.4f RG %.3f w %d J %d j" % (*style.stroke[:3], style.width, style.cap, style.join))
        if style.dashes:
            ops.append("[%s] %.3f d" % (" ".join("%.3f" % d for d in style.dashes[1]), style.dashes[0]))
        else:
            ops.append("[] 0 d")
    return " ".join(ops)


_WORDS = {MplPath.MOVETO: "%.2f %.2f m", MplPath.LINETO: "%.2f %.2f l", MplPath.CLOSEPOLY: "h"}


def _code(path: MplPath, transform, clip=None, simplify=None) -> str:
    """Matplotlib path -> PDF path operators (m, l, c, h) in points, two decimals.

    The segments are those ``path.iter_segments`` yields (matplotlib's own cleaning: NaNs, clip box,
    simplification); a path of straight segments only is formatted in one go instead of walked."""
    if not len(path):
        return ""
    cleaned = path.cleaned(transform=transform, remove_nans=True, clip=clip, simplify=simplify, curves=True)
    codes = cleaned.codes
    stop = np.flatnonzero(codes == MplPath.STOP)
    end = int(stop[0]) if len(stop) else len(codes)
    codes = codes[:end]
    if ((codes == MplPath.MOVETO) | (codes == MplPath.LINETO) | (codes == MplPath.CLOSEPOLY)).all():
        keep = codes != MplPath.CLOSEPOLY
        template = " ".join(_WORDS[c] for c in codes.tolist())
        return template % tuple(cleaned.vertices[:end][keep].ravel().tolist())
    return _walk(path, transform, clip, simplify)


def _walk(path: MplPath, transform, clip=None, simplify=None) -> str:
    """``_code`` segment by segment (curves; and the reference for the one-go route)."""
    out = []
    last = (0.0, 0.0)
    for verts, code in path.iter_segments(transform, clip=clip, simplify=simplify, curves=True):
        if code == MplPath.MOVETO:
            last = verts[-2:]
            out.append("%.2f %.2f m" % tuple(last))
        elif code == MplPath.LINETO:
            last = verts[-2:]
            out.append("%.2f %.2f l" % tuple(last))
        elif code == MplPath.CURVE3:  # quadratic -> cubic
            (x0, y0), (qx, qy), (x3, y3) = last, verts[:2], verts[2:]
            out.append("%.2f %.2f %.2f %.2f %.2f %.2f c" % (x0 + 2 / 3 * (qx - x0), y0 + 2 / 3 * (qy - y0),
                                                         x3 + 2 / 3 * (qx - x3), y3 + 2 / 3 * (qy - y3), x3, y3))
            last = verts[-2:]
        elif code == MplPath.CURVE4:
            out.append("%.2f %.2f %.2f %.2f %.2f %.2f c" % tuple(verts))
            last = verts[-2:]
        elif code == MplPath.CLOSEPOLY:
            out.append("h")
    return " ".join(out)


def _paint(gc, rgbFace) -> tuple | None:
    """(style operators, (fill alpha, stroke alpha), paint operator) of a path drawn with ``gc``, or None if invisible."""
    alpha = gc.get_alpha()
    forced = gc.get_forced_alpha()
    fill = None
    if rgbFace is not None:
        rgba = tuple(float(c) for c in rgbFace)
        a = alpha if forced or len(rgba) < 4 else rgba[3]
        if a > 0:
            fill = (*rgba[:3], float(a))
    stroke = None
    width = float(gc.get_linewidth())
    rgb = gc.get_rgb()
    if width > 0 and rgb is not None and rgb[3] > 0:
        stroke = (float(rgb[0]), float(rgb[1]), float(rgb[2]), float(rgb[3]))
    if fill is None and stroke is None:
        return None
    offset, dashes = gc.get_dashes()
    dash = (float(offset or 0.0), tuple(float(d) for d in dashes)) if dashes is not None and len(dashes) else None
    style = _Style(stroke, fill, width, _CAP.get(gc.get_capstyle(), 0), _JOIN.get(gc.get_joinstyle(), 0), dash)
    paint = "B" if fill is not None and stroke is not None else "f" if fill is not None else "S"
    return _style_operators(style), (fill[3] if fill is not None else 1.0, stroke[3] if stroke is not None else 1.0), paint


def _bulk_ok(gc, master_transform, paths, all_transforms, offsets, offset_trans) -> bool:
    """A collection the bulk route reproduces exactly: affine, no per-path transforms, no offsets, no hatch."""
    if len(all_transforms) or not master_transform.is_affine or gc.get_hatch_path() is not None:
        return False
    if len(offsets) > len(paths) or (len(offsets) and np.any(np.asarray(offset_trans.transform(offsets)) != 0)):
        return False
    return True


def _plain(path: MplPath) -> bool:
    """Straight segments only (no curves), so operators can be formatted without walking the path."""
    codes = path.codes
    if codes is None:
        return True
    if len(codes) == 0 or codes[0] != MplPath.MOVETO:
        return False
    return bool(np.all((codes[1:] == MplPath.LINETO) | (codes[1:] == MplPath.CLOSEPOLY)))


def _format(kinds: tuple, count: int) -> str:
    """The ``%`` template of a straight path of ``count`` vertices (codes ``kinds``, () for move then lines)."""
    if not kinds:
        return " ".join(["%.2f %.2f m"] + ["%.2f %.2f l"] * (count - 1))
    words = []
    for k in kinds:
        words.append({MplPath.MOVETO: "%.2f %.2f m", MplPath.LINETO: "%.2f %.2f l", MplPath.CLOSEPOLY: "h"}[k])
    return " ".join(words)


def _collection_styles(gc, n: int, facecolors, edgecolors, linewidths, linestyles) -> list:
    """Each member's (``_paint`` result, has a face colour), as ``RendererBase._iter_collection`` would set up its gc (colours,
    widths and dashes cycled over the members; a transparent edge or face is none)."""
    from matplotlib.colors import to_rgba_array

    faces = to_rgba_array(facecolors) if len(facecolors) else None
    edges = to_rgba_array(edgecolors) if len(edgecolors) else None
    gc0 = gc.__class__()
    gc0.copy_properties(gc)
    if edges is None:
        gc0.set_linewidth(0.0)
    cache: dict = {}
    out = []
    width = gc0.get_linewidth()
    dashes = gc0.get_dashes()
    for i in range(n):
        if edges is not None:
            if len(linewidths):
                width = float(linewidths[i % len(linewidths)])
            if len(linestyles):
                dashes = linestyles[i % len(linestyles)]
            ec = tuple(edges[i % len(edges)].tolist())
            if ec[3] == 0.0:
                rgb, lw = gc0.get_rgb(), 0.0
            else:
                rgb, lw = (ec[:3] + (gc0.get_alpha(),) if gc0.get_forced_alpha() else ec), width
        else:
            rgb, lw = gc0.get_rgb(), 0.0
        fc = None
        if faces is not None:
            fc = tuple(faces[i % len(faces)].tolist())
            if fc[3] == 0:
                fc = None
        key = (rgb, lw, None if dashes is None else (dashes[0], None if dashes[1] is None else tuple(dashes[1])), fc)
        if key not in cache:
            gc0._rgb = rgb
            gc0.set_linewidth(lw)
            gc0.set_dashes(*dashes)
            cache[key] = _paint(gc0, fc), fc is not None
        out.append(cache[key])
    return out


def merge_strokes(ops: list) -> list:
    """Consecutive opaque stroked paths of one style and clip become one path of many subpaths.

    The page is the same: an opaque stroke paints the union of its subpaths, and PDF restarts the
    dash pattern at each subpath. Fills and translucent strokes are left apart (overlaps would differ).
    """
    runs: list[list] = []  # [first op, [codes]]: codes joined once at the end (no quadratic concatenation)
    for op in ops:
        if runs and op[0] == "path" and op[4] == "S" and op[3] == (1.0, 1.0):
            first = runs[-1][0]
            if first[0] == "path" and first[4] == "S" and first[2:] == op[2:]:
                runs[-1][1].append(op[1])
                continue
        runs.append([op, [op[1]] if op[0] == "path" else None])
    return [op if codes is None or len(codes) == 1 else ("path", " ".join(codes), *op[2:]) for op, codes in runs]


class Recorder(RendererBase):
    """A matplotlib renderer that records paths in points (dpi 72) instead of drawing them."""

    def __init__(self, width: float, height: float, bulk: bool = True):
        super().__init__()
        self.width = width
        self.height = height
        self.bulk = bulk  # False: every collection member goes through draw_path (the reference route)
        self.ops: list = []
        self._clip_cache: dict = {}
        self.smallest_text = float("inf")

    # -- what RendererBase needs from a backend ------------------------------
    def get_canvas_width_height(self):
        return self.width, self.height

    def flipy(self):
        return False

    def points_to_pixels(self, points):
        return points

    def option_image_nocomposite(self):
        return True

    def option_scale_image(self):
        return False

    def _clip(self, gc):
        rect = gc.get_clip_rectangle()
        path, trans = gc.get_clip_path()
        if path is not None:
            key = (id(path), trans.to_values() if trans is not None else None)
            if key not in self._clip_cache:  # keep the path alive so its id is not reused
                self._clip_cache[key] = (path, _code(path, trans))
            return self._clip_cache[key][1]
        if rect is not None:
            x0, y0, x1, y1 = rect.extents
            return "%.2f %.2f %.2f %.2f re" % (x0, y0, x1 - x0, y1 - y0)
        return None

    def draw_path(self, gc, path, transform, rgbFace=None):
        painted = _paint(gc, rgbFace)
        if painted is None:
            return
        code = _code(path, transform, *self._segment_options(gc, rgbFace, path))
        if code:
            self.ops.append(("path", code, *painted, self._clip(gc)))

    def _segment_options(self, gc, rgbFace, path) -> tuple:
        """(clip box, simplify) for ``_code``: segments far outside the figure are dropped only for unfilled
        lines (as matplotlib's own PDF backend does)."""
        clip = (-1.0, -1.0, self.width + 1, self.height + 1) if rgbFace is None and gc.get_hatch_path() is None else None
        return clip, path.should_simplify and clip is not None

    def draw_path_collection(self, gc, master_transform, paths, all_transforms, offsets, offset_trans, facecolors,
                             edgecolors, linewidths, linestyles, antialiaseds, urls, offset_position, **kw):
        """Line and polygon collections in bulk (numpy), giving exactly the operators of the one-by-one route
        (``RendererBase.draw_path_collection`` -> ``draw_path``); other collections take that route."""
        if not self.bulk or not _bulk_ok(gc, master_transform, paths, all_transforms, offsets, offset_trans):
            return super().draw_path_collection(gc, master_transform, paths, all_transforms, offsets, offset_trans,
                                                facecolors, edgecolors, linewidths, linestyles, antialiaseds, urls,
                                                offset_position, **kw)
        n = len(paths)
        if n == 0 or (len(facecolors) == 0 and len(edgecolors) == 0):
            return
        styles = _collection_styles(gc, n, facecolors, edgecolors, linewidths, linestyles)
        clip = self._clip(gc)
        codes = [None] * n
        bulk: dict[tuple, list[int]] = {}  # paths of one shape (vertex count, codes) whose operators are formatted together
        for i, path in enumerate(paths):
            painted, faced = styles[i]
            if painted is None:
                continue
            # the clip box closes an unfilled polygon with an explicit line back to its start: walk those
            if _plain(path) and not path.should_simplify and (faced or path.codes is None or path.codes[-1] != MplPath.CLOSEPOLY):
                kinds = () if path.codes is None else tuple(path.codes.tolist())
                bulk.setdefault((len(path.vertices), kinds, faced), []).append(i)
            else:
                codes[i] = _code(path, master_transform, *self._segment_options(gc, faced or None, path))
        box = (-1.0, -1.0, self.width + 1, self.height + 1)
        for (count, kinds, faced), members in bulk.items():
            verts = master_transform.transform(np.concatenate([paths[i].vertices for i in members]))
            verts = verts.reshape(len(members), count, 2)
            drawn = np.ones(count, dtype=bool) if not kinds else np.asarray(kinds) != MplPath.CLOSEPOLY
            inside = np.isfinite(verts[:, drawn]).all(axis=(1, 2))
            if not faced:  # a path the clip box would change goes the one-by-one way
                v = verts[:, drawn]
                inside &= ((v[..., 0] >= box[0]) & (v[..., 0] <= box[2]) & (v[..., 1] >= box[1]) & (v[..., 1] <= box[3])).all(axis=1)
            template = _format(kinds, count)
            rows = verts[:, drawn].reshape(len(members), -1).tolist()
            for i, ok, row in zip(members, inside.tolist(), rows):
                codes[i] = (template % tuple(row) if ok else
                            _code(paths[i], master_transform, *self._segment_options(gc, faced or None, paths[i])))
        for i in range(n):
            if codes[i]:
                self.ops.append(("path", codes[i], *styles[i][0], clip))

    def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
        # text becomes glyph outlines (RendererBase); its size is noted so the page can keep it legible
        if s and s.strip():
            self.smallest_text = min(self.smallest_text, float(prop.get_size_in_points()))
        super().draw_text(gc, x, y, s, prop, angle, ismath=ismath, mtext=mtext)

    def draw_image(self, gc, x, y, im, transform=None):
        # matplotlib hands the rows bottom first; the image stream is made here, once (sheets.report.pdf_image)
        h, w = im.shape[:2]
        self.ops.append(("image", float(x), float(y), float(w), float(h), from_pixels(np.asarray(im)[::-1]),
                         self._clip(gc)))


def record(figure: Figure, bulk: bool = True) -> VectorFigure:
    """Draw a matplotlib figure once into a VectorFigure (in points); ``bulk``: collections in bulk
    (False: one path at a time, the reference the bulk route is tested against)."""
    dpi = figure.dpi
    try:
        figure.set_dpi(72)
        width, height = figure.get_size_inches() * 72
        recorder = Recorder(float(width), float(height), bulk)
        figure.draw(recorder)
    finally:
        figure.set_dpi(dpi)
    return VectorFigure(round(float(width), 3), round(float(height), 3), tuple(merge_strokes(recorder.ops)),
                        recorder.smallest_text)


SMALLEST_PRINTED_TEXT = 6.0  # pt: no figure text is printed smaller


class VectorFlowable(Flowable):
    """A recorded figure scaled to fit the frame width (and a height limit), centred.

    The scale never prints the figure's smallest text under SMALLEST_PRINTED_TEXT while the frame can
    hold it larger: a figure that would need shrinking further than that takes more of the page height
    (up to the whole frame) instead. ``printed_text`` is the smallest type size as printed."""

    def __init__(self, figure: VectorFigure, max_width: float | None = None, max_height: float | None = None):
        super().__init__()
        self.figure = figure
        self.max_width = max_width
        self.max_height = max_height
        self.scale = 1.0

    @property
    def printed_text(self) -> float:
        return getattr(self.figure, "smallest_text", float("inf")) * self.scale

    def wrap(self, avail_width, avail_height):
        limit_w = min(avail_width, self.max_width or avail_width)
        limit_h = self.max_height or avail_height
        self.scale = min(limit_w / self.figure.width, limit_h / self.figure.height)
        legible = SMALLEST_PRINTED_TEXT / getattr(self.figure, "smallest_text", float("inf"))
        if self.scale < legible:  # grow into the rest of the frame's height, never past the frame
            self.scale = max(self.scale, min(legible, limit_w / self.figure.width, avail_height / self.figure.height))
        self._avail_width = avail_width
        self.width = avail_width
        self.height = self.figure.height * self.scale
        return self.width, self.height

    def draw(self):
        if layout_only(self.canv):
            return  # a pass that only finds where things land (see document.SheetDocument.multiBuild)
        x = (self.width - self.figure.width * self.scale) / 2
        self.figure.draw(self.canv, x, 0, self.scale)


VECTOR_SUFFIX = ".rlvec"


class RecordingCanvas(FigureCanvasBase):
    """A matplotlib canvas whose only output is a pickled VectorFigure (format "rlvec")."""

    filetypes = {"rlvec": "figure recorded as vector paths for sheets"}

    def print_rlvec(self, filename, **_kwargs):
        data = pickle.dumps(record(self.figure), protocol=4)
        if hasattr(filename, "write"):
            filename.write(data)
        else:
            Path(filename).write_bytes(data)

    def get_default_filetype(self):
        return "rlvec"


# matplotlib keeps a table of file formats -> canvases; adding ours is idempotent.
register_backend("rlvec", RecordingCanvas, "figure recorded as vector paths for sheets")


def read_vector_file(path: str | Path) -> VectorFigure:
    """A figure saved by ``savefig(... .rlvec)`` (our own temporary file, written this run)."""
    value = pickle.loads(Path(path).read_bytes())
    if not isinstance(value, VectorFigure):
        raise TypeError(f"{path} does not hold a recorded figure")
    return value
