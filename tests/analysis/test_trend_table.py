"""trends.csv: validity rules, the variant without filled values, detection-limit notes."""
import types

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.analysis.trends import (MIN_YEARS, TREND_COLUMNS, detection_limit_notes,
                                       trend_table)
from workbench.ui.figures_analysis import trend_spec

mk = pytest.importorskip("pymannkendall")


def _rows(n_years=12, slope=-0.4, filled=(), flagged=(), seed=3):
    """Invented budget.csv rows of one site: wet SO4 per year with a known slope."""
    rng = np.random.default_rng(seed)
    years = np.arange(2010, 2010 + n_years)
    x = 8.0 + slope * (years - years[0]) + rng.normal(0, 0.3, n_years)
    status = np.where(np.isin(years, filled), "filled",
                      np.where(np.isin(years, flagged), "flagged", "complete"))
    return pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S", "pathway": "wet",
                         "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": x, "status": status}), x, years


def test_annual_trend_matches_pymannkendall_and_is_valid():
    rows, x, years = _rows()
    t = trend_table(rows)
    assert list(t.columns[:len(TREND_COLUMNS)]) == list(TREND_COLUMNS)
    r = t[t["values"] == "all"].iloc[0]
    ref = mk.original_test(x)
    assert r["tau"] == pytest.approx(ref.Tau) and r["p_value"] == pytest.approx(ref.p)
    assert r["sen_slope_per_yr"] == pytest.approx(ref.slope)
    assert r["sen_slope_pct_per_yr"] == pytest.approx(100 * ref.slope / np.median(x))
    assert r["valid"] and r["n_years"] == 12 and (r["first_year"], r["last_year"]) == (2010, 2021)


def test_without_filled_values_and_too_few_years():
    rows, x, years = _rows(filled=(2012, 2015), flagged=(2018,))
    t = trend_table(rows).set_index("values")
    assert t.loc["all", "n_years"] == 11                    # the flagged year is left out
    assert "1 flagged" in t.loc["all", "note"]
    assert t.loc["without_filled", "n_years"] == 9 and not t.loc["without_filled", "valid"]
    assert f"fewer than {MIN_YEARS} complete years" in t.loc["without_filled", "note"]
    keep = ~np.isin(years, (2012, 2015, 2018))
    assert t.loc["without_filled", "tau"] == pytest.approx(mk.original_test(x[keep]).Tau)
    assert trend_table(rows, min_years=5).set_index("values").loc["without_filled", "valid"]


def test_detection_limit_change_is_noted():
    start = pd.to_datetime(["2015-03-01", "2016-03-01", "2017-03-01", "2018-03-01"])
    ds = xr.Dataset({"site": ("sample", np.array(["alpha"] * 4)), "start": ("sample", start),
                     "SO4_detection_limit": ("sample", [1e-4, np.nan, 1e-4, 5e-5])})
    notes = detection_limit_notes(types.SimpleNamespace(precipitation=ds, air=None))
    assert notes == {("alpha", "SO4"): "detection limit of SO4 changed (years with a new set "
                                       "of limits: 2018)"}
    rows, _, _ = _rows()
    t = trend_table(rows, dl_notes=notes)
    assert t["note"].str.contains("detection limit of SO4 changed").all()


def test_trend_spec_band_contains_the_line():
    rows, x, years = _rows()
    row = trend_table(rows).iloc[0].to_dict()
    spec = trend_spec(years, x, row, rows["status"].to_numpy(), "alpha", "kg/ha/yr")
    band = next(d for d in spec["data"] if d["name"] == "confidence band of the slope")
    line = next(d for d in spec["data"] if d["name"].startswith("Sen slope"))
    lo, hi = min(band["y"][:2] + band["y"][2:]), max(band["y"])
    assert lo <= min(line["y"]) and max(line["y"]) <= hi


def test_trends_csv_in_run_folder(analysis_run):
    out, _, _ = analysis_run
    t = pd.read_csv(out / "trends.csv")
    assert list(t.columns[:len(TREND_COLUMNS)]) == list(TREND_COLUMNS)
    assert set(t["series"]) == {"annual", "monthly"}
    assert not t["valid"].any()                  # two years of the demo copy: too few
    assert set(t["test"]) == {"mann_kendall", "seasonal_kendall_hirsch_slack"}


def test_trend_spec_legend_without_a_test_says_so():
    """All values equal: no test (p NaN, analysis.trends); the legend says "no test", not
    "p = nan"."""
    years = np.arange(2010, 2020)
    x = np.full(years.size, 5.0)
    row = {"sen_slope_per_yr": 0.0, "intercept": 5.0, "p_value": np.nan, "valid": False,
           "note": "all values equal: no test"}
    spec = trend_spec(years, x, row, np.array(["complete"] * years.size), "alpha", "kg/ha/yr")
    line = next(d for d in spec["data"] if d["name"].startswith("Sen slope"))
    assert "(no test)" in line["name"] and "nan" not in line["name"]
