"""Raster images on PDF pages, encoded once where they are drawn, never at assembly.

reportlab's ``drawImage`` decodes an image, hashes its raw pixels and compresses them
again on every canvas it meets: in every layout pass of the document, in every build,
for every 3D view; that was most of the PDF stage of a set with 3D views. Here an image
becomes its PDF stream once, where the figure is drawn (a figure worker, whose result
the stage cache keeps), and the page only names it:

- an 8-bit, non-interlaced grey or RGB PNG goes in as it is: its IDAT data is a zlib
  stream of rows with PNG filters, which PDF's FlateDecode undoes with the PNG
  predictors (DecodeParms /Predictor 15; ISO 32000-1, 7.4.4.4), so nothing is decoded
  or compressed again;
- any other image (an alpha channel, a palette, 16 bits, interlacing) is decoded once:
  an alpha channel that is opaque everywhere is dropped, any other becomes a soft mask.

Each image is one XObject per PDF, named by the digest of its stream, so the same view
drawn twice is stored once, and the bytes depend on the content only.
"""

from __future__ import annotations

import hashlib
import io
import struct
import zlib
from dataclasses import dataclass

import numpy as np
from reportlab.pdfbase.pdfdoc import PDFDictionary, PDFName, PDFObject, PDFStream
from reportlab.platypus import Flowable

from sheets.report.document import layout_only

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
GREY, RGB = 0, 2  # PNG colour types that PDF reads as they are (with 8 bits, not interlaced)


@dataclass(frozen=True)
class PdfImage:
    """An image as a PDF image stream: FlateDecode data of ``colours`` (1 grey, 3 RGB) 8-bit samples."""

    width: int  # pixels
    height: int
    colours: int
    data: bytes  # the stream, compressed
    predicted: bool  # rows carry PNG filter bytes (the IDAT data of a PNG)
    alpha: "PdfImage | None" = None  # soft mask (grey), where the image is not opaque everywhere

    @property
    def name(self) -> str:
        """The XObject name: the digest of everything the stream dictionary and data hold."""
        digest = hashlib.sha256(b"%d %d %d %d " % (self.width, self.height, self.colours, self.predicted))
        digest.update(self.data)
        if self.alpha is not None:
            digest.update(self.alpha.name.encode())
        return f"SheetsImage{digest.hexdigest()[:24]}"


def from_png(png: bytes) -> PdfImage:
    """A PNG as a PDF image: its own compressed data where PDF can read it as it is, else decoded once."""
    if not png.startswith(PNG_SIGNATURE):
        raise ValueError("not a PNG image")
    header, idat, transparent = None, [], False
    at = len(PNG_SIGNATURE)
    while at + 8 <= len(png):
        length, kind = struct.unpack(">I4s", png[at:at + 8])
        body = png[at + 8:at + 8 + length]
        if kind == b"IHDR":
            header = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat.append(body)
        elif kind == b"tRNS":  # a transparent colour key: take the decoding route, which keeps it
            transparent = True
        elif kind == b"IEND":
            break
        at += 12 + length
    if header is None or not idat:
        raise ValueError("PNG without a header or image data")
    width, height, depth, colour, _compression, _filter, interlace = header
    if depth == 8 and interlace == 0 and colour in (GREY, RGB) and not transparent:
        return PdfImage(width, height, 1 if colour == GREY else 3, b"".join(idat), True)
    from PIL import Image

    with Image.open(io.BytesIO(png)) as im:
        keeps_alpha = im.mode in ("RGBA", "LA", "PA") or "transparency" in im.info
        pixels = np.asarray(im.convert("RGBA" if keeps_alpha else "RGB"))
    return from_pixels(pixels)


def from_pixels(pixels: np.ndarray) -> PdfImage:
    """An image from 8-bit samples, top row first: height x width x (1 grey, 3 RGB, or 4 RGBA)."""
    pixels = np.ascontiguousarray(pixels, dtype=np.uint8)
    if pixels.ndim == 2:
        pixels = pixels[..., None]
    height, width, channels = pixels.shape
    alpha = None
    if channels == 4:
        if not (pixels[..., 3] == 255).all():
            alpha = from_pixels(pixels[..., 3])
        pixels = pixels[..., :3]
    colours = pixels.shape[2]
    if colours not in (1, 3):
        raise ValueError(f"an image of {channels} channels: give grey, RGB or RGBA samples")
    return PdfImage(width, height, colours, zlib.compress(np.ascontiguousarray(pixels).tobytes()), False, alpha)


class _ImageStream(PDFObject):
    """The XObject of one ``PdfImage``: its dictionary and its data as they are (no filter applied again)."""

    def __init__(self, image: PdfImage):
        self.image = image
        self.smask = None  # a reference to the soft mask's XObject, set when the mask is registered

    def format(self, document):
        image = self.image
        entries = PDFDictionary()
        entries["Type"] = PDFName("XObject")
        entries["Subtype"] = PDFName("Image")
        entries["Width"] = image.width
        entries["Height"] = image.height
        entries["BitsPerComponent"] = 8
        entries["ColorSpace"] = PDFName("DeviceGray" if image.colours == 1 else "DeviceRGB")
        entries["Filter"] = PDFName("FlateDecode")  # one filter, not an array: its DecodeParms is then one dictionary
        if image.predicted:
            entries["DecodeParms"] = PDFDictionary({"Predictor": 15, "Colors": image.colours, "BitsPerComponent": 8,
                                                    "Columns": image.width})
        if self.smask is not None:
            entries["SMask"] = self.smask
        return PDFStream(entries, image.data).format(document)


def register_image(canvas, image: PdfImage) -> str:
    """The image's XObject in the canvas's document, made the first time it is drawn; its resource name.

    Does with a ready-made stream what reportlab's ``Canvas.drawImage`` does with the image it makes:
    the document's name table, and (``place``) the page's list of forms in use."""
    doc = canvas._doc
    name = doc.getXObjectName(image.name)
    if doc.idToObject.get(name) is None:
        stream = _ImageStream(image)
        if image.alpha is not None:
            stream.smask = doc.Reference(_ImageStream(image.alpha), doc.getXObjectName(image.alpha.name))
        doc.Reference(stream, name)
        doc.addForm(image.name, stream)
    return name


def place(canvas, key: str, name: str, x: float, y: float, sx: float, sy: float) -> None:
    """Draw the registered XObject ``name`` (document key ``key``) scaled by (sx, sy) at (x, y) on this page."""
    canvas.saveState()
    canvas.translate(x, y)
    canvas.scale(sx, sy)
    canvas._code.append(f"/{name} Do")
    canvas.restoreState()
    canvas._formsinuse.append(key)  # the page's resources name it (Canvas._setXObjects at showPage)


def draw_image(canvas, image: PdfImage, x: float, y: float, width: float, height: float) -> None:
    """Draw ``image`` into the rectangle at (x, y) of ``width`` x ``height`` points."""
    name = register_image(canvas, image)
    canvas._currentPageHasImages = 1
    place(canvas, image.name, name, x, y, width, height)


class ImageFlowable(Flowable):
    """A raster figure at a fixed size on the page; placed only in the pass that draws the set."""

    def __init__(self, image: PdfImage, width: float, height: float):
        super().__init__()
        self.image = image
        self.width = width
        self.height = height

    def wrap(self, avail_width, avail_height):
        return self.width, self.height

    def draw(self):
        if not layout_only(self.canv):  # a pass that only finds where things land draws nothing costly
            draw_image(self.canv, self.image, 0, 0, self.width, self.height)
