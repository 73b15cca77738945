"""Every way a project file can be wrong gives a ProjectError that says where and what to do.

Each problem must name the file (the CSV where the row is in a CSV), the key path,
the line where known, and carry a hint; all problems of a file come in one pass.
The fixture project is written into tmp_path by each test, then broken on purpose.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from sheets.errors import EXIT_BAD_INPUT, Problem, ProjectError
from sheets.model import load_project

BASE = """\
[project]
title = "Canopy over a loading bay"
number = "P-014"
date = 2026-03-02

[units]
force = "kN"
length = "m"

[geometry]
dimension = 2
nodes_file = "nodes.csv"
members_file = "members.csv"

[materials.steel]
elastic_modulus = "210 GPa"
density = 7850

[sections.tube]
material = "steel"
area = "1200 mm^2"

[member_defaults]
section = "tube"

[nodes]
C = [3, 2]

[members]
AC = ["A", "C"]
CB = ["C", "B"]

[supports]
A = "xy"
B = "y"

[cases.snow]
title = "Snow"
loads = { C = [0, -12] }

[cases.wind]
loads_file = "wind.csv"

[combinations.ULS]
factors = { snow = 1.5, wind = 0.9 }
"""
FILES = {
    "nodes.csv": "id,x,y\nA,0,0\nB,6,0\n",
    "members.csv": "id,start,end\nAB,A,B\n",
    "wind.csv": 'node,fx,fy\nC,"2 kN",-1\n',
}


def write(tmp_path: Path, toml: str = BASE, **files: str) -> Path:
    for name, text in {**FILES, **{k.replace("_csv", ".csv"): v for k, v in files.items()}}.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
    path = tmp_path / "project.toml"
    path.write_text(toml, encoding="utf-8")
    return path


def line_of(text: str, snippet: str) -> int:
    """1-based number of the only line of ``text`` holding ``snippet``."""
    hits = [k for k, line in enumerate(text.splitlines(), start=1) if snippet in line]
    assert len(hits) == 1, (snippet, hits)
    return hits[0]


def problems(path: Path) -> tuple[Problem, ...]:
    with pytest.raises(ProjectError) as info:
        load_project(path)
    assert info.value.exit_code == EXIT_BAD_INPUT == 2
    for p in info.value.problems:
        assert p.hint, p  # every problem says what to do
        assert p.file, p
    return info.value.problems


def only(found, *, where=None, contains=""):
    matches = [p for p in found if (where is None or p.where == where) and contains in p.message]
    assert len(matches) == 1, (where, contains, found)
    return matches[0]


def broken(old: str, new: str) -> str:
    assert BASE.count(old) == 1, old
    return BASE.replace(old, new)


def test_the_base_fixture_is_valid(tmp_path):
    project = load_project(write(tmp_path))
    assert project.node_ids == ("A", "B", "C")


def test_malformed_toml_gives_the_line(tmp_path):
    text = broken('title = "Snow"', 'title = "Snow')
    (p,) = problems(write(tmp_path, text))
    assert p.line == line_of(text, 'title = "Snow')
    assert "not valid TOML" in p.message and p.file.endswith("project.toml")


def test_duplicate_toml_key_is_a_syntax_error_with_its_line(tmp_path):
    text = broken("C = [3, 2]", "C = [3, 2]\nC = [3, 3]")
    (p,) = problems(write(tmp_path, text))
    assert p.line == line_of(text, "C = [3, 3]")


def test_not_utf8(tmp_path):
    path = write(tmp_path)
    path.write_bytes(BASE.encode("utf-8").replace(b"Canopy", b"Can\xffopy"))
    (p,) = problems(path)
    assert "UTF-8" in p.message


def test_unknown_keys_suggest_the_near_one(tmp_path):
    text = broken("[cases.snow]\n", "[cases.snow]\nself_wieght = true\n").replace("[geometry]\n", "[geometry]\ndimensions = 2\n", 1)
    found = problems(write(tmp_path, text))
    p = only(found, where="cases.snow.self_wieght")
    assert "did you mean 'self_weight'?" in p.hint and p.line == line_of(text, "self_wieght")
    p = only(found, where="geometry.dimensions")
    assert "'dimension'" in p.hint and p.line == line_of(text, "dimensions = 2")


def test_unknown_top_level_table(tmp_path):
    text = BASE + "\n[suports]\nC = \"x\"\n"
    p = only(problems(write(tmp_path, text)), where="suports")
    assert "did you mean 'supports'?" in p.hint and p.line == line_of(text, "[suports]")


@pytest.mark.parametrize(
    "old, new, where, contains",
    [
        ('elastic_modulus = "210 GPa"\n', "", "materials.steel", "missing 'elastic_modulus'"),
        ('area = "1200 mm^2"\n', "", "sections.tube", "needs 'area'"),
        ('title = "Canopy over a loading bay"\n', "", "project", "missing 'title'"),
        ('CB = ["C", "B"]', 'CB = { section = "tube" }', "members.CB", "'ends' must be two node ids"),
        ("C = [3, 2]", "C = [3]", "nodes.C", "expected 2 components"),
    ],
)
def test_missing_fields(tmp_path, old, new, where, contains):
    text = broken(old, new)
    p = only(problems(write(tmp_path, text)), where=where, contains=contains)
    assert p.line is not None and p.file.endswith("project.toml")


def test_missing_project_table_and_no_cases(tmp_path):
    text = BASE.split("[units]")[1].split("[cases.snow]")[0]
    found = problems(write(tmp_path, "[units]" + text))
    only(found, contains="missing table [project]")
    only(found, where="cases", contains="no load cases")


def test_duplicate_node_ids_within_and_across_files(tmp_path):
    text = broken("C = [3, 2]", "C = [3, 2]\nA = [1, 1]")
    found = problems(write(tmp_path, text, nodes_csv="id,x,y\nA,0,0\nB,6,0\nB,7,0\n"))
    in_toml = only(found, where="nodes.A", contains="duplicate node id 'A'")
    assert in_toml.line == line_of(text, "A = [1, 1]") and "nodes.csv:2" in in_toml.message
    in_csv = only(found, contains="duplicate node id 'B'")
    assert in_csv.file.endswith("nodes.csv") and in_csv.line == 4 and "nodes.csv:3" in in_csv.message


def test_duplicate_member_ids_across_files(tmp_path):
    text = broken('CB = ["C", "B"]', 'CB = ["C", "B"]\nAB = ["A", "C"]')
    p = only(problems(write(tmp_path, text)), contains="duplicate member id 'AB'")
    assert p.where == "members.AB" and p.line == line_of(text, 'AB = ["A", "C"]') and "members.csv:2" in p.message


def test_members_naming_unknown_nodes(tmp_path):
    text = broken('CB = ["C", "B"]', 'CB = ["C", "BB"]')
    found = problems(write(tmp_path, text, members_csv="id,start,end\nAB,A,Z\n"))
    p = only(found, where="members.CB")
    assert "unknown node 'BB'" in p.message and "did you mean 'B'?" in p.hint and p.line == line_of(text, '"BB"')
    p = only(found, contains="unknown node 'Z'")
    assert p.file.endswith("members.csv") and p.line == 2


def test_zero_length_and_duplicate_members(tmp_path):
    text = broken('CB = ["C", "B"]', 'CB = ["C", "B"]\nCC = ["C", "C"]\nBC = ["B", "C"]')
    found = problems(write(tmp_path, text, members_csv="id,start,end\nAB,A,B\nBA,B,A\n"))
    p = only(found, where="members.CC", contains="zero length")
    assert p.line == line_of(text, 'CC = ["C", "C"]')
    p = only(found, where="members.BC", contains="same nodes as member 'CB'")
    assert p.line == line_of(text, 'BC = ["B", "C"]')
    p = only(found, contains="same nodes as member 'AB'")  # the duplicate is a CSV row: the CSV is named
    assert p.file.endswith("members.csv") and p.line == 3


def test_coincident_nodes(tmp_path):
    text = broken("C = [3, 2]", "C = [3, 2]\nD = [6, 0]").replace('CB = ["C", "B"]', 'CB = ["C", "B"]\nBD = ["B", "D"]')
    found = problems(write(tmp_path, text, nodes_csv="id,x,y\nA,0,0\nB,6,0\nE,1e-13,0\n"))
    p = only(found, contains="node 'D' coincides with node 'B'")
    assert p.where == "nodes.D" and p.line == line_of(text, "D = [6, 0]")
    p = only(found, contains="node 'E' coincides with node 'A'")  # within 1e-9 of the frame's size, in the CSV
    assert p.file.endswith("nodes.csv") and p.line == 4
    p = only(found, where="members.BD", contains="zero length")
    assert p.line == line_of(text, 'BD = ["B", "D"]')


@pytest.mark.parametrize("literal", ["nan", "inf", "-inf", '"nan kN"'])
def test_non_finite_numbers(tmp_path, literal):
    text = broken("loads = { C = [0, -12] }", f"loads = {{ C = [0, {literal}] }}")
    p = only(problems(write(tmp_path, text)), where="cases.snow.loads.C")
    assert "finite" in p.message or "cannot read" in p.message
    assert p.line == line_of(text, "loads = { C")


def test_non_finite_coordinate_and_factor(tmp_path):
    text = broken("C = [3, 2]", "C = [nan, 2]").replace("wind = 0.9", "wind = inf")
    found = problems(write(tmp_path, text))
    assert "not a finite number" in only(found, where="nodes.C").message
    assert "finite" in only(found, where="combinations.ULS.factors.wind").message


@pytest.mark.parametrize(
    "old, new, where, kind",
    [
        ("loads = { C = [0, -12] }", 'loads = { C = [0, "12 m"] }', "cases.snow.loads.C", "force"),
        ("C = [3, 2]", 'C = ["3 kN", 2]', "nodes.C", "length"),
        ('elastic_modulus = "210 GPa"', 'elastic_modulus = "210 kN"', "materials.steel.elastic_modulus", "stress"),
        ('area = "1200 mm^2"', 'area = "1200 mm"', "sections.tube.area", "area"),
    ],
)
def test_a_value_with_the_wrong_dimension(tmp_path, old, new, where, kind):
    text = broken(old, new)
    p = only(problems(write(tmp_path, text)), where=where)
    assert f"is not a {kind}" in p.message
    assert p.line == line_of(text, new)


def test_a_display_unit_of_the_wrong_kind(tmp_path):
    text = broken('force = "kN"', 'force = "kN*m"')
    p = only(problems(write(tmp_path, text)), where="units.force")
    assert "not a unit of force" in p.message and p.line == line_of(text, 'force = "kN*m"')


def test_loads_on_unknown_nodes(tmp_path):
    text = broken("loads = { C = [0, -12] }", "loads = { Cc = [0, -12] }")
    found = problems(write(tmp_path, text, wind_csv="node,fx,fy\nQ,1,2\n"))
    p = only(found, where="cases.snow.loads.Cc")
    assert "did you mean 'C'?" in p.hint and p.line == line_of(text, "Cc = [0")
    p = only(found, contains="unknown node 'Q'")
    assert p.file.endswith("wind.csv") and p.line == 2 and p.where == "cases.wind.loads_file"


def test_combinations_naming_unknown_cases(tmp_path):
    text = broken("wind = 0.9", "wnd = 0.9")
    p = only(problems(write(tmp_path, text)), where="combinations.ULS.factors.wnd")
    assert "unknown case 'wnd'" in p.message and "did you mean 'wind'?" in p.hint
    assert p.line == line_of(text, "wnd = 0.9")


def test_supports_on_unknown_nodes_and_bad_axes(tmp_path):
    text = broken('B = "y"', 'Bx = "y"\nC = "yz"')
    found = problems(write(tmp_path, text))
    p = only(found, where="supports.Bx")
    assert "did you mean 'B'?" in p.hint and p.line == line_of(text, 'Bx = "y"')
    p = only(found, where="supports.C")
    assert "fixed axes" in p.message and p.line == line_of(text, 'C = "yz"')


def test_bad_csv_columns(tmp_path):
    found = problems(write(tmp_path, nodes_csv="name,x,y\nA,0,0\n", members_csv="id,start,end,colour\nAB,A,B,red\n",
                           wind_csv="node,fx\nC,1\n"))
    p = only(found, contains="lacks the column(s) id")
    assert p.file.endswith("nodes.csv") and p.line == 1 and p.where == "geometry.nodes_file"
    p = only(found, contains="unknown column 'colour'")
    assert p.file.endswith("members.csv") and p.line == 1 and "section" in p.hint
    p = only(found, contains="lacks the column(s) fy")
    assert p.file.endswith("wind.csv") and p.where == "cases.wind.loads_file"


def test_csv_rows_with_too_few_or_too_many_values(tmp_path):
    found = problems(write(tmp_path, nodes_csv="id,x,y\nA,0\nB,6,0,9\n"))
    p = only(found, contains="has 2 values on this line")
    assert p.file.endswith("nodes.csv") and p.line == 2
    p = only(found, contains="has 4 values on this line")
    assert p.line == 3
    # the nodes are still known: no knock-on "unknown node" problems
    assert not [q for q in found if "unknown node" in q.message]


def test_a_missing_csv_file(tmp_path):
    text = broken('members_file = "members.csv"', 'members_file = "membres.csv"')
    p = only(problems(write(tmp_path, text)), where="geometry.members_file")
    assert "cannot read 'membres.csv'" in p.message and p.line == line_of(text, "membres.csv")


def test_all_problems_in_one_pass(tmp_path):
    text = (
        broken('elastic_modulus = "210 GPa"', 'elastic_modulos = "210 GPa"')
        .replace("C = [3, 2]", "C = [inf, 2]")
        .replace("wind = 0.9", "wnd = 0.9")
        .replace('B = "y"', 'Q = "y"')
        .replace('CB = ["C", "B"]', 'CB = ["C", "X"]')
    )
    found = problems(write(tmp_path, text, members_csv="id,start,end\nAB,A,A\n"))
    wheres = {p.where for p in found}
    assert {"materials.steel.elastic_modulos", "nodes.C", "combinations.ULS.factors.wnd", "supports.Q", "members.CB"} <= wheres
    assert any(p.file.endswith("members.csv") and "zero length" in p.message for p in found)
    text_of_error = "\n".join(str(p) for p in found)
    assert "project.toml:" in text_of_error and "members.csv:2" in text_of_error


def test_problem_text_names_file_line_key_and_hint():
    p = Problem("frame.toml", "members.B7.ends", "member 'B7' names an unknown node 'N9'", "did you mean 'N8'?", 12)
    assert str(p) == "frame.toml:12: [members.B7.ends] member 'B7' names an unknown node 'N9' -> did you mean 'N8'?"


def test_self_weight_without_area_or_density_is_reported_at_its_line(tmp_path):
    """Self-weight rho g A L needs A and rho for every member: the loader names the case's line."""
    from sheets.errors import ProjectError
    from sheets.model import load_project

    text = """[project]
title = "no density"
[materials.M]
elastic_modulus = "200 GPa"
[sections.S]
material = "M"
area = 1000
[member_defaults]
section = "S"
[nodes]
A = [0, 0]
B = [4, 0]
C = [2, 3]
[members]
AB = ["A", "B"]
BC = ["B", "C"]
CA = ["C", "A"]
[supports]
A = "xy"
B = "y"
[cases.G]
self_weight = true
"""
    path = tmp_path / "p.toml"
    path.write_text(text)
    try:
        load_project(path)
    except ProjectError as exc:
        (p,) = [q for q in exc.problems if q.where == "cases.G.self_weight"]
        assert p.line == text.splitlines().index("self_weight = true") + 1
        assert "AB, BC, CA" in p.message and "density" in p.hint
    else:
        raise AssertionError("a self-weight case without densities was accepted")
