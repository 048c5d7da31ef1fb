"""physics.select.choose against numpy.where (the reference it must equal to the bit)."""

import numpy as np
import pytest

from fieldlimits.physics.select import choose


@pytest.mark.parametrize("share", [0.0, 0.03, 0.1, 0.33, 0.5, 0.9, 0.97, 1.0])
def test_choose_equals_numpy_where(share):
    rng = np.random.default_rng(7)
    n = 5000
    cond = rng.random(n) < share
    a = rng.normal(size=n)
    b = rng.normal(size=n)
    a[::17], b[::13] = np.nan, np.inf  # non-finite values pass through unchanged
    for x, y in [(a, b), (a, 0.0), (2.5, b), (np.nan, b)]:
        out = choose(cond, x, y)
        ref = np.where(cond, x, y)
        assert out.shape == (n,) and out.dtype == np.float64
        assert np.array_equal(out, ref, equal_nan=True)
    # the inputs are not written to
    assert np.isnan(a[0]) and np.isinf(b[0])


def test_choose_other_shapes_fall_back_to_numpy_where():
    cond = np.array([[True, False], [False, True]])
    assert np.array_equal(choose(cond, 1.0, 2.0), np.where(cond, 1.0, 2.0))
    assert float(choose(True, 1.0, 2.0)) == 1.0
    assert choose(np.array([], dtype=bool), np.array([]), np.array([])).shape == (0,)
