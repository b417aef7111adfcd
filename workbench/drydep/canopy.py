"""Canopy state of each receptor and hour for the engine: LAI, sun, LAI-based season.

Helpers of :mod:`workbench.drydep.core` (numpy, whole arrays; no loop over hours).
"""
from __future__ import annotations

import numpy as np

from .. import landuse
from ..constants import HALF_HOUR    # the sun at the middle of the hour (as the engine)
from ..surface.solar import solar_elevation_sine, time_parts
from . import seasons


def hourly_lai(surf, receptors, times):
    """Leaf-area index of each receptor and hour (site, receptor, time) [m2 m-2].

    The catalogue's monthly LAI where given, else the class's default range
    (:data:`workbench.landuse.DEFAULT_LAI`) by :func:`workbench.landuse.seasonal_lai`.
    """
    month = seasons.calendar_month(times)
    lat = np.asarray(surf["latitude"].values, float)[:, None, None]
    lo = np.array([landuse.DEFAULT_LAI[r][0] for r in receptors])[None, :, None]
    hi = np.array([landuse.DEFAULT_LAI[r][1] for r in receptors])[None, :, None]
    default = landuse.seasonal_lai(lo, hi, month[None, None, :], lat)
    if "lai" not in surf:
        return default
    given = np.asarray(surf["lai"].transpose("site", "receptor", "month").values, float)
    given = given[:, :, month - 1]
    return np.where(np.isnan(given), default, given)


def lai_season(surf, times):
    """Seasonal category from the LAI cycle of each site's own surface (site, 1, time).

    The catalogue's monthly LAI of the site's own surface, else its class's default
    range (as :func:`hourly_lai`), through :func:`workbench.drydep.seasons.category_from_lai`
    (the month rule where the LAI does not vary).  Returns the category and its
    source code [-].
    """
    lat = np.asarray(surf["latitude"].values, float)[:, None]
    months = np.arange(1, 13)[None, :]
    own = [str(x) for x in surf["land_use"].values]
    lo = np.array([landuse.DEFAULT_LAI[r][0] for r in own])[:, None]
    hi = np.array([landuse.DEFAULT_LAI[r][1] for r in own])[:, None]
    lai = landuse.seasonal_lai(lo, hi, months, lat)
    if "lai" in surf:
        mine = surf["is_site_surface"].values.astype(bool)
        given = np.asarray(surf["lai"].transpose("site", "receptor", "month").values, float)
        given = np.where(mine[:, :, None], given, np.nan)
        has = np.isfinite(given).any(axis=1)
        with np.errstate(all="ignore"):
            lai = np.where(has, np.nanmax(np.where(np.isfinite(given), given, -np.inf), axis=1),
                           lai)
    cat_m, src_m = seasons.category_from_lai(
        lai, seasons.category_from_month(months + 0 * lat.astype(int), lat))
    idx = seasons.calendar_month(times) - 1
    return cat_m[:, None, idx], src_m[:, None, idx]


def cos_zenith(times, site):
    """Cosine of the solar zenith angle at the middle of each hour (site, 1, time) [-]."""
    doy, hour = time_parts(times - HALF_HOUR)
    return solar_elevation_sine(doy[None, None, :], hour[None, None, :], site("latitude"),
                                site("longitude"))
