"""Revision comparison: scripted changes whose effects are known by statics.

Two separate, statically determinate triangles in one project: a load changed on
the second triangle changes the forces of its three members only, since the
first triangle's equilibrium does not involve it (method of joints on each
triangle alone; closed form below).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from sheets.build import compare_revisions, results_of
from sheets.cli import main
from sheets.revision.compare import compare_results

DEMOS = Path(__file__).resolve().parents[2] / "demo_projects"

TWO_TRIANGLES = """
[project]
title = "Two trestles"
revision = "{revision}"
date = "2026-12-01"

[units]
force = "{force_unit}"
length = "m"

[materials.steel]
elastic_modulus = "210 GPa"
yield_strength = "355 MPa"

[sections.S1]
material = "steel"
area = "1500 mm^2"
second_moment = "1.2e6 mm^4"

[sections.S2]
material = "steel"
area = "2500 mm^2"
second_moment = "2.0e6 mm^4"

[member_defaults]
section = "S1"

[nodes]
A1 = [0.0, 0.0]
B1 = [4.0, 0.0]
C1 = [2.0, {apex}]
A2 = [10.0, 0.0]
B2 = [14.0, 0.0]
C2 = [12.0, 1.5]

[members]
a1 = ["A1", "B1"]
b1 = ["B1", "C1"]
c1 = ["C1", "A1"]
a2 = ["A2", "B2"]
b2 = ["B2", "C2"]
c2 = {{ ends = ["C2", "A2"], section = "{c2_section}" }}

[supports]
A1 = "xy"
B1 = "y"
A2 = "xy"
B2 = "y"

[cases.G]
loads.C1 = [0, -{p1}]
loads.C2 = [0, -{p2}]

[design]
partial_factor = 1.0
effective_length_factor = 1.0
"""


def _write(path: Path, *, p1=10.0, p2=20.0, apex=1.5, c2_section="S1", revision="A", force_unit="kN") -> Path:
    scale = 1000.0 if force_unit == "N" else 1.0
    path.write_text(TWO_TRIANGLES.format(p1=p1 * scale, p2=p2 * scale, apex=apex, c2_section=c2_section,
                                         revision=revision, force_unit=force_unit), encoding="utf-8")
    return path


def test_the_same_revision_has_no_change(tmp_path):
    a = _write(tmp_path / "a.toml")
    c = compare_revisions(a, a)
    assert c.empty and c.changed_members == ()


def test_a_load_change_names_exactly_the_members_it_moves(tmp_path):
    old, new = _write(tmp_path / "a.toml"), _write(tmp_path / "b.toml", p2=26.0, revision="B")
    c = compare_revisions(old, new)
    assert [(x.what, x.item, x.state) for x in c.loads] == [("load", "C2", "G")]
    assert c.geometry == () and c.states == ()
    assert sorted(x.item for x in c.forces) == ["a2", "b2", "c2"]
    # closed form, symmetric triangle of half-span 2 m and rise 1.5 m (legs 2.5 m): each leg carries
    # P/2 / (1.5/2.5) = 5P/6 in compression, the tie P/2 * 2/1.5 = 2P/3 in tension
    tie = next(x for x in c.forces if x.item == "a2")
    assert (tie.old, tie.new) == (pytest.approx(2 / 3 * 20e3), pytest.approx(2 / 3 * 26e3))
    leg = next(x for x in c.forces if x.item == "b2")
    assert (leg.old, leg.new) == (pytest.approx(-5 / 6 * 20e3), pytest.approx(-5 / 6 * 26e3))
    assert "revision A" in c.old and "revision B" in c.new


def test_a_small_change_stays_below_the_threshold(tmp_path):
    """A 1% load change moves forces by 1% of the second triangle's forces, under 1% of the state's largest."""
    old, new = _write(tmp_path / "a.toml"), _write(tmp_path / "b.toml", p2=20.1)
    assert compare_revisions(old, new).forces == ()
    assert sorted(x.item for x in compare_revisions(old, new, force_change=1e-4).forces) == ["a2", "b2", "c2"]


def test_geometry_and_section_changes(tmp_path):
    old = _write(tmp_path / "a.toml")
    new = _write(tmp_path / "b.toml", apex=2.0, c2_section="S2")
    c = compare_revisions(old, new)
    assert [(x.what, x.item) for x in c.geometry] == [("node moved", "C1"), ("member section changed", "c2")]
    moved = c.geometry[0]
    assert moved.old == [2.0, 1.5] and moved.new == [2.0, 2.0]
    # C1 moved: the first triangle's forces change; the second's do not (same loads, same geometry)
    assert sorted({x.item for x in c.forces}) == ["a1", "b1", "c1"]
    # a larger section for c2 lowers its utilisation only
    assert [x.item for x in c.utilisations if x.item.endswith("2")] == ["c2"]
    assert "c2" in c.changed_members and "a2" not in c.changed_members


def test_display_units_do_not_make_changes(tmp_path):
    """The same design written in kN and in N is the same design."""
    c = compare_revisions(_write(tmp_path / "kn.toml"), _write(tmp_path / "n.toml", force_unit="N"))
    assert c.loads == () and c.forces == () and c.geometry == ()


def test_results_json_and_project_file_agree(tmp_path):
    old, new = _write(tmp_path / "a.toml"), _write(tmp_path / "b.toml", p2=26.0)
    issued = tmp_path / "a-results.json"
    issued.write_text(json.dumps(results_of(old)), encoding="utf-8")
    from_json, from_project = compare_revisions(issued, new), compare_revisions(old, new)
    assert from_json.forces == from_project.forces and from_json.loads == from_project.loads


def test_added_and_removed_members_and_nodes(tmp_path):
    old = results_of(DEMOS / "warehouse_roof" / "warehouse_roof.toml")
    new = json.loads(json.dumps(old))
    new["members"] = [m for m in new["members"] if m["id"] != "V3"]
    new["nodes"].append({"id": "X9", "coordinates": [20.0, 0.0], "fixed": []})
    c = compare_results(old, new)
    assert [(x.what, x.item) for x in c.geometry] == [("node added", "X9"), ("member removed", "V3")]


def test_cli_diff(tmp_path, capsys):
    old, new = _write(tmp_path / "a.toml"), _write(tmp_path / "b.toml", p2=26.0)
    out = tmp_path / "cmp.json"
    assert main(["diff", str(old), str(new), "--json", str(out)]) == 0
    text = " ".join(capsys.readouterr().out.split())
    assert "member force" in text and "kN" in text
    doc = json.loads(out.read_text(encoding="utf-8"))
    assert doc["schema"] == "sheets.comparison/1" and doc["changed_members"] == ["a2", "b2", "c2"]
    bad = tmp_path / "bad.json"
    bad.write_text('{"schema": "something else"}', encoding="utf-8")
    assert main(["diff", str(bad), str(new)]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "bad.json" in err and "sheets.results/1" in err and "Traceback" not in err
    assert np.isfinite(doc["load_paths"][0]["new"])
