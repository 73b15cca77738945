"""[project.basis]: the engineer's design basis is read as written, and a malformed one is reported with its line."""

from __future__ import annotations

import textwrap

import pytest

from sheets.errors import ProjectError
from sheets.model import load_project

# An invented two-bar frame: only the basis table changes between tests.
FRAME = textwrap.dedent("""
    [nodes]
    A = [0, 0]
    B = [4, 0]
    C = [2, 1.5]

    [members]
    AC = ["A", "C"]
    CB = ["C", "B"]

    [sections.s]
    axial_stiffness = "100000 kN"

    [member_defaults]
    section = "s"

    [supports]
    A = "xy"
    B = "xy"

    [cases.G]
    loads = { C = [0, -10] }
    """)


def _load(tmp_path, basis: str):
    path = tmp_path / "frame.toml"
    path.write_text('[project]\ntitle = "Invented two-bar frame"\n' + basis + FRAME)
    return path, load_project(path)


def _problems(tmp_path, basis: str):
    path = tmp_path / "frame.toml"
    path.write_text('[project]\ntitle = "Invented two-bar frame"\n' + basis + FRAME)
    with pytest.raises(ProjectError) as err:
        load_project(path)
    return path, err.value.problems


def test_basis_is_kept_as_written(tmp_path):
    _, project = _load(tmp_path, textwrap.dedent("""
        [project.basis]
        design_code = "the governing national steel code (to be confirmed)"
        assumptions = ["Pinned gussets.", "  Braced at every node.  "]
        load_derivation = "Snow 0.8 kPa x 2.4 m x 3 m = 5.76 kN per node."
        """))
    b = project.info.basis
    assert b.design_code == "the governing national steel code (to be confirmed)"
    assert b.assumptions == ("Pinned gussets.", "Braced at every node.")
    assert b.load_derivation == ("Snow 0.8 kPa x 2.4 m x 3 m = 5.76 kN per node.",)  # text: one paragraph
    assert b.notes == ()


def test_no_basis_table_gives_none(tmp_path):
    _, project = _load(tmp_path, "")
    assert project.info.basis is None


@pytest.mark.parametrize("line, key, words", [
    ("assumptions = 5", "project.basis.assumptions", "expected text or a list of texts"),
    ('notes = ["fine", 3]', "project.basis.notes", "expected text or a list of texts"),
    ('design_code = ["a", "b"]', "project.basis.design_code", "expected text"),
    ('design_standard = "x"', "project.basis.design_standard", "unknown key"),
])
def test_malformed_basis_names_file_key_and_line(tmp_path, line, key, words):
    path, problems = _problems(tmp_path, f'\n[project.basis]\ndesign_code = "c"\n{line}\n' if not line.startswith("design_code")
                               else f"\n[project.basis]\n{line}\n")
    (problem,) = problems
    assert problem.where == key and words in problem.message and problem.hint
    assert problem.file == str(path)
    lines = path.read_text().splitlines()
    assert lines[problem.line - 1] == line  # the line the user must fix


def test_basis_must_be_a_table(tmp_path):
    path, problems = _problems(tmp_path, 'basis = "EN 1990"\n')
    (problem,) = problems
    assert problem.where == "project.basis" and "expected a table" in problem.message
    assert path.read_text().splitlines()[problem.line - 1] == 'basis = "EN 1990"'
