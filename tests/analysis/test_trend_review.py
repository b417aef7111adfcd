"""A review of trends.csv as an ecosystem-effects report would read it.

Mann-Kendall and Sen's slope against pymannkendall 1.4 (Hussain and Mahmud 2019) on
series with ties, a missing year, fewer than 10 years and serial correlation (Hamed and
Rao 1998, ``hamed_rao_modification_test``); the exact p of few values against
scipy.stats.kendalltau(method="exact"); a partial year left out with its reason; the
percent slope relative to the median of the values used (docs/methods_analysis.md;
common practice), refused with a reason where that base is 0 or a value is below 0.

Defect found: a median of 0 (most years 0, e.g. a dry component that is nil in most
years) left ``sen_slope_pct_per_yr`` empty without a word in the note, and the network
report's table of sites wrote "not valid" for a valid trend that has no percent.
"""
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from workbench.analysis.trends import hamed_rao, mann_kendall, trend_table

mk = pytest.importorskip("pymannkendall")

#: Words of the note (trends.NO_PERCENT_ZERO), written out so that this file runs on
#: the code before it.
ZERO_BASE = "median of the values 0: no percent slope"


def _rows(x, years=None, status=None):
    x = np.asarray(x, float)
    years = np.arange(2005, 2005 + x.size) if years is None else np.asarray(years)
    status = ["complete"] * x.size if status is None else list(status)
    return pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S",
                         "pathway": "dry", "species": "SO2", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": x, "status": status})


def _all(t):
    return t[t["values"] == "all"].iloc[0]


def test_ties_pymannkendall():
    x = np.array([3, 3, 4, 2, 5, 5, 5, 6, 4, 7, 8, 8, 9, 7], float)
    ref, r = mk.original_test(x), mann_kendall(x)
    assert (r.s, r.var_s) == (ref.s, ref.var_s) == (64.0, 326.0)
    assert r.z == pytest.approx(ref.z, rel=1e-12) and r.p_value == pytest.approx(ref.p, rel=1e-9)
    assert r.slope == mk.sens_slope(x).slope == 0.5


def test_missing_year_keeps_the_spacing_pymannkendall():
    """A year without a value (NaN in its place): pymannkendall's original_test skips
    it (S, Var S) and its sens_slope divides by the distance of positions, i.e. years."""
    x = np.array([3.1, np.nan, 4.2, 2.9, 5.5, np.nan, 5.1, 6.3, 4.4, 7.2, 8.1, 8.0])
    years = np.arange(2005, 2017)
    ref = mk.original_test(x)
    r = _all(trend_table(_rows(x, years)))
    assert (r["s"], r["var_s"]) == (ref.s, ref.var_s) == (31.0, 125.0)
    assert r["p_value"] == pytest.approx(ref.p, rel=1e-9)
    assert r["sen_slope_per_yr"] == pytest.approx(mk.sens_slope(x).slope, rel=1e-12)
    assert r["n_years"] == 10 and r["valid"]


def test_fewer_than_ten_years_exact_p_scipy():
    """Six years, no ties: S = -13, Var S = 28.33 as pymannkendall; p is the exact one
    (scipy's kendalltau exact: 0.0167; the normal approximation says 0.024) and the
    row is not valid, with its reason."""
    x = np.array([5.0, 4.1, 4.6, 3.2, 3.0, 2.7])
    ref = mk.original_test(x)
    r = _all(trend_table(_rows(x)))
    assert (r["s"], r["var_s"]) == pytest.approx((ref.s, ref.var_s))
    exact = stats.kendalltau(np.arange(6), x, method="exact").pvalue
    assert r["p_value"] == pytest.approx(exact, rel=1e-9) and exact == pytest.approx(1 / 60)
    assert not r["valid"] and "fewer than 10 complete years" in r["note"]


def test_serial_correlation_hamed_rao_pymannkendall():
    """An AR(1) series (phi 0.8, 40 years, a small trend): the corrected Var(S), z and p
    equal pymannkendall's hamed_rao_modification_test; the correction more than
    doubles Var(S) and lifts p from 0.0001 to 0.017."""
    rng = np.random.default_rng(3)
    e = rng.normal(size=40)
    x = np.zeros(40)
    for i in range(1, 40):
        x[i] = 0.8 * x[i - 1] + e[i]
    x += 0.02 * np.arange(40)
    ref = mk.hamed_rao_modification_test(x)
    factor, var_s, z, p = hamed_rao(x)
    assert var_s == pytest.approx(ref.var_s, rel=1e-9)
    assert z == pytest.approx(ref.z, rel=1e-9) and p == pytest.approx(ref.p, rel=1e-9)
    assert factor == pytest.approx(2.587, abs=1e-3)
    assert mann_kendall(x).p_value < 0.001 < 0.01 < p < 0.05
    row = _all(trend_table(_rows(x), serial_correction="hamed_rao"))
    assert row["p_value_hamed_rao"] == pytest.approx(p, rel=1e-12)


def test_partial_year_is_left_out_with_its_reason():
    """A partial year (a component without data, a lower bound) does not enter the
    trend: the numbers are those of the series without it (pymannkendall, the year as
    NaN) and the note counts it by status."""
    x = np.linspace(10.0, 6.0, 12) + np.array([0.3, -0.2, 0.1, 0.0, -0.3, 0.2, 0.1, -0.1,
                                                0.2, -0.2, 0.0, 0.1])
    status = ["complete"] * 12
    status[4] = "partial"
    r = _all(trend_table(_rows(x, status=status)))
    y = x.copy()
    y[4] = np.nan
    ref = mk.original_test(y)
    assert (r["s"], r["var_s"]) == (ref.s, ref.var_s)
    assert r["sen_slope_per_yr"] == pytest.approx(mk.sens_slope(y).slope, rel=1e-12)
    assert r["n_years"] == 11 and "years left out: 1 partial" in r["note"]


def test_percent_slope_base_is_the_median_hand_worked():
    """x = 10, 9, ..., 1 (a line, slope -1): median 5.5, so -100/5.5 = -18.18 % per yr
    (relative to the level in the middle of the series, not the first year: -10 %)."""
    r = _all(trend_table(_rows(np.arange(10.0, 0.0, -1.0))))
    assert r["sen_slope_per_yr"] == -1.0
    assert r["sen_slope_pct_per_yr"] == pytest.approx(-100.0 / 5.5)


def test_zero_median_percent_is_refused_with_its_reason():
    """Seven of twelve years 0 (median 0): no percent, and the note says why (it was
    empty without a word); the slope and the test stand.  The same on the per-series
    path (two rows in one year)."""
    x = np.array([0, 0, 0, 0, 0, 0, 0, 0.1, 0.2, 0.3, 0.4, 0.5])
    r = _all(trend_table(_rows(x)))
    assert np.isnan(r["sen_slope_pct_per_yr"]) and r["sen_slope_per_yr"] > 0
    assert ZERO_BASE in r["note"] and r["valid"]
    rows = _rows(x)
    rows = pd.concat([rows, rows.iloc[[3]].assign(period="2008b")], ignore_index=True)
    r = _all(trend_table(rows))
    assert np.isnan(r["sen_slope_pct_per_yr"]) and ZERO_BASE in r["note"]
    # a positive median keeps its percent, and the note says nothing of a base
    r = _all(trend_table(_rows(x + 1.0)))
    assert np.isfinite(r["sen_slope_pct_per_yr"]) and ZERO_BASE not in r["note"]


def test_network_table_does_not_call_a_valid_trend_without_percent_not_valid():
    from workbench.report_network import site_summary
    span = pd.DataFrame({"site": ["a"], "receptor": "grass", "element": "S",
                         "flux_kg_ha_yr": [0.1], "status": ["complete"],
                         "missing_components": [""], "years_used": "2005 2006"})
    trends = pd.DataFrame({"site": ["a"], "element": ["S"], "valid": [True],
                           "sen_slope_pct_per_yr": [np.nan]})
    cat = [SimpleNamespace(id="a", name="", land_use="grass")]
    t = site_summary(span, cat, 2, trends).set_index("site")
    assert t.loc["a", "S trend [% per yr]"] == "no percent (trends.csv says why)"
    trends["valid"] = False
    assert site_summary(span, cat, 2, trends).set_index("site").loc[
        "a", "S trend [% per yr]"] == "not valid"


def test_figure_band_pivots_on_the_years_used():
    """The Sen slope's band is drawn through (median year, median value) of the values
    the trend used (trend_spec's docstring; common practice).  2010-2021 falling by
    about 0.5 a year, 2019-2021 partial (left out): the pivot is (2014, 18.0), the
    median year and value of 2010-2018, so at 2010 the band spans 18 + 4 x 0.45 = 19.8
    to 18 + 4 x 0.6333 = 20.533 (hand-worked from the row's slopes).  It pivoted on the
    median of every year with a value (2015.5), partial years included."""
    from workbench.ui.figures_analysis import trend_spec
    years = np.arange(2010, 2022)
    x = 20 - 0.5 * (years - 2010) + np.array([.3, -.2, .4, -.1, 0, .2, -.3, .1, -.2, .3,
                                               -.1, .2])
    status = np.array(["complete"] * 12, dtype=object)
    status[[9, 10, 11]] = "partial"
    rows = _rows(x, years, status)
    row = _all(trend_table(rows)).to_dict()
    assert row["n_years"] == 9
    lo, hi = row["slope_low_per_yr"], row["slope_high_per_yr"]
    assert (lo, hi) == pytest.approx((-0.63333333, -0.45))
    spec = trend_spec(years, x, row, status)
    band = next(d for d in spec["data"] if d.get("name") == "confidence band of the slope")
    at_2010 = sorted(y for t, y in zip(band["x"], band["y"]) if t == 2010)
    assert at_2010 == pytest.approx([18.0 - 4 * hi, 18.0 - 4 * lo])
    # the Sen line itself passes through the same point
    line = next(d for d in spec["data"] if str(d.get("name", "")).startswith("Sen slope"))
    assert np.interp(2014, line["x"], line["y"]) == pytest.approx(18.0)


def test_report_says_the_base_of_the_percent_slope(analysis_run):
    """report.html's trend table had "Sen slope [% per yr]" and no word of its base
    (the median of the years used, docs/methods_analysis.md)."""
    out, _, _ = analysis_run
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "relative to the median of the years used" in html
