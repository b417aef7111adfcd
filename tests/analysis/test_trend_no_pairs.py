"""A trend with fewer than two values has no test: its S, Var(S), z and p are NaN, not
0, 0, 0 and 1.00 (report.html showed 'n_years 0 ... p_value 1.00' beside a valid=False,
a p-value that reads as a computed 'no trend')."""
import numpy as np
import pytest

from workbench.analysis.trends import mann_kendall, seasonal_kendall


@pytest.mark.parametrize("x", [[], [np.nan, np.nan, np.nan], [4.0, np.nan]])
def test_mann_kendall_without_pairs_is_nan(x):
    r = mann_kendall(x)
    assert np.isnan([r.s, r.var_s, r.z, r.p_value, r.slope]).all()


def test_seasonal_kendall_without_pairs_is_nan():
    x = np.full((4, 12), np.nan)
    x[1, 3] = 2.0                                      # one value: no pair in any season
    r = seasonal_kendall(x)
    assert np.isnan([r.s, r.z, r.p_value]).all()


def test_two_values_still_tested():
    """Two values make one pair: S = 1 and a p below 1 (Gilbert 1987, eq. 16.5)."""
    r = mann_kendall([1.0, 2.0])
    assert r.s == 1.0 and np.isfinite(r.p_value)
