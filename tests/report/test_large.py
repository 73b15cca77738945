"""Large frames: every table prints every row, continued over pages; nothing is left to the CSV files alone."""

from __future__ import annotations

import re

import numpy as np
import pdfplumber

from sheets.analysis import analyse
from sheets.analysis.member_checks import member_checks
from sheets.model import load_project
from sheets.report.assemble import assemble
from sheets.report.templates import load_template

PANELS = 60


def _long_truss(folder):
    """An invented 60-panel Pratt truss (241 members): long enough that every table is cut."""
    nodes = [f'L{i} = [{i * 2.0}, 0]' for i in range(PANELS + 1)] + [f'U{i} = [{i * 2.0}, 2.5]' for i in range(PANELS + 1)]
    members = []
    for i in range(PANELS):
        members.append(f'B{i} = {{ ends = ["L{i}", "L{i + 1}"], group = "bottom" }}')
        members.append(f'T{i} = {{ ends = ["U{i}", "U{i + 1}"], group = "top" }}')
        a, b = (f"L{i}", f"U{i + 1}") if i < PANELS // 2 else (f"U{i}", f"L{i + 1}")
        members.append(f'D{i} = {{ ends = ["{a}", "{b}"], group = "web" }}')
    for i in range(PANELS + 1):
        members.append(f'V{i} = {{ ends = ["L{i}", "U{i}"], group = "web" }}')
    loads = ", ".join(f"U{i} = [0, -10]" for i in range(1, PANELS))
    text = f"""
[project]
title = "Long test truss"
date = "2026-01-05"
revision = "A"

[materials.steel]
elastic_modulus = "210 GPa"
yield_strength = "355 MPa"

[sections.S]
material = "steel"
area = "3000 mm^2"
second_moment = "9e6 mm^4"

[member_defaults]
section = "S"

[nodes]
{chr(10).join(nodes)}

[members]
{chr(10).join(members)}

[supports]
L0 = "xy"
L{PANELS} = "y"

[cases.G]
title = "Roof load"
loads = {{ {loads} }}

[design]
partial_factor = 1.0
effective_length_factor = 1.0
slenderness_limit = 200
"""
    path = folder / "long.toml"
    path.write_text(text)
    return path


def _reading_order(pages: list[str], row: str) -> list[tuple]:
    """Rows of a table set in one or two columns a page: down the left column, then down the right one."""
    out = []
    for text in pages:
        left, right = [], []
        for line in text.splitlines():
            found = re.findall(row, line)
            left += found[:1]
            right += found[1:]
        out += left + right
    return out


def test_tables_list_every_member_in_order(tmp_path):
    analysis = analyse(load_project(_long_truss(tmp_path)))
    checks = member_checks(analysis)
    template = load_template("a4-portrait")
    pdf = tmp_path / "long.pdf"
    pdf.write_bytes(assemble(analysis, checks, (), template))
    with pdfplumber.open(pdf) as doc:
        pages = [page.extract_text() or "" for page in doc.pages]
    text = "\n".join(pages)
    p = analysis.project
    assert p.n_members > template.table_rows  # long enough that the old sheets cut the tables
    # the member forces table prints every member, in the project's order, with its force to the printed precision
    printed = _reading_order(pages, r"(\w+) (L\d+|U\d+)-(L\d+|U\d+) [\d.]+ (-?[\d,.]+) (?:tension|compression|zero)")
    assert [row[0] for row in printed] == list(p.member_ids)
    forces = analysis.states[0].forces / p.units.factor("force")
    assert np.allclose([float(row[3].replace(",", "")) for row in printed], forces, atol=0.006)
    assert "are shown; all of them are in" not in text
    # the envelope and the member checks list every member too (one row each)
    flat = " ".join(text.split())
    assert "Every member checked, largest utilisation first" in flat
    for mid in p.member_ids:
        assert len(re.findall(rf"(?:^| ){mid} ", text, re.M)) >= 3, mid  # the members, forces and envelope tables
