"""Mann-Kendall on short series and Sen's confidence interval, against scipy.stats.

References (scipy, a general-purpose reference library):
* ``scipy.stats.kendalltau(t, x, method="exact")``: the exact two-sided p of Kendall's
  score between the years and the values, which is the Mann-Kendall S without ties
  (Kendall 1975); the test uses it for n <= EXACT_MAX_N (Gilbert 1987, ch. 16, gives
  exact tables for few values; from memory), pymannkendall's normal approximation from
  n = 10 on;
* ``scipy.stats.theilslopes(x, t, alpha=0.95)``: Sen's slope and its interval, the
  ranks (N' -/+ C)/2 (+1) of the ordered slopes rounded to whole ranks; ours
  interpolates between the two slopes around a rank that is not whole (Gilbert 1987,
  eqs. 6.7-6.9, from memory), so ours lies between the slopes of the two whole ranks
  around it, and equals scipy's where the rank is whole or the two slopes are equal.
"""
import numpy as np
import pytest
from scipy import stats

from workbench.analysis.trends import EXACT_MAX_N, mann_kendall, trend_table
from workbench.analysis.trends_batch import mann_kendall_batch

mk = pytest.importorskip("pymannkendall")


@pytest.mark.parametrize("n", range(2, EXACT_MAX_N + 1))
def test_short_series_exact_p_scipy_kendalltau(n):
    rng = np.random.default_rng(n)
    for trial in range(8):
        years = np.sort(rng.choice(np.arange(2000, 2030), n, replace=False)).astype(float)
        x = rng.normal(0, 1, n) - (0.3 * trial) * (years - 2000)      # some with a trend
        r = mann_kendall(x, years)
        want = stats.kendalltau(years, x, method="exact").pvalue
        assert r.p_value == pytest.approx(want, rel=1e-12, abs=1e-15)
        batch = mann_kendall_batch(x[None], years, 0.05)
        assert batch["p_value"][0] == r.p_value                      # the same number


def test_ten_values_and_ties_keep_the_normal_approximation_pymannkendall():
    rng = np.random.default_rng(4)
    x = rng.normal(0, 1, 10) + 0.2 * np.arange(10)
    assert mann_kendall(x).p_value == pytest.approx(mk.original_test(x).p, rel=1e-9)
    tied = np.array([1.0, 2.0, 2.0, 3.0, 5.0, 4.0, 6.0])          # ties: no exact table
    assert mann_kendall(tied).p_value == pytest.approx(mk.original_test(tied).p, rel=1e-9)


def test_three_values_never_reach_five_percent():
    """n = 3 rising: the exact p is 2/6 (the normal approximation said 0.30); a trend of
    few years cannot be significant, and trends.csv marks it not valid."""
    r = mann_kendall([1.0, 2.0, 3.0])
    assert r.p_value == pytest.approx(1 / 3)
    years = np.arange(2019, 2022)
    import pandas as pd
    rows = pd.DataFrame({"site": "a", "receptor": "grass", "element": "S", "pathway": "wet",
                         "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": [1.0, 2.0, 3.0], "status": "complete"})
    row = trend_table(rows).iloc[0]
    assert row["p_value"] == pytest.approx(1 / 3) and not row["valid"]


@pytest.mark.parametrize("seed, ties", [(1, False), (2, True), (3, False), (4, True)])
def test_sen_interval_against_scipy_theilslopes_with_gaps_and_ties(seed, ties):
    rng = np.random.default_rng(seed)
    n = int(rng.integers(8, 25))
    years = np.sort(rng.choice(np.arange(1990, 2030), n, replace=False)).astype(float)
    x = 20.0 - 0.3 * (years - 1990) + rng.normal(0, 1.5, n)
    x = np.round(x) if ties else x
    r = mann_kendall(x, years)
    ref = stats.theilslopes(x, years, alpha=0.95)
    assert r.slope == pytest.approx(ref.slope, rel=1e-12)
    i, j = np.triu_indices(n, 1)
    q = np.sort((x[j] - x[i]) / (years[j] - years[i]))
    c = stats.norm.ppf(0.975) * np.sqrt(r.var_s)
    for got, theirs, rank in ((r.slope_low, ref.low_slope, (q.size - c) / 2),
                              (r.slope_high, ref.high_slope, (q.size + c) / 2 + 1)):
        lo, hi = q[int(np.floor(rank)) - 1], q[int(np.ceil(rank)) - 1]     # 1-based ranks
        assert lo - 1e-12 <= got <= hi + 1e-12
        # scipy: the slope of the rank rounded to a whole one (numpy's rounding)
        assert theirs == q[int(np.clip(np.round(rank), 1, q.size)) - 1]
        if rank == int(rank) or lo == hi:
            assert got == pytest.approx(theirs, rel=1e-12)


def test_percent_slope_is_relative_to_the_sen_line_at_the_median_year():
    """sen_slope_pct_per_yr = 100 slope / median of the values used; the Sen line
    (intercept = median(x) - slope median(t)) passes through (median t, median x), so
    the base is the line's level in the middle of the series (docs/methods_analysis.md)."""
    import pandas as pd
    years = np.array([2005, 2006, 2007, 2009, 2010, 2012, 2013, 2014, 2015, 2016, 2018])
    x = 12.0 - 0.4 * (years - 2005) + np.array([.3, -.2, .1, 0, .2, -.1, .3, -.3, 0, .1, -.2])
    rows = pd.DataFrame({"site": "a", "receptor": "grass", "element": "S", "pathway": "wet",
                         "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": x, "status": "complete"})
    row = trend_table(rows).iloc[0]
    level = row["intercept"] + row["sen_slope_per_yr"] * np.median(years)
    assert level == pytest.approx(np.median(x), rel=1e-12)
    assert row["sen_slope_pct_per_yr"] == pytest.approx(100 * row["sen_slope_per_yr"] / level)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_several_values_per_year_and_times_out_of_order_scipy(seed):
    """Two values of one year (a series with two rows in a year, the per-series path of
    trend_table) and times not in order: S is Kendall's score between times and values,
    a pair of the same time scoring 0 (Gilbert 1987, section 16.4.1, from memory), and
    Var(S) carries the ties in both (Kendall 1975, ch. 4).  Reference:
    scipy.stats.kendalltau(t, x, variant="b", method="asymptotic"), whose tau-b is S /
    sqrt((N - T_t)(N - T_x)) and whose p is that of S / sqrt(Var S) (no continuity
    correction), and scipy.stats.theilslopes, which leaves out pairs of equal times.
    The old code scored a same-year pair by its values, took the rows' order for the
    times' and gave the slope's interval an infinite end."""
    rng = np.random.default_rng(seed)
    n = 16
    t = rng.integers(2000, 2011, n).astype(float)          # repeated years, shuffled
    x = np.round(rng.normal(0, 1, n) + 0.3 * (t - 2000))   # ties among the values too
    r = mann_kendall(x, t)
    ref = stats.kendalltau(t, x, variant="b", method="asymptotic")
    pairs = n * (n - 1) / 2
    tie_t = sum(c * (c - 1) / 2 for c in np.unique(t, return_counts=True)[1])
    tie_x = sum(c * (c - 1) / 2 for c in np.unique(x, return_counts=True)[1])
    assert r.s == pytest.approx(ref.statistic * np.sqrt((pairs - tie_t) * (pairs - tie_x)),
                                abs=1e-9)
    z_ref = stats.norm.isf(ref.pvalue / 2.0)
    assert r.var_s == pytest.approx((r.s / z_ref) ** 2, rel=1e-9)
    assert r.slope == pytest.approx(stats.theilslopes(x, t).slope, rel=1e-12)
    assert np.isfinite(r.slope_low) and np.isfinite(r.slope_high)
    assert r.slope_low <= r.slope <= r.slope_high
    # the order of the rows does not matter
    o = rng.permutation(n)
    r2 = mann_kendall(x[o], t[o])
    assert (r2.s, r2.slope) == (r.s, r.slope) and r2.var_s == pytest.approx(r.var_s)


def test_a_year_twice_in_a_series_gives_a_finite_interval():
    """trend_table's per-series path (a series with two rows in one year): the interval
    of Sen's slope had an infinite upper end (a slope over 0 years)."""
    import pandas as pd
    years = np.array([2005, 2006, 2007, 2008, 2008, 2009, 2010, 2011, 2012, 2013, 2014])
    x = 12.0 - 0.4 * (years - 2005) + np.array([.3, -.2, .1, 0, .4, .2, -.1, .3, -.3, 0, .1])
    rows = pd.DataFrame({"site": "a", "receptor": "grass", "element": "S", "pathway": "wet",
                         "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": x, "status": "complete"})
    row = trend_table(rows).iloc[0]
    assert np.isfinite(row["slope_high_per_yr"]) and np.isfinite(row["slope_low_per_yr"])
    assert row["sen_slope_per_yr"] == pytest.approx(stats.theilslopes(x, years).slope)
    assert row["s"] == mann_kendall(x, years.astype(float)).s
