"""A met logger on local clock time repeats an hour when the clock goes back from summer
time: the located error says so (both CSV readers), and only then."""
from __future__ import annotations

import pandas as pd
import pytest

from workbench.errors import InputError
from tiny_inputs import plausible_met_csv

HINT = "the clock going back from summer time?"


def _local_clock(tmp_path, start_utc, zone="Europe/Amsterdam"):
    """72 hours written on a local clock with summer time (zone rules from the tz
    database via pandas, a reference outside the project)."""
    p = plausible_met_csv(tmp_path)
    df = pd.read_csv(p).iloc[:72].copy()
    t = pd.date_range(start_utc, periods=72, freq="h", tz="UTC")
    df["time"] = t.tz_convert(zone).tz_localize(None).strftime("%Y-%m-%dT%H:%M")
    df["solar_radiation [W/m2]"] = 0.0
    df.to_csv(p, index=False)
    return p


def test_repeated_hour_at_the_autumn_change_is_named(tmp_path, cat, met_reader):
    # 2020-10-25: 03:00 CEST -> 02:00 CET, so 02:00 (hour end) is written twice
    p = _local_clock(tmp_path, "2020-10-24T00:00")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    msg = str(exc.value)
    assert "line 27, column 'time': duplicate hourly timestamp: got '2020-10-25T02:00'" in msg
    assert "(also on line 26); " + HINT in msg and "02:00+02:00 then 02:00+01:00" in msg


def test_repeated_hour_elsewhere_has_no_clock_hint(tmp_path, cat, met_reader):
    p = plausible_met_csv(tmp_path)
    df = pd.read_csv(p)
    again = df.iloc[[40]].copy()                  # a row uploaded twice, at the end, with
    again["wind_speed [m/s]"] += 1.0              # another value (an exact one is dropped)
    df = pd.concat([df, again])
    df.to_csv(p, index=False)
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    assert "duplicate hourly timestamp" in str(exc.value) and HINT not in str(exc.value)


def test_an_exact_repeat_at_the_autumn_change_is_not_dropped(tmp_path, cat, met_reader):
    # the repeated 02:00 of the test above reads the same in every column (a night of
    # constant met): not taken for a row pasted twice, which would hide the clock
    # (exact repeats are dropped elsewhere, tests/io/test_file_twice.py)
    p = _local_clock(tmp_path, "2020-10-24T00:00")
    df = pd.read_csv(p)
    assert (df.iloc[25].drop("time") == df.iloc[26].drop("time")).all()
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    assert HINT in str(exc.value)
