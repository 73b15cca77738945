"""Assemble a sheet set: sections in the template's order -> PDF bytes.

Pure: takes the values the earlier stages made and returns bytes; writing the
file (atomically) is sheets.build's job. The same inputs give the same bytes.
"""

from __future__ import annotations

import io
from typing import Any

from reportlab.platypus import PageBreak

from sheets import __version__
from sheets.analysis import Analysis
from sheets.analysis.member_checks import MemberChecks
from sheets.report.document import Layout, Metadata, PageCount, SheetDocument, binary_streams
from sheets.report.figures import SheetFigure
from sheets.report.fonts import register_fonts
from sheets.report.sections import SECTIONS, IssuedFile, SheetSet
from sheets.report.tables import make_styles
from sheets.report.templates import Template, section_order


def metadata(analysis: Analysis) -> Metadata:
    p = analysis.project
    info = p.info
    title = f"{info.title}: {info.calculation}" if info.calculation else info.title
    keywords = ["calculation sheets", "indicative", "pin-jointed frame", "graphic statics"]
    keywords += [f"project {info.number}"] if info.number else []
    keywords += [f"revision {info.revision}"] if info.revision else []
    keywords.append(f"input sha256 {p.fingerprint}")
    return Metadata(
        title=title,
        author=info.prepared_by,
        subject=f"Indicative calculation sheets{': ' + info.calculation if info.calculation else ''} "
                f"(revision {info.revision or '-'}, {info.date or 'undated'})",
        keywords=tuple(keywords),
        date=info.date,
    )


def assemble(analysis: Analysis, checks: MemberChecks, figures: tuple[SheetFigure, ...], template: Template, *,
             issued: tuple[IssuedFile, ...] = (), sizing: Any | None = None, notes: tuple[str, ...] = (),
             comparison: Any | None = None) -> bytes:
    """The whole sheet set as PDF bytes; ``comparison`` (sheets.revision.compare) adds the revision comparison."""
    return assemble_from(None, analysis, checks, figures, template, issued=issued, sizing=sizing, notes=notes,
                         comparison=comparison)[0]


def assemble_from(seed: Layout | None, analysis: Analysis, checks: MemberChecks, figures: tuple[SheetFigure, ...],
                  template: Template, *, issued: tuple[IssuedFile, ...] = (), sizing: Any | None = None,
                  notes: tuple[str, ...] = (), comparison: Any | None = None) -> tuple[bytes, Layout]:
    """``assemble``, starting from the layout of an earlier build of the set (``seed``, or None), and the layout
    this one found: the same bytes whatever the seed (SheetDocument.multiBuild), fewer passes where it holds."""
    fonts = register_fonts()
    styles = make_styles(fonts, template.font_size)
    buffer = io.BytesIO()
    p = analysis.project
    doc = SheetDocument(buffer, template, p.info, p.fingerprint, fonts, metadata(analysis), __version__)
    sheet = SheetSet(analysis, checks, tuple(figures), template, doc.body_width, doc.body_height, tuple(issued), sizing,
                     tuple(notes), comparison)
    story: list = []
    for name in section_order(template, {"comparison"} if comparison is not None else set()):
        flowables = SECTIONS[name](sheet, styles)
        if flowables and story:
            story.append(PageBreak())  # every section starts on a new sheet
        story.extend(flowables)
    story.append(PageCount(doc))
    with binary_streams():
        doc.multiBuild(story, seed=seed)
    return buffer.getvalue(), doc.layout
