"""The note on a site's met record (workbench/io/metgaps.py): "complete hourly record"
only when every hour has a row and every required variable a value in each of them.
Before, a site whose rows were all there but whose wind speed was blank (or -9999)
throughout was called complete by ``workbench check``."""
import numpy as np
import pandas as pd
import pytest

from workbench.io import read_met
from workbench.io.metgaps import COMPLETE_RECORD, describe_gaps

from tiny_inputs import plausible_met_csv


def _site_note(led, site="alpha"):
    notes = [n for n in led.notes if n.startswith(f"met {site}: ")]
    assert len(notes) == 1, led.notes
    return notes[0]


def test_a_clean_record_is_complete(tmp_path, cat, met_reader):
    _, led = met_reader(plausible_met_csv(tmp_path), cat)
    assert _site_note(led).startswith(f"met alpha: {COMPLETE_RECORD} ")


@pytest.mark.parametrize("column, cell, what", [
    ("wind_speed [m/s]", "", "wind speed"),
    ("wind_speed [m/s]", "NA", "wind speed"),
    ("wind_speed [m/s]", -9999, "wind speed"),
    ("temperature [degC]", -999, "temperature"),
    ("relative_humidity [%]", "", "relative humidity"),
    ("solar_radiation [W/m2]", "n/a", "solar radiation"),
])
def test_a_variable_blank_throughout_is_not_complete(tmp_path, cat, met_reader,
                                                       column, cell, what):
    met, led = met_reader(plausible_met_csv(tmp_path, **{column: cell}), cat)
    note = _site_note(led)
    assert COMPLETE_RECORD not in note
    assert note == ("met alpha: a row for every hour 2020-06-01T00:00 to "
                    "2020-06-03T23:00 UTC, not every value: of its 72 hours with a "
                    f"row, {what} has a value in 0 (none)")
    name = column.split(" [")[0]
    assert np.isnan(met[name].values).all()
    assert int(met["row_present"].sum()) == 72


def test_some_hours_without_a_value_are_counted(tmp_path, cat, met_reader):
    wind = np.full(72, 3.0)
    wind[:10] = np.nan
    rh = np.full(72, 70.0)
    rh[5] = np.nan
    _, led = met_reader(plausible_met_csv(tmp_path, **{"wind_speed [m/s]": wind,
                                                       "relative_humidity [%]": rh}), cat)
    assert _site_note(led).endswith("not every value: of its 72 hours with a row, "
                                    "wind speed has a value in 62, relative humidity in 71")


def test_a_gap_note_counts_the_values_of_the_hours_with_a_row(tmp_path, cat, met_reader):
    p = plausible_met_csv(tmp_path, **{"wind_speed [m/s]": ""})
    df = pd.read_csv(p, keep_default_na=False, dtype=str)
    df.drop(index=range(30, 34)).to_csv(p, index=False)
    _, led = met_reader(p, cat)
    note = _site_note(led)
    assert note.startswith("met alpha: 4 missing hours in 1 gap; longest 4 h from ")
    assert note.endswith("; of its 68 hours with a row, wind speed has a value in 0 (none)")


def test_a_netcdf_record_without_wind_is_not_complete(tmp_path, cat):
    met, _ = read_met(plausible_met_csv(tmp_path), cat)
    nc = met.drop_vars("row_present")
    nc["wind_speed"] = nc["wind_speed"] * np.nan
    nc.to_netcdf(tmp_path / "met.nc", engine="scipy")
    _, led = read_met(tmp_path / "met.nc", cat)
    note = _site_note(led)
    assert COMPLETE_RECORD not in note
    assert note.endswith("of its 72 hours with a row, wind speed has a value in 0 (none)")


def test_value_counts_ignores_hours_without_a_row_and_optional_variables():
    from workbench.io.metgaps import value_counts
    rows = np.array([True, True, False, True])
    values = {"wind_speed": np.array([[1.0, 2.0, np.nan, 3.0]]),
              "friction_velocity": np.full((1, 4), np.nan)}      # optional: not counted
    assert value_counts(values, rows, 0) == ""
    values["pressure"] = np.array([[np.nan, 1.0, 1.0, 1.0]])
    assert value_counts(values, rows, 0) == ("of its 3 hours with a row, pressure has a "
                                             "value in 2")


def test_describe_gaps_reads_the_variables_of_a_dataset():
    import xarray as xr
    t = np.datetime64("2020-01-01T01:00", "ns") + np.arange(3) * np.timedelta64(1, "h")
    ds = xr.Dataset({"row_present": (("site", "time"), np.ones((2, 3), bool)),
                     "temperature": (("site", "time"), [[280.0] * 3, [np.nan] * 3])},
                    coords={"site": ["a", "b"], "time": t})
    a, b = describe_gaps(ds)
    assert a == f"met a: {COMPLETE_RECORD} 2020-01-01T01:00 to 2020-01-01T03:00 UTC"
    assert b.endswith("of its 3 hours with a row, temperature has a value in 0 (none)")
