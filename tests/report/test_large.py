"""Large frames: the sheets summarise (largest values, groups) and point to the CSV files for the rest."""

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


def test_tables_show_the_largest_and_name_the_csv(tmp_path):
    analysis = analyse(load_project(_long_truss(tmp_path)))
    checks = member_checks(analysis)
    template = load_template("a4-portrait")
    pdf = tmp_path / "long.pdf"
    pdf.write_bytes(assemble(analysis, checks, (), template))
    with pdfplumber.open(pdf) as doc:
        text = "\n".join(page.extract_text() or "" for page in doc.pages)
    m = analysis.project.n_members
    rows = template.table_rows
    assert f"The {rows} largest by |force| of {m} members are shown; all of them are in csv/forces.csv." in text
    # the printed rows are exactly the largest |force| members, in that order (ids are unique strings)
    printed = re.findall(r"^(\w+) (L\d+|U\d+)-(L\d+|U\d+) [\d.]+ (-?[\d,.]+) (?:tension|compression|zero)$", text, re.M)
    forces = analysis.states[0].forces
    expected = [analysis.project.member_ids[e] for e in np.argsort(-np.abs(forces), kind="stable")[:rows]]
    assert [p[0] for p in printed] == expected
    assert "Every member's checks are in csv/member_checks.csv." in " ".join(text.split())
    assert f"The {m} members (ends, length, section, role, group) are listed in csv/members.csv." in " ".join(text.split())
