"""The variables of hourly meteorology and their conversion to internal units (shared by
the readers of :mod:`workbench.io.met` and :mod:`workbench.io.metfast`)."""
from __future__ import annotations

import numpy as np

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
