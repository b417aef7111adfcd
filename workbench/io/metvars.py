"""The variables of hourly meteorology and their conversion to internal units (shared by
the readers of :mod:`workbench.io.met` and :mod:`workbench.io.metfast`)."""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..units import convert_plain, parse_unit, ureg

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


def convert_met(raw, unit: str, name: str, target: str):
    """Values of met variable `name` from `unit` to its internal unit `target`.

    Parameters
    ----------
    raw : ndarray of float
        [unit]
    unit, name, target : str

    Returns
    -------
    ndarray of float
        [target]; an hourly sum of solar energy per area is the mean irradiance over
        the hour, oktas of cloud are a fraction.

    Raises
    ------
    ValueError
        An unknown unit or one of the wrong dimension.
    """
    if name == "cloud_cover" and unit.strip().lower() in ("okta", "oktas"):
        return raw / 8.0
    if name == "solar_radiation":
        u, _ = parse_unit(unit)
        if u.dimensionality == ureg.parse_units("J/m**2").dimensionality:
            # an hourly sum of energy per area: the mean irradiance over the hour
            return convert_plain(raw, unit, "J/m**2") / 3600.0
    return convert_plain(raw, unit, target)


def site_time_dataset(values: dict, keep, site_ids, si, tk, path, variables=MET_VARIABLES):
    """The (site, time) Dataset of the kept met rows (both readers build it so).

    Parameters
    ----------
    values : dict of str to numpy.ndarray
        Converted values per variable, one per row [internal units]; emptied as each
        column is put on the grid (so that a large file's rows are freed one by one).
    keep : numpy.ndarray of bool
        The rows that enter the grid.
    site_ids : list of str
        The sites of the grid, in catalogue order.
    si : numpy.ndarray of int
        Position in `site_ids` of each kept row.
    tk : numpy.ndarray of datetime64[ns]
        Time (end of the hour) of each kept row.
    path : str or Path
        The file (``source_file`` attribute).
    variables : dict
        :data:`MET_VARIABLES` (unit and long name of each variable).

    Returns
    -------
    xarray.Dataset
        Each variable on (site, time) with NaN for hours without a row, and
        ``row_present`` (an input row exists for this hour).
    """
    t0, t1 = tk.min(), tk.max()
    n_t = int((t1 - t0) // HOUR) + 1
    times = t0 + np.arange(n_t) * HOUR
    ti = ((tk - t0) // HOUR).astype(int)
    dvars = {}
    for name in list(values):
        grid = np.full((len(site_ids), n_t), np.nan)
        grid[si, ti] = values.pop(name)[keep]
        unit, _, long_name = variables[name]
        dvars[name] = (("site", "time"), grid, {"units": _UNITS_OUT[unit], "long_name": long_name})
    present = np.zeros((len(site_ids), n_t), bool)
    present[si, ti] = True
    ds = xr.Dataset(dvars, coords={"site": site_ids, "time": times})
    ds["time"].attrs.update({"long_name": "end of the hour (UTC)"})
    ds["row_present"] = (("site", "time"), present,
                         {"long_name": "an input row exists for this hour"})
    ds.attrs["source_file"] = str(path)
    return ds


def met_attrs(names, path, variables=MET_VARIABLES) -> dict:
    """Attributes of a met store's variables, as :func:`site_time_dataset` sets them.

    Returns
    -------
    dict
        name -> {"units", "long_name"}, ``row_present`` -> {"long_name"} and
        ``source_file`` -> the file's path as text.
    """
    out = {}
    for name in names:
        unit, _, long_name = variables[name]
        out[name] = {"units": _UNITS_OUT[unit], "long_name": long_name}
    out["row_present"] = {"long_name": "an input row exists for this hour"}
    out["source_file"] = str(path)
    return out
