"""A test frame shared by the command-line and determinacy tests: a plane truss of two panels."""

from __future__ import annotations

from pathlib import Path

# A plane truss of two panels: the left one braced, the right one not (one mechanism, the sway of
# the right panel; Maxwell's count m - 2n + fixed = 9 - 12 + 3 = 0 hides one self-stress state
# in the braced panel and that mechanism). Supports and loads are added per test.
TWO_PANELS = """\
[project]
title = "Two panels [bay 3] :100: rev"
{project_extra}

[units]
force = "kN"

[materials.steel]
elastic_modulus = "200 GPa"

[sections.bar]
material = "steel"
area = "500 mm^2"

[member_defaults]
section = "bar"

[nodes]
BL = [0, 0]
BM = [1, 0]
BR = [2, 0]
TL = [0, 1]
TM = [1, 1]
TR = [2, 1]

[members]
b1 = ["BL", "BM"]
b2 = ["BM", "BR"]
t1 = ["TL", "TM"]
t2 = ["TM", "TR"]
v1 = ["BL", "TL"]
v2 = ["BM", "TM"]
v3 = ["BR", "TR"]
d1 = ["BL", "TM"]
d2 = ["BM", "TL"]
{supports}
[cases.gravity]
loads = {{ TR = [0, -5] }}
{more}
"""
SUPPORTS = '\n[supports]\nBL = "xy"\nBR = "y"\n'


def project(tmp_path: Path, *, supports: str = SUPPORTS, more: str = "", project_extra: str = "") -> Path:
    path = tmp_path / "panels.toml"
    path.write_text(TWO_PANELS.format(supports=supports, more=more, project_extra=project_extra), encoding="utf-8")
    return path
