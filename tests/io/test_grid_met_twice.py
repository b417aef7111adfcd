"""A NetCDF or zarr met file with a time step or a site twice on its axes.

The met CSV rule (tests/io/test_file_twice.py) held to gridded met: an exact repeat is
dropped with a note and `rejected` ledger records, a repeat with another value is one
located error naming the file, the site, the time, the variable and both values.
Before, any repeat on an axis was the error "duplicate hourly timestamp".
"""
from __future__ import annotations

import warnings

import numpy as np
import pytest
import xarray as xr

from workbench.errors import InputError
from workbench.io import read_met
from workbench.io.common import REPEAT_REASON


@pytest.fixture
def grid_met(files, cat):
    """The tiny met as a NetCDF-ready Dataset (units as CF attributes) and its read."""
    met, _ = read_met(files["met"], cat)
    nc = met.drop_vars("row_present").load().copy()
    nc["temperature"] = nc["temperature"] - 273.15
    nc["temperature"].attrs["units"] = "degC"
    nc["relative_humidity"] = nc["relative_humidity"] * 100
    nc["relative_humidity"].attrs["units"] = "%"
    beta = nc.assign_coords(site=["beta"])
    beta["temperature"] = beta["temperature"] + 1.25       # another site, other values
    return xr.concat([nc, beta], dim="site")


def _write(ds, tmp_path, kind):
    if kind == "nc":
        p = tmp_path / "met.nc"
        ds.to_netcdf(p, engine="scipy")
        return p
    pytest.importorskip("zarr", reason="zarr stores need the zarr extra")
    p = tmp_path / "met.zarr"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ds.to_zarr(p, mode="w")
    return p


@pytest.mark.parametrize("kind", ["nc", "zarr"])
def test_time_steps_pasted_twice_are_dropped(grid_met, tmp_path, cat, kind):
    """Time steps 0-4 appended again after the last: dropped, noted, in the ledger."""
    n_s, n_t = grid_met.sizes["site"], grid_met.sizes["time"]
    twice = xr.concat([grid_met, grid_met.isel(time=slice(0, 5))], dim="time")
    once, _ = read_met(_write_in(grid_met, tmp_path, "once", kind), cat)
    back, led = read_met(_write_in(twice, tmp_path, "twice", kind), cat)
    for v in ("temperature", "relative_humidity", "wind_speed", "pressure"):
        np.testing.assert_array_equal(back[v].values, once[v].values)
    assert led.rows() == n_s * (n_t + 5) and led.check_balanced()
    reasons = led.reasons()
    rep = reasons[reasons["reason"] == REPEAT_REASON]
    assert int(rep["rows"].sum()) == n_s * 5
    note = [n for n in led.notes if "repeating an earlier one" in n]
    assert len(note) == 1
    assert note[0].startswith(f"met.{'nc' if kind == 'nc' else 'zarr'}: 5 time steps")
    assert f"time indices {n_t}-{n_t + 4}" in note[0] and "repeat time indices 0-4" in note[0]
    assert "temperature" in note[0] and f"{n_s * 5} records rejected" in note[0]
    assert str(grid_met["time"].values[0])[:16] in note[0]


def _write_in(ds, tmp_path, sub, kind):
    folder = tmp_path / sub
    folder.mkdir()
    return _write(ds, folder, kind)


@pytest.mark.parametrize("kind", ["nc", "zarr"])
def test_time_step_repeated_with_another_value_is_one_located_error(grid_met, tmp_path, cat,
                                                                    kind):
    n_t = grid_met.sizes["time"]
    extra = grid_met.isel(time=[3]).copy(deep=True)
    extra["temperature"].values[1, 0] += 0.5
    twice = xr.concat([grid_met, extra], dim="time")
    with pytest.raises(InputError) as err:
        read_met(_write_in(twice, tmp_path, "x", kind), cat)
    msg = str(err.value)
    site = str(grid_met["site"].values[1])
    t = str(grid_met["time"].values[3])[:19]
    first = grid_met["temperature"].values[1, 3]
    assert "met." in msg and "column 'temperature'" in msg
    assert f"site {site!r}, time {t}" in msg
    assert f"time index {n_t} repeats time index 3" in msg
    assert f"has temperature {first} degC where time index {n_t} has {first + 0.5} degC" in msg
    assert "Traceback" not in msg


@pytest.mark.parametrize("kind", ["nc", "zarr"])
def test_a_site_twice_on_the_site_axis(grid_met, tmp_path, cat, kind):
    """The same site's records twice: dropped; with another value: the located error."""
    n_s, n_t = grid_met.sizes["site"], grid_met.sizes["time"]
    twice = xr.concat([grid_met, grid_met.isel(site=[0])], dim="site")
    back, led = read_met(_write_in(twice, tmp_path, "same", kind), cat)
    assert back.sizes["site"] == n_s and led.rows() == (n_s + 1) * n_t
    assert led.check_balanced()
    assert any(f"site index {n_s} ('{grid_met['site'].values[0]}') repeats site index 0" in n
               for n in led.notes)
    other = twice.copy(deep=True)
    other["wind_speed"].values[n_s, 7] += 1.0
    with pytest.raises(InputError, match=r"site index \d+ repeats site index 0.*column "
                       r"'wind_speed'|column 'wind_speed'.*site index \d+ repeats site index 0"):
        read_met(_write_in(other, tmp_path, "other", kind), cat)


def test_nan_cells_repeat_nan_cells(grid_met, tmp_path, cat):
    """A missing value repeated as missing is the same cell (the CSV rule: an empty cell
    equals an empty cell)."""
    g = grid_met.copy(deep=True)
    g["temperature"].values[0, 2] = np.nan
    twice = xr.concat([g, g.isel(time=[2])], dim="time")
    back, led = read_met(_write_in(twice, tmp_path, "nan", "nc"), cat)
    assert np.isnan(back["temperature"].values[0, 2]) and led.check_balanced()


def _messages(raw, path, dim, block):
    from workbench.grid_read import read_values
    from workbench.io.metaxes import check_repeats
    try:
        return [a.tolist() for a in check_repeats(raw, path, dim, read_values,
                                                  block_values=block)]
    except InputError as exc:
        return str(exc)


@pytest.mark.parametrize("dim", ["time", "site"])
def test_repeats_compared_in_blocks_give_the_messages_of_one_comparison(grid_met, tmp_path,
                                                                         dim):
    """Blocks of a value, of a few repeats, of a row, and everything at once: the same
    kept positions, or the same located error (the first repeat that differs, in any
    variable, and its first cell)."""
    n = grid_met.sizes[dim]
    g = grid_met.copy(deep=True)
    g["temperature"].values[0, 1] = np.nan                       # NaN equal to NaN
    pieces = [g, g.isel({dim: list(range(n))}), g.isel({dim: [0]})]
    twice = xr.concat(pieces, dim=dim)
    path = tmp_path / f"{dim}.nc"
    twice.to_netcdf(path, engine="scipy")
    blocks = (1, 2, 3, 7, 10**9)
    with xr.open_dataset(path) as raw:
        same = {str(_messages(raw, path, dim, b)) for b in blocks}
    assert len(same) == 1 and "Error" not in same.pop()
    # other values: a later repeat in the first variable, an earlier one in another,
    # and two cells of that repeat (the first one in C order is named)
    other = twice.copy(deep=True)
    at = {"time": lambda k, j: (j, k), "site": lambda k, j: (k, j)}[dim]
    m = twice.sizes["site" if dim == "time" else "time"]
    other["temperature"].values[at(2 * n, 0)] += 1.0             # repeats index 0 again
    other["wind_speed"].values[at(n + 1, m - 1)] += 1.0
    other["wind_speed"].values[at(n + 1, 0)] += 2.0
    path = tmp_path / f"{dim}_other.nc"
    other.to_netcdf(path, engine="scipy")
    with xr.open_dataset(path) as raw:
        msgs = {_messages(raw, path, dim, b) for b in blocks}
    assert len(msgs) == 1
    msg = msgs.pop()
    first = twice["wind_speed"].values[at(1, 0)]
    assert "column 'wind_speed'" in msg and f"{dim} index {n + 1} repeats {dim} index 1" in msg
    assert f"has wind_speed {first} m s-1 where {dim} index {n + 1} has {first + 2.0}" in msg
