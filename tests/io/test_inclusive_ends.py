"""Ends written inclusive, left over from the sixth audit (docs/data_formats.md, "Ends at
minute 59 or 59:59, a day's end 24:00 with a zone"): a row starting at the :59 label
that ended the row before, ends at 59:59 (inclusive to the second), and a scenario
period ending at 24:00 with a zone.  Invented sites "alpha" and "beta" of tiny_inputs.
"""
from __future__ import annotations

import numpy as np
import pytest

from tiny_inputs import PRECIP, SITES
from workbench.errors import InputError, ScenarioError
from workbench.io import read_air, read_precipitation
from workbench.scenario import load_scenario


def _air(rows, sampler="fp1"):
    body = "\n".join(f"alpha,{s},{e},{sampler if isinstance(sampler, str) else sampler[k]},"
                     f"{2.0 + k}" for k, (s, e) in enumerate(rows))
    return "# reference_state: ambient\nsite,start,end,sampler_id,SO2 [ug/m3]\n" + body + "\n"


def _utc(ds, name):
    return ds[name].values.astype("datetime64[s]").astype(str).tolist()


def _notes(led):
    return [n for n in led.notes if "read as the next whole hour" in n]


# ------------------------------------------------- a start at the :59 that ended the row before
CHAIN = [("2020-01-07T00:00", "2020-01-07T00:59"), ("2020-01-07T00:59", "2020-01-07T01:59"),
         ("2020-01-07T01:59", "2020-01-07T02:59")]


def test_a_start_at_the_59_that_ended_the_row_before_is_the_same_whole_hour(write, cat):
    # before: "overlapping SO2 periods from the same sampler: got '2020-01-07T00:59',
    # expected a start at or after the end 2020-01-07T00:59" (the end read as 01:00)
    ds, led = read_air(write("air.csv", _air(CHAIN)), cat)
    # alpha is UTC+1: local 00:00 is 23:00 UTC
    assert _utc(ds, "start") == ["2020-01-06T23:00:00", "2020-01-07T00:00:00",
                                 "2020-01-07T01:00:00"]
    assert _utc(ds, "end") == ["2020-01-07T00:00:00", "2020-01-07T01:00:00",
                               "2020-01-07T02:00:00"]
    assert _notes(led) == [
        "air.csv: ends at minute 59 in 'end' (00:00 to 00:59, the end minute included) "
        "read as the next whole hour (00:00 to 01:00): 3 rows (lines 3-5); write the end "
        "as the next hour, 01:00, to silence this note; starts at minute 59 that are the "
        "end of the row before in 'start' (00:59 to 01:59 after 00:00 to 00:59) read as "
        "that same whole hour (01:00 to 02:00): 2 rows (lines 4-5)"], led.notes


def test_the_same_rule_holds_in_any_row_order_and_per_sampler(write, cat):
    # rows written out of order, a second sampler's own run beside
    rows = [CHAIN[2], CHAIN[0], CHAIN[1]] + CHAIN
    samplers = ["a", "a", "a", "b", "b", "b"]
    ds, led = read_air(write("air.csv", _air(rows, samplers)), cat)
    length = (ds["end"].values - ds["start"].values) / np.timedelta64(1, "m")
    assert length.tolist() == [60.0] * 6
    assert "starts at minute 59" in _notes(led)[0] and "4 rows (lines 3, 5, 7-8)" in \
        _notes(led)[0], led.notes


def test_a_start_at_59_after_another_samplers_end_is_read_as_written(write, cat):
    ds, led = read_air(write("air.csv", _air(CHAIN[:2], ["a", "b"])), cat)
    assert _utc(ds, "start")[1] == "2020-01-06T23:59:00"        # b: 00:59 to 01:59 local
    assert _utc(ds, "end") == ["2020-01-07T00:00:00", "2020-01-07T00:59:00"]
    assert "starts at" not in _notes(led)[0]


def test_a_record_on_the_59_clock_from_its_first_row_is_read_as_written(write, cat):
    # every row 00:59 to 01:59: whole hours, no end inclusive: no move, no note (before too)
    ds, led = read_air(write("air.csv", _air(CHAIN[1:])), cat)
    assert _utc(ds, "start") == ["2020-01-06T23:59:00", "2020-01-07T00:59:00"]
    assert not _notes(led)


def test_an_overlap_with_a_moved_end_says_how_the_end_was_read(write, cat):
    rows = [CHAIN[0], ("2020-01-07T00:59:30", "2020-01-07T01:59:30")]
    with pytest.raises(InputError) as exc:
        read_air(write("air.csv", _air(rows)), cat)
    msg = str(exc.value)
    assert "line 4, column 'start': overlapping SO2 periods" in msg
    assert "expected a start at or after the end 2020-01-07T00:59 (read as " \
           "2020-01-07T00:00 UTC: an end at minute 59 or 59:59 is read as the next whole " \
           "hour) of the SO2 period on line 3" in msg, msg


def test_weekly_samples_from_0859_to_0859_after_a_first_week_from_0900(write, cat):
    text = PRECIP.replace("-14T09:00,w1", "-14T08:59,w1").replace(
        "-14T09:00,2020-01-21T09:00,w1", "-14T08:59,2020-01-21T08:59,w1").replace(
        "-21T09:00,2020-01-28T09:00,w1", "-21T08:59,2020-01-28T08:59,w1")
    ds, led = read_precipitation(write("p.csv", text), cat)
    alpha = ds["site"].values == "alpha"
    days = (ds["end"].values - ds["start"].values)[alpha] / np.timedelta64(1, "D")
    assert days.tolist() == [7.0, 7.0, 7.0]
    assert (ds["start"].values[alpha][1:] == ds["end"].values[alpha][:-1]).all()
    assert ": 3 rows (lines 2-4)" in _notes(led)[0] and _notes(led)[0].endswith(
        ": 2 rows (lines 3-4)"), led.notes


# ------------------------------------------------- ends at 59:59 (inclusive to the second)
def test_hourly_ends_at_59_59_cover_the_whole_hour(write, cat):
    # before: 3599-second periods and a second uncovered between rows, without a word
    rows = [(f"2020-01-07T{h:02d}:00:00", f"2020-01-07T{h:02d}:59:59") for h in range(3)]
    ds, led = read_air(write("air.csv", _air(rows)), cat)
    length = (ds["end"].values - ds["start"].values) / np.timedelta64(1, "s")
    assert length.tolist() == [3600.0] * 3
    assert _notes(led) == [
        "air.csv: ends at 59:59 in 'end' (00:00:00 to 00:59:59, the end second included) "
        "read as the next whole hour (00:00 to 01:00): 3 rows (lines 3-5); write the end "
        "as the next hour, 01:00, to silence this note"], led.notes


def test_ends_at_59_59_with_a_zone_and_a_start_at_that_label(write, cat):
    rows = [("2020-01-07T00:00:00Z", "2020-01-07T00:59:59Z"),
            ("2020-01-07T00:59:59Z", "2020-01-07T01:59:59Z")]
    ds, led = read_air(write("air.csv", _air(rows)), cat)
    assert _utc(ds, "start") == ["2020-01-07T00:00:00", "2020-01-07T01:00:00"]
    assert _utc(ds, "end") == ["2020-01-07T01:00:00", "2020-01-07T02:00:00"]
    assert "starts at 59:59 that are the end of the row before" in _notes(led)[0]


@pytest.mark.parametrize("start, end", [("00:30:00", "00:59:59"), ("00:00:00", "00:59:58"),
                                        ("00:00:01", "00:59:59")])
def test_other_lengths_ending_near_the_hour_are_read_as_written(write, cat, start, end):
    ds, led = read_air(write("air.csv", _air([(f"2020-01-07T{start}",
                                               f"2020-01-07T{end}")])), cat)
    assert _utc(ds, "end") == [f"2020-01-06T23:{end[3:]}"]
    assert not _notes(led)


# ------------------------------------------------- [period] ending at 24:00 with a zone
def _scenario(tmp_path, body):
    (tmp_path / "s.toml").write_text(SITES)
    p = tmp_path / "sc.toml"
    p.write_text('[inputs]\nsites = "s.toml"\n' + body)
    return p


@pytest.mark.parametrize("end, read", [
    ('"2021-12-31T24:00Z"', "2022-01-01T00:00"),
    ('"2021-12-31T24:00:00Z"', "2022-01-01T00:00"),
    ('"2021-06-30T24:00+02:00"', "2021-06-30T22:00"),
    ('"2021-06-30 24:00-0300"', "2021-07-01T03:00")])
def test_a_period_ending_at_24_00_with_a_zone_is_the_next_days_00_00(tmp_path, end, read):
    # before: "not a date: got '2021-12-31T24:00Z'", where "2021-12-31T24:00" was read
    sc = load_scenario(_scenario(tmp_path, f'[period]\nstart = "2021-01-01T00:00Z"\n'
                                           f"end = {end}\n"))
    assert sc.data["period"]["end"] == read


def test_an_unquoted_24_00_says_what_toml_takes(tmp_path):
    # before: "invalid TOML (Expected newline ...)" alone
    p = _scenario(tmp_path, "[period]\nend = 2021-12-31T24:00:00Z\n")
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line 4: invalid TOML") and msg.endswith(
        "; TOML's date-times take the hours 00-23: write the end of 2021-12-31 as the next "
        "day's 00:00, 2022-01-01T00:00:00Z, or in quotes, \"2021-12-31T24:00Z\" (read so)")


@pytest.mark.parametrize("end", ['"2021-12-31T24:30Z"', '"2021-12-31T25:00+01:00"'])
def test_another_hour_past_23_with_a_zone_is_a_located_message(tmp_path, end):
    p = _scenario(tmp_path, f"[period]\nend = {end}\n")
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    assert f"{p}, line 4, column 'period.end': not a date: got {end[1:-1]!r}" in \
        str(exc.value) and str(exc.value).endswith(
            "(an hour of 24 or more? hours run 00-23; only 24:00 may end a day)")
