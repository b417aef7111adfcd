"""Readers of gridded inputs in CF NetCDF (or zarr stores of the same layout): hourly
met and air concentrations on (time, y, x) and a land-use grid of our receptor classes
(docs/data_formats.md, "Gridded fields").

:func:`open_grid` checks the three files (dimensions, units, coordinates, land-use
codes) from their metadata and the small 2-D fields, without reading the hourly
arrays; :func:`read_block` then reads one block of cells and hands it on in the
site layout of the readers of :mod:`workbench.io`: each cell is a site (a
:class:`~workbench.io.sites.Site` of the cell's class, latitude, longitude and
heights), the met on (``site``, ``time``) in SI units and the air on ``period``, so
that the engine functions of the site pipeline run on it unchanged.  Units are
converted here, once, with pint (:mod:`workbench.units`).
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from . import species as _species
from .constants import GAS_CONSTANT
from .errors import InputError, suggest
from .io import metchecks
from .io.met import MET_VARIABLES, time_units
from .io.samples import parse_reference_state
from .io.sites import Site, SiteCatalogue
from .io.zarrstore import is_zarr_path, open_zarr
from .landuse import LAND_USE
from .units import convert_plain, parse_unit, to_amount, ureg

_UNIT_TEXT = {"m/s": "m s-1", "W/m**2": "W m-2"}
HOUR = np.timedelta64(3600, "s").astype("timedelta64[ns]")
#: Species an air grid may hold (variable names).
AIR_SPECIES = _species.AIR_GASES + _species.AIR_PARTICLES
#: Optional 2-D fields of the land-use file: name -> (unit, long name).
LAND_FIELDS = {"canopy_height": ("m", "canopy height of the cell's class (default: the "
                                 "class default of workbench.landuse)"),
               "surface_altitude": ("m", "surface altitude (fills missing pressure)")}


#: Met records of a block checked at once, about [-] (whole cells: :func:`check_cells`).
#: The row checks of the site reader hold several per-record copies, groupings and
#: texts of what they check (about 0.4 kB a record): a block of 0.8 M cell-hours
#: checked at once made its read peak 375 MB above the open grid, in slices of this
#: many records 106 MB (the block's met itself 45 MB), the same values and reasons and
#: no more CPU (2026-12-03, docs/performance.md; our choice, measured).
CHECK_CELL_HOURS = 131_072


class GridError(InputError):
    """A gridded input breaks the format of docs/data_formats.md."""


def _open(path: Path, role: str, notes=None) -> xr.Dataset:
    """The grid file (NetCDF) or store (zarr, :mod:`workbench.io.zarrstore`), lazily."""
    if is_zarr_path(path):
        try:
            ds, more = open_zarr(path, role, check_consolidated=notes is not None)
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
    off = (times - times.astype("datetime64[h]").astype("datetime64[ns]")) != np.timedelta64(0)
    step = np.diff(times) != HOUR
    if step.any() and not off.any():
        i = int(np.flatnonzero(step)[0])
        gap = (times[i + 1] - times[i]) / HOUR
        what = (f"{gap - 1:g} hour{'s' if gap != 2 else ''} missing" if gap > 1 else
                "time not increasing" if gap <= 0 else "a step under 1 h")
        raise GridError(f"not hourly: a step of {gap:g} h after {str(times[i])[:16]}, "
                        f"{what} (time index {i + 1})", file=path, column="time",
                        value=str(times[i + 1])[:19], expected="consecutive whole hours, "
                        "one step of 1 h (fill missing hours with _FillValue)")
    for bad, why in ((off, "timestamp not on the hour"), (np.r_[False, step], "not hourly")):
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise GridError(f"{why} (time index {i})", file=path, column="time",
                            value=str(times[i])[:19], expected="consecutive whole hours, one "
                            "step of 1 h (fill missing hours with _FillValue)")
    return times


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


@dataclass
class Grid:
    """Three checked grid files and what every block needs from them.

    Attributes
    ----------
    dims : (str, str)
        Names of the y and x dims.
    classes : ndarray of object, (y, x)
        The cell's land-use class, None for a cell without one (left out: NaN).
    latitude, longitude, canopy_height, elevation : ndarray, (y, x)
        [degree], [degree], [m] and [m].
    wind_height, sampler_height : float
        Height of the wind [m] and of the concentrations [m].
    times : ndarray of datetime64[ns]
        End of each met hour (UTC).
    air_start, air_end : ndarray of datetime64[ns]
        Sampling intervals of the concentrations (UTC).
    air_units : dict
        species -> unit written in the air file.
    """

    paths: dict
    dims: tuple
    classes: np.ndarray
    latitude: np.ndarray
    longitude: np.ndarray
    canopy_height: np.ndarray
    elevation: np.ndarray
    wind_height: float
    sampler_height: float
    times: np.ndarray
    air_start: np.ndarray
    air_end: np.ndarray
    met_units: dict
    air_units: dict
    reference_state: str | None
    template: xr.Dataset = field(repr=False, default=None)
    notes: list = field(default_factory=list)
    #: role -> block-major copy of time-chunked variables (:mod:`workbench.grid_scratch`).
    scratch: dict = field(default_factory=dict)
    #: (row, column) in the whole grid of the first cell of the 2-D fields: (0, 0) but
    #: for the grid of one block that a dask task carries (:func:`cut`).
    origin: tuple = (0, 0)

    @property
    def shape(self) -> tuple:
        return self.classes.shape

    @property
    def species(self) -> list:
        return list(self.air_units)


def open_grid(met, air, land_use) -> Grid:
    """Check the three grid files and read their metadata and 2-D fields.

    Parameters
    ----------
    met, air, land_use : str or Path
        CF NetCDF files, or zarr stores of the same layout (a folder ``x.zarr`` or
        a zipped ``x.zarr.zip``; docs/data_formats.md, "Gridded fields").

    Raises
    ------
    GridError
        Naming the file, the variable, the value and what was expected.
    """
    paths = {"met": Path(met), "air": Path(air), "land_use": Path(land_use)}
    notes = []
    ds = {k: _open(p, k, notes) for k, p in paths.items()}
    try:
        grid = _check(paths, ds)
        grid.notes.extend(notes)
        return grid
    finally:
        for d in ds.values():
            d.close()


def _land_use(lu, path):
    if "land_use" not in lu:
        raise GridError("missing variable", file=path, column="land_use",
                        expected="a variable 'land_use' of integer codes with flag_values "
                        "and flag_meanings" + suggest("land_use", list(lu.data_vars)))
    var = lu["land_use"]
    dims = _grid_dims(var, path, "land_use", with_time=False)
    values, meanings = var.attrs.get("flag_values"), var.attrs.get("flag_meanings")
    if values is None or meanings is None:
        raise GridError("land-use codes without flag_values and flag_meanings", file=path,
                        column="land_use", expected="CF flag_values (the codes) and "
                        "flag_meanings (our class names, blank-separated)")
    values = np.atleast_1d(np.asarray(values)).astype(int)
    names = str(meanings).split()
    if len(names) != len(values):
        raise GridError("flag_values and flag_meanings of different lengths", file=path,
                        column="land_use", value=f"{len(values)} codes, {len(names)} meanings",
                        expected="one class name per code")
    for n in names:
        if n not in LAND_USE:
            raise GridError("flag meaning is not one of our land-use classes", file=path,
                            column="land_use:flag_meanings", value=n,
                            expected="one of " + ", ".join(LAND_USE) + suggest(n, LAND_USE))
    raw = var.transpose(*dims).values
    missing = ~np.isfinite(raw) if raw.dtype.kind == "f" else np.zeros(raw.shape, bool)
    if not np.issubdtype(raw.dtype, np.number):
        raise GridError("land-use codes are not numbers", file=path, column="land_use",
                        value=str(raw.dtype), expected="integer codes")
    frac = ~missing & (np.where(missing, 0, raw) != np.round(np.where(missing, 0, raw)))
    if frac.any():
        j, i = np.argwhere(frac)[0]
        raise GridError(f"land-use code not a whole number (cell {dims[0]}={j}, "
                        f"{dims[1]}={i})", file=path, column="land_use",
                        value=float(raw[j, i]), expected="integer codes (one class per cell)")
    codes = np.where(missing, values[0], raw).astype(int)
    known = np.isin(codes, values) | missing
    if not known.all():
        j, i = np.argwhere(~known)[0]
        raise GridError(f"land-use code not a class (cell {dims[0]}={j}, {dims[1]}={i})",
                        file=path, column="land_use", value=int(codes[j, i]),
                        expected="one of the flag_values " + ", ".join(map(str, values))
                        + " (or _FillValue for a cell left out)")
    lookup = dict(zip(values.tolist(), names))
    classes = np.array([lookup[c] for c in codes.reshape(-1).tolist()], object).reshape(codes.shape)
    classes[missing] = None
    return dims, classes, var.attrs.get("grid_mapping")


def _check(paths, ds) -> Grid:
    met, air, lu = ds["met"], ds["air"], ds["land_use"]
    dims, classes, mapping = _land_use(lu, paths["land_use"])
    shape = classes.shape
    extra = {}
    for name, (unit, _) in LAND_FIELDS.items():
        if name not in lu:
            continue
        if _grid_dims(lu[name], paths["land_use"], name, with_time=False) != dims:
            raise GridError("variable on other dimensions", file=paths["land_use"], column=name,
                            value=str(lu[name].dims), expected=f"dims {dims}")
        u = lu[name].attrs.get("units")
        if u is None:
            raise GridError("variable has no units attribute", file=paths["land_use"],
                            column=name, expected=f"a CF 'units' attribute convertible to {unit}")
        try:
            extra[name] = convert_plain(lu[name].transpose(*dims).values.astype(float), u, unit)
        except ValueError as exc:
            raise GridError(f"unknown or dimensionally wrong unit ({exc})",
                            file=paths["land_use"], column=name, value=u,
                            expected=f"a unit convertible to {unit}") from None
    # ---- met
    times = _met_times(met, paths["met"])
    met_units = {}
    for name, (target, req, _) in MET_VARIABLES.items():
        if name not in met:
            if req:
                raise GridError("missing required variable", file=paths["met"], column=name,
                                expected=f"a variable named {name!r}"
                                + suggest(name, list(met.data_vars)))
            continue
        _same_grid(met, name, dims, shape, lu, paths["met"])
        unit = met[name].attrs.get("units", "1" if target == "1" else None)
        if unit is None:
            raise GridError("variable has no units attribute", file=paths["met"], column=name,
                            expected=f"a CF 'units' attribute convertible to {target}")
        _convert_met(np.ones(1), unit, name, target, paths["met"])     # the unit, early
        met_units[name] = unit
    wind_height = _height(met, paths["met"], "wind_speed")
    # ---- air
    start, end = _air_times(air, paths["air"])
    air_units, heights = {}, set()
    for name in air.data_vars:
        if name not in AIR_SPECIES:
            if "time" in air[name].dims and len(air[name].dims) >= 3:
                raise GridError("unknown species", file=paths["air"], column=name,
                                expected="one of " + ", ".join(AIR_SPECIES)
                                + suggest(str(name), AIR_SPECIES))
            continue
        _same_grid(air, name, dims, shape, lu, paths["air"])
        unit = air[name].attrs.get("units")
        if unit is None:
            raise GridError("variable has no units attribute", file=paths["air"], column=name,
                            expected="a CF 'units' attribute (ug m-3, mol m-3, ppb, nmol mol-1)")
        if re.search(r"/\s*[munµ]?[lL]\b|\b[munµ]?[lL]-1\b", str(unit)):
            raise GridError("a liquid concentration unit in an air file", file=paths["air"],
                            column=name, value=unit, expected="an air concentration unit "
                            "such as ug m-3 or ppb")
        try:
            to_amount(np.ones(1), unit, name)
        except ValueError as exc:
            raise GridError(f"not a concentration unit ({exc})", file=paths["air"], column=name,
                            value=unit, expected="a mass or amount per volume, or a mixing "
                            "ratio") from None
        air_units[name] = unit
        heights.add(_height(air, paths["air"], name))
    if not air_units:
        raise GridError("no species variables", file=paths["air"],
                        expected="at least one of " + ", ".join(AIR_SPECIES))
    if len(heights) > 1:
        raise GridError("species at different heights", file=paths["air"], column="height",
                        value=sorted(heights), expected="one concentration height")
    ref = air.attrs.get("reference_state")
    needs_ref = any(to_amount(np.ones(1), u, s)[1] == "amount_density"
                    for s, u in air_units.items())
    if needs_ref:
        if ref is None:
            raise GridError("reference state of mass concentrations not stated",
                            file=paths["air"], column="reference_state",
                            expected="a global attribute reference_state = 'ambient' (or "
                            "'20 degC, 1013.25 hPa')")
        try:
            parse_reference_state(ref)
        except ValueError:
            raise GridError("unknown reference state", file=paths["air"],
                            column="reference_state", value=ref,
                            expected="'ambient' or '<T> degC, <p> hPa'") from None
    lat, lon = _lat_lon([(paths["land_use"], lu), (paths["met"], met), (paths["air"], air)],
                        shape, dims)
    default_h = np.array([LAND_USE[c][1] if c is not None else np.nan
                          for c in classes.reshape(-1)], float).reshape(shape)
    ch = extra.get("canopy_height")
    canopy = default_h if ch is None else np.where(np.isfinite(ch), ch, default_h)
    elev = extra.get("surface_altitude", np.zeros(shape))
    notes = []
    if "surface_altitude" not in extra:
        notes.append(f"{paths['land_use'].name}: no surface_altitude: 0 m taken where the "
                     "met has no pressure")
    n_out = int(np.sum([c is None for c in classes.reshape(-1)]))
    if n_out:
        notes.append(f"{paths['land_use'].name}: {n_out} of {classes.size} cells without a "
                     f"land-use class (_FillValue) {'is' if n_out == 1 else 'are'} left out "
                     "(NaN in every output)")
    return Grid(paths=paths, dims=dims, classes=classes, latitude=lat, longitude=lon,
                canopy_height=canopy, elevation=np.where(np.isfinite(elev), elev, 0.0),
                wind_height=wind_height, sampler_height=heights.pop(), times=times,
                air_start=start, air_end=end, met_units=met_units, air_units=air_units,
                reference_state=ref if needs_ref else None,
                template=_template(lu, dims, mapping), notes=notes)


def _same_grid(ds, name, dims, shape, lu, path):
    got = _grid_dims(ds[name], path, name)
    if set(got) != set(dims):
        raise GridError("variable on other dimensions", file=path, column=name,
                        value="(" + ", ".join(map(str, ds[name].dims)) + ")",
                        expected=f"dims (time, {dims[0]}, {dims[1]}) as the land-use grid")
    for d, n in zip(dims, shape):
        if ds.sizes[d] != n or (d in ds.coords and d in lu.coords and not np.allclose(
                ds[d].values.astype(float), lu[d].values.astype(float))):
            raise GridError("grid differs from the land-use grid", file=path, column=d,
                            value=ds.sizes[d], expected=f"{n} cells with the land-use "
                            "grid's coordinates")


def _template(lu, dims, mapping) -> xr.Dataset:
    """The grid's coordinates, auxiliary latitude/longitude and grid mapping."""
    keep = {}
    for name in lu.variables:
        v = lu[name]
        if name == "land_use" or "time" in v.dims:
            continue
        if set(v.dims) <= set(dims) and (name in lu.coords or v.attrs.get("standard_name") in
                                         ("latitude", "longitude") or name in dims):
            keep[name] = xr.Variable(v.dims, np.asarray(v.values), dict(v.attrs))
    out = xr.Dataset(coords={k: v for k, v in keep.items()})
    if mapping and mapping in lu.variables:       # values read now: the file is closed after
        m = lu[mapping]
        out[mapping] = xr.Variable(m.dims, np.asarray(m.values), dict(m.attrs))
    out.attrs["grid_mapping"] = mapping or ""
    return out


# ------------------------------------------------------------------------- blocks
def cell_ids(ys: slice, xs: slice) -> np.ndarray:
    """Site ids of the cells of a block, (y, x) order flattened: ``"j<row>i<col>"``."""
    j, i = np.meshgrid(np.arange(ys.start, ys.stop), np.arange(xs.start, xs.stop), indexing="ij")
    return np.char.add(np.char.add("j", j.reshape(-1).astype(str)),
                       np.char.add("i", i.reshape(-1).astype(str)))


def _window(grid: Grid, ys: slice, xs: slice) -> tuple:
    """The (y, x) slices of the 2-D fields of `grid` that hold the cells `ys`, `xs` of
    the whole grid (the same slices but for a grid :func:`cut` to a block)."""
    (oy, ox), (ny, nx) = grid.origin, grid.shape
    if not (oy <= ys.start <= ys.stop <= oy + ny and ox <= xs.start <= xs.stop <= ox + nx):
        raise ValueError(f"cells y {ys.start}:{ys.stop}, x {xs.start}:{xs.stop} are not in "
                         f"the grid's fields (y {oy}:{oy + ny}, x {ox}:{ox + nx})")
    return slice(ys.start - oy, ys.stop - oy), slice(xs.start - ox, xs.stop - ox)


def cut(grid: Grid, ys: slice, xs: slice) -> Grid:
    """The grid as one block of it needs it (:func:`block_catalogue`,
    :func:`read_block`): the 2-D fields of the block's cells only, the scratch copy's
    index of that block only, no template or notes (for the maps, made in the main
    process).  A dask task of a block carries this, not the whole grid: each task's
    own copy of the whole grid's fields (0.5 MB pickled at 100 x 100 cells, some
    50 MB at 1,000 x 1,000 by extrapolation) was kept by the worker while the block's
    result waited for the others, so a worker held the whole grid once per block it ran.

    Parameters
    ----------
    grid : Grid
    ys, xs : slice
        Rows and columns of the block in the whole grid [-].
    """
    import dataclasses
    wy, wx = _window(grid, ys, xs)
    scratch = {role: dataclasses.replace(s, blocks={k: v for k, v in s.blocks.items()
                                                    if k == (ys.start, ys.stop, xs.start,
                                                             xs.stop)})
               for role, s in grid.scratch.items()}
    return dataclasses.replace(
        grid, classes=grid.classes[wy, wx].copy(), latitude=grid.latitude[wy, wx].copy(),
        longitude=grid.longitude[wy, wx].copy(),
        canopy_height=grid.canopy_height[wy, wx].copy(),
        elevation=grid.elevation[wy, wx].copy(), template=None, notes=[], scratch=scratch,
        origin=(ys.start, xs.start))


def block_catalogue(grid: Grid, ys: slice, xs: slice) -> SiteCatalogue:
    """The cells of a block that have a class, each as a site of the catalogue."""
    ids = cell_ids(ys, xs)
    wy, wx = _window(grid, ys, xs)
    cls = grid.classes[wy, wx].reshape(-1)
    lat, lon = grid.latitude[wy, wx].reshape(-1), grid.longitude[wy, wx].reshape(-1)
    h, z = grid.canopy_height[wy, wx].reshape(-1), grid.elevation[wy, wx].reshape(-1)
    sites = [Site(id=str(ids[k]), name=str(ids[k]), latitude=float(lat[k]),
                  longitude=float(lon[k]), elevation_m=float(z[k]), land_use=cls[k],
                  canopy_height_m=float(h[k]), wind_height_m=grid.wind_height,
                  sampler_height_m=grid.sampler_height, utc_offset_h=0.0)
             for k in range(len(ids)) if cls[k] is not None]
    return SiteCatalogue(sites)


def read_block(grid: Grid, ys: slice, xs: slice, catalogue: SiteCatalogue,
               with_reasons=False):
    """Met and air of the cells of `catalogue` inside one block, in the site layout.

    Returns
    -------
    met : xarray.Dataset
        (site, time) in SI units, implausible values set to NaN by the checks of the site
        reader (:func:`workbench.io.metchecks.run_row_checks`).
    air : xarray.Dataset
        Dim ``period`` as :func:`workbench.io.samples.read_air` returns it; a cell's
        interval with no species value is left out (as an empty row of the site file).
    flagged : ndarray of bool, (site, time)
        Met records with a plausibility flag (their implausible values masked).
    reasons : ndarray of object
        With `with_reasons`: the "; "-joined reasons of each record (site-major).
    """
    ids = cell_ids(ys, xs)
    keep = np.isin(ids, catalogue.ids)
    kept = ids[keep]
    n_t, n_c = len(grid.times), len(kept)

    def convert(name, v):                                # (time, cell) -> (cell, time)
        v = v[:, keep].T.reshape(-1).astype(float)
        return _convert_met(v, grid.met_units[name], name, MET_VARIABLES[name][0],
                            grid.paths["met"])
    values = {n: np.asarray(v, float) for n, v in
              _block_values(grid, "met", grid.met_units, ys, xs, convert).items()}
    flagged, reasons = _check_cells(values, kept, n_t, grid, catalogue, with_reasons)
    dvars = {}
    for name, v in values.items():
        unit, _, long_name = MET_VARIABLES[name]
        dvars[name] = (("site", "time"), v.reshape(n_c, n_t),
                       {"units": _UNIT_TEXT.get(unit, unit), "long_name": long_name})
    met = xr.Dataset(dvars, coords={"site": kept.tolist(), "time": grid.times})
    met["time"].attrs["long_name"] = "end of the hour (UTC)"
    if with_reasons:
        return met, _air_block(grid, ys, xs, keep, kept), flagged, reasons
    return met, _air_block(grid, ys, xs, keep, kept), flagged


def _check_cells(values, kept, n_t, grid, catalogue, with_reasons):
    """The site reader's row checks on a block's met, :func:`check_cells` cells at a
    time; the checked values are written back into `values` (flat, cell-major).

    Every check looks at one row or at one site's rows, so whole cells checked apart
    give the same values and reasons as all at once; only one slice's temporaries (the
    checks' per-row copies, groupings and text) are held, not the block's.

    Returns
    -------
    flagged : ndarray of bool, (cell, time)
    reasons : ndarray of object or None
        With `with_reasons`: the "; "-joined reasons of each record (cell-major).
    """
    n_c = len(kept)
    flagged = np.zeros((n_c, n_t), bool)
    texts = []
    step = check_cells(n_t)
    for k in range(0, n_c, step):
        m = min(step, n_c - k)
        rows = slice(k * n_t, (k + m) * n_t)
        sites = np.repeat(kept[k:k + m].astype(object), n_t)
        t = np.tile(grid.times, m)
        got, checked = metchecks.run_row_checks({n: v[rows] for n, v in values.items()},
                                                sites, t, catalogue, grid.met_units)
        for name, v in checked.items():
            values[name][rows] = v
        got = np.asarray(got, object)
        flagged[k:k + m] = (got != "").reshape(m, n_t)        # no text array
        if with_reasons:
            texts.append(got)
    if not with_reasons:
        return flagged, None
    return flagged, (np.concatenate(texts) if texts else np.array([], object))


def check_cells(n_hours: int) -> int:
    """Cells whose met records are checked at once [-]: about :data:`CHECK_CELL_HOURS`
    records, at least one cell.

    >>> check_cells(2208), check_cells(8760), check_cells(87600)
    (59, 14, 1)
    """
    return max(1, CHECK_CELL_HOURS // max(int(n_hours), 1))


def _block_values(grid, role, names, ys, xs, then) -> dict:
    """name -> ``then(name, values (time, cell))`` for the variables of a block, one at
    a time: from the block-major scratch copy (:mod:`workbench.grid_scratch`) where it
    holds them, else read from the input."""
    copy = grid.scratch.get(role)
    direct = [n for n in names if copy is None or not copy.has(n, ys, xs)]
    out = {n: then(n, copy.values(n, ys, xs)) for n in names if n not in direct}
    for name in direct:
        # the file opened anew for each variable (as the scratch copy does): one open
        # NetCDF4 file kept the HDF5 chunk cache of every variable read through it, so
        # a block read from chunks of the whole plane held one cache per variable
        with _open(grid.paths[role], role) as raw:
            var = raw[name].isel({grid.dims[0]: ys, grid.dims[1]: xs})
            extra = [d for d in var.dims if d != "time" and d not in grid.dims]
            var = var.squeeze(extra, drop=True).transpose("time", *grid.dims)
            v = read_values(var, grid.paths[role], name)
        out[name] = then(name, v.reshape(v.shape[0], -1))
        del v
    return {n: out[n] for n in names}


def _air_block(grid, ys, xs, keep, kept):
    n_p, n_c = len(grid.air_start), len(kept)
    ref = parse_reference_state(grid.reference_state) if grid.reference_state else None

    def convert(sp, v):                                  # (period, cell) -> (cell, period)
        amount, kind = to_amount(v[:, keep].T.reshape(-1).astype(float), grid.air_units[sp], sp)
        if kind == "amount_density" and ref is not None:
            amount, kind = amount * GAS_CONSTANT * ref[0] / ref[1], "mixing_ratio"
        return np.asarray(amount, float), kind
    conc = _block_values(grid, "air", grid.air_units, ys, xs, convert)
    has = np.zeros(n_c * n_p, bool)
    for v, _ in conc.values():
        has |= np.isfinite(v)
    site = np.repeat(kept.astype(str), n_p)[has]
    dvars = {"site": ("period", site),
             "start": ("period", np.tile(grid.air_start, n_c)[has]),
             "end": ("period", np.tile(grid.air_end, n_c)[has]),
             "line": ("period", (np.flatnonzero(has) % n_p) + 1),
             "sampler_id": ("period", np.full(int(has.sum()), "grid", object).astype(str))}
    for sp, (v, kind) in conc.items():
        unit = "mol m-3" if kind == "amount_density" else "mol mol-1"
        dvars[sp] = ("period", v[has], {
            "units": unit, "quantity": kind, "long_name": _species.get(sp).long_name,
            "reference_state": "ambient" if kind == "amount_density" else
            ("mixing ratio" if ref is None else f"converted from {grid.reference_state}")})
        dvars[f"{sp}_censored"] = ("period", np.zeros(int(has.sum()), bool))
        dvars[f"{sp}_detection_limit"] = ("period", np.full(int(has.sum()), np.nan),
                                          {"units": unit})
    return xr.Dataset(dvars, attrs={"source_file": str(grid.paths["air"]),
                                    "reference_state": str(grid.reference_state or "none needed")})


def describe(grid: Grid) -> str:
    """One paragraph on what was read (for the log and the history attribute)."""
    ny, nx = grid.shape
    counts = pd.Series([c for c in grid.classes.reshape(-1) if c is not None]).value_counts()
    return (f"grid {ny} x {nx} cells ({', '.join(f'{k} {v}' for k, v in counts.items())}); "
            f"met {len(grid.times)} hours from {str(grid.times[0])[:16]} to "
            f"{str(grid.times[-1])[:16]} UTC (end of hour), wind at {grid.wind_height:g} m; "
            f"air {', '.join(grid.species)} over {len(grid.air_start)} intervals at "
            f"{grid.sampler_height:g} m")
