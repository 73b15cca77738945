"""A project without [project.basis]: the design basis sheet says so, and the reviewer must obtain it."""

from __future__ import annotations

import pdfplumber

from sheets.report.echo import BASIS_MISSING


def test_missing_basis_is_stated_on_the_design_basis_page(built):
    _, result = built  # the girder project gives no [project.basis]
    with pdfplumber.open(result.pdf) as pdf:
        pages = [" ".join((page.extract_text() or "").split()) for page in pdf.pages]
    page = next(t for t in pages if "Basis given in the project file" in t)
    assert "Design basis" in page
    assert " ".join(BASIS_MISSING.split()) in page
