"""Coincident-node search against an independent reference: scipy's k-d tree (cKDTree.query_pairs,
used only here), on random clouds with planted near-duplicates at and around the tolerance."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.spatial import cKDTree

from sheets.model.nearby import close_pairs


@settings(max_examples=150, deadline=None)
@given(dim=st.sampled_from([2, 3]), n=st.integers(0, 60), seed=st.integers(0, 2**32 - 1),
       planted=st.integers(0, 10), scale=st.sampled_from([1e-3, 1.0, 1e4]))
def test_the_same_pairs_as_a_kd_tree(dim, n, seed, planted, scale):
    rng = np.random.default_rng(seed)
    points = rng.uniform(-scale, scale, (n, dim))
    tol = 1e-9 * scale
    if n:  # copies of random points moved by up to 2 tol: some within, some beyond, some on a cell edge
        picks = rng.integers(0, n, planted)
        moves = rng.uniform(-2, 2, (planted, dim)) * tol / np.sqrt(dim)
        points = np.vstack([points, points[picks] + moves, points[picks[:2]]])  # and exact duplicates
    expected = sorted(cKDTree(points).query_pairs(tol)) if len(points) else []
    assert close_pairs(points, tol) == expected


def test_a_grid_of_exact_duplicates_and_a_pair_just_beyond():
    grid = np.array([[x, y] for x in range(4) for y in range(3)], float)
    points = np.vstack([grid, grid[[0, 5]], [[3.0 + 2e-9, 2.0]]])  # two duplicates; one 2e-9 from (3, 2)
    assert close_pairs(points, 1e-9) == [(0, 12), (5, 13)]
    assert (11, 14) in close_pairs(points, 3e-9)
