"""The equilibrium checks judge rounding against every force in play, loads on supports included.

A load applied at a support node goes straight into the reaction there; loads + reactions then
cancels to a rounding of that load's size (about 1e-16 of it). Found by the project-file fuzzer:
judged against member forces 1e7 times smaller, that rounding failed a state that is exact.
"""

from __future__ import annotations

import numpy as np
import pytest

from sheets.analysis import analyse


def test_a_large_load_on_a_support_does_not_fail_the_checks_of_a_small_one_elsewhere(frame):
    # Two bars from supports (0, 0) and (4, 0) to the apex (2, 1.5) under a vertical load P:
    # each bar carries -P / (2 sin a) with sin a = 1.5 / 2.5 (joint equilibrium at the apex,
    # closed form); a load Q = 1e9 P on the left support changes no member force.
    p, q = 1.0e-3, 1.0e6
    project = frame([[0, 0], [4, 0], [2, 1.5]], [(0, 2), (1, 2)], {0: "xy", 1: "xy"},
                    {"apex": {2: [0, -p]}, "both": {2: [0, -p], 0: [0.3 * q, -q]}})
    analysis = analyse(project)
    expected = -p / (2 * 1.5 / 2.5)
    for state in analysis.states:
        np.testing.assert_allclose(state.forces, [expected, expected], rtol=1e-9)
        assert state.checks.passed, state.checks
    both = analysis.state("both")
    # left support: R = -(bar force) u - Q with u = (0.8, 0.6) along the bar: (2P/3 - 0.3Q, P/2 + Q)
    assert both.reactions[0] == pytest.approx([2 * p / 3 - 0.3 * q, p / 2 + q], rel=1e-12)
