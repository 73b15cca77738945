"""Units at the edges: values in, SI inside, display units out (pint).

Conversion factors checked against their definitions (NIST Special Publication 811,
"Guide for the Use of the International System of Units", appendix B; from memory):
1 ft = 0.3048 m and 1 in = 0.0254 m exactly (international foot, 1959);
1 lbf = 4.4482216152605 N exactly; 1 kip = 1000 lbf; 1 psi = 1 lbf/in^2.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from sheets.model.units import KINDS, DisplayUnits, UnitProblem, parse_value, si_factor

LBF = 4.4482216152605


@pytest.mark.parametrize(
    "text, kind, expected",
    [
        ("12.5 kN", "force", 12.5e3),
        ("3 MN", "force", 3e6),
        ("2 kip", "force", 2000 * LBF),
        ("250 mm", "length", 0.25),
        ("10 ft", "length", 3.048),
        ("210 GPa", "stress", 210e9),
        ("355 N/mm^2", "stress", 355e6),
        ("36 ksi", "stress", 36e3 * LBF / 0.0254**2),
        ("1200 mm^2", "area", 1.2e-3),
        ("1200 mm**2", "area", 1.2e-3),
        ("3 in**2", "area", 3 * 0.0254**2),
        ("8.5e6 mm^4", "second_moment", 8.5e-6),
        ("7850 kg/m^3", "density", 7850.0),
        ("7.85 t/m^3", "density", 7850.0),
        ("4 kN*m", "load_path", 4e3),
    ],
)
def test_strings_with_units_become_si(text, kind, expected):
    assert parse_value(text, kind, KINDS[kind][1]) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "number, kind, unit, expected",
    [(12, "force", "kN", 12e3), (-3.5, "force", "lbf", -3.5 * LBF), (2, "length", "mm", 2e-3),
     (355, "stress", "MPa", 355e6), ("1.5", "length", "m", 1.5), (500, "area", "cm^2", 0.05)],
)
def test_bare_numbers_are_read_in_the_display_unit(number, kind, unit, expected):
    assert parse_value(number, kind, unit) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "value, kind, message",
    [
        ("12 m", "force", "is not a force"),
        ("3 kN", "length", "is not a length"),
        ("1 N", "stress", "is not a stress"),
        ("twelve", "force", "cannot read"),
        ("12 blorps", "force", "cannot read"),
        (float("nan"), "force", "not a finite number"),
        (float("inf"), "length", "not a finite number"),
        ("inf kN", "force", "not a finite number"),
        (True, "force", "expected a force"),
        ([1, 2], "force", "expected a number or a string"),
    ],
)
def test_bad_values_are_refused_with_a_reason(value, kind, message):
    with pytest.raises(UnitProblem, match=message):
        parse_value(value, kind, KINDS[kind][1])


def test_unit_of_the_wrong_kind_or_unknown():
    with pytest.raises(UnitProblem, match="not a unit of force"):
        si_factor("m", "force")
    with pytest.raises(UnitProblem, match="unknown unit"):
        si_factor("kNN", "force")


def test_display_units_factor_label_and_conversion():
    units = DisplayUnits({**{k: v[1] for k, v in KINDS.items()}, "force": "kip", "area": "mm**2", "load_path": "kN*m"})
    assert units.factor("force") == pytest.approx(1000 * LBF, rel=1e-14)
    assert units.to_display(1000 * LBF, "force") == pytest.approx(1.0, rel=1e-14)
    assert units.label("area") == "mm^2"
    assert units.label("load_path") == "kN m"
    assert DisplayUnits().unit("force") == "kN" and DisplayUnits().unit("displacement") == "mm"


UNIT_CHOICES = {
    "force": ["N", "kN", "MN", "lbf", "kip"],
    "length": ["m", "mm", "cm", "ft", "inch"],
    "stress": ["Pa", "kPa", "MPa", "GPa", "psi", "ksi"],
    "area": ["m**2", "mm**2", "cm**2", "inch**2"],
    "density": ["kg/m**3", "t/m**3", "lb/ft**3"],
}


@settings(max_examples=200, deadline=None)
@given(
    kind_unit=st.sampled_from([(k, u) for k, us in UNIT_CHOICES.items() for u in us]),
    value=st.floats(min_value=-1e9, max_value=1e9, allow_nan=False, allow_infinity=False),
)
def test_round_trip_display_si_display(kind_unit, value):
    kind, unit = kind_unit
    units = DisplayUnits({**{k: v[1] for k, v in KINDS.items()}, kind: unit})
    si_from_number = parse_value(value, kind, unit)
    si_from_text = parse_value(f"{value!r} {unit}", kind, KINDS[kind][1])
    assert si_from_text == pytest.approx(si_from_number, rel=1e-12, abs=1e-300)
    back = units.to_display(si_from_number, kind)
    assert math.isclose(back, value, rel_tol=1e-12, abs_tol=1e-300)
