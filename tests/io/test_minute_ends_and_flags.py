"""Field slips of an audit (docs/data_formats.md, "Ends at minute 59, a UTC period
written with Z, a coastal flag in coast_distance_km"): an end written inclusive to the
minute, a scenario period in UTC written with a trailing Z, and a catalogue writing
coast_distance_km as a 0/1 flag.  Invented sites "alpha" and "beta" of tiny_inputs.

Each case was read before as a silent wrong number or a refusal; the tests say which.
"""
from __future__ import annotations

import numpy as np
import pytest

from tiny_inputs import PRECIP, SITES
from workbench.errors import ScenarioError
from workbench.cli import main
from workbench.io import read_air, read_precipitation, read_sites
from workbench.scenario import load_scenario


def _hourly_air(ends):
    rows = [f"alpha,2020-01-07T{h:02d}:00,{e},fp1,2.0" for h, e in enumerate(ends)]
    return ("# reference_state: ambient\nsite,start,end,sampler_id,SO2 [ug/m3]\n"
            + "\n".join(rows) + "\n")


def test_hourly_air_rows_ending_at_minute_59_cover_the_whole_hour(write, cat):
    # before: 59-minute periods (98.3 % of each hour) with a minute's gap between rows
    ends = [f"2020-01-07T{h:02d}:59" for h in range(4)]
    ds, led = read_air(write("air.csv", _hourly_air(ends)), cat)
    length = (ds["end"].values - ds["start"].values) / np.timedelta64(1, "m")
    assert length.tolist() == [60.0] * 4
    assert (ds["start"].values[1:] == ds["end"].values[:-1]).all()      # no gaps
    note = [n for n in led.notes if "minute 59" in n]
    assert note == ["air.csv: ends at minute 59 in 'end' (00:00 to 00:59, the end minute "
                    "included) read as the next whole hour (00:00 to 01:00): 4 rows "
                    "(lines 3-6); write the end as the next hour, 01:00, to silence this "
                    "note"], led.notes


def test_only_the_rows_ending_at_minute_59_are_moved_and_counted(write, cat):
    ends = ["2020-01-07T00:59", "2020-01-07T02:00", "2020-01-07T02:30"]
    ds, led = read_air(write("air.csv", _hourly_air(ends)), cat)
    # alpha is UTC+1: a naive 00:00 is 23:00 UTC
    assert ds["end"].values.astype("datetime64[m]").astype(str).tolist() == [
        "2020-01-07T00:00", "2020-01-07T01:00", "2020-01-07T01:30"]
    assert [n for n in led.notes if "minute 59" in n][0].endswith(
        ": 1 row (line 3); write the end as the next hour, 01:00, to silence this note")


def test_a_59_minute_row_not_on_the_hour_is_read_as_written(write, cat):
    # an end at :59 of a period that is no whole number of hours less a minute
    text = _hourly_air(["2020-01-07T00:59"]).replace("T00:00,", "T00:30,")
    ds, led = read_air(write("air.csv", text), cat)
    assert (ds["end"].values - ds["start"].values) / np.timedelta64(1, "m") == 29
    assert not [n for n in led.notes if "minute 59" in n]


def test_weekly_samples_ending_at_0859_share_the_rule(write, cat):
    # the precipitation reader shares the interval code: 09:00 to 08:59 a week later
    text = PRECIP.replace("-14T09:00,w1", "-14T08:59,w1").replace(
        "-21T09:00,w1", "-21T08:59,w1").replace("-28T09:00,w1", "-28T08:59,w1")
    ds, led = read_precipitation(write("p.csv", text), cat)
    alpha = ds["site"].values == "alpha"
    days = (ds["end"].values - ds["start"].values)[alpha] / np.timedelta64(1, "D")
    assert days.tolist() == [7.0, 7.0, 7.0]
    assert any(n.startswith("p.csv: ends at minute 59 in 'end'") and ": 3 rows (lines 2-4)"
               in n for n in led.notes), led.notes


def test_files_ending_on_the_hour_have_no_note(files, cat):
    _, led = read_air(files["air"], cat)
    assert not [n for n in led.notes if "minute 59" in n]


# ------------------------------------------------------------ a UTC period with Z
def _scenario(tmp_path, body):
    (tmp_path / "s.toml").write_text(SITES)
    p = tmp_path / "sc.toml"
    p.write_text('[inputs]\nsites = "s.toml"\n' + body)
    return p


@pytest.mark.parametrize("start, end, read", [
    ('"2021-01-01T00:00Z"', '"2022-01-01T00:00Z"', ("2021-01-01T00:00", "2022-01-01T00:00")),
    ('"2021-01-01 06:30:15Z"', '"2021-07-01T02:00+02:00"',
     ("2021-01-01T06:30:15", "2021-07-01T00:00")),
    ("2021-01-01T00:00:00Z", "2021-07-01T00:00:00+00:00",      # unquoted: before too
     ("2021-01-01T00:00", "2021-07-01T00:00"))])
def test_a_period_in_utc_written_with_z_is_read(tmp_path, start, end, read):
    # before: "not a date: got '2021-01-01T00:00Z', expected ... in UTC without offset"
    sc = load_scenario(_scenario(tmp_path, f"[period]\nstart = {start}\nend = {end}\n"))
    assert (sc.data["period"]["start"], sc.data["period"]["end"]) == read


def test_a_zoned_period_that_is_no_date_is_still_refused(tmp_path):
    p = _scenario(tmp_path, '[period]\nstart = "2021-13-01T00:00Z"\n')
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    assert f"{p}, line 4, column 'period.start': not a date: got " \
           "'2021-13-01T00:00Z'" in str(exc.value)


# ------------------------------------------------------------ a coastal flag as a distance
def _catalogue(tmp_path, values):
    text = SITES
    for sid, v in zip(("alpha", "beta"), values):
        if v is not None:
            text = text.replace(f'id = "{sid}"\n', f'id = "{sid}"\ncoast_distance_km = {v}\n')
    p = tmp_path / "sites.toml"
    p.write_text(text)
    return read_sites(p)


@pytest.mark.parametrize("values, shown", [((0, 1), "alpha 0, beta 1"),
                                           ((1, None), "alpha 1"), ((0.0, 0), "alpha 0, beta 0")])
def test_a_catalogue_of_only_0_and_1_coast_distances_is_noted(tmp_path, values, shown):
    # before: read as distances without a word; a flag 0 for "inland" is on the coast
    cat = _catalogue(tmp_path, values)
    note = [n for n in cat.notes if "coast_distance_km is 0 or 1" in n]
    assert len(note) == 1, cat.notes
    assert note[0].startswith("sites.toml, line ") and f"({shown}): read as distances in " \
           "km (0 is on the coast;" in note[0] and "a yes/no coastal flag? write each " \
           "site's distance to the sea coast in km" in note[0], note
    assert cat["alpha"].coast_distance_km == values[0]       # used as written


@pytest.mark.parametrize("values", [(0, 12.5), (None, None), (3, 1)])
def test_coast_distances_in_km_get_no_flag_note(tmp_path, values):
    assert not [n for n in _catalogue(tmp_path, values).notes if "coast_distance" in n]


def test_workbench_check_prints_the_coastal_flag_note(tmp_path, capsys):
    import test_budget as tb
    sc = tb._write(tmp_path)
    sites = tmp_path / "sites.toml"
    sites.write_text(sites.read_text().replace('id = "alpha"\n',
                                               'id = "alpha"\ncoast_distance_km = 1\n'))
    assert main(["check", str(sc)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "sites.toml, line 3: coast_distance_km is 0 or 1 at every site that gives it " \
           "(alpha 1): read as distances in km" in out, out
