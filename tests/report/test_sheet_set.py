"""The PDF sheet set read back: title block, numbers against the results JSON, cautions, PDF qualities.

The PDF is parsed with pdfplumber and pypdf, independent readers of the file
(test-only dependencies), and rendered with pypdfium2 (PDFium).
"""

from __future__ import annotations

import hashlib
import io
import json
import re

import numpy as np
import pdfplumber
import pypdf
import pypdfium2
import pytest

from sheets.report.templates import load_template


def _pages_text(pdf_path) -> list[str]:
    with pdfplumber.open(pdf_path) as pdf:
        return [page.extract_text() or "" for page in pdf.pages]


def test_every_output_is_written_and_listed(built):
    path, result = built
    out = result.pdf.parent
    assert result.pdf.name == "girder.pdf" and result.passed
    for name in ("results.json", "csv/forces.csv", "csv/member_checks.csv", "csv/members.csv", "manifest.json",
                 "figures/form-model.pdf", "figures/loads-G.pdf", "figures/loads-Q.pdf"):
        assert (out / name).is_file(), name
    manifest = json.loads((out / "manifest.json").read_text())
    assert manifest["input_fingerprint"] == json.loads((out / "results.json").read_text())["project"]["fingerprint"]
    for name, digest in manifest["files"].items():
        assert hashlib.sha256((out / name).read_bytes()).hexdigest() == digest, name
    text = "\n".join(_pages_text(result.pdf))
    for name in manifest["files"]:
        if name != result.pdf.name:
            assert name in text, f"{name} is not listed in the PDF"


def test_title_block_and_footer_on_every_page(built):
    path, result = built
    doc = json.loads((result.pdf.parent / "results.json").read_text())
    fingerprint = doc["project"]["fingerprint"]
    pages = _pages_text(result.pdf)
    n = len(pages)
    assert n >= 8
    caution = load_template("a4-portrait").footer_caution
    for i, text in enumerate(pages, start=1):
        for value in ("Brackwater footbridge - main girder", "TEST-0042", "Warren girder G1, 12 m span",
                      "2026-09-14", "A. Testwright", "B. Reviewson", fingerprint, caution):
            assert value in text, f"page {i} lacks {value!r}"
        # the sheet number and the revision sit side by side in the title block
        assert re.search(rf"\b{i} of {n} C\b", text), f"page {i} lacks 'sheet {i} of {n}' and revision C"


def test_cautions_page_and_indicative_label(built):
    _, result = built
    pages = _pages_text(result.pdf)
    template = load_template("a4-portrait")
    cautions_page = next(t for t in pages if "Cautions and limitations\n" in t and "licensed" in t)
    flat = " ".join(cautions_page.split())
    for paragraph in template.cautions:
        assert " ".join(paragraph.split())[:60] in flat
    checks_page = next(t for t in pages if "Member checks (indicative)\n" in t)
    assert "not a code check" in checks_page


def _state_tables(pages: list[str]) -> dict[str, dict[str, float]]:
    """Member forces printed under each state heading: {state id: {member: force}}."""
    row = re.compile(r"^(\w+) (\w+)-(\w+) ([\d,.]+) (-?[\d,.]+) (tension|compression|zero)$")
    head = re.compile(r"^(?:Load case|Combination|Prestress) (\S+): ")
    tables: dict[str, dict[str, float]] = {}
    current = None
    for text in pages:
        for line in text.splitlines():
            m = head.match(line)
            if m:
                current = m.group(1)
                continue
            m = row.match(line)
            if m and current is not None:
                tables.setdefault(current, {})[m.group(1)] = float(m.group(5).replace(",", ""))
    return tables


def test_force_tables_equal_results_json(built):
    _, result = built
    doc = json.loads((result.pdf.parent / "results.json").read_text())
    tables = _state_tables(_pages_text(result.pdf))
    assert set(tables) == {s["id"] for s in doc["states"]}
    for state in doc["states"]:
        printed = tables[state["id"]]
        assert set(printed) == set(state["forces"])
        for member, value in state["forces"].items():
            # printed to 2 decimals in kN (the display unit named in the JSON)
            assert printed[member] == pytest.approx(round(value, 2), abs=0.0051), (state["id"], member)


def test_member_check_summary_equals_results_json(built):
    _, result = built
    doc = json.loads((result.pdf.parent / "results.json").read_text())
    governing = doc["member_checks"]["governing"]
    text = " ".join(" ".join(_pages_text(result.pdf)).split())
    assert f"{governing['member']}: utilisation {governing['utilisation']:.3f}" in text
    # and the CSV holds the same governing value for that member
    csv_text = (result.pdf.parent / "csv" / "member_checks.csv").read_text()
    line = next(r for r in csv_text.splitlines() if r.startswith(governing["member"] + ","))
    assert float(line.split(",")[-2]) == pytest.approx(governing["utilisation"])


def test_pdf_metadata_outline_and_embedded_fonts(built):
    _, result = built
    reader = pypdf.PdfReader(result.pdf)
    meta = reader.metadata
    assert meta.title == "Brackwater footbridge - main girder: Warren girder G1, 12 m span"
    assert meta.author == "A. Testwright"
    assert "revision C" in meta.get("/Keywords", "")
    assert meta.get("/CreationDate", "").startswith("D:20260914")  # the project date, not the clock
    titles = [item.title for item in reader.outline if not isinstance(item, list)]
    for title in ("Design basis", "The model", "Stability and determinacy", "Member checks (indicative)",
                  "Cautions and limitations"):
        assert title in titles
    fonts = {}
    for page in reader.pages:
        for font in (page.get("/Resources", {}).get("/Font", {}) or {}).values():
            font = font.get_object()
            fonts[font["/BaseFont"]] = font
    assert fonts
    for name, font in fonts.items():
        assert "Helvetica" not in name and "Times" not in name, name
        descendant = font["/DescendantFonts"][0].get_object() if "/DescendantFonts" in font else font
        descriptor = descendant["/FontDescriptor"].get_object()
        assert "/FontFile2" in descriptor, f"{name} is not embedded"


def test_figures_are_vectors(built):
    _, result = built
    with pdfplumber.open(result.pdf) as pdf:
        page = next(p for p in pdf.pages if "Form diagram: geometry, labels and supports" in (p.extract_text() or ""))
        assert not page.images  # a 2D figure carries no raster
        assert len(page.curves) + len(page.lines) > 50


def test_pages_render_and_are_not_blank(built):
    _, result = built
    pdf = pypdfium2.PdfDocument(str(result.pdf))
    try:
        for index in (0, len(pdf) // 2, len(pdf) - 1):
            image = np.asarray(pdf[index].render(scale=0.6).to_pil().convert("L"), dtype=float)
            ink = (image < 200).mean()
            assert 0.005 < ink < 0.5, f"page {index + 1} looks blank or black ({ink:.3%} ink)"
    finally:
        pdf.close()


def test_vector_figure_file_has_no_fonts_and_no_images(built):
    _, result = built
    reader = pypdf.PdfReader(result.pdf.parent / "figures" / "form-model.pdf")
    forms = [x.get_object() for x in reader.pages[0]["/Resources"]["/XObject"].values()]
    assert [f["/Subtype"] for f in forms] == ["/Form"]  # the figure is one form XObject (sheets.report.pdf_form)
    assert "/XObject" not in forms[0]["/Resources"]  # and it names no raster
    assert reader.pages[0].extract_text().strip() == ""  # labels are glyph outlines, not font text
    with pdfplumber.open(result.pdf.parent / "figures" / "form-model.pdf") as pdf:
        assert len(pdf.pages[0].curves) + len(pdf.pages[0].lines) > 50


def test_metadata_round_trips_through_a_second_reader(built):
    _, result = built
    with pdfplumber.open(io.BytesIO(result.pdf.read_bytes())) as pdf:
        assert pdf.metadata["Author"] == "A. Testwright"
