"""Opening the grid files and reading their axes: the file or zarr store, a variable's
values (a damaged chunk located), the heights, the (y, x) dims, latitude and longitude,
the met's and the air's times, the met's units (split from :mod:`workbench.grid_io`,
which re-exports every name).
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import xarray as xr

from . import species as _species
from .errors import InputError
from .io.met import time_units
from .io.zarrstore import is_zarr_path, open_zarr, store_metadata
from .units import convert_plain, parse_unit, ureg


_UNIT_TEXT = {"m/s": "m s-1", "W/m**2": "W m-2"}
HOUR = np.timedelta64(3600, "s").astype("timedelta64[ns]")
#: Species an air grid may hold (variable names).
AIR_SPECIES = _species.AIR_GASES + _species.AIR_PARTICLES
#: Optional 2-D fields of the land-use file: name -> (unit, long name).
LAND_FIELDS = {"canopy_height": ("m", "canopy height of the cell's class (default: the "
                                 "class default of workbench.landuse)"),
               "surface_altitude": ("m", "surface altitude (fills missing pressure)")}


class GridError(InputError):
    """A gridded input breaks the format of docs/data_formats.md."""


def zarr_metadata(paths: dict) -> dict:
    """role -> the metadata of each zarr store among `paths` (role -> path), each
    document read once (:func:`workbench.io.zarrstore.store_metadata`), for
    :func:`_open`'s `metadata`; a NetCDF file has none."""
    out = {}
    for role, path in paths.items():
        if is_zarr_path(path):
            try:
                out[role] = store_metadata(path, role)
            except InputError as e:
                raise GridError(e.problem, file=e.file, column=e.column, value=e.value,
                                expected=e.expected) from None
    return out


def _open(path: Path, role: str, notes=None, only=None, metadata=None) -> xr.Dataset:
    """The grid file (NetCDF) or store (zarr, :mod:`workbench.io.zarrstore`), lazily;
    `only`: a zarr store's variable of that name alone, without its coordinates (read
    by position; a NetCDF file is opened whole); `metadata`: a zarr store's metadata
    as read when the grid was opened (:func:`zarr_metadata`; the grid's
    ``zarr_metadata``): the store's metadata documents are not read again."""
    if is_zarr_path(path):
        try:
            ds, more = open_zarr(path, role, check_consolidated=notes is not None,
                                 only=only, metadata=metadata)
        except InputError as e:
            raise GridError(e.problem, file=e.file, column=e.column, value=e.value,
                            expected=e.expected) from None
        (notes if notes is not None else []).extend(more)
        return ds
    if not path.exists():
        raise GridError("file not found", file=path, expected=f"the {role} grid (CF NetCDF)")
    try:
        return xr.open_dataset(path)
    except Exception as exc:  # many engines, many error types
        first = str(exc).strip().splitlines()[0][:160] if str(exc).strip() else ""
        raise GridError(f"cannot open NetCDF ({type(exc).__name__}: {first})", file=path,
                        expected="a NetCDF file") from None


def read_values(var, path, name, where="") -> np.ndarray:
    """The values of a lazily read variable, or the located error of a damaged chunk."""
    try:
        return var.values
    except Exception as exc:  # codecs and engines raise many error types
        first = str(exc).strip().splitlines()[0][:160] if str(exc).strip() else ""
        raise GridError(f"cannot read the values{where} ({type(exc).__name__}: {first})",
                        file=path, column=name, expected="values the format can decode (the "
                        "file or store may be damaged or half-copied)") from None


def _height(ds, path, name) -> float:
    """The scalar ``height`` coordinate of variable `name` [m] (CF: a size-1 or
    scalar coordinate with standard_name height)."""
    var = ds[name]
    for c in var.coords:
        cv = var.coords[c]
        if c == "height" or cv.attrs.get("standard_name") == "height":
            if cv.size != 1:
                raise GridError("height coordinate with more than one level", file=path,
                                column=f"{name}:{c}", value=cv.size, expected="one level")
            unit = cv.attrs.get("units")
            if unit is None:
                raise GridError("height coordinate has no units attribute", file=path,
                                column=f"{name}:{c}", expected="units 'm'")
            try:
                h = float(convert_plain(float(cv.values.reshape(-1)[0]), unit, "m"))
            except ValueError as exc:
                raise GridError(f"unknown or dimensionally wrong unit ({exc})", file=path,
                                column=f"{name}:{c}", value=unit, expected="a length") from None
            if not np.isfinite(h) or h <= 0:
                raise GridError("height not above the ground", file=path,
                                column=f"{name}:{c}", value=h, expected="a height > 0 m")
            return h
    raise GridError("no height coordinate", file=path, column=name,
                    expected="a scalar coordinate 'height' (standard_name height, units m) "
                    "giving the measurement or model-level height")


def _grid_dims(var: xr.DataArray, path, name, with_time=True) -> tuple:
    """The (y, x) dims of a variable on (time, y, x) (size-1 extra dims dropped)."""
    dims = [d for d in var.dims if d == "time" or var.sizes[d] != 1 or d in ("y", "x")
            or d in var.coords and var.coords[d].attrs.get("axis") in ("X", "Y")]
    want = 3 if with_time else 2
    has_time = "time" in dims
    if len(dims) != want or has_time != with_time:
        raise GridError("variable on other dimensions", file=path, column=name,
                        value="(" + ", ".join(map(str, var.dims)) + ")",
                        expected="dims (time, y, x)" if with_time else "dims (y, x)")
    return tuple(d for d in dims if d != "time")


def _lat_lon(files, shape, dims):
    """2-D latitude and longitude [degree] from the first file that has them."""
    found = {}
    for path, ds in files:
        for name in ds.variables:
            v = ds[name]
            sn = v.attrs.get("standard_name")
            if sn not in ("latitude", "longitude") or sn in found:
                continue
            if not set(v.dims) <= set(dims) or not v.dims:
                continue
            unit = str(v.attrs.get("units", ""))
            if not unit.startswith("degree"):
                raise GridError("latitude or longitude not in degrees", file=path, column=name,
                                value=unit or "(no units)", expected="units degrees_north / "
                                "degrees_east")
            arr = v.transpose(*[d for d in dims if d in v.dims]).values.astype(float)
            found[sn] = (np.broadcast_to(arr if v.ndim == 2 else
                                         (arr[:, None] if v.dims[0] == dims[0] else arr[None, :]),
                                         shape).copy(), path, name)
    for sn in ("latitude", "longitude"):
        if sn not in found:
            raise GridError(f"no {sn}", file=files[-1][0], column=sn,
                            expected=f"a variable with standard_name {sn} on the grid "
                            "dims (needed for the sun's position)")
    lat, path, name = found["latitude"]
    if not np.all(np.abs(lat) <= 90):
        raise GridError("latitude outside -90..90", file=path, column=name,
                        value=float(lat[np.abs(lat) > 90].reshape(-1)[0]), expected="-90..90")
    return lat, found["longitude"][0]


def _met_times(ds, path):
    """End of each met hour [datetime64[ns]], checked hourly (no step given twice)."""
    times = _met_labels(ds, path)
    _hourly(times, np.arange(len(times)), path)
    return times


def _met_labels(ds, path):
    """End of each met hour of the file [datetime64[ns]], repeated steps included."""
    if "time" not in ds.dims:
        raise GridError("missing dimension", file=path, column="time",
                        value=", ".join(map(str, ds.dims)) or "none", expected="dims (time, y, x)")
    t = ds["time"]
    if not np.issubdtype(t.dtype, np.datetime64):
        raise GridError("time not decoded as dates", file=path, column="time",
                        value=f"{t.dtype} {time_units(t)}",
                        expected="a CF time coordinate ('hours since 2020-01-01 00:00')")
    times = t.values.astype("datetime64[ns]")
    bounds = t.attrs.get("bounds")
    if bounds and bounds in ds:
        b = ds[bounds].values.astype("datetime64[ns]")
        if np.any(b[:, 1] - b[:, 0] != HOUR):
            i = int(np.flatnonzero(b[:, 1] - b[:, 0] != HOUR)[0])
            raise GridError(f"time bounds not one hour (time index {i})", file=path,
                            column=bounds, value=f"{b[i, 0]} - {b[i, 1]}", expected="hourly cells")
        times = b[:, 1]
    else:
        label = str(ds.attrs.get("time_label", "end")).lower()
        if label not in ("end", "start"):
            raise GridError("unknown time label", file=path, column="time_label", value=label,
                            expected="'end' or 'start' (global attribute), or CF time bounds")
        if label == "start":
            times = times + HOUR
    return times


def _hourly(times, index, path):
    """Check that `times` (the kept steps, at time indices `index` of the file) are
    consecutive whole hours."""
    off = (times - times.astype("datetime64[h]").astype("datetime64[ns]")) != np.timedelta64(0)
    step = np.diff(times) != HOUR
    if step.any() and not off.any():
        i = int(np.flatnonzero(step)[0])
        gap = (times[i + 1] - times[i]) / HOUR
        what = (f"{gap - 1:g} hour{'s' if gap != 2 else ''} missing" if gap > 1 else
                "time not increasing" if gap <= 0 else "a step under 1 h")
        raise GridError(f"not hourly: a step of {gap:g} h after {str(times[i])[:16]}, "
                        f"{what} (time index {index[i + 1]})", file=path, column="time",
                        value=str(times[i + 1])[:19], expected="consecutive whole hours, "
                        "one step of 1 h (fill missing hours with _FillValue)")
    for bad, why in ((off, "timestamp not on the hour"), (np.r_[False, step], "not hourly")):
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise GridError(f"{why} (time index {index[i]})", file=path, column="time",
                            value=str(times[i])[:19], expected="consecutive whole hours, one "
                            "step of 1 h (fill missing hours with _FillValue)")


def _air_times(ds, path):
    if "time" not in ds.dims:
        raise GridError("missing dimension", file=path, column="time",
                        value=", ".join(map(str, ds.dims)) or "none", expected="dims (time, y, x)")
    bounds = ds["time"].attrs.get("bounds")
    if not bounds or bounds not in ds:
        raise GridError("time without bounds", file=path, column="time",
                        value=bounds, expected="a CF 'bounds' attribute naming a (time, 2) "
                        "variable with the start and end of each sampling interval")
    b = ds[bounds]
    if not np.issubdtype(b.dtype, np.datetime64) or b.ndim != 2 or b.shape[1] != 2:
        raise GridError("time bounds not decoded as (time, 2) dates", file=path, column=bounds,
                        value=f"{b.dtype} {b.shape}", expected="(time, 2) bounds with the "
                        "units of time")
    v = b.values.astype("datetime64[ns]")
    start, end = v[:, 0], v[:, 1]
    bad = ~(end > start) | np.r_[False, start[1:] < end[:-1]]
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise GridError(f"sampling interval empty or overlapping the one before (time "
                        f"index {i})", file=path, column=bounds,
                        value=f"{str(start[i])[:19]} - {str(end[i])[:19]}",
                        expected="intervals in time order, end after start, no overlap")
    return start, end


def _convert_met(v, unit, name, target, path):
    """Values of a met variable in its internal unit (the rules of the site reader)."""
    if name == "cloud_cover" and str(unit).strip().lower() in ("okta", "oktas"):
        return v / 8.0
    try:
        u, _ = parse_unit(unit)
        if name == "solar_radiation" and \
                u.dimensionality == ureg.parse_units("J/m**2").dimensionality:
            return convert_plain(v, unit, "J/m**2") / 3600.0  # the hour's mean irradiance
        return convert_plain(v, unit, target)
    except ValueError as exc:
        raise GridError(f"unknown or dimensionally wrong unit ({exc})", file=path, column=name,
                        value=unit, expected=f"a unit convertible to {target}") from None
