"""Reader of hourly meteorology (CSV, or NetCDF through xarray).

Returns a Dataset on (``site``, ``time``) with one common hourly axis, ``time`` being
the END of each hour in UTC (see docs/data_model.md), and a ledger.  Values that fail
the plausibility checks of :mod:`workbench.io.metchecks` are set to NaN and their rows
flagged with a hint; nothing is refused for plausibility alone.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import xarray as xr

from ..errors import InputError
from ..units import convert_plain, parse_unit, ureg
from . import metchecks
from .common import check_sites, unit_error
from .ledger import Ledger
from .table import RawTable

#: variable -> (internal unit, required, long name)
MET_VARIABLES = {
    "wind_speed": ("m/s", True, "wind speed at wind_height"),
    "temperature": ("K", True, "air temperature"),
    "relative_humidity": ("1", True, "relative humidity (fraction)"),
    "solar_radiation": ("W/m**2", True, "global solar radiation, downward"),
    "precipitation": ("mm", True, "precipitation over the hour"),
    "pressure": ("Pa", True, "station pressure"),
    "cloud_cover": ("1", False, "cloud cover (fraction)"),
    "friction_velocity": ("m/s", False, "measured friction velocity"),
    "sensible_heat_flux": ("W/m**2", False, "measured sensible heat flux, positive upward"),
    "surface_wet": ("1", False, "surface wetness (0 dry, 1 wet)"),
    "snow_cover": ("1", False, "snow on the ground (0/1)"),
}
_UNITS_OUT = {"m/s": "m s-1", "K": "K", "1": "1", "W/m**2": "W m-2", "mm": "mm", "Pa": "Pa"}
HOUR = np.timedelta64(3600, "s").astype("timedelta64[ns]")


def _convert(tab: RawTable, name: str, target: str):
    raw = tab.numbers(name)
    unit = tab.unit_of(name, default="1" if target == "1" else None)
    if name == "cloud_cover" and unit.strip().lower() in ("okta", "oktas"):
        return raw / 8.0, unit
    try:
        if name == "solar_radiation":
            u, _ = parse_unit(unit)
            if u.dimensionality == ureg.parse_units("J/m**2").dimensionality:
                # an hourly sum of energy per area: the mean irradiance over the hour
                return convert_plain(raw, unit, "J/m**2") / 3600.0, unit
        return convert_plain(raw, unit, target), unit
    except ValueError as exc:
        raise unit_error(tab, name, exc, f"a unit convertible to {target}") from None


def read_met(path, catalogue):
    """Read hourly meteorology.

    Parameters
    ----------
    path : str or Path
        CSV (optionally gzipped) with ``site, time`` and the variables of
        :data:`MET_VARIABLES` (units in the headers), or a NetCDF file with dims
        (site, time) and ``units`` attributes.
    catalogue : SiteCatalogue

    Returns
    -------
    met : xarray.Dataset
        Dims (site, time); SI units (see docs/data_model.md).
    ledger : Ledger
        One row per hour read; notes list gaps and file-level hints.
    """
    path = Path(path)
    if path.suffix in (".nc", ".nc4", ".netcdf"):
        return _read_met_netcdf(path, catalogue)
    tab = RawTable.read(path)
    tab.require(["site", "time"] + [k for k, v in MET_VARIABLES.items() if v[1]])
    sites = check_sites(tab, catalogue)
    off = catalogue.utc_offsets(sites)
    label = tab.meta.get("time_label", "end").lower()
    if label not in ("end", "start"):
        raise InputError("unknown time label", file=tab.path, line=1, column="time_label",
                         value=label, expected="'end' or 'start'")
    t = tab.times("time", off)
    if label == "start":
        t = t + HOUR
    off_hour = (t - t.astype("datetime64[h]").astype("datetime64[ns]")) != np.timedelta64(0, "ns")
    if off_hour.any():
        i = int(np.flatnonzero(off_hour)[0])
        raise tab.error("timestamp not on the hour", row=i, column="time",
                        value=tab.frame["time"].iloc[i], expected="hourly timestamps (minutes 00)")
    # duplicates per site
    key = np.char.add(sites.astype(str), t.astype("datetime64[h]").astype(str))
    _, first, counts = np.unique(key, return_index=True, return_counts=True)
    if (counts > 1).any():
        dup_key = np.flatnonzero(counts > 1)[0]
        rows = np.flatnonzero(key == key[first[dup_key]])
        raise tab.error("duplicate hourly timestamp", row=int(rows[1]), column="time",
                        value=tab.frame["time"].iloc[rows[1]],
                        expected=f"one row per site and hour (also on line {int(tab.lines[rows[0]])})")
    values, raw_units = {}, {}
    for name, (target, req, _) in MET_VARIABLES.items():
        if tab.has(name):
            values[name], raw_units[name] = _convert(tab, name, target)
    ds, ledger = _assemble(values, sites, t, tab.lines, tab.path, catalogue, raw_units)
    unknown = tab.unknown_columns(set(MET_VARIABLES) | {"site", "time"})
    if unknown:
        ledger.notes.append(f"{tab.path.name}: columns not used: {', '.join(unknown)}")
    return ds, ledger


def _assemble(values, sites, t, lines, path, catalogue, raw_units):
    """Checks, ledger and the (site, time) grid, shared by the CSV and NetCDF paths."""
    n = len(sites)
    reasons, values = metchecks.run_row_checks(values, sites, t, catalogue, raw_units)
    ledger = Ledger.for_rows(path, lines, sites, reasons, np.zeros(n, bool))
    site_ids = [s for s in catalogue.ids if s in set(sites.tolist())]
    t0, t1 = t.min(), t.max()
    n_t = int((t1 - t0) // HOUR) + 1
    times = t0 + np.arange(n_t) * HOUR
    s_index = {s: i for i, s in enumerate(site_ids)}
    si = np.array([s_index[s] for s in sites])
    ti = ((t - t0) // HOUR).astype(int)
    dvars = {}
    for name, v in values.items():
        grid = np.full((len(site_ids), n_t), np.nan)
        grid[si, ti] = v
        unit, _, long_name = MET_VARIABLES[name]
        dvars[name] = (("site", "time"), grid, {"units": _UNITS_OUT[unit], "long_name": long_name})
    present = np.zeros((len(site_ids), n_t), bool)
    present[si, ti] = True
    ds = xr.Dataset(dvars, coords={"site": site_ids, "time": times})
    ds["time"].attrs.update({"long_name": "end of the hour (UTC)"})
    ds["row_present"] = (("site", "time"), present, {"long_name": "an input row exists for this hour"})
    ds.attrs["source_file"] = str(path)
    ledger.notes.extend(metchecks.describe_gaps(ds))
    return ds, ledger


def _read_met_netcdf(path: Path, catalogue):
    try:
        raw = xr.open_dataset(path)
    except Exception as exc:  # many engines, many error types
        raise InputError(f"cannot open NetCDF ({exc})", file=path, expected="a NetCDF file") from None
    for dim in ("site", "time"):
        if dim not in raw.dims:
            raise InputError("missing dimension", file=path, column=dim,
                             expected="dims (site, time)")
    for name, (_, req, _) in MET_VARIABLES.items():
        if req and name not in raw:
            raise InputError("missing required variable", file=path, column=name,
                             expected=f"a variable named {name!r}")
    flat = raw.stack(row=("site", "time"))
    sites = flat["site"].values.astype(str).astype(object)
    for s in np.unique(sites):
        if s not in catalogue:
            raise InputError("site not in the catalogue", file=path, column="site", value=s,
                             expected="one of " + ", ".join(catalogue.ids))
    t = flat["time"].values.astype("datetime64[ns]")
    values, raw_units = {}, {}
    for name, (target, _, _) in MET_VARIABLES.items():
        if name in raw:
            unit = raw[name].attrs.get("units", "1" if target == "1" else None)
            if unit is None:
                raise InputError("variable has no units attribute", file=path, column=name,
                                 expected="a CF 'units' attribute")
            try:
                values[name] = convert_plain(flat[name].values, unit, target)
            except ValueError as exc:
                raise InputError(f"unknown or dimensionally wrong unit ({exc})", file=path,
                                 column=name, value=unit, expected=target) from None
            raw_units[name] = unit
    keep = np.zeros(len(t), bool)
    for v in values.values():
        keep |= ~np.isnan(v)
    values = {k: v[keep] for k, v in values.items()}
    lines = np.flatnonzero(keep) + 1  # record number in the flattened file
    return _assemble(values, sites[keep], t[keep], lines, path, catalogue, raw_units)
