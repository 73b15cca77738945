"""A recorded vector figure as one PDF form XObject, compressed where the figure is drawn.

Replaying a figure's path operators onto the page that shows it, and compressing them again
with the page in every build, was much of the PDF stage of a set with force diagrams. A
form XObject is the figure's operators in a stream of its own (ISO 32000-1, 8.10): made
and compressed once (in the figure worker, and kept in the stage cache with the figure),
then placed on a page by name with a scale. The figure files in figures/ place the same
form, so a figure is encoded once for both.

The form carries its own resources: an ExtGState per (fill alpha, stroke alpha) pair it
uses, and its raster images (sheets.report.pdf_image), which the page's document holds
once each.
"""

from __future__ import annotations

import hashlib
import zlib
from dataclasses import dataclass

from reportlab.pdfbase.pdfdoc import PDFArray, PDFDictionary, PDFName, PDFObject, PDFObjectReference, PDFStream

from sheets.report.pdf_image import PdfImage, place, register_image


@dataclass(frozen=True)
class PdfForm:
    """A figure's operators in points (origin at the lower left), compressed, with what they name."""

    width: float
    height: float
    data: bytes  # the content stream, FlateDecode
    alphas: tuple[tuple[float, float], ...]  # ExtGState /A<i>: (fill alpha, stroke alpha)
    images: tuple[PdfImage, ...]  # XObject /I<i>

    @property
    def name(self) -> str:
        """The XObject name: the digest of the stream and of everything it names."""
        digest = hashlib.sha256(repr((self.width, self.height, self.alphas)).encode())
        digest.update(self.data)
        for image in self.images:
            digest.update(image.name.encode())
        return f"SheetsForm{digest.hexdigest()[:24]}"


def operators(ops: tuple) -> tuple[str, tuple, tuple]:
    """A VectorFigure's ops (sheets.report.vector) as content-stream operators, the alpha pairs and the images
    they name. Styles and alphas are set only where they change; leaving a clip (Q) resets both."""
    out: list[str] = []
    alphas: dict[tuple[float, float], int] = {}
    images: dict[str, tuple[int, PdfImage]] = {}
    current_clip = None
    clipped = False
    style = alpha = None
    for op in ops:
        clip = op[-1]
        if clip != current_clip:
            if clipped:
                out.append("Q")
                clipped = False
                style = alpha = None
            if clip is not None:
                out.append(f"q {clip} W n")
                clipped = True
            current_clip = clip
        if op[0] == "path":
            _, code, op_style, op_alpha, paint, _clip = op
            if op_alpha != alpha:
                out.append(f"/A{alphas.setdefault(op_alpha, len(alphas))} gs")
                alpha = op_alpha
            if op_style != style:
                out.append(op_style)
                style = op_style
            out.append(f"{code} {paint}")
        else:
            _, x, y, w, h, image, _clip = op
            number = images.setdefault(image.name, (len(images), image))[0]
            out.append(f"q {w:.4f} 0 0 {h:.4f} {x:.4f} {y:.4f} cm /I{number} Do Q")
    if clipped:
        out.append("Q")
    return "\n".join(out), tuple(alphas), tuple(image for _, image in images.values())


def pdf_form(width: float, height: float, ops: tuple) -> PdfForm:
    text, alphas, images = operators(ops)
    return PdfForm(width, height, zlib.compress(text.encode("latin-1")), alphas, images)


class _FormStream(PDFObject):
    """The XObject of one ``PdfForm``: dictionary, resources and the stream as it is (no filter applied again)."""

    def __init__(self, form: PdfForm, images: list[str]):
        self.form = form
        self.images = images  # the document's XObject names of the form's images, in order

    def format(self, document):
        form = self.form
        resources = PDFDictionary()
        if form.alphas:
            resources["ExtGState"] = PDFDictionary({f"A{i}": PDFDictionary({"Type": PDFName("ExtGState"), "ca": fill,
                                                                             "CA": stroke})
                                                    for i, (fill, stroke) in enumerate(form.alphas)})
        if self.images:
            resources["XObject"] = PDFDictionary({f"I{i}": PDFObjectReference(name) for i, name in enumerate(self.images)})
        entries = PDFDictionary()
        entries["Type"] = PDFName("XObject")
        entries["Subtype"] = PDFName("Form")
        entries["BBox"] = PDFArray([0, 0, form.width, form.height])
        entries["Resources"] = resources
        entries["Filter"] = PDFName("FlateDecode")
        return PDFStream(entries, form.data).format(document)


def draw_form(canvas, form: PdfForm, x: float, y: float, scale: float = 1.0) -> None:
    """Place ``form`` with its lower left corner at (x, y), scaled by ``scale``."""
    doc = canvas._doc
    name = doc.getXObjectName(form.name)
    if doc.idToObject.get(name) is None:  # first time in this document: the form and its images
        stream = _FormStream(form, [register_image(canvas, image) for image in form.images])
        doc.Reference(stream, name)
        doc.addForm(form.name, stream)
    if form.images:
        canvas._currentPageHasImages = 1
    place(canvas, form.name, name, x, y, scale, scale)
