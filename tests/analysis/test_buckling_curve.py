"""Compression by a buckling curve, effective lengths per member or group, in-plane and out-of-plane lengths."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest
from scipy.optimize import brentq

from sheets.analysis import analyse
from sheets.analysis.buckling import CURVE_IMPERFECTION, reduction_factor
from sheets.analysis.member_checks import member_checks
from sheets.errors import ProjectError
from sheets.model import load_project

# chi from the table of reduction factors of EN 1993-1-1:2005 (Figure 6.4, as tabulated in the
# handbooks that reproduce it), by curve and relative slenderness. Values quoted from memory, to
# the four decimals the tables print.
TABLE_CHI = {
    ("a0", 0.5): 0.9513, ("a0", 1.0): 0.7253, ("a0", 2.0): 0.2323,
    ("a", 0.5): 0.9243, ("a", 1.0): 0.6656, ("a", 1.5): 0.3724, ("a", 2.0): 0.2229,
    ("b", 0.5): 0.8842, ("b", 1.0): 0.5970, ("b", 1.5): 0.3422, ("b", 2.0): 0.2095,
    ("c", 0.5): 0.8430, ("c", 1.0): 0.5399, ("c", 1.5): 0.3145, ("c", 2.0): 0.1962,
    ("d", 0.5): 0.7793, ("d", 1.0): 0.4671, ("d", 1.5): 0.2766, ("d", 2.0): 0.1766,
}


@pytest.mark.parametrize("curve, slenderness", sorted(TABLE_CHI))
def test_reduction_factor_matches_the_handbook_table(curve, slenderness):
    chi = float(reduction_factor(slenderness, CURVE_IMPERFECTION[curve]))
    assert chi == pytest.approx(TABLE_CHI[(curve, slenderness)], abs=6e-5)


@pytest.mark.parametrize("alpha", [0.13, 0.21, 0.34, 0.49, 0.76])
def test_reduction_factor_is_the_ayrton_perry_root(alpha):
    """chi is the smaller root of the Ayrton-Perry equation (1 - chi)(1 - chi lam^2) = alpha (lam - 0.2) chi
    (Ayrton and Perry 1886; the form the European curves are built on, Rondal and Maquoi 1979),
    found here by bisection with scipy, not by the closed form."""
    for lam in np.linspace(0.25, 3.0, 12):
        f = lambda chi: (1 - chi) * (1 - chi * lam**2) - alpha * (lam - 0.2) * chi
        root = brentq(f, 1e-9, min(1.0, 1.0 / lam**2))
        assert float(reduction_factor(lam, alpha)) == pytest.approx(root, rel=1e-10)


def test_no_reduction_up_to_a_relative_slenderness_of_0_2():
    """EN 1993-1-1:2005 6.3.1.2(4): for lam <= 0.2 buckling effects may be ignored (chi = 1)."""
    assert np.all(reduction_factor(np.array([0.0, 0.1, 0.2]), 0.76) == 1.0)


FRAME = """
[project]
title = "Buckling frame"

[units]
force = "kN"
length = "m"
stress = "MPa"
area = "mm^2"
second_moment = "mm^4"

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
C = [0, 8]

[members]
M1 = { ends = ["A", "B"], section = "S1", group = "chord" }
M2 = { ends = ["B", "C"], section = "S1", group = "chord" }

[supports]
A = "xy"
B = "x"
C = "x"

[cases.G]
title = "gravity"
loads = { C = [0, -50] }
"""


def _project(tmp_path, design: str, frame: str = FRAME):
    path = tmp_path / "frame.toml"
    path.write_text(frame + textwrap.dedent(design))
    return load_project(path)


def test_buckling_curve_resistance_worked_by_hand(tmp_path):
    """4 m pin-ended strut, E = 210 GPa, I = 1e6 mm^4, A = 2000 mm^2, f_y = 355 MPa, 50 kN, curve b, gamma 1.1.

    By hand: N_cr = pi^2 x 210e9 x 1e-6 / 4^2 = 129,538.6 N; A f_y = 710,000 N;
    lam = sqrt(710,000 / 129,538.6) = 2.34115; Phi = 0.5 [1 + 0.34 x 2.14115 + 2.34115^2] = 3.60449;
    chi = 1 / (3.60449 + sqrt(3.60449^2 - 2.34115^2)) = 0.157600;
    N_b,Rd = 0.157600 x 710,000 / 1.1 = 101,723.6 N; u = 50,000 / 101,723.6 = 0.49153.
    """
    p = _project(tmp_path, """
        [design]
        partial_factor = 1.1
        effective_length_factor = 1.0
        compression_method = "buckling_curve"
        buckling_curve = "b"
        """)
    c = member_checks(analyse(p))
    e = p.member_ids.index("M1")
    assert c.relative_slenderness[e] == pytest.approx(2.34115, rel=1e-5)
    assert c.reduction_factor[e] == pytest.approx(0.157600, rel=1e-5)
    assert c.compression_resistance[e] == pytest.approx(101_723.6, rel=1e-6)
    assert c.utilisation["compression"][e] == pytest.approx(0.49153, rel=1e-4)
    assert c.imperfection_factor == 0.34 and c.compression_method == "buckling_curve"
    assert c.title("compression") == "compression resistance (buckling curve)"


def test_buckling_partial_factor_and_imperfection_factor_from_the_file(tmp_path):
    p = _project(tmp_path, """
        [design]
        partial_factor = 1.0
        buckling_partial_factor = 1.1
        effective_length_factor = 1.0
        compression_method = "buckling_curve"
        imperfection_factor = 0.34
        """)
    c = member_checks(analyse(p))
    assert c.compression_partial_factor == 1.1 and c.imperfection_factor == 0.34
    assert c.compression_resistance[0] == pytest.approx(101_723.6, rel=1e-6)  # as worked above


def test_effective_length_factor_per_member_wins_over_group_and_default(tmp_path):
    """N_cr = pi^2 E I / (K L)^2 (Euler): K = 0.5 for the group, 0.7 for M2 itself, 1.0 elsewhere."""
    p = _project(tmp_path, """
        [design]
        effective_length_factor = 1.0
        [design.effective_length_factors]
        chord = 0.5
        M2 = 0.7
        """)
    c = member_checks(analyse(p))
    euler_1 = math.pi**2 * 210e9 * 1e-6 / 4.0**2
    assert c.euler_load[0] == pytest.approx(euler_1 / 0.5**2, rel=1e-12)
    assert c.euler_load[1] == pytest.approx(euler_1 / 0.7**2, rel=1e-12)
    assert c.buckling_length_in_plane[1] == pytest.approx(2.8)


def test_out_of_plane_length_governs_a_chord_and_the_axis_is_named(tmp_path):
    """In plane K L = 4 m; out of plane the chord is held only every 8 m: N_cr out = N_cr in / 4."""
    p = _project(tmp_path, """
        [design]
        partial_factor = 1.0
        effective_length_factor = 1.0
        slenderness_limit = 400
        [design.buckling_lengths]
        chord = { out_of_plane = "8 m" }
        """)
    c = member_checks(analyse(p))
    euler_4 = math.pi**2 * 210e9 * 1e-6 / 16.0
    assert c.euler_load_in_plane[0] == pytest.approx(euler_4, rel=1e-12)
    assert c.euler_load_out_of_plane[0] == pytest.approx(euler_4 / 4, rel=1e-12)
    assert c.euler_load[0] == pytest.approx(euler_4 / 4, rel=1e-12)
    assert c.buckling_axis[0] == "out of plane"
    r = math.sqrt(1e-6 / 2e-3)
    assert c.slenderness[0] == pytest.approx(8.0 / r)


def test_second_moment_per_axis_balances_the_longer_out_of_plane_length(tmp_path):
    """Four times the second moment out of plane over twice the length: N_cr alike about both axes."""
    frame = FRAME.replace("second_moment = 1.0e6", "second_moment = 1.0e6\nsecond_moment_out_of_plane = 4.0e6")
    p = _project(tmp_path, """
        [design]
        partial_factor = 1.0
        effective_length_factor = 1.0
        [design.buckling_lengths]
        M1 = { out_of_plane = "8 m" }
        """, frame)
    c = member_checks(analyse(p))
    assert c.euler_load_in_plane[0] == pytest.approx(c.euler_load_out_of_plane[0], rel=1e-12)
    assert c.buckling_axis[0] == "both axes alike"


def test_a_member_without_a_length_on_one_axis_is_listed_not_passed(tmp_path):
    p = _project(tmp_path, """
        [design]
        partial_factor = 1.0
        [design.buckling_lengths]
        M1 = { in_plane = "4 m" }
        """)
    c = member_checks(analyse(p))
    assert np.isnan(c.utilisation["compression"][0])
    assert any(e == 0 and "out-of-plane buckling length" in why for e, why in c.unchecked)


@pytest.mark.parametrize("design, where, words", [
    ('compression_method = "buckling_curve"', "design.compression_method", "needs the curve"),
    ('compression_method = "buckling_curve"\nbuckling_curve = "e"', "design.buckling_curve", "unknown buckling curve"),
    ('buckling_curve = "b"\nimperfection_factor = 0.34', "design.imperfection_factor", "both"),
    ('compression_method = "perry"', "design.compression_method", "unknown compression method"),
    ('[design.effective_length_factors]\nchrod = 0.9', "design.effective_length_factors.chrod", "did you mean 'chord'"),
    ('[design.buckling_lengths]\nM1 = { sideways = "3 m" }', "design.buckling_lengths.M1.sideways", "unknown key"),
])
def test_bad_buckling_input_names_the_key_and_line(tmp_path, design, where, words):
    with pytest.raises(ProjectError) as info:
        _project(tmp_path, "[design]\n" + design + "\n")
    problems = [p for p in info.value.problems if p.where == where]
    assert problems, info.value
    assert any(words in str(p) for p in problems), info.value
    assert all(p.line is not None for p in problems)
