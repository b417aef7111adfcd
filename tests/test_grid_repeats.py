"""A gridded met file with a time step given twice (workbench.grid_repeats).

The met repeat rule of the site readers (tests/io/test_grid_met_twice.py) held to the
(time, y, x) met of ``workbench grid``: a file concatenated with an overlapping piece
(steps 90-99 given again) gives the maps of the file without the overlap, with one
note and the count in grid.nc's attributes; a repeated step with another value is one
located error naming the file, the variable, the first differing cell, the time and
both values, and the command line prints it without a traceback.  Before, any repeated
step was the error "not hourly ... time not increasing".  Checks are of the
workbench's own rule (common practice: a record given twice is dropped only when
identical).
"""
from __future__ import annotations

import shutil
import warnings
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import workbench.grid_scratch as grid_scratch
from workbench.cli import main
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import GridError, open_grid


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """A 4 x 4 demo grid of one month (744 hours) and its met loaded."""
    base = tmp_path_factory.mktemp("grid_repeats")
    sc = make_demo_grid(base / "once", n=4, months=1)
    with xr.open_dataset(base / "once" / "met.nc") as ds:
        met = ds.load()
    return sc, met


def _overlap(met, lo=90, hi=100):
    """The met with steps lo..hi-1 given again after step hi-1 (an overlapping piece)."""
    twice = xr.concat([met.isel(time=slice(0, hi)), met.isel(time=slice(lo, None))],
                      dim="time", data_vars="minimal", coords="minimal", compat="override")
    for k in met.variables:
        twice[k].encoding = dict(met[k].encoding)
    return twice


def _folder(sc, tmp_path, met, name="twice", kind="nc"):
    """A copy of the demo grid's folder with `met` in place of its met file."""
    folder = tmp_path / name
    shutil.copytree(Path(sc).parent, folder)
    (folder / "met.nc").unlink()
    if kind == "nc":
        met.to_netcdf(folder / "met.nc", engine="scipy")
    else:               # chunked along time: the block-major scratch copy reads it
        pytest.importorskip("zarr", reason="zarr stores need the zarr extra")
        text = (folder / "scenario.toml").read_text().replace('"met.nc"', '"met.zarr"')
        (folder / "scenario.toml").write_text(text)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            met.chunk({"time": 24}).to_zarr(folder / "met.zarr", mode="w")
    return folder / "scenario.toml"


def _maps(out):
    with xr.open_dataset(out / "grid.nc") as ds:
        return ds.load()


@pytest.mark.parametrize("kind", ["nc", "zarr"])
def test_exact_repeat_dropped_with_a_note_and_the_maps_of_the_grid_without_it(
        demo, tmp_path, capsys, monkeypatch, kind):
    sc, met = demo
    read = []                                  # reads of the block-major scratch copy
    values = grid_scratch.Scratch.values
    monkeypatch.setattr(grid_scratch.Scratch, "values",
                        lambda self, *a: read.append(a[0]) or values(self, *a))
    twice = _folder(sc, tmp_path, _overlap(met), kind=kind)
    grid = open_grid(*(twice.parent / n for n in (f"met.{kind}", "air.nc", "land_use.nc")))
    assert grid.met_dropped == 10 and len(grid.times) == met.sizes["time"]
    np.testing.assert_array_equal(grid.times[:3], met["time"].values[:3])
    note = [n for n in grid.notes if "dropped as exact repeats" in n]
    assert len(note) == 1
    assert note[0].startswith(f"met.{kind}: 10 of 754 time steps repeat an earlier one in "
                              "every variable (wind_speed, temperature,")
    assert "time indices 100-109 (2021-07-04T17:00 to 2021-07-05T02:00) repeat time " \
           "indices 90-99" in note[0]
    assert "time_bnds" not in note[0]
    assert main(["grid", str(sc), "--out", str(tmp_path / "a"), "--quiet", "--block", "2",
                 "--in-process"]) == 0
    # blocks of 2 x 2 cells as dask tasks where dask is there: the blocks carry the kept steps
    assert main(["grid", str(twice), "--out", str(tmp_path / "b"), "--block", "2"]) == 0
    err = " ".join(capsys.readouterr().err.split())  # the words, lines unwrapped (console_lines)
    assert "10 repeated time steps dropped" in err and "note: " + note[0] in err
    assert bool(read) == (kind == "zarr")      # the time-chunked store: from the copy
    a, b = _maps(tmp_path / "a"), _maps(tmp_path / "b")
    assert b.attrs["workbench_met_repeated_steps_dropped"] == 10
    assert b.attrs["workbench_met_repeat_note"] == note[0]
    assert "workbench_met_repeated_steps_dropped" not in a.attrs
    for name in a.data_vars:
        np.testing.assert_array_equal(b[name].values, a[name].values, err_msg=name)


def test_repeat_with_another_value_is_one_located_error(demo, tmp_path, capsys):
    sc, met = demo
    twice = _overlap(met)
    twice["wind_speed"].values[106, 0, 0] += 0.5          # a later repeat, other variable
    twice["temperature"].values[104, 2, 1] += 0.5         # the first one that differs
    t = str(twice["time"].values[104])[:16]
    sc2 = _folder(sc, tmp_path, twice)
    with pytest.raises(GridError) as e:
        open_grid(*(sc2.parent / n for n in ("met.nc", "air.nc", "land_use.nc")))
    msg = str(e.value)
    assert msg.startswith(f"{sc2.parent / 'met.nc'}, column 'temperature': time step repeated "
                          f"with another value (time {t} UTC, end of the hour: time index "
                          "104 repeats time index 94; first cell that differs: y index 2 "
                          f"(y = {met['y'].values[2]}), x index 1 (x = {met['x'].values[1]}))")
    first = met["temperature"].values[94, 2, 1]
    assert f"got '{np.float32(first + 0.5)} K'" in msg
    assert f"time index 94 has temperature {first} K where time index 104 has " \
           f"{np.float32(first + 0.5)} K" in msg
    assert main(["grid", str(sc2), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.strip() == f"error: {msg}" and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_nan_repeats_nan_and_blocks_give_the_same_answer(demo):
    """NaN equals NaN; a small block (a row of cells at a time) finds the same cell."""
    from workbench.grid_repeats import MetRepeats, check_met_repeats
    _, met = demo
    twice = _overlap(met)
    twice["precipitation"].values[[95, 105], 1, :] = np.nan
    found = MetRepeats.of_times(twice["time"].values)
    path = Path("met.nc")
    assert check_met_repeats(twice, path, twice["time"].values, found) == \
        check_met_repeats(twice, path, twice["time"].values, found, block_values=3)
    twice["precipitation"].values[105, 3, 2] = 1.0
    msgs = set()
    for block in (1, 3, 16, 10**9):
        with pytest.raises(GridError) as e:
            check_met_repeats(twice, path, twice["time"].values, found, block_values=block)
        msgs.add(str(e.value))
    assert len(msgs) == 1 and "y index 3" in msgs.pop()


def test_only_the_repeated_steps_are_read_a_block_at_a_time(demo, monkeypatch):
    """Each read holds at most a block of values; together, the repeated steps and the
    steps they repeat of each variable once, never the rest of the grid."""
    import workbench.grid_repeats as grid_repeats
    _, met = demo
    twice = _overlap(met)
    sizes = []
    real = grid_repeats.read_values
    monkeypatch.setattr(grid_repeats, "read_values",
                        lambda part, *a: sizes.append(part.size) or real(part, *a))
    found = grid_repeats.MetRepeats.of_times(twice["time"].values)
    plane = met.sizes["y"] * met.sizes["x"]
    names = [n for n in met.data_vars if "time" in met[n].dims and n != "time_bnds"]
    for block in (4, 3 * plane):
        sizes.clear()
        grid_repeats.check_met_repeats(twice, Path("met.nc"), twice["time"].values, found,
                                       block_values=block)
        assert max(sizes) <= block
        assert sum(sizes) == 2 * found.n_dropped * plane * len(names)
