"""trends.csv on the series users have: too short, a partial year inside, all values
equal, ties, a gap year, negative totals (net NH3 emission).  Each gets a flag with its
reason in the note, not a p-value or a percentage that looks solid.

References: pymannkendall 1.4 (Hussain and Mahmud 2019) for S, Var(S) and Sen's slope on
equally spaced years; scipy.stats.theilslopes (the median of the pairwise slopes, Sen
1968) where a year is missing and the spacing matters.
"""
import numpy as np
import pandas as pd
import pytest
from scipy import stats

from workbench.analysis.trends import (MIN_YEARS, NO_PERCENT, NO_TEST, mann_kendall,
                                       seasonal_kendall, trend_table)

mk = pytest.importorskip("pymannkendall")


def _rows(x, years=None, status=None, pathway="dry", species="NH3"):
    x = np.asarray(x, float)
    years = np.arange(2008, 2008 + x.size) if years is None else np.asarray(years)
    status = ["complete"] * x.size if status is None else status
    return pd.DataFrame({"site": "alpha", "receptor": "crops", "element": "N",
                         "pathway": pathway, "species": species,
                         "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": x, "status": status})


def _all(t):
    return t[t["values"] == "all"].iloc[0]


def test_all_values_equal_is_no_test_not_p_1():
    """Var(S) = 0: pymannkendall reports p = 1 ("no trend"); S and Var(S) agree, but
    a test needs a variance: p and z are NaN, the row is not valid and says why."""
    x = np.full(12, 4.2)
    ref = mk.original_test(x)
    r = _all(trend_table(_rows(x)))
    assert r["s"] == ref.s == 0 and r["var_s"] == ref.var_s == 0
    assert ref.p == 1.0 and np.isnan(r["p_value"]) and np.isnan(r["z"])
    assert not r["valid"] and NO_TEST in r["note"]
    assert r["sen_slope_per_yr"] == ref.slope == 0.0
    assert np.isnan(mann_kendall(x).p_value)
    assert np.isnan(seasonal_kendall(np.full((12, 12), 3.0)).p_value)


def test_ties_still_tested_pymannkendall():
    x = np.array([1, 1, 2, 2, 3, 3, 3, 4, 4, 5, 5, 6], float)
    ref = mk.original_test(x)
    r = _all(trend_table(_rows(x)))
    assert r["var_s"] == pytest.approx(ref.var_s) and r["p_value"] == pytest.approx(ref.p)
    assert r["valid"] and NO_TEST not in r["note"]


def test_net_emission_has_no_percent_slope():
    """Dry NH3 from net emission to net deposition: the median is near 0 and the percent
    slope was 200 %/yr (all negative: a rising series showed -11 %/yr).  The slope in
    kg/ha/yr/yr stands (pymannkendall.sens_slope)."""
    for x in (np.linspace(-0.5, 0.6, 12), np.linspace(-2.0, -0.5, 12)):
        r = _all(trend_table(_rows(x)))
        assert r["sen_slope_per_yr"] == pytest.approx(mk.sens_slope(x).slope)
        assert np.isnan(r["sen_slope_pct_per_yr"]) and NO_PERCENT in r["note"]
        assert r["valid"]
    # a positive series keeps its percent (100 slope / median)
    x = np.linspace(2.0, 3.1, 12)
    r = _all(trend_table(_rows(x)))
    assert r["sen_slope_pct_per_yr"] == pytest.approx(100 * 0.1 / np.median(x))


def test_gap_year_is_noted_and_its_spacing_kept_scipy_theilslopes():
    years = np.array([2008, 2009, 2010, 2011, 2013, 2014, 2015, 2016, 2017, 2018, 2019])
    x = 10.0 - 0.3 * (years - 2008) + np.array([.1, -.2, 0, .3, -.1, .2, 0, -.3, .1, 0, .2])
    r = _all(trend_table(_rows(x, years)))
    assert "no row for 2012" in r["note"]
    assert r["sen_slope_per_yr"] == pytest.approx(stats.theilslopes(x, years).slope)
    assert r["n_years"] == 11 and r["valid"]


def test_partial_year_inside_is_left_out_with_its_reason():
    years = np.arange(2008, 2020)
    x = 10.0 - 0.3 * (years - 2008)
    x[5] = 2.0                                   # the partial year: a component missing
    status = ["complete"] * 12
    status[5] = "partial"
    r = _all(trend_table(_rows(x, years, status)))
    assert "years left out: 1 partial" in r["note"] and r["n_years"] == 11
    keep = np.arange(12) != 5
    assert r["sen_slope_per_yr"] == pytest.approx(stats.theilslopes(x[keep], years[keep]).slope)


@pytest.mark.parametrize("n", [2, 3, MIN_YEARS - 1])
def test_short_series_flagged_with_its_reason(n):
    x = np.arange(n, dtype=float)
    r = _all(trend_table(_rows(x)))
    assert not r["valid"] and f"fewer than {MIN_YEARS} complete years" in r["note"]
    assert r["s"] == mk.original_test(x).s


def test_single_value_has_no_test():
    r = _all(trend_table(_rows([3.0])))
    assert np.isnan(r["p_value"]) and not r["valid"]
