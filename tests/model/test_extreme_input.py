"""Input at the limits, each case once found by the fuzzer (test_fuzz_projects.py) or named in
the issue: a binary file given as a CSV, coordinates and loads of 1e308, integers too large
for a float. Each is a ProjectError naming the file, the key and the line, never a traceback.
"""

from __future__ import annotations

import numpy as np
import pytest
from test_loading_errors import broken, line_of, only, problems, write

from sheets.analysis import analyse
from sheets.model import load_project
from sheets.model.units import MAX_MAGNITUDE

# the first bytes of a zip container (a spreadsheet saved in its own format), NULs included
SPREADSHEET = b"PK\x03\x04\x14\x00\x06\x00\x08\x00\x00\x00!\x00\xb5U0#\xf4\x00\x00\x00L\x02\x00\x00"


def test_a_binary_file_named_as_a_csv_is_refused_with_its_name(tmp_path):
    path = write(tmp_path)
    (tmp_path / "nodes.csv").write_bytes(SPREADSHEET)
    p = only(problems(path), where="geometry.nodes_file")
    assert p.file.endswith("nodes.csv") and p.line == 1
    assert "NUL" in p.message and "CSV, UTF-8" in p.hint


def test_a_csv_in_another_encoding_is_refused_with_the_line_of_the_first_bad_byte(tmp_path):
    path = write(tmp_path)
    (tmp_path / "wind.csv").write_bytes("node,fx,fy\nC,2,-1\nC,1,\u00b11\n".encode("latin-1"))
    p = only(problems(path), where="cases.wind.loads_file")
    assert p.file.endswith("wind.csv") and p.line == 3 and "not UTF-8" in p.message


@pytest.mark.parametrize("value", ["1e308", "-1e308", "1e21", '"1e308 m"', '"1e25 mm"', str(10**400)])
def test_a_coordinate_beyond_the_accepted_magnitude_is_refused(tmp_path, value):
    text = broken("C = [3, 2]", f"C = [{value}, 2]")
    p = only(problems(write(tmp_path, text)), where="nodes.C")
    assert f"{MAX_MAGNITUDE:.0e}" in p.message and p.line == line_of(text, f"C = [{value}, 2]")


def test_a_load_of_1e308_in_kilonewtons_is_refused_in_its_csv_row(tmp_path):
    # 1e308 kN is 1e311 N: beyond a float, so it would turn into infinity in SI
    p = only(problems(write(tmp_path, wind_csv="node,fx,fy\nC,1e308,0\n")), where="cases.wind.loads_file")
    assert p.file.endswith("wind.csv") and p.line == 2


@pytest.mark.parametrize("where, old, new", [
    ("combinations.ULS.factors.snow", "snow = 1.5", f"snow = {10**400}"),
    ("combinations.ULS.factors.snow", "snow = 1.5", "snow = 1e308"),
])
def test_factors_too_large_for_a_float_are_refused(tmp_path, where, old, new):
    text = broken(old, new)
    p = only(problems(write(tmp_path, text)), where=where)
    assert "finite number" in p.message and p.line == line_of(text, new)


def test_the_largest_accepted_values_still_solve_without_overflow(tmp_path):
    # Loads of 1e20 N (the limit) on a frame of ordinary size: squares of the loads (1e40) and the
    # load path stay far inside a float, and every state passes its equilibrium check.
    text = broken("loads = { C = [0, -12] }", 'loads = { C = ["1e20 N", "-1e20 N"] }')
    project = load_project(write(tmp_path, text))
    analysis = analyse(project)
    assert all(np.isfinite(s.forces).all() and s.checks.passed for s in analysis.states)


def test_a_member_between_two_fixed_nodes_is_solved_not_a_singular_matrix(frame):
    # Found by the fuzzer: the member's ends are both fully fixed, so it adds a self-stress state
    # (the stiffness method is used) while no member reaches the one free node: K = 0. The
    # bordered system [K M; M^T 0] is regular for any non-zero border, and the member carries
    # nothing (it cannot deform): t = 0, the load goes to the supports.
    project = frame([[0, 0], [4, 0], [8, 3]], [(0, 1)], {0: "xy", 1: "xy"}, {"p": {0: [0, -5e3]}})
    state = analyse(project).state("p")
    assert state.forces.tolist() == [0.0]
    assert state.reactions[0].tolist() == [0.0, 5e3]


def test_an_integer_of_thousands_of_digits_is_a_problem_not_a_crash(tmp_path):
    # tomllib turns a 5,000-digit integer into a ValueError from Python's limit on integer
    # digits (4,300 by default since Python 3.11), not a TOMLDecodeError
    text = broken("C = [3, 2]", "C = [" + "9" * 5000 + ", 2]")
    (p,) = problems(write(tmp_path, text))
    assert "digits" in p.message and p.file.endswith("project.toml")


def test_a_long_integer_with_a_unit_pint_reads_is_beyond_the_limit_not_an_overflow(tmp_path):
    # Found by the fuzzer: pint keeps "10...0 furlong" as a Python int, which float() cannot take
    digits = "9" * 400
    text = broken("C = [3, 2]", f'C = ["{digits} furlong", 2]')
    p = only(problems(write(tmp_path, text)), where="nodes.C")
    assert "beyond" in p.message
