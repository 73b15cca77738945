"""A valid project file (TOML plus CSV) becomes the Project value, in SI, ids kept in file order."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from sheets.model import load_project

SPACE_FRAME = """\
[project]
title = "Roof grid over a market hall"
number = "Q-221"
revision = "B"
date = 2026-04-11

[[project.revisions]]
revision = "A"
date = 2026-03-30
note = "first issue"

[units]
force = "kN"
length = "mm"
stress = "MPa"

[geometry]
dimension = 3
nodes_file = "nodes.csv"
members_file = "members.csv"

[materials.S355]
elastic_modulus = 210000
yield_strength = 355
density = "7850 kg/m^3"

[sections.CHS60]
material = "S355"
area = "1070 mm^2"
second_moment = "431000 mm^4"

[sections.rod]
material = "S355"
area = "200 mm^2"
axial_stiffness = "50 MN"  # given directly: wins over area x E

[member_defaults]
section = "CHS60"

[nodes]
T = [0, 0, "1.5 m"]

[members]
AT = ["A", "T"]
BT = { ends = ["B", "T"], role = "strut", group = "legs" }

[supports]
A = "all"
B = ["x", "y", "z"]
C = "xyz"

[cases.dead]
title = "Permanent"
self_weight = true

[cases.service]
title = "Service load"
loads = { T = [0, 0, -15] }
loads_file = "service.csv"

[combinations.ULS]
title = "Ultimate"
factors = { dead = 1.35, service = 1.5 }

[analysis]
dense_limit = 100
"""
FILES = {
    "nodes.csv": "id,x,y,z\nA,0,0,0\nB,2000,0,0\nC, 1000 ,1732.0508,0\n",
    "members.csv": "id,start,end,section,role\nCT,C,T,rod,cable\n",
    "service.csv": "node,fx,fy,fz\nT,0.5,0,\"-2500 N\"\n",
}


def write(tmp_path: Path, **override: str) -> Path:
    for name, text in {**FILES, **override}.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
    (tmp_path / "project.toml").write_text(SPACE_FRAME, encoding="utf-8")
    return tmp_path / "project.toml"


def test_values_arrive_in_si_with_the_users_ids(tmp_path):
    project = load_project(write(tmp_path))
    assert project.dim == 3 and project.vertical_axis == 2
    assert project.node_ids == ("A", "B", "C", "T")  # CSV rows first, then [nodes]
    np.testing.assert_allclose(project.coords, [[0, 0, 0], [2, 0, 0], [1, 1.7320508, 0], [0, 0, 1.5]], rtol=1e-15)
    assert project.member_ids == ("CT", "AT", "BT")
    np.testing.assert_array_equal(project.ends, [[2, 3], [0, 3], [1, 3]])
    assert project.member_roles == ("cable", "bar", "strut")
    assert project.member_sections == ("rod", "CHS60", "CHS60")
    assert project.member_groups == ("", "", "legs")
    steel = project.materials["S355"]
    assert (steel.elastic_modulus, steel.yield_strength, steel.density) == (210e9, 355e6, 7850.0)
    chs = project.sections["CHS60"]
    assert chs.area == pytest.approx(1.07e-3, rel=1e-14) and chs.second_moment == pytest.approx(4.31e-7, rel=1e-14)
    np.testing.assert_allclose(project.member_ea(), [50e6, 1.07e-3 * 210e9, 1.07e-3 * 210e9], rtol=1e-14)
    assert project.fixed[:3].all() and not project.fixed[3].any()
    dead, service = project.cases
    assert dead.self_weight and not dead.loads.any()
    # [cases] loads and the loads file add up: 0.5 kN in x; -15 kN - 2500 N in z
    np.testing.assert_allclose(service.loads[3], [500.0, 0.0, -17500.0], rtol=1e-15)
    assert project.combinations[0].factors == (("dead", 1.35), ("service", 1.5))
    assert project.options.dense_limit == 100
    assert project.info.title == "Roof grid over a market hall" and project.info.date == "2026-04-11"
    assert project.info.revisions[0].note == "first issue"
    assert project.units.unit("length") == "mm"


def test_project_arrays_are_read_only(tmp_path):
    project = load_project(write(tmp_path))
    for array in (project.coords, project.ends, project.fixed, project.cases[1].loads):
        with pytest.raises(ValueError):
            array[0] = 0


def test_fingerprint_follows_every_included_file(tmp_path):
    first = load_project(write(tmp_path)).fingerprint
    assert load_project(write(tmp_path)).fingerprint == first  # same bytes, same fingerprint
    changed = load_project(write(tmp_path, **{"service.csv": "node,fx,fy,fz\nT,0.5,0,-2.6\n"})).fingerprint
    assert changed != first and len(first) == 64


def test_a_loaded_project_analyses(tmp_path):
    # End to end: the tripod of the file under its service load. Closed form for the legs is in
    # tests/analysis/test_closed_form.py; here the resultant of the reactions balances the loads.
    from sheets.analysis import analyse

    analysis = analyse(load_project(write(tmp_path)))
    state = analysis.state("ULS")
    np.testing.assert_allclose(state.reactions.sum(axis=0), -state.loads.sum(axis=0), rtol=1e-10)
    assert state.checks.passed
