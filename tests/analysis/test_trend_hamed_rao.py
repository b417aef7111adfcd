"""Hamed and Rao (1998) serial-correlation correction of the annual Mann-Kendall test,
against pymannkendall's ``hamed_rao_modification_test`` (Hussain and Mahmud 2019, J.
Open Source Softw. 4(39), 1556; a general reference library) and, for the ties that the
detrending makes, against the definition in exact rational arithmetic (fractions and
scipy.stats.rankdata).  Invented series."""
from fractions import Fraction
from statistics import NormalDist

import numpy as np
import pandas as pd
import pytest
from scipy.stats import rankdata

from workbench.analysis.trends import (HAMED_RAO_COLUMNS, TREND_COLUMNS, hamed_rao,
                                       mann_kendall, trend_table)
from workbench.analysis.trends_batch import hamed_rao_batch, mann_kendall_batch

mk = pytest.importorskip("pymannkendall")


def _ar1(seed, n, phi, slope=0.05, step=None):
    """An AR(1) series with lag-1 coefficient `phi` plus a linear trend (rounded to
    `step` so that values tie)."""
    rng = np.random.default_rng(seed)
    e = np.zeros(n)
    for i in range(1, n):                      # the years of one invented series
        e[i] = phi * e[i - 1] + rng.normal()
    x = 10.0 + slope * np.arange(n) + e
    return np.round(x / step) * step if step else x


# n(n-1)/2 even for these n: Sen's slope is the mean of two pair slopes, so no two
# detrended values tie in exact arithmetic and pymannkendall's floating-point
# detrending ranks them as we do (see test_detrended_ties_in_exact_arithmetic).
@pytest.mark.parametrize("seed, n, phi, step", [
    (0, 24, 0.8, None), (2, 24, 0.8, None), (3, 24, 0.8, 1.0), (2, 25, 0.8, None),
    (3, 25, 0.8, 1.0), (2, 28, 0.8, None), (2, 29, 0.8, None), (0, 40, 0.8, None),
    (2, 40, 0.8, None), (5, 40, 0.95, None), (6, 25, 0.0, None), (7, 28, -0.5, None)])
def test_against_pymannkendall(seed, n, phi, step):
    x = _ar1(seed, n, phi, step=step)
    ref = mk.hamed_rao_modification_test(x)
    factor, var_s, z, p = hamed_rao(x)
    assert var_s == pytest.approx(ref.var_s, rel=1e-12)
    assert z == pytest.approx(ref.z, rel=1e-12, abs=1e-15)
    assert p == pytest.approx(ref.p, rel=1e-9, abs=1e-15)
    assert factor == pytest.approx(ref.var_s / mk.original_test(x).var_s, rel=1e-12)
    # the times of years: the same numbers as positions (the ranks do not see a shift)
    assert hamed_rao(x, np.arange(1990, 1990 + n)) == pytest.approx((factor, var_s, z, p))


def test_strong_lag1_correlation_widens_the_test():
    """phi = 0.9 and no trend put in (invented series, seed 8 of 28 years): the ranks'
    lag-1 autocorrelation is significant, Var(S) about doubles, and the plain test's
    p < 0.05 (a false trend) is not kept; pymannkendall gives the same p."""
    x = _ar1(8, 28, 0.9, slope=0.0)
    plain = mann_kendall(x)
    factor, var_s, z, p = hamed_rao(x)
    ref = mk.hamed_rao_modification_test(x)
    assert factor > 1.5 and p == pytest.approx(ref.p, rel=1e-9)
    assert plain.p_value < 0.05 < p


def _exact_factor(x, t, alpha=0.05):
    """n/n* from the definition with exact fractions for the slope and the detrending."""
    xs = [Fraction(v) for v in x]
    pairs = [(xs[j] - xs[i]) / (t[j] - t[i]) for i in range(len(xs))
             for j in range(i + 1, len(xs))]
    pairs.sort()
    m = len(pairs)
    b = pairs[m // 2] if m % 2 else (pairs[m // 2 - 1] + pairs[m // 2]) / 2
    d = [v - b * ti for v, ti in zip(xs, t)]
    r = _rank(d)
    n = len(r)
    y = r - r.mean()
    acov = np.correlate(y, y, "full")[n - 1:] / n
    rho = acov[1:] / acov[0]
    bound = NormalDist().inv_cdf(1 - alpha / 2) / np.sqrt(n)
    k = np.arange(1, n)
    w = (n - k) * (n - k - 1) * (n - k - 2.0)
    return 1 + 2 / (n * (n - 1) * (n - 2)) * np.sum(np.where(np.abs(rho) > bound, w * rho, 0))


def _rank(d):
    """Average ranks of exact fractions (scipy.stats.rankdata on their order)."""
    order = sorted(set(d))
    return rankdata([order.index(v) for v in d])


@pytest.mark.parametrize("seed, n, step", [(8, 30, None), (7, 30, 1.0), (3, 40, 1.0)])
def test_detrended_ties_in_exact_arithmetic(seed, n, step):
    """With an odd number of pairs Sen's slope is one pair's slope, so that pair's two
    detrended values are equal; with whole values and a slope of 1/12 more tie.  The
    factor is that of exact arithmetic (pymannkendall's floating-point detrending can
    split such a tie; ours rounds it back: TIE_RTOL)."""
    x = _ar1(seed, n, 0.8, step=step)
    t = np.arange(2000, 2000 + n)
    assert hamed_rao(x, t)[0] == pytest.approx(_exact_factor(x, list(t)), rel=1e-12)


def test_batch_equals_reference():
    """Gaps, ties, all values equal, fewer than 3 values: the batch gives each row's
    numbers of the per-series function."""
    rng = np.random.default_rng(11)
    t = np.arange(1990.0, 2020.0)
    rows = []
    for k in range(40):
        x = _ar1(100 + k, t.size, 0.7, step=1.0 if k % 3 == 0 else None)
        if k % 4 == 0:
            x[rng.choice(t.size, 6, replace=False)] = np.nan
        rows.append(x)
    rows[5][:] = np.nan
    rows[5][:2] = 1.0
    rows[6][:] = 3.0
    x = np.array(rows)
    b = hamed_rao_batch(x, t, mann_kendall_batch(x, t, 0.05), 0.05)
    for k in range(len(rows)):
        got = (b["factor"][k], b["var_s"][k], b["z"][k], b["p_value"][k])
        np.testing.assert_allclose(got, hamed_rao(x[k], t), rtol=1e-12, equal_nan=True)
    assert np.isnan(b["p_value"][[5, 6]]).all()


def _rows(x, years):
    """Invented budget.csv rows of one annual series (wet SO4 of one site)."""
    return pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S",
                         "pathway": "wet", "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": x, "status": "complete"})


def test_trend_table_option_and_default():
    years = np.arange(1985, 2015)
    x = _ar1(5, years.size, 0.9)
    rows = _rows(x, years)
    plain = trend_table(rows)
    assert not set(HAMED_RAO_COLUMNS) & set(plain.columns)      # default unchanged
    t = trend_table(rows, serial_correction="hamed_rao")
    assert list(t.columns[:len(TREND_COLUMNS)]) == list(TREND_COLUMNS)
    assert list(t.columns[-len(HAMED_RAO_COLUMNS):]) == list(HAMED_RAO_COLUMNS)
    pd.testing.assert_frame_equal(t[plain.columns], plain)
    ref = mk.hamed_rao_modification_test(x)
    r = t[t["values"] == "all"].iloc[0]
    assert r["p_value_hamed_rao"] == pytest.approx(ref.p, rel=1e-9)
    assert r["var_s_hamed_rao"] == pytest.approx(ref.var_s, rel=1e-12)
    # the per-series path (a year with two rows) gives the same numbers for the others
    two = pd.concat([rows, rows.iloc[[3]]], ignore_index=True)
    t2 = trend_table(two, serial_correction="hamed_rao")
    assert t2[t2["values"] == "all"].iloc[0]["hamed_rao_factor"] == pytest.approx(
        hamed_rao(two["flux_kg_ha_yr"].to_numpy(), years.tolist() + [years[3]])[0])
    with pytest.raises(ValueError, match="serial_correction"):
        trend_table(rows, serial_correction="yue_wang")


def test_monthly_rows_leave_the_columns_empty_and_an_exact_line_keeps_the_plain_test():
    """The monthly rows carry the Hirsch-Slack test: the Hamed-Rao columns are empty
    there.  An exact straight line detrends to equal values whose ranks have no
    autocorrelation to measure: factor 1, the plain test (pymannkendall, ranking the
    last bits of its detrending, gives the plain Var(S) here too)."""
    years = np.arange(2000, 2012)
    starts = pd.date_range("2000-01-01", periods=144, freq="MS")
    rng = np.random.default_rng(2)
    months = pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S",
                           "pathway": "wet", "species": "SO4",
                           "period": starts.strftime("%Y-%m"), "period_start": starts,
                           "flux_kg_ha_yr": 5 + rng.normal(0, 1, 144), "status": "complete"})
    x = 5.0 + 0.2 * np.arange(12) + rng.normal(0, 0.3, 12)
    t = trend_table(_rows(x, years), months, serial_correction="hamed_rao")
    mon = t[t["series"] == "monthly"]
    assert len(mon) == 2 and mon[list(HAMED_RAO_COLUMNS)].isna().all().all()
    ann = t[t["series"] == "annual"]
    assert np.isfinite(ann["p_value_hamed_rao"]).all()
    line = 5.0 + 0.2 * np.arange(12)
    plain = mann_kendall(line)
    assert hamed_rao(line) == (1.0, plain.var_s, plain.z, plain.p_value)
    assert mk.hamed_rao_modification_test(line).var_s == pytest.approx(plain.var_s)
    b = hamed_rao_batch(line[None], np.arange(12.0),
                        mann_kendall_batch(line[None], np.arange(12.0), 0.05), 0.05)
    assert b["factor"][0] == 1.0 and b["p_value"][0] == plain.p_value


def test_a_series_without_values_detrends_without_a_warning():
    """Defect: the network overview's notebook showed "RuntimeWarning: All-NaN slice
    encountered" (trends_batch, a series of the batch without any value)."""
    import warnings

    from workbench.analysis.trends_batch import _detrended
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        d = _detrended(np.array([[np.nan, np.nan], [1.0, 3.0]]), np.array([0.0, 2.0]),
                       np.array([0.0, 1.0]))
    assert np.isnan(d[0]).all() and np.allclose(d[1], [1.0, 1.0])
