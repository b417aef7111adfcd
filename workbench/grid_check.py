"""The checked grid: :class:`Grid`, :func:`open_grid` (the three files' metadata and
2-D fields: dimensions, units, coordinates, land-use codes) and :func:`describe` (split
from :mod:`workbench.grid_io`, which re-exports every name).
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from .errors import suggest
from .grid_read import (AIR_SPECIES, LAND_FIELDS, GridError, _air_times, _convert_met,
                        _grid_dims, _height, _hourly, _lat_lon, _met_labels, _open,
                        zarr_metadata)
from .grid_repeats import MetRepeats, check_met_repeats
from .io.met import MET_VARIABLES
from .io.samples import parse_reference_state
from .landuse import LAND_USE
from .units import convert_plain, to_amount


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
        End of each met hour (UTC), the steps of the met file repeated in every
        variable dropped (:mod:`workbench.grid_repeats`).
    met_keep : ndarray of int or None
        Time indices of the met file kept; None when no step repeats (all kept).
    met_dropped : int
        Time steps of the met file dropped as exact repeats of earlier ones [-].
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
    met_keep: np.ndarray | None = None
    met_dropped: int = 0
    #: role -> the metadata of a zarr store, read once when the grid was opened
    #: (:class:`workbench.io.zarrstore.StoreMetadata`): every later open of the store
    #: (a block's variable, the scratch copy) reads chunks only.
    zarr_metadata: dict = field(default_factory=dict, repr=False)

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
    meta = zarr_metadata(paths)              # a zarr store's metadata, read once
    ds = {k: _open(p, k, notes, metadata=meta.get(k)) for k, p in paths.items()}
    try:
        grid = _check(paths, ds)
        grid.notes.extend(notes)
        grid.zarr_metadata = meta
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
    labels = _met_labels(met, paths["met"])
    repeats = MetRepeats.of_times(labels)          # a step given twice: compared below
    times = labels[repeats.keep]
    _hourly(times, repeats.keep, paths["met"])
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
    # only the repeated steps are read, in blocks (one located error for another value)
    repeat_note = check_met_repeats(met, paths["met"], labels, repeats)
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
    notes = [repeat_note] if repeat_note else []
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
                template=_template(lu, dims, mapping), notes=notes,
                met_keep=repeats.keep if repeats.n_dropped else None,
                met_dropped=repeats.n_dropped)


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


def describe(grid: Grid) -> str:
    """One paragraph on what was read (for the log and the history attribute)."""
    ny, nx = grid.shape
    counts = pd.Series([c for c in grid.classes.reshape(-1) if c is not None]).value_counts()
    return (f"grid {ny} x {nx} cells ({', '.join(f'{k} {v}' for k, v in counts.items())}); "
            f"met {len(grid.times)} hours from {str(grid.times[0])[:16]} to "
            f"{str(grid.times[-1])[:16]} UTC (end of hour"
            + (f"; {grid.met_dropped} repeated time step{'s' * (grid.met_dropped != 1)} "
               "dropped" if grid.met_dropped else "")
            + f"), wind at {grid.wind_height:g} m; "
            f"air {', '.join(grid.species)} over {len(grid.air_start)} intervals at "
            f"{grid.sampler_height:g} m")
