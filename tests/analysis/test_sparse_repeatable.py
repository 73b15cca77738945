"""The sparse determinacy route gives the same bits every time (no random start vector left to
ARPACK), and its largest singular value is the one a full SVD finds (numpy.linalg.svd, LAPACK)."""

from __future__ import annotations

import numpy as np

from sheets.analysis.determinacy import determinacy
from sheets.analysis.equilibrium import equilibrium_matrix

from test_dense_sparse import grid_2d


def test_the_sparse_route_repeats_bit_for_bit():
    coords, members, fixed = grid_2d(14, 12, braced_every=2, double_every=5, seed=3)
    eq = equilibrium_matrix(coords, members, fixed)
    runs = [determinacy(eq, 1e-8, dense_limit=0) for _ in range(3)]  # ARPACK's own seed moves on between calls
    assert runs[0].route == "sparse shift-invert"
    for other in runs[1:]:
        assert other.largest_singular == runs[0].largest_singular
        assert other.smallest_kept_singular == runs[0].smallest_kept_singular
        assert np.array_equal(other.mechanism_modes, runs[0].mechanism_modes)
    reference = np.linalg.svd(eq.free_matrix.toarray(), compute_uv=False)[0]
    assert abs(runs[0].largest_singular - reference) <= 1e-6 * reference
