"""Dates written day/month or month/day in every file kind: one located error naming the
file, the line, the column, the value and its ISO 8601 readings (ISO 8601:2004, 4.1.2:
calendar dates are year-month-day; from memory).  A year-first date with slashes or
dots (2020/01/07) is unambiguous and read as its ISO form."""
from __future__ import annotations

import numpy as np
import pytest

from tiny_inputs import AIR, PRECIP, SITES, met_text
from workbench.errors import InputError
from workbench.io import read_air, read_precipitation, read_sites
from workbench.io.table import day_month_readings

#: (written, the readings the message gives); the tiny files' first day is 2020-01-07.
AMBIGUOUS = [("07/01/2020", "2020-01-07 if day first, 2020-07-01 if month first"),
             ("7.1.20", "2020-01-07 if day first, 2020-07-01 if month first"),
             ("07-01-2020", "2020-01-07 if day first, 2020-07-01 if month first")]


def _hint(readings, time=""):
    if time:
        readings = readings.replace(" if", f"T{time} if")
    return f"(a date in day/month or month/day order? write year-month-day: {readings})"


def test_day_month_readings_one_reading_when_the_other_is_no_month():
    assert day_month_readings("21/01/2021") == "2021-01-21 (day first; no month 21)"
    assert day_month_readings("01/21/2021") == "2021-01-21 (month first; no month 21)"
    assert day_month_readings("05.05.2021") == "2021-05-05"


@pytest.mark.parametrize("written, readings", AMBIGUOUS)
@pytest.mark.parametrize("kind", ["precipitation", "gauge", "air"])
def test_sample_files(write, cat, kind, written, readings):
    if kind == "air":
        text, line, reader = AIR.replace("2020-01-07T09:00", f"{written} 09:00", 1), 3, read_air
    elif kind == "precipitation":
        text, line = PRECIP.replace("2020-01-07T09:00", f"{written} 09:00", 1), 2
        reader = read_precipitation
    else:     # a gauge-only row of its own sampler appended to the precipitation file
        text = PRECIP + f"alpha,{written} 09:00,2020-01-08T09:00,RG1,3.0,,,,,,,,,\n"
        line, reader = 6, read_precipitation
    p = write("f.csv", text)
    with pytest.raises(InputError) as err:
        reader(p, cat)
    assert str(err.value) == (
        f"{p}, line {line}, column 'start': not an ISO 8601 timestamp "
        f"{_hint(readings, '09:00')}: got '{written} 09:00', expected a timestamp such as "
        "2020-01-09T14:00 or 2020-01-09T14:00+01:00")


@pytest.mark.parametrize("written, readings", AMBIGUOUS)
def test_met_file(write, cat, met_reader, written, readings):
    p = write("m.csv", met_text().replace("2020-01-07T05:00", f"{written} 05:00", 1))
    with pytest.raises(InputError) as err:
        met_reader(p, cat)
    assert str(err.value) == (
        f"{p}, line 7, column 'time': not an ISO 8601 timestamp {_hint(readings, '05:00')}: "
        f"got '{written} 05:00', expected a timestamp such as 2020-01-09T14:00 or "
        "2020-01-09T14:00+01:00")


@pytest.mark.parametrize("written, readings", AMBIGUOUS)
def test_catalogue_change_date(write, written, readings):
    text = SITES.replace('receptors = ["conifer_forest"]', 'receptors = ["conifer_forest"]\n'
                         f'[[site.change]]\ndate = "{written}"\nwhat = "collector"\n'
                         'from = "bulk"\nto = "wet_only"\n', 1)
    p = write("s.toml", text)
    with pytest.raises(InputError) as err:
        read_sites(p)
    assert str(err.value) == (
        f"{p}, line 14, column 'change.date': change date is not a date {_hint(readings)}: "
        f"got '{written}', expected a date such as 2014-04-01 (the first day of the new "
        "method, UTC)")


def test_year_first_with_slashes_is_read_as_its_iso_form(write, cat, met_reader):
    """2020/01/07 05:00 is 2020-01-07T05:00 (year first: no other order exists)."""
    iso, _ = met_reader(write("a.csv", met_text()), cat)
    slashed, _ = met_reader(write("b.csv", met_text().replace("2020-01-07T05:00",
                                                               "2020/01/07 05:00", 1)), cat)
    np.testing.assert_array_equal(iso["time"].values, slashed["time"].values)
    np.testing.assert_array_equal(iso["temperature"].values, slashed["temperature"].values)


@pytest.mark.parametrize("kind", ["precipitation", "air"])
def test_a_date_fitting_one_order_only_is_named_beside_the_ambiguous_one(write, cat, kind):
    # every start written day first: before, the message gave both readings of the
    # first and left the user to tell which the file uses
    text, reader = (PRECIP, read_precipitation) if kind == "precipitation" else (AIR, read_air)
    text = (text.replace("2020-01-07T09:00", "07/01/2020 09:00", 1)
                .replace("2020-01-14T09:00,2020-01-21", "14/01/2020 09:00,2020-01-21", 1))
    p = write("f.csv", text)
    lines = text.splitlines()
    first = next(k for k, ln in enumerate(lines) if "07/01/2020" in ln) + 1
    other = next(k for k, ln in enumerate(lines) if "14/01/2020" in ln) + 1
    with pytest.raises(InputError) as err:
        reader(p, cat)
    msg = str(err.value)
    assert msg.startswith(f"{p}, line {first}, column 'start': not an ISO 8601 timestamp "
                          "(a date in day/month or month/day order? write year-month-day: "
                          "2020-01-07T09:00 if day first, 2020-07-01T09:00 if month first; "
                          f"line {other} has '14/01/2020 09:00', which fits day first only)"), msg
