"""Indicative member checks (METHODS.md section 9) against closed forms worked by hand."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.analysis.member_checks import euler_load, group_summaries, member_checks
from sheets.model import load_project

UNITS = """
[units]
force = "kN"
length = "m"
stress = "MPa"
area = "mm**2"
second_moment = "mm**4"
"""


def _project(tmp_path, body: str, design: str = ""):
    text = textwrap.dedent(
        """
        [project]
        title = "Check frame"
        """
    ) + UNITS + textwrap.dedent(body) + textwrap.dedent(design)
    path = tmp_path / "frame.toml"
    path.write_text(text)
    return load_project(path)


STRUT = """
[materials.steel]
elastic_modulus = 210000
yield_strength = 355

[sections.S1]
material = "steel"
area = 2000
second_moment = 1.0e6

[nodes]
A = [0, 0]
B = [0, 4]

[members]
M1 = { ends = ["A", "B"], section = "S1" }

[supports]
A = "xy"
B = "x"

[cases.G]
title = "gravity"
loads = { B = [0, -50] }
"""

FULL_DESIGN = """
[design]
partial_factor = 1.1
effective_length_factor = 1.0
slenderness_limit = 200
tension_slenderness_limit = 300
"""


def test_pin_ended_strut_matches_euler_by_hand(tmp_path):
    """A 4 m pin-ended strut, E = 210 GPa, I = 1e6 mm^4, A = 2000 mm^2, f_y = 355 MPa, 50 kN.

    Worked by hand (closed form, Euler's formula N_cr = pi^2 E I / (K L)^2, K = 1):
    E I = 210e9 Pa x 1e-6 m^4 = 210,000 N m^2; pi^2 E I = 2,072,617 N m^2;
    / (4 m)^2 = 129,538.6 N. A f_y = 2e-3 x 355e6 = 710,000 N > N_cr, so the
    resistance is 129,538.6 / 1.1 = 117,762.4 N and the utilisation
    50,000 / 117,762.4 = 0.42458. r = sqrt(1e-6 / 2e-3) = 0.0223607 m,
    K L / r = 4 / 0.0223607 = 178.885; / 200 = 0.894427.
    """
    checks = member_checks(analyse(_project(tmp_path, STRUT, FULL_DESIGN)))
    assert checks.max_compression[0] == pytest.approx(-50_000.0)
    assert checks.euler_load[0] == pytest.approx(129_538.6, abs=0.1)
    assert checks.compression_resistance[0] == pytest.approx(117_762.4, abs=0.1)
    assert checks.utilisation["compression"][0] == pytest.approx(0.42458, abs=1e-5)
    assert checks.radius[0] == pytest.approx(0.0223607, abs=1e-7)
    assert checks.slenderness[0] == pytest.approx(178.885, abs=1e-3)
    assert checks.utilisation["slenderness"][0] == pytest.approx(0.894427, abs=1e-6)
    # governing: slenderness (0.894) over compression (0.425); the state is the only case
    assert checks.governing_check[0] == "slenderness"
    assert checks.governing_state(0) == "G"
    assert np.isnan(checks.utilisation["tension"][0])
    assert checks.omitted == ()


def test_effective_length_factor_scales_euler_load():
    # Timoshenko & Gere, "Theory of Elastic Stability" (2nd ed., 1961), ch. 2 (from memory):
    # a cantilever (fixed-free) buckles at pi^2 E I / (2 L)^2, a quarter of the pin-ended load.
    pinned = euler_load(210e9, 1e-6, 1.0 * 4.0)
    cantilever = euler_load(210e9, 1e-6, 2.0 * 4.0)
    assert cantilever == pytest.approx(pinned / 4)
    assert pinned == pytest.approx(math.pi**2 * 210e9 * 1e-6 / 16)


TRIANGLE = """
[materials.steel]
elastic_modulus = 210000
yield_strength = 275

[sections.RAFTER]
material = "steel"
area = 1500
second_moment = 2.0e6

[sections.TIE]
material = "steel"
area = 400
second_moment = 1.0e4

[nodes]
L = [0, 0]
R = [6, 0]
T = [3, 1.7320508075688772]

[members]
R1 = { ends = ["L", "T"], section = "RAFTER", group = "rafters" }
R2 = { ends = ["T", "R"], section = "RAFTER", group = "rafters" }
TIE = { ends = ["L", "R"], section = "TIE", group = "ties" }

[supports]
L = "xy"
R = "y"

[cases.D]
title = "apex load"
loads = { T = [0, -100] }

[cases.W]
title = "half load"
loads = { T = [0, -50] }
"""


def test_triangle_truss_by_method_of_joints(tmp_path):
    """Symmetric triangle with 30 degree rafters and an apex load P (closed form, method of joints):
    each rafter carries P / (2 sin 30) = P in compression, the tie P cos 30 / (2 sin 30) = 0.8660 P.

    P = 100 kN. Tie: A f_y / gamma = 400e-6 x 275e6 / 1.25 = 88,000 N; utilisation 86,602.5 / 88,000 = 0.98412.
    Rafter (L = 2 sqrt 3 = 3.4641 m): N_cr = pi^2 x 210e9 x 2e-6 / 3.4641^2 = 345,436 N; A f_y = 412,500 N;
    resistance 345,436 / 1.25 = 276,349 N; utilisation 100,000 / 276,349 = 0.36186.
    Tie L / r: r = sqrt(1e-8 / 4e-4) = 0.005 m, 6 / 0.005 = 1200, over a limit of 400 = 3.0.
    """
    design = """
    [design]
    partial_factor = 1.25
    effective_length_factor = 1.0
    slenderness_limit = 180
    tension_slenderness_limit = 400
    """
    checks = member_checks(analyse(_project(tmp_path, TRIANGLE, design)))
    r1, r2, tie = 0, 1, 2
    assert checks.max_compression[r1] == pytest.approx(-100_000.0, rel=1e-9)
    assert checks.max_tension[tie] == pytest.approx(86_602.54, abs=0.01)
    assert checks.tension_resistance[tie] == pytest.approx(88_000.0)
    assert checks.utilisation["tension"][tie] == pytest.approx(0.98412, abs=1e-5)
    assert checks.euler_load[r1] == pytest.approx(345_436, abs=1)
    assert checks.utilisation["compression"][r2] == pytest.approx(0.36186, abs=1e-5)
    assert checks.tension_slenderness[tie] == pytest.approx(1200.0)
    assert checks.utilisation["tension_slenderness"][tie] == pytest.approx(3.0)
    # demands come from the worst state: D (100 kN), not W (50 kN)
    assert checks.max_tension_state[tie] == "D" and checks.max_compression_state[r1] == "D"
    assert checks.worst == tie and checks.governing_check[tie] == "tension_slenderness"
    assert list(checks.failing) == [tie]
    groups = {g.group: g for g in group_summaries(checks, analyse(_project(tmp_path, TRIANGLE, design)).project.member_groups)}
    assert groups["rafters"].members == 2 and groups["rafters"].check == "slenderness"
    assert groups["ties"].worst == tie and groups["ties"].utilisation == pytest.approx(3.0)


def test_missing_factors_leave_checks_out_and_say_so(tmp_path):
    checks = member_checks(analyse(_project(tmp_path, STRUT)))  # no [design] at all
    assert checks.made == ()
    assert checks.worst is None
    text = " ".join(checks.omitted)
    for key in ("partial_factor", "effective_length_factor", "tension_slenderness_limit"):
        assert key in text
    only_k = member_checks(analyse(_project(tmp_path, STRUT, "[design]\neffective_length_factor = 1.0\n")))
    # Euler load is computed (it needs no partial factor) but no resistance check is made
    assert only_k.euler_load[0] == pytest.approx(129_538.6, abs=0.1)
    assert np.isnan(only_k.utilisation["compression"][0])
    assert "slenderness_limit" in " ".join(only_k.omitted)


def test_members_lacking_section_data_are_listed_not_passed(tmp_path):
    body = STRUT.replace("second_moment = 1.0e6\n", "")
    checks = member_checks(analyse(_project(tmp_path, body, FULL_DESIGN)))
    assert np.isnan(checks.utilisation["compression"][0])
    assert any(e == 0 and "second moment" in why for e, why in checks.unchecked)


def test_cable_in_compression_is_a_role_conflict(tmp_path):
    body = STRUT.replace('section = "S1" }', 'section = "S1", role = "cable" }')
    checks = member_checks(analyse(_project(tmp_path, body, FULL_DESIGN)))
    assert checks.role_conflicts == ((0, "cable in compression (it would go slack)"),)
    assert np.isnan(checks.utilisation["compression"][0])  # a cable gets no buckling check
