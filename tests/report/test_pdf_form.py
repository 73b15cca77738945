"""Recorded figures placed as PDF form XObjects (sheets.report.pdf_form).

The reference is outside the project: matplotlib's own raster renderer (Agg) draws the
figure, pypdfium2 renders the page that places its form, and the two images must agree
(up to anti-aliasing and text drawn as outlines); pypdf reads the form's dictionary.
"""

from __future__ import annotations

import io

import matplotlib

matplotlib.use("Agg")
import numpy as np  # noqa: E402
from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
from matplotlib.patches import Circle, Rectangle  # noqa: E402
from pypdf import PdfReader  # noqa: E402
from reportlab.pdfgen.canvas import Canvas  # noqa: E402

from sheets.report.vector import record  # noqa: E402

DPI = 100


def busy_figure() -> Figure:
    """Translucent fills over each other, a dashed line, a clip path, and a raster image (imshow)."""
    fig = Figure(figsize=(3.0, 2.0), dpi=DPI)
    ax = fig.add_axes((0.05, 0.05, 0.9, 0.9))
    ax.set_xlim(0, 3)
    ax.set_ylim(0, 2)
    ax.axis("off")
    ax.add_patch(Rectangle((0.2, 0.2), 1.4, 1.2, color="#0072B2", alpha=0.5))
    ax.add_patch(Rectangle((0.9, 0.6), 1.4, 1.2, color="#D55E00", alpha=0.5))
    ax.plot([0.1, 2.9], [1.9, 0.1], color="black", lw=2, ls="--")
    clipped = ax.plot([0, 3], [0.4, 0.4], color="#009E73", lw=6)[0]
    clipped.set_clip_path(Circle((2.4, 0.5), 0.4, transform=ax.transData))
    ax.imshow(np.arange(12.0).reshape(3, 4), extent=(2.3, 2.9, 1.2, 1.8), cmap="viridis", interpolation="nearest")
    return fig


def agg_pixels(fig: Figure) -> np.ndarray:
    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    return np.asarray(canvas.buffer_rgba())[..., :3].astype(int)


def placed(vector, times: int = 1) -> bytes:
    buffer = io.BytesIO()
    canvas = Canvas(buffer, pagesize=(vector.width, vector.height * times), invariant=1)
    for k in range(times):
        vector.draw(canvas, 0, k * vector.height)
    canvas.showPage()
    canvas.save()
    return buffer.getvalue()


def test_a_placed_form_renders_as_matplotlib_draws_the_figure():
    import pypdfium2

    fig = busy_figure()
    expected = agg_pixels(fig)
    vector = record(fig)
    page = pypdfium2.PdfDocument(placed(vector))[0]
    got = page.render(scale=DPI / 72, rev_byteorder=True).to_numpy().astype(int)  # RGB, as Agg
    h, w = min(got.shape[0], expected.shape[0]), min(got.shape[1], expected.shape[1])
    diff = np.abs(got[:h, :w] - expected[:h, :w])
    assert abs(got.shape[0] - expected.shape[0]) <= 1 and abs(got.shape[1] - expected.shape[1]) <= 1
    assert diff.mean() < 4  # edges differ by anti-aliasing only
    assert (diff.max(axis=2) > 60).mean() < 0.02
    # the overlap of the two translucent fills: both alphas applied, as matplotlib composes them
    y, x = int(h * (1 - 1.0 / 2 * 0.9 - 0.05)), int(w * (0.05 + 1.25 / 3 * 0.9))
    assert np.abs(got[y - 2:y + 3, x - 2:x + 3] - expected[y - 2:y + 3, x - 2:x + 3]).max() <= 3


def test_a_form_is_stored_once_however_often_it_is_placed():
    vector = record(busy_figure())
    pdf = placed(vector, times=3)
    assert pdf.count(b"/Subtype /Form") == 1
    assert pdf.count(b"/Subtype /Image") == 1  # the imshow raster, named by the form
    xobjects = PdfReader(io.BytesIO(pdf)).pages[0]["/Resources"]["/XObject"]
    (form,) = [x.get_object() for x in xobjects.values()]
    assert form["/Subtype"] == "/Form"
    assert [float(v) for v in form["/BBox"]] == [0, 0, vector.width, vector.height]
    alphas = {round(float(g["/ca"]), 3) for g in form["/Resources"]["/ExtGState"].values()}
    assert 0.5 in alphas
    assert pdf == placed(record(busy_figure()), times=3)  # bytes depend on the content only


def test_the_form_travels_with_the_figure():
    """Made once where the figure is drawn, and pickled with it (figure workers, the stage cache)."""
    import pickle

    vector = record(busy_figure())
    form = vector.form
    again = pickle.loads(pickle.dumps(vector))
    assert "form" in again.__dict__ and again.form == form
