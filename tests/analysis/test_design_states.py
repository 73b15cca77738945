"""Design states: combinations tagged strength or serviceability; displacements of the serviceability ones."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.analysis.design_states import design_states
from sheets.analysis.member_checks import member_checks
from sheets.analysis.serviceability import serviceability, support_span
from sheets.analysis.sizing import size_members
from sheets.errors import ProjectError
from sheets.model import load_project

# A determinate three-bar frame: rafters A-B and B-C meet at the apex B, tie A-C; A pinned, C on a
# roller (y fixed, x free). Half span b = 3 m, rise h = 4 m, so each rafter is L = 5 m long.
FRAME = """
[project]
title = "Design states frame"

[units]
force = "kN"
length = "m"
displacement = "mm"
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
R1 = { ends = ["A", "B"], section = "S" }
R2 = { ends = ["B", "C"], section = "S" }
T = { ends = ["A", "C"], section = "S" }

[supports]
A = "xy"
C = "y"

[cases.G]
title = "apex load"
loads = { B = [0, -100] }

[cases.Q]
title = "a larger apex load"
loads = { B = [0, -400] }

[design]
partial_factor = 1.0
effective_length_factor = 1.0
stress_limit = "200 MPa"
"""


def _project(tmp_path, extra: str = "", frame: str = FRAME):
    path = tmp_path / "frame.toml"
    path.write_text(frame + textwrap.dedent(extra))
    return load_project(path)


TAGGED = """
[combinations.ULS]
title = "strength"
factors = { G = 1.5 }
purpose = "strength"

[combinations.SLS]
title = "serviceability"
factors = { G = 1.0, Q = 1.0 }
purpose = "serviceability"
"""


def test_purpose_is_read_and_bad_words_are_reported_with_line_and_hint(tmp_path):
    p = _project(tmp_path, TAGGED)
    assert [(c.id, c.purpose) for c in p.combinations] == [("ULS", "strength"), ("SLS", "serviceability")]
    with pytest.raises(ProjectError) as info:
        _project(tmp_path, TAGGED.replace('purpose = "serviceability"', 'purpose = "service"'))
    (problem,) = info.value.problems
    assert problem.where == "combinations.SLS.purpose" and problem.line is not None
    assert "strength, serviceability" in problem.hint


def test_member_checks_and_sizing_take_the_strength_combinations_only(tmp_path):
    """The serviceability combination (and case Q) carry 500 kN at the apex, the strength one 150 kN:
    the demands are those of 150 kN. Rafter force by statics: N = -P L / (2 h) = -150 x 5 / 8 = -93.75 kN."""
    analysis = analyse(_project(tmp_path, TAGGED))
    states = design_states(analysis)
    assert [s.id for s in states.strength] == ["ULS"] and [s.id for s in states.serviceability] == ["SLS"]
    checks = member_checks(analysis)
    assert checks.over == ("ULS",)
    assert "tagged purpose = \"strength\"" in checks.basis
    assert checks.max_compression[0] == pytest.approx(-93_750.0)
    sizing = size_members(analysis)
    assert sizing.over == ("ULS",)
    assert sizing.areas[0] == pytest.approx(93_750.0 / 200e6)


def test_without_strength_tags_every_state_but_serviceability_is_taken_and_the_note_says_so(tmp_path):
    untagged = TAGGED.replace('purpose = "strength"\n', "")
    analysis = analyse(_project(tmp_path, untagged))
    checks = member_checks(analysis)
    assert checks.over == ("G", "Q", "ULS")
    assert "no combination is tagged" in checks.basis
    # Q alone (400 kN): N = -400 x 5 / 8 = -250 kN governs
    assert checks.max_compression[0] == pytest.approx(-250_000.0)


def test_displacements_of_a_serviceability_combination_by_virtual_work(tmp_path):
    """Apex load P = 500 kN (G + Q). Forces by statics: rafters N = -P L / (2 h) = -312.5 kN,
    tie T = P b / (2 h) = 187.5 kN. Virtual work with a unit load at the apex (n = N / P):
    delta_B = sum N n L / EA = 2 x 312.5e3 x 0.625 x 5 / EA + 187.5e3 x 0.375 x 6 / EA, EA = 200e9 x 1e-3 = 2e8 N:
    = (1,953,125 + 421,875) / 2e8 = 11.875 mm down. The roller at C moves by the tie's elongation,
    T L / EA = 187.5e3 x 6 / 2e8 = 5.625 mm along +x. Span = 6 m, so span / deflection = 6000 / 11.875 = 505.26."""
    service = serviceability(analyse(_project(tmp_path, TAGGED)))
    (sls,) = service.states
    assert service.span == pytest.approx(6.0) and service.span_nodes == ("A", "C")
    assert sls.available and sls.deflection_node == "B"
    assert sls.deflection == pytest.approx(-11.875e-3, rel=1e-9)
    assert sls.ratio == pytest.approx(6000 / 11.875, rel=1e-9)
    assert sls.passed is None  # no limit given: the ratio is reported only
    assert sls.support_movements == (("C", "x", pytest.approx(5.625e-3, rel=1e-9)),)
    # the largest total displacement: B moves down 11.875 mm and sideways by half the tie's elongation
    assert sls.total == pytest.approx(math.hypot(11.875e-3, 5.625e-3 / 2), rel=1e-9)


@pytest.mark.parametrize("limit, passed", [(500, True), (510, False)])
def test_deflection_limit_gives_pass_or_fail(tmp_path, limit, passed):
    p = _project(tmp_path, TAGGED, FRAME.replace("[design]\n", f"[design]\ndeflection_limit = {limit}\n"))
    (sls,) = serviceability(analyse(p)).states
    assert sls.passed is passed


def test_no_displacements_without_stiffness_is_said_not_invented(tmp_path):
    frame = FRAME.replace('[sections.S]\nmaterial = "steel"\narea = 1000', '[sections.S]\narea = 1000')
    frame = frame.replace("[design]\npartial_factor = 1.0", "[design]\nslenderness_limit = 200")
    (sls,) = serviceability(analyse(_project(tmp_path, TAGGED, frame))).states
    assert not sls.available and "axial stiffness" in sls.note and math.isnan(sls.deflection)


def test_span_is_the_largest_horizontal_distance_between_supports(tmp_path):
    """A 3D frame, vertical z: supports at the corners of a 4 x 3 plan, one raised: span = 5 (the diagonal)."""
    text = """
    [project]
    title = "Span"
    [geometry]
    dimension = 3
    [sections.S]
    axial_stiffness = 1e6
    [nodes]
    A = [0, 0, 0]
    B = [4, 0, 2]
    C = [4, 3, 0]
    D = [0, 3, 0]
    [members]
    AB = ["A", "B"]
    BC = ["B", "C"]
    CD = ["C", "D"]
    DA = ["D", "A"]
    AC = ["A", "C"]
    [member_defaults]
    section = "S"
    [supports]
    A = "xyz"
    B = "xyz"
    C = "xyz"
    D = "xyz"
    [cases.G]
    loads = { A = [0, 0, 0] }
    """
    span, ends = support_span(_project(tmp_path, frame=textwrap.dedent(text)))
    assert span == pytest.approx(5.0) and set(ends) in ({"A", "C"}, {"B", "D"})


def test_a_combination_with_prestress_has_the_displacements_of_its_load_cases():
    """The geometry given is the prestressed one: the prestress adds no displacement (invented demo, HP = H + PS)."""
    from pathlib import Path

    demo = Path(__file__).resolve().parents[2] / "demo_projects" / "gallery_node" / "gallery_node.toml"
    analysis = analyse(load_project(demo))
    hp, h = analysis.state("HP"), analysis.state("H")
    assert analysis.state("PS").displacements is None
    assert hp.displacements is not None
    np.testing.assert_allclose(hp.displacements, h.displacements, rtol=0, atol=1e-15)
