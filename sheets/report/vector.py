"""Matplotlib figures on the PDF page as vector paths, with no extra dependency.

Route: a small matplotlib renderer (``Recorder``) draws the figure once into a
list of path operations in points (figure dpi set to 72), with text turned into
glyph outlines by matplotlib's own TextToPath. The list (a ``VectorFigure``)
is replayed onto any reportlab canvas: into the sheet set, where it scales to
the frame, and into a one-page PDF saved in figures/. Lines stay lines at every
zoom, the bytes are deterministic (no clock, no random ids), and the figure is
drawn by matplotlib only once however many layout passes the document needs.

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
from pathlib import Path

import numpy as np
from matplotlib.backend_bases import FigureCanvasBase, RendererBase, register_backend
from matplotlib.figure import Figure
from matplotlib.path import Path as MplPath
from reportlab.lib.utils import ImageReader
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import Flowable

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
    # | ("image", x, y, w, h, png, clip); clip is a path in operators, or None
    ops: tuple
    smallest_text: float = float("inf")  # pt at scale 1: the smallest type size drawn (as glyph outlines)

    def draw(self, canvas: Canvas, x: float, y: float, scale: float = 1.0) -> None:
        """Replay onto ``canvas`` at (x, y); operators go in as literals, styles only where they change."""
        canvas.saveState()
        canvas.translate(x, y)
        canvas.scale(scale, scale)
        current_clip = None
        clipped = False
        style = alpha = None
        for op in self.ops:
            clip = op[-1]
            if clip != current_clip:
                if clipped:
                    canvas.restoreState()  # Q also resets colours and alpha: set them again
                    clipped = False
                    style = alpha = None
                if clip is not None:
                    canvas.saveState()
                    clipped = True
                    canvas.addLiteral(f"{clip} W n")
                current_clip = clip
            if op[0] == "path":
                _, code, op_style, op_alpha, paint, _clip = op
                if op_alpha != alpha:
                    canvas.setFillAlpha(op_alpha[0])
                    canvas.setStrokeAlpha(op_alpha[1])
                    alpha = op_alpha
                if op_style != style:
                    canvas.addLiteral(op_style)
                    style = op_style
                canvas.addLiteral(f"{code} {paint}")
            else:
                _, ix, iy, iw, ih, png, _clip = op
                canvas.drawImage(ImageReader(io.BytesIO(png)), ix, iy, iw, ih, mask="auto")
        if clipped:
            canvas.restoreState()
        canvas.restoreState()

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


def _code(path: MplPath, transform, clip=None, simplify=None) -> str:
    """Matplotlib path -> PDF path operators (m, l, c, h) in points, two decimals."""
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


class Recorder(RendererBase):
    """A matplotlib renderer that records paths in points (dpi 72) instead of drawing them."""

    def __init__(self, width: float, height: float):
        super().__init__()
        self.width = width
        self.height = height
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
            return
        offset, dashes = gc.get_dashes()
        dash = (float(offset or 0.0), tuple(float(d) for d in dashes)) if dashes is not None and len(dashes) else None
        style = _Style(stroke, fill, width, _CAP.get(gc.get_capstyle(), 0), _JOIN.get(gc.get_joinstyle(), 0), dash)
        # drop segments far outside the figure only for unfilled lines (as matplotlib's own PDF backend does)
        clip = (-1.0, -1.0, self.width + 1, self.height + 1) if rgbFace is None and gc.get_hatch_path() is None else None
        code = _code(path, transform, clip=clip, simplify=path.should_simplify and clip is not None)
        if code:
            paint = "B" if fill is not None and stroke is not None else "f" if fill is not None else "S"
            alpha = (fill[3] if fill is not None else 1.0, stroke[3] if stroke is not None else 1.0)
            self.ops.append(("path", code, _style_operators(style), alpha, paint, self._clip(gc)))

    def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
        # text becomes glyph outlines (RendererBase); its size is noted so the page can keep it legible
        if s and s.strip():
            self.smallest_text = min(self.smallest_text, float(prop.get_size_in_points()))
        super().draw_text(gc, x, y, s, prop, angle, ismath=ismath, mtext=mtext)

    def draw_image(self, gc, x, y, im, transform=None):
        from PIL import Image

        h, w = im.shape[:2]
        buf = io.BytesIO()
        Image.fromarray(np.asarray(im)[::-1], "RGBA").save(buf, format="PNG", optimize=False)
        self.ops.append(("image", float(x), float(y), float(w), float(h), buf.getvalue(), self._clip(gc)))


def record(figure: Figure) -> VectorFigure:
    """Draw a matplotlib figure once into a VectorFigure (in points)."""
    dpi = figure.dpi
    try:
        figure.set_dpi(72)
        width, height = figure.get_size_inches() * 72
        recorder = Recorder(float(width), float(height))
        figure.draw(recorder)
    finally:
        figure.set_dpi(dpi)
    return VectorFigure(round(float(width), 3), round(float(height), 3), tuple(recorder.ops), recorder.smallest_text)


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
