"""The field trial of the met reader on NetCDF and zarr inputs (the CSV cases are in
test_field_trial.py): the mistakes a hand-made or converted file carries.

Each case edits a clean tiny record (tests/tiny_inputs.py met_text: invented site alpha,
72 hours, written as the reader reads it: SI units, UTC hour ends) and is written as
NetCDF3 (scipy) and as a zarr store.  What the user reads must be one located message
(file, variable, time index or time, value, what was expected) or a flag with its
reason; never a traceback.  ``("error", [texts])``: an InputError whose message starts
with the file and holds the texts; ``("reason", text)``: a ledger row flagged with that
reason; ``("note", text)``: a ledger note.
"""
from __future__ import annotations

import warnings

import numpy as np
import pytest
import xarray as xr

from tiny_inputs import SITES, met_text
from workbench.errors import InputError
from workbench.io import read_met, read_sites


@pytest.fixture(scope="module")
def clean(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("gridded")
    (tmp / "sites.toml").write_text(SITES)
    cat = read_sites(tmp / "sites.toml")
    (tmp / "met.csv").write_text(met_text(72))
    ds, _ = read_met(tmp / "met.csv", cat)
    base = ds.drop_vars("row_present").load()
    base.attrs = {}
    for v in base.variables:
        base[v].encoding = {}
    return base, cat


def _units(name, unit):
    def edit(ds):
        ds[name].attrs["units"] = unit
        return ds
    return edit


def _no_units(name):
    def edit(ds):
        ds[name].attrs.pop("units", None)
        return ds
    return edit


def _value(name, k, value, fill=False):
    def edit(ds):
        ds[name].values[0, k] = value
        if fill:
            ds[name].encoding["_FillValue"] = value
        return ds
    return edit


def _times_twice(ds):
    t = ds["time"].values.copy()
    t[10] = t[9]
    return ds.assign_coords(time=t)


def _renamed_dim(ds):
    return ds.rename({"site": "station"})


def _time_as_numbers(ds):
    return ds.assign_coords(time=np.arange(ds.sizes["time"], dtype=float))


def _nat_time(ds):
    t = ds["time"].values.copy()
    t[4] = np.datetime64("NaT")
    return ds.assign_coords(time=t)


CASES = {
    "units_wrong": (_units("temperature", "m/s"),
                    ("error", ["column 'temperature'", "unknown or dimensionally wrong unit",
                               "got 'm/s'", "a unit convertible to K"])),
    "units_degC_on_kelvin": (_units("temperature", "degC"),
                             ("reason", "temperature looks like kelvin although the header "
                                        "says degC (masked)")),
    "units_missing": (_no_units("temperature"),
                      ("error", ["column 'temperature'", "variable has no units attribute",
                                 "a CF 'units' attribute convertible to K"])),
    "minus_999": (_value("temperature", 5, -999.0),
                  ("reason", "temperature -999 K looks like a missing-value code (masked)")),
    "fill_value": (_value("temperature", 5, -999.0, fill=True),
                   ("reason", "temperature missing (no value)")),
    "times_twice": (_times_twice,
                    ("error", ["column 'wind_speed'", "duplicate hourly timestamp with "
                               "another value", "site 'alpha', time 2020-01-07T09:00:00",
                               "time index 10 repeats time index 9",
                               "time index 9 has wind_speed 5.0 m s-1 where time index 10 "
                               "has 3.0 m s-1"])),
    "variable_missing": (lambda ds: ds.drop_vars("wind_speed"),
                         ("error", ["column 'wind_speed'", "missing required variable"])),
    "variable_misspelt": (lambda ds: ds.rename({"wind_speed": "windspeed"}),
                          ("error", ["column 'wind_speed'", "missing required variable",
                                     "windspeed"])),
    "dimension_renamed": (_renamed_dim,
                          ("error", ["column 'site'", "missing dimension",
                                     "got 'station, time'", "dims (site, time)"])),
    "time_not_dates": (_time_as_numbers,
                       ("error", ["column 'time'", "time not decoded as dates"])),
    # old code: "timestamp not on the hour ...: got 'NaT'"
    "time_missing": (_nat_time,
                     ("error", ["column 'time'", "missing time (NaT: a fill value",
                                "time index 4", "got 'NaT'", "a time for every index"])),
    "variable_not_numbers": (lambda ds: ds.assign(wind_speed=ds["wind_speed"].astype(str)),
                             ("error", ["column 'wind_speed'", "variable is not numeric"])),
    "unknown_site": (lambda ds: ds.assign_coords(site=["gamma"]),
                     ("error", ["column 'site'", "site not in the catalogue", "got 'gamma'"])),
    "two_levels": (lambda ds: ds.assign(wind_speed=xr.concat([ds["wind_speed"]] * 2,
                                                             "height")),
                   ("error", ["column 'wind_speed'", "variable on other dimensions",
                              "got '(height, site, time)'"])),
}


def _write(ds, path, fmt):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if fmt == "nc":
            ds.to_netcdf(path, engine="scipy")
        else:
            ds.to_zarr(path, mode="w")
    return path


@pytest.mark.parametrize("fmt", ["nc", "zarr"])
@pytest.mark.parametrize("case", list(CASES))
def test_gridded_met_mistakes(tmp_path, clean, fmt, case):
    if fmt == "zarr":
        pytest.importorskip("zarr")
    base, cat = clean
    edit, (kind, want) = CASES[case]
    ds = edit(base.copy(deep=True))
    path = _write(ds, tmp_path / f"met.{fmt}", fmt)
    try:
        got = read_met(path, cat)
    except InputError as e:
        got = e
    if kind == "error":
        assert isinstance(got, InputError), f"read without a message: {got[1].notes}"
        msg = str(got)
        assert msg.startswith(f"{path}, "), msg
        for text in want:
            assert text in msg, msg
        return
    assert not isinstance(got, InputError), f"refused: {got}"
    _, led = got
    if kind == "reason":
        flagged = led.table[led.table["status"] != "accepted"]
        assert any(want in r for r in flagged["reason"]), led.table
    else:
        assert any(want in n for n in led.notes), led.notes


@pytest.fixture(scope="module")
def demo_summer(tmp_path_factory):
    """Four months of the demo's met (May to August 2016: sunny days for the clock
    check) and its catalogue."""
    from pathlib import Path
    demo = Path(__file__).resolve().parents[2] / "demo_data"
    cat = read_sites(demo / "sites.toml")
    ds, _ = read_met(demo / "met.csv.gz", cat)
    met = ds.drop_vars("row_present").isel(time=slice(24 * 120, 24 * 240)).load()
    met.attrs = {}
    for v in met.variables:
        met[v].encoding = {}
    return met, cat


@pytest.mark.parametrize("fmt", ["nc", "zarr"])
def test_local_times_without_their_zone_are_named_plainly(tmp_path, demo_summer, fmt):
    """Times in the sites' local standard time (UTC+1) written as if UTC: every variable
    is read an hour late.  Old code: "labels in local time of UTC+2 while utc_offset_h =
    1 (if so, set utc_offset_h = 2 ...)", the advice of a CSV file, wrong for a NetCDF
    or zarr time (read as UTC whatever utc_offset_h says)."""
    if fmt == "zarr":
        pytest.importorskip("zarr")
    met, cat = demo_summer
    local = met.assign_coords(time=met["time"].values + np.timedelta64(1, "h"))
    path = _write(local, tmp_path / f"met.{fmt}", fmt)
    _, led = read_met(path, cat)
    notes = [n for n in led.notes if "clock check of met site 'ridge'" in n]
    assert len(notes) == 1, led.notes
    assert ("the whole record sits 1 h late against its declared clock (UTC, as NetCDF and "
            "zarr times are read): every variable on the logger's clock is read 1 h late. "
            "Times in local time of UTC+1 (the site's utc_offset_h) written without their "
            "zone? If so, convert them to UTC or give the time units their offset, e.g. "
            "'hours since 2021-01-01 00:00:00+01:00'") in notes[0], notes[0]
    assert "set utc_offset_h" not in notes[0]
