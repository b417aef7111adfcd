"""A year counts towards the ten years of a valid seasonal trend only when it has values
in at least half its seasons (trends.SEASON_SHARE, our choice; docs/methods_analysis.md).
Before, a year with one usable month counted as a whole year.  Invented series."""
import numpy as np
import pandas as pd
import pytest

from workbench.analysis.trends import MIN_YEARS, seasonal_kendall, seasonal_years, trend_table
from workbench.analysis.trends_batch import seasonal_kendall_batch


def _grid(n_years, months, seed=4):
    """(years, 12) values with a trend, present only in the first `months` months."""
    rng = np.random.default_rng(seed)
    x = 5.0 + 0.2 * np.arange(n_years)[:, None] + rng.normal(0, 0.3, (n_years, 12))
    x[:, months:] = np.nan
    return x


@pytest.mark.parametrize("months, counted", [(1, 0), (5, 0), (6, 12), (12, 12)])
def test_years_counted(months, counted):
    x = _grid(12, months)
    years = np.arange(2000.0, 2012.0)
    assert seasonal_kendall(x, years).n == counted
    assert seasonal_kendall_batch(x[None], years, 0.05)["n"][0] == counted


def test_mixed_years_and_other_season_counts():
    valid = np.zeros((3, 10, 4), bool)       # 4 seasons: half is 2
    valid[0, :, :1] = True
    valid[1, :, :2] = True
    valid[2, :7, :] = True
    assert seasonal_years(valid).tolist() == [0, 10, 7]


def _month_rows(x, first_year=2000):
    n_years = x.shape[0]
    starts = pd.date_range(f"{first_year}-01-01", periods=n_years * 12, freq="MS")
    f = pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S",
                      "pathway": "wet", "species": "SO4", "period": starts.strftime("%Y-%m"),
                      "period_start": starts, "flux_kg_ha_yr": x.reshape(-1),
                      "status": "complete"})
    return f[np.isfinite(f["flux_kg_ha_yr"])]


def test_trend_table_one_month_years_are_not_a_valid_trend():
    """Twelve years of January alone: the test runs (12 values) but is not valid; the
    old code counted 12 years and called it valid."""
    years = np.arange(2000, 2012)
    annual = pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S",
                           "pathway": "wet", "species": "SO4", "period": years.astype(str),
                           "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                           "flux_kg_ha_yr": 5.0 + 0.2 * np.arange(12), "status": "complete"})
    t = trend_table(annual, _month_rows(_grid(12, 1)))
    m = t[(t["series"] == "monthly") & (t["values"] == "all")].iloc[0]
    assert np.isfinite(m["p_value"]) and m["n_years"] == 0 and not m["valid"]
    assert f"fewer than {MIN_YEARS} complete years" in m["note"]
    assert (m["first_year"], m["last_year"]) == (2000, 2011)
    t6 = trend_table(annual, _month_rows(_grid(12, 6)))
    m6 = t6[(t6["series"] == "monthly") & (t6["values"] == "all")].iloc[0]
    assert m6["n_years"] == 12 and m6["valid"]
