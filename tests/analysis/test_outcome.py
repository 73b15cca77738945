"""The design outcome: members over utilisation 1, role conflicts, uplift; `sheets solve` exits 5 on any flag."""

from __future__ import annotations

import json
import math
import textwrap

import pytest

from sheets import cli
from sheets.analysis import analyse
from sheets.analysis.member_checks import member_checks
from sheets.analysis.outcome import design_outcome
from sheets.analysis.serviceability import serviceability
from sheets.errors import EXIT_CHECK_FAILED, EXIT_DESIGN_FLAGS, EXIT_OK
from sheets.model import load_project

# Rafters A-B, B-C and tie A-C (half span 3 m, rise 4 m); A pinned, C on a roller.
# Statics for an apex load (0, -P): rafters -5 P / 8, tie +3 P / 8, reactions P / 2 up at A and C.
FRAME = """
[project]
title = "Outcome frame"

[units]
force = "kN"
length = "m"
stress = "MPa"
area = "mm^2"
second_moment = "mm^4"

[materials.steel]
elastic_modulus = 200000
yield_strength = 300

[sections.S]
material = "steel"
area = 1000
second_moment = 2.0e6

[nodes]
A = [0, 0]
B = [3, 4]
C = [6, 0]

[members]
R1 = { ends = ["A", "B"], section = "S", role = "strut" }
R2 = { ends = ["B", "C"], section = "S", role = "strut" }
T = { ends = ["A", "C"], section = "S", role = "cable" }

[supports]
A = "xy"
C = "y"

[cases.G]
title = "apex load"
loads = { B = [0, -100] }

[design]
partial_factor = 1.0
effective_length_factor = 1.0
"""


def _outcome(tmp_path, extra: str = "", frame: str = FRAME):
    path = tmp_path / "frame.toml"
    path.write_text(frame + textwrap.dedent(extra))
    analysis = analyse(load_project(path))
    checks = member_checks(analysis)
    return path, design_outcome(analysis, checks, serviceability(analysis))


def test_a_sound_frame_raises_no_flag(tmp_path):
    """P = 100 kN: rafters -62.5 kN against N_cr = pi^2 x 200e9 x 2e-6 / 5^2 = 157.9 kN (u = 0.396); tie +37.5 kN."""
    _, o = _outcome(tmp_path)
    assert not o.flagged
    member, u, check, state = o.governing
    assert member in ("R1", "R2") and u == pytest.approx(62.5e3 / (math.pi**2 * 200e9 * 2e-6 / 25), rel=1e-6)
    assert o.sentences()[0].startswith("No member over a utilisation of 1")


def test_members_over_utilisation_one_are_counted_with_the_governing_member_and_state(tmp_path):
    """P = 300 kN: rafters -187.5 kN > N_cr = 157.9 kN: u = 1.187 in both rafters."""
    _, o = _outcome(tmp_path, frame=FRAME.replace("loads = { B = [0, -100] }", "loads = { B = [0, -300] }"))
    assert o.flagged and set(o.over_utilised) == {"R1", "R2"}
    member, u, check, state = o.governing
    assert u == pytest.approx(187.5e3 / (math.pi**2 * 200e9 * 2e-6 / 25), rel=1e-6)
    assert state == "G" and "compression" in check
    assert any("2 members over a utilisation of 1" in s for s in o.sentences())


def test_cable_in_compression_and_strut_in_tension_are_flagged_with_ids_and_state(tmp_path):
    """An upward apex load of 100 kN reverses every force: the cable tie goes to -37.5 kN, the strut rafters to +62.5 kN."""
    _, o = _outcome(tmp_path, """
        [cases.U]
        title = "suction"
        loads = { B = [0, 100] }
        """)
    assert o.flagged
    assert [(s.id, s.state) for s in o.cables_in_compression] == [("T", "U")]
    assert o.cables_in_compression[0].value == pytest.approx(-37.5e3)
    assert {s.id for s in o.struts_in_tension} == {"R1", "R2"}
    assert all(s.value == pytest.approx(62.5e3) for s in o.struts_in_tension)


def test_uplift_at_supports_is_flagged_in_the_states_the_checks_take(tmp_path):
    """Suction of 100 kN up at the apex: each support must pull down by 50 kN (R_y = -50 kN at A and C).
    Tagged so that the strength combination is gravity only, the suction case alone is not a design state."""
    suction = """
        [cases.U]
        title = "suction"
        loads = { B = [0, 100] }
        """
    _, o = _outcome(tmp_path, suction)
    assert {(s.id, s.state) for s in o.uplift} == {("A", "U"), ("C", "U")}
    assert all(s.value == pytest.approx(-50e3) for s in o.uplift)
    assert any(s.startswith("Uplift at supports") for s in o.sentences())
    _, o = _outcome(tmp_path, suction + """
        [combinations.ULS]
        factors = { G = 1.5 }
        purpose = "strength"
        """)
    assert not o.uplift and not o.cables_in_compression and o.states == ("ULS",)


def test_deflection_over_the_limit_is_a_flag(tmp_path):
    extra = """
        [combinations.SLS]
        factors = { G = 1.0 }
        purpose = "serviceability"
        """
    _, o = _outcome(tmp_path, extra, FRAME.replace("[design]\n", "[design]\ndeflection_limit = 100000\n"))
    assert o.deflection_over_limit == ("SLS",) and o.flagged


def test_solve_exits_5_on_flags_and_writes_the_outcome(tmp_path, capsys):
    path, _ = _outcome(tmp_path, frame=FRAME.replace("loads = { B = [0, -100] }", "loads = { B = [0, -300] }"))
    out = tmp_path / "results.json"
    assert cli.main(["solve", str(path), "--json", str(out), "--quiet"]) == EXIT_DESIGN_FLAGS == 5
    doc = json.loads(out.read_text())
    assert doc["outcome"]["flagged"] is True
    assert set(doc["outcome"]["members_over_utilisation_1"]) == {"R1", "R2"}
    assert "Design outcome: flagged" in capsys.readouterr().out


def test_solve_exits_0_without_flags_and_4_wins_over_5(tmp_path, monkeypatch):
    path, _ = _outcome(tmp_path)
    assert cli.main(["solve", str(path), "--quiet"]) == EXIT_OK
    path.write_text(FRAME.replace("loads = { B = [0, -100] }", "loads = { B = [0, -300] }"))
    from sheets.analysis.analyse import Analysis

    monkeypatch.setattr(Analysis, "passed", property(lambda self: False))
    assert cli.main(["solve", str(path), "--quiet"]) == EXIT_CHECK_FAILED
