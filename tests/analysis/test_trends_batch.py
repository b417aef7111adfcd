"""The statistics of many series at once (trends_batch) against pymannkendall (Hussain
and Mahmud 2019, J. Open Source Softw. 4(39), 1556), a general-purpose reference
library, and, exactly, against the per-series functions of trends.py (invented data)."""
import numpy as np
import pytest

from workbench.analysis import trends_batch
from workbench.analysis.trends import mann_kendall, seasonal_kendall
from workbench.analysis.trends_batch import (mann_kendall_batch, median_rows,
                                             seasonal_kendall_batch)

mk = pytest.importorskip("pymannkendall")


def test_annual_batch_against_pymannkendall_original_test():
    rng = np.random.default_rng(3)
    x = 40.0 - 0.8 * np.arange(25)[None, :] + rng.normal(0, 2.0, (6, 25))
    x[3:] = np.round(x[3:])                                         # ties
    got = mann_kendall_batch(x, np.arange(25.0), 0.05)
    for r in range(len(x)):
        ref = mk.original_test(x[r])
        assert got["s"][r] == ref.s
        assert got["var_s"][r] == pytest.approx(ref.var_s, rel=1e-12)
        assert got["z"][r] == pytest.approx(ref.z, rel=1e-12)
        assert got["p_value"][r] == pytest.approx(ref.p, rel=1e-9, abs=1e-15)
        assert got["tau"][r] == pytest.approx(ref.Tau, rel=1e-12)
        assert got["slope"][r] == pytest.approx(ref.slope, rel=1e-12)
        assert got["intercept"][r] == pytest.approx(ref.intercept, rel=1e-9)


def test_seasonal_batch_against_pymannkendall_correlated_seasonal_test():
    """S, Var(S) (Hirsch-Slack covariances) and the seasonal Sen slope; pymannkendall's
    z has no continuity correction, ours has (Hirsch and Slack 1984)."""
    rng = np.random.default_rng(21)
    cycle = 10 * np.sin(2 * np.pi * np.arange(12) / 12)
    x = (50 + cycle[None, None, :] + 0.3 * np.arange(15)[None, :, None]
         + rng.normal(0, 3, (4, 15, 1)) + rng.normal(0, 2, (4, 15, 12)))
    got = seasonal_kendall_batch(x, np.arange(15.0), 0.05)
    for r in range(len(x)):
        ref = mk.correlated_seasonal_test(x[r].reshape(-1), period=12)
        assert got["s"][r] == ref.s
        assert got["var_s"][r] == pytest.approx(ref.var_s, rel=1e-10)
        assert got["z"][r] == pytest.approx((ref.s - np.sign(ref.s)) / np.sqrt(ref.var_s),
                                            rel=1e-10)
        assert got["slope"][r] == pytest.approx(ref.slope, rel=1e-12)


def _same(a, b):
    return a == b or (np.isnan(a) and np.isnan(b))


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("chunk", [5, 2_000_000])
def test_batch_equals_the_per_series_functions_exactly(seed, chunk, monkeypatch):
    """Every field, bit for bit, on series with gaps, ties, one or no value, all NaN
    years, in chunks of a few series or all at once."""
    monkeypatch.setattr(trends_batch, "CHUNK_CELLS", chunk)
    rng = np.random.default_rng(seed)
    n_t, n_s = int(rng.integers(1, 14)), int(rng.integers(1, 30))
    t = np.sort(rng.choice(np.arange(1990, 2030), n_t, replace=False)).astype(float)
    x = np.round(rng.normal(5, 1, (n_s, n_t)), int(rng.integers(0, 2)))
    x[rng.random(x.shape) < 0.3] = np.nan
    x[0] = np.nan
    got = mann_kendall_batch(x, t, 0.05)
    for r in range(n_s):
        ref = mann_kendall(x[r], t, 0.05)
        assert all(_same(getattr(ref, f), got[f][r]) for f in ref._fields), r
    g = np.round(rng.normal(5, 1, (n_s, n_t, 12)), int(rng.integers(0, 2)))
    g[rng.random(g.shape) < 0.3] = np.nan
    g[:, rng.random(n_t) < 0.2, :] = np.nan
    g[-1] = np.nan
    got = seasonal_kendall_batch(g, t, 0.05)
    for r in range(n_s):
        ref = seasonal_kendall(g[r], t, True, 0.05)
        assert all(_same(getattr(ref, f), got[f][r]) for f in ref._fields), r


def test_median_rows_is_numpy_median():
    a = np.array([[3.0, np.nan, 1.0, 2.0], [4.0, 1.0, np.nan, np.nan], [np.nan] * 4])
    np.testing.assert_array_equal(median_rows(a)[:2], [2.0, 2.5])
    assert np.isnan(median_rows(a)[2]) and median_rows(np.empty((2, 0))).shape == (2,)
