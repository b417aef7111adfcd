"""The run note of a completeness rule that one sample decides (workbench/period_notes.py).

Hours by the Gregorian calendar: February 2021 has 672 h, a week 168 h (25.0 %); a
year of 365 days 8760 h (a week 1.9 %).  The 90 % minimum is [wet]
min_coverage_fraction's default (docs/methods_wet.md section 7, our choice).
"""
import numpy as np
import pandas as pd
import xarray as xr

from workbench.period_notes import one_sample_notes
from workbench.periods import make_periods


def _samples(starts, sampler="W", dim="sample"):
    t = np.asarray(starts, dtype="datetime64[ns]")
    return xr.Dataset({"start": (dim, t[:-1]), "end": (dim, t[1:]),
                       "sampler_id": (dim, np.full(len(t) - 1, sampler))})


WEEKS = pd.date_range("2021-01-05T09:00", periods=53, freq="7D").values


def test_weekly_samples_in_months_are_said_strict_with_the_options_to_set():
    (note,) = one_sample_notes(make_periods("2021-01-01", "2022-01-01", "month"),
                               _samples(WEEKS))
    assert note.startswith("completeness of month periods: one precipitation sample "
                           "(the median, 168 h) is 25.0 % of the shortest period "
                           "(2021-02, 672 h), more than the 10 % a period may miss under "
                           "[wet] min_coverage_fraction = 0.9")
    assert "1.9 % of a year" in note
    assert "lower [wet] min_coverage_fraction (to 0.75 or less" in note
    assert '[wet] period_fill = "seasonal"' in note


def test_no_note_where_one_sample_is_within_the_minimum():
    assert one_sample_notes(make_periods("2021-01-01", "2022-01-01", "year"),
                            _samples(WEEKS)) == []
    # 0.75 lets a week of February go (75.0 % equals the minimum: it passes)
    assert one_sample_notes(make_periods("2021-01-01", "2022-01-01", "month"),
                            _samples(WEEKS), min_coverage_fraction=0.75) == []
    # weekly air at the default 75 %: no note either
    assert one_sample_notes(make_periods("2021-01-01", "2022-01-01", "month"), None,
                            _samples(WEEKS, dim="period")) == []


def test_a_monthly_air_sampler_beside_weekly_ones_is_named():
    months = pd.date_range("2021-01-15", periods=13, freq="30D").values
    air = xr.concat([_samples(WEEKS, "F1", "period"), _samples(months, "N1", "period")],
                    dim="period")
    (note,) = one_sample_notes(make_periods("2021-01-01", "2022-01-01", "month"), None, air)
    assert note.startswith("completeness of month periods: one air sample of sampler N1 "
                           "(the median, 720 h) is as long as the shortest period "
                           "(2021-02, 672 h) or longer")
