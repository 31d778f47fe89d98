"""engine.thermo.sorted_distinct against numpy's own np.unique (the reference)."""
from __future__ import annotations

import numpy as np
from hypothesis import given, strategies as st

from dossier.engine.thermo import sorted_distinct, temperature_grid

finite = st.floats(min_value=-1e12, max_value=1e12, allow_nan=False, allow_infinity=False)


@given(st.lists(finite, max_size=60), st.integers(min_value=0, max_value=5))
def test_same_as_numpy_unique(values, repeat):
    a = np.array(values + values[:repeat], dtype=float)
    got = sorted_distinct(a)
    want = np.unique(a)
    assert got.dtype == want.dtype and got.shape == want.shape
    assert np.array_equal(got, want)


def test_a_grid_keeps_its_ends_and_extra_points_once():
    # 300-400 K with 10 K steps (the first step of the list within 41 rows),
    # extra points 350 K (already on the grid) and 333.15 K: hand count 11 + 1 = 12.
    grid = temperature_grid(300.0, 400.0, (350.0, 333.15, 333.15), min_step=10.0)
    assert grid.tolist() == [300.0, 310.0, 320.0, 330.0, 333.15, 340.0, 350.0, 360.0,
                             370.0, 380.0, 390.0, 400.0]
