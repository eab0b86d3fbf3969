"""Tests of the row-by-row interpolation behind the tolerance bands and the sampled run-up times:
numpy.interp, one row at a time, is the reference."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.studies.selection._vector import interp_rows


def _reference(xp, fp, x):
    """numpy.interp on each row's finite nodes, nan outside their range or with fewer than two."""
    x = np.broadcast_to(x, (xp.shape[0], np.shape(x)[-1]))
    out = np.full(x.shape, np.nan)
    for r in range(xp.shape[0]):
        ok = np.isfinite(xp[r]) & np.isfinite(fp[r])
        if ok.sum() >= 2:
            out[r] = np.interp(x[r], xp[r, ok], fp[r, ok], left=np.nan, right=np.nan)
    return out


def _rows(seed, n=40, m=30):
    """Increasing rows with nan runs at either end (as the band and run-up sweeps give)."""
    rng = np.random.default_rng(seed)
    xp = np.cumsum(rng.uniform(0.01, 1.0, (n, m)), axis=1) - rng.uniform(0.0, 5.0, (n, 1))
    fp = rng.normal(size=(n, m))
    for r in range(n):
        a, b = sorted(rng.integers(0, m + 1, 2))
        xp[r, :a] = np.nan
        fp[r, b:] = np.nan
    xp[0] = np.nan  # no node at all
    xp[1, 1:] = np.nan  # a single node
    xp[-1, :-1] = np.nan  # a single node, the last of the array
    return xp, fp


def test_shared_points_match_numpy_interp():
    xp, fp = _rows(1)
    x = np.linspace(-6.0, 30.0, 200)
    assert_allclose(interp_rows(xp, fp, x), _reference(xp, fp, x), rtol=1e-12, atol=1e-12, equal_nan=True)
    assert_allclose(interp_rows(xp, fp, x[None, :]), _reference(xp, fp, x), rtol=1e-12, atol=1e-12,
                    equal_nan=True)


def test_points_per_row_and_unsorted_points_match_numpy_interp():
    xp, fp = _rows(2)
    rng = np.random.default_rng(3)
    x = rng.uniform(-6.0, 30.0, (xp.shape[0], 50))  # a different, unsorted set for every row
    assert_allclose(interp_rows(xp, fp, x), _reference(xp, fp, x), rtol=1e-12, atol=1e-12, equal_nan=True)
    x1 = rng.uniform(-6.0, 30.0, 50)  # one unsorted set for all rows
    assert_allclose(interp_rows(xp, fp, x1), _reference(xp, fp, x1), rtol=1e-12, atol=1e-12, equal_nan=True)


def test_points_on_the_nodes_give_the_node_values():
    # the ends of a row's range included: a band read at the last node of a curve has that node's speed
    xp = np.array([[np.nan, 1.0, 2.0, 4.0, np.nan], [0.0, 1.0, 3.0, 5.0, 6.0]])
    fp = np.array([[9.0, 10.0, 20.0, 40.0, 50.0], [0.0, -1.0, -3.0, -5.0, -6.0]])
    for x in (np.array([1.0, 2.0, 4.0]), np.array([0.0, 3.0, 6.0])):
        assert_allclose(interp_rows(xp, fp, x), _reference(xp, fp, x), rtol=1e-15, equal_nan=True)
        assert_allclose(interp_rows(xp, fp, np.tile(x, (2, 1))), _reference(xp, fp, x), rtol=1e-15, equal_nan=True)


def test_a_gap_inside_a_row_is_bridged_like_numpy_interp():
    xp = np.array([[0.0, 1.0, np.nan, 3.0, 4.0]])
    fp = np.array([[0.0, 1.0, 5.0, 9.0, 16.0]])
    x = np.linspace(-1.0, 5.0, 25)
    assert_allclose(interp_rows(xp, fp, x), _reference(xp, fp, x), rtol=1e-14, equal_nan=True)


@settings(max_examples=60, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(2, 12), st.integers(1, 40))
def test_any_increasing_rows_match_numpy_interp(seed, m, k):
    xp, fp = _rows(seed, n=7, m=m)
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(-6.0, 3.0 * m, k))
    assert_allclose(interp_rows(xp, fp, x), _reference(xp, fp, x), rtol=1e-12, atol=1e-12, equal_nan=True)
