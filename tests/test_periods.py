"""Tests of workbench.periods: period tables and the share-of-hours split.

Reference for calendar lengths: the Python standard library's ``calendar`` module
(proleptic Gregorian calendar), independent of pandas.
"""
import calendar

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings, strategies as st

from workbench import periods as P


def test_month_lengths_match_gregorian_calendar():
    # Source: Python's calendar.monthrange (Gregorian calendar); 2020 is a leap year.
    t = P.make_periods("2019-12-10", "2021-01-01", "month")
    assert t["label"].iloc[0] == "2019-12" and t["label"].iloc[-1] == "2020-12"
    for _, row in t.iterrows():
        days = calendar.monthrange(row["start"].year, row["start"].month)[1]
        assert row["hours"] == 24 * days
    assert t.loc[t["label"] == "2020-02", "hours"].item() == 29 * 24


def test_year_lengths_count_leap_days():
    t = P.make_periods("2019-01-01", "2021-01-01", "year")
    expected = [(366 if calendar.isleap(y) else 365) * 24 for y in (2019, 2020)]
    assert t["hours"].tolist() == expected
    assert t["label"].tolist() == ["2019", "2020"]


def test_seasons_are_meteorological_and_winter_named_by_january():
    # Common practice: DJF, MAM, JJA, SON; DJF labelled by the year of its January.
    t = P.make_periods("2020-12-15", "2021-12-01", "season")
    assert t["label"].tolist() == ["2021-DJF", "2021-MAM", "2021-JJA", "2021-SON"]
    assert t["start"].iloc[0] == pd.Timestamp("2020-12-01")
    assert t["end"].iloc[0] == pd.Timestamp("2021-03-01")
    assert (t["season"] == ["DJF", "MAM", "JJA", "SON"]).all()
    # 2021 is not a leap year: 31 + 31 + 28 days in DJF 2020/21
    assert t["hours"].iloc[0] == (31 + 31 + 28) * 24


@pytest.mark.parametrize("first_month, label, start", [
    (10, "HY2020", "2019-10-01"), (4, "HY2021", "2020-04-01"), (1, "HY2020", "2020-01-01")])
def test_hydrological_year_first_month(first_month, label, start):
    t = P.make_periods("2020-06-15", "2020-06-16", "hydro_year", hydro_start_month=first_month)
    assert len(t) == 1
    assert t["label"].item() == label and t["start"].item() == pd.Timestamp(start)
    assert t["end"].item() == pd.Timestamp(start) + pd.DateOffset(years=1)


def test_clip_cuts_first_and_last_period():
    t = P.make_periods("2021-01-15", "2021-03-10", "month", clip=True)
    assert t["start"].iloc[0] == pd.Timestamp("2021-01-15")
    assert t["end"].iloc[-1] == pd.Timestamp("2021-03-10")
    assert t["hours"].sum() == (pd.Timestamp("2021-03-10") - pd.Timestamp("2021-01-15")) / pd.Timedelta("1h")


def test_custom_ranges_and_errors():
    t = P.make_periods(None, None, "custom", ranges=[("2021-01-01", "2021-04-01", "Q1"),
                                                     ("2021-02-01", "2021-03-01")])
    assert t["label"].tolist() == ["Q1", "2021-02-01/2021-03-01"]
    with pytest.raises(ValueError, match="unknown period resolution 'weekly'"):
        P.make_periods("2021-01-01", "2021-02-01", "weekly")
    with pytest.raises(ValueError, match="unique"):
        P.make_periods(None, None, "custom", ranges=[("2021-01-01", "2021-02-01", "a"),
                                                     ("2021-02-01", "2021-03-01", "a")])
    with pytest.raises(ValueError, match="needs `ranges`"):
        P.make_periods(None, None, "custom")
    with pytest.raises(ValueError, match="hydro_start_month"):
        P.make_periods("2021-01-01", "2022-01-01", "hydro_year", hydro_start_month=13)


def test_split_by_share_of_hours_hand_worked():
    # A sample from 26 Jan 00:00 to 2 Feb 00:00: 6 days in January, 1 in February.
    t = P.make_periods("2021-01-01", "2021-03-01", "month")
    out = P.split_intervals(["2021-01-26"], ["2021-02-02"], t)
    assert out["hours"].tolist() == [144.0, 24.0]
    np.testing.assert_allclose(out["fraction"], [6 / 7, 1 / 7])


def test_split_drops_parts_outside_periods_and_handles_zero_length():
    t = P.make_periods("2021-01-01", "2021-02-01", "month")
    out = P.split_intervals(["2020-12-31 12:00", "2021-01-10", "2021-03-01"],
                            ["2021-01-01 12:00", "2021-01-10", "2021-03-02"], t)
    assert out["interval"].tolist() == [0, 1]
    np.testing.assert_allclose(out["fraction"], [0.5, 1.0])
    assert out["hours"].tolist() == [12.0, 0.0]


def test_split_rejects_reversed_interval():
    t = P.make_periods("2021-01-01", "2021-02-01", "month")
    with pytest.raises(ValueError, match="ends before it starts"):
        P.split_intervals(["2021-01-10"], ["2021-01-09"], t)


def _brute_force(s, e, ps, pe):
    """Plain double loop, the definition of the overlap share (for checking only)."""
    out = np.zeros((len(s), len(ps)))
    for i in range(len(s)):
        for p in range(len(ps)):
            ov = (min(e[i], pe[p]) - max(s[i], ps[p])) / np.timedelta64(1, "h")
            out[i, p] = max(ov, 0.0) / ((e[i] - s[i]) / np.timedelta64(1, "h"))
    return out


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 24 * 700), st.integers(1, 24 * 90)),
                min_size=1, max_size=20),
       st.sampled_from(["month", "season", "year", "hydro_year"]))
def test_split_matches_definition_and_sums_to_one(intervals, resolution):
    base = np.datetime64("2020-01-01T00", "ns")
    s = base + np.array([a for a, _ in intervals]) * np.timedelta64(1, "h")
    e = s + np.array([b for _, b in intervals]) * np.timedelta64(1, "h")
    t = P.make_periods(s.min(), e.max(), resolution, hydro_start_month=7)
    m = P.overlap_matrix(s, e, t)
    ref = _brute_force(s, e, t["start"].values, t["end"].values)
    np.testing.assert_allclose(m, ref, atol=1e-12)
    np.testing.assert_allclose(m.sum(axis=1), 1.0)


def test_overlapping_custom_ranges_use_the_dense_path():
    t = P.make_periods(None, None, "custom", ranges=[("2021-01-01", "2021-01-31"),
                                                     ("2021-01-15", "2021-02-15")])
    m = P.overlap_matrix(["2021-01-14"], ["2021-01-16"], t)
    np.testing.assert_allclose(m, [[1.0, 0.5]])


def test_assign_hours_uses_end_of_hour_labels():
    t = P.make_periods("2021-01-01", "2021-03-01", "month")
    idx = P.assign_hours(["2021-01-01 00:00", "2021-01-01 01:00", "2021-02-01 00:00",
                          "2021-03-01 00:00", "2021-03-01 01:00"], t)
    assert idx.tolist() == [-1, 0, 0, 1, -1]
    idx_start = P.assign_hours(["2021-01-01 00:00", "2021-02-28 23:00"], t, label="start")
    assert idx_start.tolist() == [0, 1]


def test_season_of():
    assert P.season_of(["2021-01-01", "2021-03-01", "2021-06-30", "2021-11-30"]).tolist() == \
        ["DJF", "MAM", "JJA", "SON"]
