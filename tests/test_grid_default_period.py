"""The default reporting span of `workbench grid` is the site run's
(`workbench.periods.default_span`): the calendar years of the record without a first or
last year it reaches into by `EDGE_YEAR_DAYS` days or less, with the same run note.

Before, the grid built its periods over the whole span of its air intervals: a grid
whose last weekly interval ends a few days into a new year got a map of that year (or
of its January) from four days of data, with no note, where a site run with the same
record stops at 1 January and says which days it left out (tests/test_default_period.py).
The grid here is invented: 2 x 2 cells, hourly met from 1 November 2021, weekly air
intervals from 2021-11-03T09:00 to 2022-01-05T09:00 (4.4 days into 2022).
"""
from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr

from workbench.grid import make_periods, span_notes
from workbench.grid_demo import write_grid_files
from workbench.grid_io import open_grid
from workbench.grid_output import run_grid
from workbench.periods import excluded_record_notes

HOUR = np.timedelta64(1, "h")
SAID = ("the default [period] end is 2022-01-01: the record reaches 4.4 days into 2022 "
        "(to 2022-01-05T09:00 UTC, the tail of its last samples)")


def _scenario(folder, resolution="year", end=None):
    text = ('[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n\n'
            f'[period]\nresolution = "{resolution}"\n')
    if end:
        text += f'end = "{end}"\n'
    path = folder / f"scenario_{resolution}{'_end' if end else ''}.toml"
    path.write_text(text)
    return path


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    """The invented grid files (plausible, quiet winter weather; invented values)."""
    base = tmp_path_factory.mktemp("grid_edge")
    t = np.arange(np.datetime64("2021-11-01T01:00"), np.datetime64("2022-01-05T10:00"),
                  HOUR).astype("datetime64[ns]")
    n, shape = len(t), (len(t), 2, 2)
    hour = (t - t.astype("datetime64[D]")) / HOUR
    sun = np.clip(np.sin((hour - 8.0) / 8.0 * np.pi), 0, None) * 150.0     # 8-16 h
    ones = np.ones(shape)
    met = {"wind_speed": (3.0 + np.sin(np.arange(n) / 7.0)[:, None, None] * ones, "m s-1"),
           "temperature": ((275.0 + 3.0 * np.sin((hour - 9.0) / 24 * 2 * np.pi))[:, None, None]
                           * ones, "K"),
           "relative_humidity": (0.85 * ones, "1"),
           "solar_radiation": (sun[:, None, None] * ones, "W m-2"),
           "precipitation": (np.where(np.arange(n) % 50 == 0, 0.4, 0.0)[:, None, None]
                             * ones, "mm"),
           "pressure": (98_000.0 * ones, "Pa"),
           "cloud_cover": (0.6 * ones, "1")}
    starts = np.arange(np.datetime64("2021-11-03T09:00"), np.datetime64("2022-01-01T00:00"),
                       np.timedelta64(7, "D")).astype("datetime64[ns]")
    ends = starts + np.timedelta64(7, "D")
    k = len(starts)
    air = {"SO2": (np.linspace(1e-9, 2e-9, k)[:, None, None] * np.ones((k, 2, 2)), "mol mol-1"),
           "pSO4": (np.linspace(2e-8, 3e-8, k)[:, None, None] * np.ones((k, 2, 2)),
                    "mol m-3")}
    classes = np.array([["grass", "conifer_forest"], ["crops", "grass"]], object)
    write_grid_files(base, t, met, (starts, ends), air, classes,
                     lat=np.full((2, 2), 54.5), lon=np.full((2, 2), 7.2))
    return base


def _grid(folder):
    return open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")


def test_the_record_reaches_a_few_days_into_2022(folder):
    grid = _grid(folder)
    assert str(grid.air_end.max())[:16] == "2022-01-05T09:00"


@pytest.mark.parametrize("resolution, labels", [("year", ["2021"]),
                                               ("month", ["2021-11", "2021-12"])])
def test_no_few_days_period(folder, resolution, labels):
    """Fails on the code before: ['2021', '2022'] and [..., '2021-12', '2022-01']."""
    periods = make_periods(_grid(folder), resolution)
    assert list(periods["label"]) == labels
    assert str(periods["end"].iloc[-1])[:10] == "2022-01-01"


def test_the_note_is_the_site_runs(folder):
    grid = _grid(folder)
    notes = span_notes(grid)
    assert notes == excluded_record_notes(grid.air_start.min(), grid.air_end.max())
    assert len(notes) == 1 and notes[0].startswith("period: " + SAID)
    assert span_notes(grid, end="2023-01-01") == []          # an end given: nothing left out
    assert make_periods(grid, "year", end="2023-01-01")["label"].tolist() == ["2021", "2022"]


def test_run_folder_and_console_say_it(folder, tmp_path, capsys):
    from workbench.cli import main
    out = tmp_path / "run"
    run_grid(_scenario(folder), out, use_dask=False)
    err = " ".join(capsys.readouterr().err.split())  # the words, lines unwrapped (console_lines)
    assert "note: " + SAID in err
    with xr.open_dataset(out / "grid.nc") as ds:
        assert [str(p) for p in ds["period"].values] == ["2021"]
        assert str(ds["time_bnds"].values[-1, 1])[:10] == "2022-01-01"
        assert SAID in ds.attrs["workbench_period_notes"]
        assert np.isfinite(ds["dry_S"].values).all()
    prov = json.loads((out / "provenance.json").read_text())
    assert any(n.startswith("period: " + SAID) for n in prov["notes"])
    assert main(["check", str(_scenario(folder)), "--quiet"]) == 0
    printed = capsys.readouterr().out
    assert "periods: 1 year period\n" in printed
    assert "note: " + SAID in " ".join(printed.split())      # the words, unwrapped


def test_an_end_given_keeps_the_days(folder, tmp_path, capsys):
    out = tmp_path / "run"
    run_grid(_scenario(folder, end="2023-01-01"), out, use_dask=False, quiet=True)
    with xr.open_dataset(out / "grid.nc") as ds:
        assert [str(p) for p in ds["period"].values] == ["2021", "2022"]
        assert "workbench_period_notes" not in ds.attrs
    prov = json.loads((out / "provenance.json").read_text())
    assert not any("default [period]" in n for n in prov["notes"])
