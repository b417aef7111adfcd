"""Trend statistics against pymannkendall (Hussain and Mahmud 2019, J. Open Source
Softw. 4(39), 1556), a general-purpose reference library, on synthetic series with a
known slope (invented data)."""
import numpy as np
import pytest

from workbench.analysis.trends import hirsch_slack_covariance, mann_kendall, seasonal_kendall

mk = pytest.importorskip("pymannkendall")


def _annual(seed, n=25, slope=-0.8, noise=2.0, ties=False):
    rng = np.random.default_rng(seed)
    x = 40.0 + slope * np.arange(n) + rng.normal(0, noise, n)
    return np.round(x) if ties else x


@pytest.mark.parametrize("seed, ties", [(1, False), (2, False), (3, True), (4, True)])
def test_mann_kendall_against_pymannkendall_original_test(seed, ties):
    x = _annual(seed, ties=ties)
    ref = mk.original_test(x)
    mine = mann_kendall(x)
    assert mine.s == ref.s
    assert mine.var_s == pytest.approx(ref.var_s, rel=1e-12)
    assert mine.z == pytest.approx(ref.z, rel=1e-12)
    assert mine.p_value == pytest.approx(ref.p, rel=1e-9, abs=1e-15)
    assert mine.tau == pytest.approx(ref.Tau, rel=1e-12)
    assert mine.slope == pytest.approx(ref.slope, rel=1e-12)
    assert mine.intercept == pytest.approx(ref.intercept, rel=1e-9)


def test_sen_slope_against_pymannkendall_and_known_slope():
    x = _annual(7, n=30, slope=1.5, noise=0.5)
    assert mann_kendall(x).slope == pytest.approx(mk.sens_slope(x).slope, rel=1e-12)
    r = mann_kendall(x, t=np.arange(2000, 2030))
    assert r.slope == pytest.approx(1.5, abs=0.1)              # the slope put into the data
    assert r.slope_low < 1.5 < r.slope_high and r.p_value < 1e-6


def test_missing_years_use_their_times():
    """A gap keeps the true spacing: slope of an exact line is exact (hand-worked)."""
    t = np.array([2001, 2002, 2005, 2006, 2010], float)
    r = mann_kendall(3.0 * t - 10.0, t)
    assert r.slope == pytest.approx(3.0) and r.slope_low == pytest.approx(3.0)
    r2 = mann_kendall(np.array([1.0, np.nan, 3.0, 4.0]))
    assert r2.n == 3 and r2.s == 3.0


def _monthly(seed, years=15, slope=0.3, rho=0.0):
    """Monthly values with a seasonal cycle, a trend and (rho) a shared yearly anomaly
    that makes the months of one year correlated."""
    rng = np.random.default_rng(seed)
    cycle = 10 * np.sin(2 * np.pi * np.arange(12) / 12)
    common = rng.normal(0, 3, (years, 1)) * rho
    return 50 + cycle[None, :] + slope * np.arange(years)[:, None] + common + rng.normal(0, 2, (years, 12))


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_seasonal_kendall_against_pymannkendall_seasonal_test(seed):
    x = _monthly(seed)
    ref = mk.seasonal_test(x.reshape(-1), period=12)
    mine = seasonal_kendall(x, correct=False)
    assert mine.s == ref.s
    assert mine.var_s == pytest.approx(ref.var_s, rel=1e-12)
    assert mine.z == pytest.approx(ref.z, rel=1e-12)
    assert mine.p_value == pytest.approx(ref.p, rel=1e-9, abs=1e-15)
    assert mine.tau == pytest.approx(ref.Tau, rel=1e-12)
    assert mine.slope == pytest.approx(ref.slope, rel=1e-12)
    assert mine.slope == pytest.approx(mk.seasonal_sens_slope(x.reshape(-1), 12).slope, rel=1e-12)


@pytest.mark.parametrize("seed", [21, 22])
def test_hirsch_slack_against_pymannkendall_correlated_seasonal_test(seed):
    """Same S and Var(S) as pymannkendall's correlated seasonal test (its covariance of
    the seasons' scores is the Hirsch-Slack form); pymannkendall's z has no continuity
    correction, ours has (Hirsch and Slack 1984 apply it), so z is compared on S - sgn S."""
    x = _monthly(seed, rho=1.0)
    ref = mk.correlated_seasonal_test(x.reshape(-1), period=12)
    mine = seasonal_kendall(x, correct=True)
    assert mine.s == ref.s
    assert mine.var_s == pytest.approx(ref.var_s, rel=1e-10)
    assert mine.z == pytest.approx((ref.s - np.sign(ref.s)) / np.sqrt(ref.var_s), rel=1e-10)
    assert mine.slope == pytest.approx(ref.slope, rel=1e-12)
    # serial dependence among months widens the variance
    assert mine.var_s > seasonal_kendall(x, correct=False).var_s


@pytest.mark.parametrize("ties", [False, True])
def test_covariance_diagonal_is_the_tie_corrected_variance(ties):
    """The diagonal of the Hirsch-Slack covariance matrix is each season's Var(S) of
    pymannkendall.original_test (ties included), also with a missing year."""
    x = np.round(_monthly(41)[:, :3]) if ties else _monthly(41)[:, :3]
    x[4, 1] = np.nan
    cov = hirsch_slack_covariance(x)
    for g in range(3):
        col = x[:, g]
        assert cov[g, g] == pytest.approx(mk.original_test(col[~np.isnan(col)]).var_s, rel=1e-12)
    np.testing.assert_allclose(cov, cov.T)


def test_missing_month_keeps_variance_positive():
    x = _monthly(42, years=12, rho=1.0)
    x[[1, 5, 9], [0, 3, 7]] = np.nan
    r = seasonal_kendall(x)
    assert r.var_s > 0 and 0 < r.p_value < 1


def test_known_seasonal_slope_detected():
    x = _monthly(31, years=20, slope=0.5, rho=1.0)
    r = seasonal_kendall(x, years=np.arange(2004, 2024))
    assert r.slope == pytest.approx(0.5, abs=0.1) and r.p_value < 0.01
    assert r.slope_low < 0.5 < r.slope_high
    flat = _monthly(32, years=20, slope=0.0)
    assert seasonal_kendall(flat).p_value > 0.01
