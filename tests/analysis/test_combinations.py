"""Load combinations and envelopes.

Linear elasticity and equilibrium are linear in the loads (superposition, common
practice), so a factored combination of cases must equal the analysis of the
factored load itself; checked here by solving that load as a case of its own.
Envelopes: per member, the largest tension and compression over the combinations.
"""

from __future__ import annotations

import numpy as np
import pytest

from sheets.analysis import analyse

FACTORS = {"ULS": {"dead": 1.35, "live": 1.5}, "SLS": {"dead": 1.0, "live": 1.0}, "uplift": {"dead": 1.0, "wind": 1.5}}


def braced_truss(frame, self_weight=False):
    # Three cross-braced panels (statically indeterminate: the stiffness method, with displacements).
    coords = [[0, 0], [3, 0], [6, 0], [9, 0], [0, 2.5], [3, 2.5], [6, 2.5], [9, 2.5]]
    members = [(0, 1), (1, 2), (2, 3), (4, 5), (5, 6), (6, 7), (0, 4), (1, 5), (2, 6), (3, 7),
               (0, 5), (1, 4), (1, 6), (2, 5), (2, 7), (3, 6)]
    dead = {k: [0, -20e3] for k in (4, 5, 6, 7)}
    live = {5: [0, -45e3], 6: [0, -30e3]}
    wind = {4: [8e3, 25e3], 5: [0, 30e3], 6: [0, 30e3], 7: [0, 25e3]}
    cases = {"dead": dead, "live": live, "wind": wind}
    # the factored loads of ULS, as a case solved on its own
    uls = np.zeros((8, 2))
    for case, factor in FACTORS["ULS"].items():
        for node, v in cases[case].items():
            uls[node] += factor * np.array(v)
    cases["ULS as a case"] = uls
    return frame(coords, members, {0: "xy", 3: "y"}, cases, combinations=FACTORS,
                 density=7850.0 if self_weight else None, self_weight=("dead",) if self_weight else ())


def test_combination_equals_the_factored_load_solved_directly(frame):
    analysis = analyse(braced_truss(frame))
    combo, direct = analysis.state("ULS"), analysis.state("ULS as a case")
    scale = np.abs(direct.forces).max()
    np.testing.assert_allclose(combo.loads, direct.loads, rtol=1e-14, atol=1e-9)
    np.testing.assert_allclose(combo.forces, direct.forces, rtol=0, atol=1e-10 * scale)
    np.testing.assert_allclose(combo.reactions, direct.reactions, rtol=0, atol=1e-10 * scale)
    d_scale = np.abs(direct.displacements).max()
    np.testing.assert_allclose(combo.displacements, direct.displacements, rtol=0, atol=1e-10 * d_scale)
    assert combo.kind == "combination" and combo.factors == tuple(FACTORS["ULS"].items())
    assert combo.checks.passed


def test_combination_with_self_weight_is_linear_too(frame):
    # The self-weight enters the dead case's loads, and the combination factors it with the rest.
    analysis = analyse(braced_truss(frame, self_weight=True))
    dead, live, combo = analysis.state("dead"), analysis.state("live"), analysis.state("ULS")
    np.testing.assert_allclose(combo.loads, 1.35 * dead.loads + 1.5 * live.loads, rtol=1e-14, atol=1e-9)
    np.testing.assert_allclose(combo.forces, 1.35 * dead.forces + 1.5 * live.forces, rtol=1e-12, atol=1e-6)
    assert dead.loads[:, 1].sum() < -80e3  # the self-weight is in (80 kN of point loads plus the steel)


def test_envelope_by_brute_force(frame):
    analysis = analyse(braced_truss(frame))
    envelope = analysis.envelope
    assert set(envelope.over) == set(FACTORS)
    combos = [analysis.state(c) for c in FACTORS]
    for e in range(analysis.project.n_members):
        values = {c.id: c.forces[e] for c in combos}
        most = max(values, key=values.get)
        least = min(values, key=values.get)
        assert envelope.max_tension[e] == pytest.approx(max(values[most], 0.0), abs=1e-9)
        assert envelope.max_compression[e] == pytest.approx(min(values[least], 0.0), abs=1e-9)
        assert envelope.max_tension_state[e] == (most if values[most] > 0 else "")
        assert envelope.max_compression_state[e] == (least if values[least] < 0 else "")
    # The wind uplift reverses some members: they show both a tension and a compression demand.
    both = (envelope.max_tension > 0) & (envelope.max_compression < 0)
    assert both.any()


def test_envelope_over_cases_when_there_are_no_combinations(frame):
    project = frame([[0, 0], [4, 0], [2, 3]], [(0, 1), (1, 2), (2, 0)], {0: "xy", 1: "y"},
                    {"down": {2: [0, -10e3]}, "up": {2: [0, 4e3]}})
    analysis = analyse(project)
    assert analysis.envelope.over == ("down", "up")
    # Apex load P down: rafters in compression, tie in tension; P up reverses all three.
    assert analysis.envelope.max_tension[0] > 0 and analysis.envelope.max_compression[0] < 0
    assert analysis.envelope.max_tension_state[0] == "down"
    assert analysis.envelope.max_compression_state[0] == "up"
