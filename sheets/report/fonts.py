"""Embedded fonts: DejaVu Sans (regular, bold) and DejaVu Sans Mono from matplotlib's data.

reportlab's standard 14 fonts are not embedded in the PDF, so a reader may
substitute them; a TrueType font registered here is embedded (subset) in every
sheet set. DejaVu ships with matplotlib (mpl-data/fonts/ttf), which the package
already depends on, so no extra font files are needed. It also covers the
symbols the sheets print (Greek letters, superscripts, <=, x).

reportlab keeps registered fonts in a process-wide table; registering is
idempotent, so calling ``register_fonts`` from each build is safe.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import matplotlib
from reportlab.lib.fonts import addMapping
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont


@dataclass(frozen=True)
class Fonts:
    regular: str = "SheetsSans"
    bold: str = "SheetsSans-Bold"
    mono: str = "SheetsMono"


FILES = {
    "SheetsSans": "DejaVuSans.ttf",
    "SheetsSans-Bold": "DejaVuSans-Bold.ttf",
    "SheetsSans-Oblique": "DejaVuSans-Oblique.ttf",
    "SheetsMono": "DejaVuSansMono.ttf",
}


def font_folder() -> Path:
    return Path(matplotlib.get_data_path()) / "fonts" / "ttf"


def register_fonts() -> Fonts:
    """Register the TrueType fonts with reportlab (once per process) and return their names."""
    folder = font_folder()
    registered = set(pdfmetrics.getRegisteredFontNames())
    for name, file in FILES.items():
        if name not in registered:
            pdfmetrics.registerFont(TTFont(name, str(folder / file)))
    # <b> and <i> in paragraphs map onto the embedded faces, never a standard-14 font
    addMapping("SheetsSans", 0, 0, "SheetsSans")
    addMapping("SheetsSans", 1, 0, "SheetsSans-Bold")
    addMapping("SheetsSans", 0, 1, "SheetsSans-Oblique")
    addMapping("SheetsSans", 1, 1, "SheetsSans-Bold")
    return Fonts()
