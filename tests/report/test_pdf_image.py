"""Raster images placed as ready-made PDF streams (sheets.report.pdf_image).

Checked against two readers outside the project: pypdf decodes each image XObject
(FlateDecode with the PNG predictors, and the soft mask) back to pixels, which must equal
what Pillow decodes from the PNG; and pypdfium2 renders a page drawn this way and one
drawn by reportlab's own drawImage, which must give the same pixels.
"""

from __future__ import annotations

import io

import numpy as np
import pytest
from PIL import Image
from pypdf import PdfReader
from reportlab.lib.utils import ImageReader
from reportlab.pdfgen.canvas import Canvas

from sheets.report.pdf_image import draw_image, from_pixels, from_png

RNG = np.random.default_rng(7)


def png_of(pixels: np.ndarray, mode: str) -> bytes:
    buffer = io.BytesIO()
    Image.fromarray(pixels, mode).save(buffer, format="PNG")
    return buffer.getvalue()


def interlaced_pixel() -> bytes:
    """A 1 x 1 RGB PNG marked interlaced (Adam7): its one pixel is all of pass 1, so its data is that of
    the plain image; Pillow writes no interlaced PNGs, so the flag is set by hand."""
    import struct
    import zlib

    plain = png_of(np.array([[[200, 30, 90]]], np.uint8), "RGB")
    at = plain.index(b"IHDR")
    header = bytearray(plain[at + 4:at + 17])
    header[12] = 1  # interlace method
    chunk = b"IHDR" + bytes(header)
    return plain[:at] + chunk + struct.pack(">I", zlib.crc32(chunk)) + plain[at + 21:]


def gradient(height: int = 23, width: int = 37) -> np.ndarray:
    """RGB with smooth runs and noise, so that every PNG row filter is used."""
    y, x = np.mgrid[0:height, 0:width]
    rgb = np.stack([x * 255 // width, y * 255 // height, (x * y) % 256], axis=-1)
    rgb[::5] = RNG.integers(0, 256, size=rgb[::5].shape)
    return rgb.astype(np.uint8)


def page(draw) -> bytes:
    buffer = io.BytesIO()
    canvas = Canvas(buffer, pagesize=(100, 80), invariant=1)
    draw(canvas)
    canvas.showPage()
    canvas.save()
    return buffer.getvalue()


def rendered(pdf: bytes) -> np.ndarray:
    import pypdfium2

    return pypdfium2.PdfDocument(pdf)[0].render(scale=2).to_numpy()


def decoded_images(pdf: bytes) -> list:
    """Every image XObject of the first page as pypdf decodes it (with its soft mask applied as alpha)."""
    return [np.asarray(im.image) for im in PdfReader(io.BytesIO(pdf)).pages[0].images]


CASES = {
    "rgb": (lambda: png_of(gradient(), "RGB"), True),
    "grey": (lambda: png_of(gradient()[..., 0], "L"), True),
    "rgba opaque": (lambda: png_of(np.dstack([gradient(), np.full(gradient().shape[:2], 255, np.uint8)]), "RGBA"), False),
    "rgba": (lambda: png_of(np.dstack([gradient(), gradient()[..., 1]]), "RGBA"), False),
    "palette": (lambda: png_of(gradient()[..., 0] // 16, "P"), False),
    "interlaced": (interlaced_pixel, False),
}


@pytest.mark.parametrize("case", CASES)
def test_image_streams_decode_to_the_png_pixels(case):
    make, as_is = CASES[case]
    png = make()
    image = from_png(png)
    assert image.predicted == as_is  # 8-bit grey and RGB PNGs go in without being decoded
    with Image.open(io.BytesIO(png)) as im:
        expected = np.asarray(im.convert("RGBA" if case == "rgba" else "L" if case == "grey" else "RGB"))
    if case == "rgba opaque":
        assert image.alpha is None  # an alpha channel opaque everywhere is dropped
    pdf = page(lambda c: draw_image(c, image, 10, 10, 74, 46))
    (got,) = decoded_images(pdf)
    assert got.shape == expected.shape
    assert np.array_equal(got, expected)


@pytest.mark.parametrize("case", ["rgb", "rgba", "palette"])
def test_pages_render_as_reportlabs_own_draw_image(case):
    png = CASES[case][0]()
    ours = rendered(page(lambda c: draw_image(c, from_png(png), 10, 10, 74, 46)))
    theirs = rendered(page(lambda c: c.drawImage(ImageReader(io.BytesIO(png)), 10, 10, 74, 46, mask="auto")))
    assert np.array_equal(ours, theirs)


def test_an_image_drawn_twice_is_stored_once_and_bytes_do_not_vary():
    image = from_pixels(gradient())
    twice = page(lambda c: (draw_image(c, image, 0, 0, 40, 30), draw_image(c, image, 50, 40, 40, 30)))
    assert len(PdfReader(io.BytesIO(twice)).pages[0].images) == 1
    assert twice.count(b"/Subtype /Image") == 1
    assert twice == page(lambda c: (draw_image(c, image, 0, 0, 40, 30), draw_image(c, image, 50, 40, 40, 30)))


def test_bad_images_are_refused():
    with pytest.raises(ValueError, match="not a PNG"):
        from_png(b"GIF89a")
    with pytest.raises(ValueError, match="channels"):
        from_pixels(np.zeros((2, 2, 2), np.uint8))
