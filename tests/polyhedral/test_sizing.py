"""Constant-stress sizing and Maxwell's load path theorem per state.

Closed form: a symmetric two-bar frame (apex load P, bars at angle theta to the
horizontal, span 2b, rise h) carries t = -P / (2 sin theta) in each bar; at a
stress sigma each needs A = |t| / sigma. Maxwell (1870), "On reciprocal
figures, frames, and diagrams of forces", Trans. R. Soc. Edinburgh 26 1-40:
sum t L = sum f . x, so V_T - V_C = sum f . x / sigma.
"""

import dataclasses

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.analysis.sizing import size_members, sizing_results


def two_bar(frame, b=3.0, h=2.0, p=50e3, density=7850.0):
    return frame([[-b, 0], [b, 0], [0, h]], [(0, 2), (1, 2)], {0: "xy", 1: "xy"}, {"P": {2: [0, -p]}}, density=density)


def test_two_bar_closed_form(frame):
    b, h, p, sigma = 3.0, 2.0, 50e3, 235e6
    project = two_bar(frame, b, h, p)
    project = dataclasses.replace(project, design=dataclasses.replace(project.design, stress_limit=sigma))
    sizing = size_members(analyse(project))
    length = np.hypot(b, h)
    t = -p / (2 * h / length)
    assert np.allclose(sizing.governing_force, t, rtol=1e-12)
    assert np.allclose(sizing.areas, abs(t) / sigma, rtol=1e-12)
    assert sizing.volume == pytest.approx(2 * abs(t) * length / sigma, rel=1e-12)
    assert sizing.volume_compression == pytest.approx(sizing.volume) and sizing.volume_tension == 0
    assert sizing.mass == pytest.approx(7850.0 * sizing.volume, rel=1e-12)
    (state,) = sizing.states
    # sum f . x: the load -p at height h gives -p h; each support's reaction has the outward
    # thrust H = p b / (2 h) at x = -+b, giving -H b twice: in all -p h - p b^2 / h
    assert state.load_term == pytest.approx((-p * h - p * b**2 / h) / sigma, rel=1e-12)
    assert state.volume_tension - state.volume_compression == pytest.approx(state.load_term, rel=1e-12)
    assert state.passed and sizing.passed


def test_no_stress_limit_means_no_sizing(frame):
    sizing = size_members(analyse(two_bar(frame)))
    assert not sizing.available and "stress_limit" in sizing.note
    doc = sizing_results(sizing, two_bar(frame).units)
    assert doc["available"] is False and "members" not in doc


def test_envelope_governs_and_reversal_is_flagged(frame):
    # A Warren-type truss under two cases of opposite sense: diagonals reverse.
    coords = [[0, 0], [2, 0], [4, 0], [1, 1.5], [3, 1.5]]
    members = [(0, 1), (1, 2), (0, 3), (3, 1), (1, 4), (4, 2), (3, 4)]
    cases = {"down": {3: [0, -10e3]}, "up": {4: [0, 6e3]}}
    project = frame(coords, members, {0: "xy", 2: "y"}, cases)
    project = dataclasses.replace(project, design=dataclasses.replace(project.design, stress_limit=100e6))
    analysis = analyse(project)
    sizing = size_members(analysis)
    table = np.array([s.forces for s in analysis.states])
    largest = np.abs(table).max(axis=0)
    assert np.allclose(np.abs(sizing.governing_force), largest, rtol=1e-12)
    assert np.array_equal(sizing.reverses, (table.max(axis=0) > 0) & (table.min(axis=0) < 0))
    assert all(s.passed for s in sizing.states)
    doc = sizing_results(sizing, project.units)
    assert doc["volume"] == pytest.approx(sizing.volume)  # display volume unit is m^3
