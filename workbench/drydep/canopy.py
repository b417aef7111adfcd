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
    month = seasons.calendar_month(times - HALF_HOUR)     # the hour's middle
    lat = np.asarray(surf["latitude"].values, float)[:, None, None]
    lo = np.array([landuse.DEFAULT_LAI[r][0] for r in receptors])[None, :, None]
    hi = np.array([landuse.DEFAULT_LAI[r][1] for r in receptors])[None, :, None]
    default = landuse.seasonal_lai(lo, hi, month[None, None, :], lat)
    if "lai" not in surf:
        return default
    given = np.asarray(surf["lai"].transpose("site", "receptor", "month").values, float)
    given = given[:, :, month - 1]
    return np.where(np.isnan(given), default, given)


def lai_season(surf, receptors, times):
    """Seasonal category of each receptor from its own LAI cycle (site, receptor, time).

    Each receptor's monthly LAI as :func:`hourly_lai` takes it (the catalogue's where
    given, else its class's default range), through
    :func:`workbench.drydep.seasons.category_from_lai` (the month rule where the LAI
    does not vary: evergreen, bare).  Before, every receptor of a site took the season
    of the site's own surface, so that a crop's harvest closed the stomata of a forest
    receptor beside it (docs/methods_dry.md section 7).  Returns the category and its
    source code [-].

    Parameters
    ----------
    surf : xarray.Dataset
        The receptor surfaces (site, receptor), with ``latitude`` and optionally ``lai``.
    receptors : sequence of str
        Our classes, along the receptor dimension of `surf`.
    times : numpy.ndarray of datetime64
    """
    lat = np.asarray(surf["latitude"].values, float)[:, None, None]
    months = np.arange(1, 13)[None, None, :]
    lo = np.array([landuse.DEFAULT_LAI[r][0] for r in receptors])[None, :, None]
    hi = np.array([landuse.DEFAULT_LAI[r][1] for r in receptors])[None, :, None]
    lai = landuse.seasonal_lai(lo, hi, months, lat) + 0.0 * lat
    if "lai" in surf:
        given = np.asarray(surf["lai"].transpose("site", "receptor", "month").values, float)
        lai = np.where(np.isnan(given), lai, given)
    by_month = seasons.category_from_month(months + 0 * lat.astype(int), lat)
    cat_m, src_m = seasons.category_from_lai(lai, np.broadcast_to(by_month, lai.shape))
    idx = seasons.calendar_month(times - HALF_HOUR) - 1
    return cat_m[:, :, idx], src_m[:, :, idx]


def cos_zenith(times, site):
    """Cosine of the solar zenith angle at the middle of each hour (site, 1, time) [-]."""
    doy, hour = time_parts(times - HALF_HOUR)
    return solar_elevation_sine(doy[None, None, :], hour[None, None, :], site("latitude"),
                                site("longitude"))
