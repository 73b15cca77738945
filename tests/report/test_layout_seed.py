"""Assembling from an earlier build's page layout (SheetDocument.multiBuild ``seed``).

The claim under test: the pages fall alike whatever page numbers the passes start from,
so a build seeded with any layout, right, stale or foreign, writes the bytes of a build
from nothing; a right seed takes one pass instead of the usual four.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import pytest

from sheets.analysis import analyse
from sheets.analysis.member_checks import member_checks
from sheets.model import load_project
from sheets.report import document
from sheets.report.assemble import assemble_from
from sheets.report.templates import load_template

DEMOS = Path(__file__).resolve().parents[2] / "demo_projects"


@pytest.fixture(scope="module")
def roof():
    analysis = analyse(load_project(DEMOS / "warehouse_roof" / "warehouse_roof.toml"))
    return analysis, member_checks(analysis), load_template("a4-portrait")


def _assembled(seed, roof, monkeypatch) -> tuple[bytes, document.Layout, int]:
    passes = []
    build = document.SheetDocument.build

    def counted(self, *args, **kw):
        passes.append(self.drawing)
        return build(self, *args, **kw)

    monkeypatch.setattr(document.SheetDocument, "build", counted)
    analysis, checks, template = roof
    pdf, layout = assemble_from(seed, analysis, checks, (), template)
    monkeypatch.setattr(document.SheetDocument, "build", build)
    return pdf, layout, len(passes)


def test_a_seed_gives_the_same_bytes_in_one_pass(roof, monkeypatch):
    fresh, layout, passes = _assembled(None, roof, monkeypatch)
    assert passes >= 3 and layout.pages > 1 and len(layout.contents[0]) > 5
    seeded, again, one = _assembled(layout, roof, monkeypatch)
    assert one == 1
    assert seeded == fresh and again == layout


def test_a_wrong_seed_still_gives_the_same_bytes(roof, monkeypatch):
    fresh, layout, _ = _assembled(None, roof, monkeypatch)
    shifted = tuple(tuple((level, text, page + 3, key) for level, text, page, key in toc) for toc in layout.contents)
    stale = replace(layout, contents=shifted, pages=layout.pages + 5)
    foreign = document.Layout((((0, "A section of another set", 2, "x"),),), 40)
    for seed in (stale, foreign, document.Layout((), 3)):
        pdf, found, passes = _assembled(seed, roof, monkeypatch)
        assert pdf == fresh and found == layout
        assert passes > 1  # the seed did not hold: laid out again until the pages settled
