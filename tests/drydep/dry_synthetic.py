"""Synthetic met and surfaces Datasets shaped as docs/data_model.md, for the tests.

Invented sites with invented names; hourly weather from smooth seasonal and daily
cycles plus seeded noise.  Not a reader: the readers live in workbench/io.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from workbench.landuse import LAND_USE
from workbench.surface.solar import solar_elevation_sine, time_parts

#: Invented sites: id -> (own land use, further receptors, latitude, longitude,
#: elevation, canopy height, wind height, sampler height, slope, met land use).
#: sites.toml text of one invented grass site "a" (tests append their own keys).
ONE_SITE_TOML = """[[site]]
id = "a"
name = "A"
latitude = 54.0
longitude = 7.0
elevation_m = 100.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 1.5
utc_offset_h = 0.0
"""

SITES = {
    "alder_hill": ("conifer_forest", ("grass", "water"), 52.0, 5.0, 40.0, 15.0, 25.0, 25.0, 2.0, "conifer_forest"),
    "bramble_moor": ("grass", ("conifer_forest", "deciduous_forest", "crops"), 48.0, 10.0, 300.0, 0.12, 10.0, 2.0, 0.0, "grass"),
    "cinder_flat": ("moorland", ("wetland", "barren", "snow_ice"), 60.0, 12.0, 600.0, 0.4, 10.0, 3.0, 5.0, "grass"),
    "dune_end": ("urban", ("mixed_forest", "water", "grass"), -35.0, 150.0, 10.0, 10.0, 10.0, 20.0, 0.0, "grass"),
}


def make_surfaces(sites=None) -> xr.Dataset:
    """The (site, receptor) Dataset of ``SiteCatalogue.surfaces()`` for invented sites."""
    sites = sites or SITES
    receptors = []
    for own, extra, *_ in sites.values():
        for r in (own,) + tuple(extra):
            if r not in receptors:
                receptors.append(r)
    ns, nr = len(sites), len(receptors)
    active = np.zeros((ns, nr), bool)
    is_own = np.zeros((ns, nr), bool)
    height = np.empty((ns, nr))
    for i, (own, extra, *rest) in enumerate(sites.values()):
        for j, r in enumerate(receptors):
            active[i, j] = r == own or r in extra
            is_own[i, j] = r == own
            height[i, j] = rest[3] if r == own else LAND_USE[r][1]
    col = list(zip(*[(v[2], v[3], v[4], v[6], v[7], v[8], v[9], v[0]) for v in sites.values()]))
    ds = xr.Dataset(
        {
            "latitude": ("site", np.array(col[0], float), {"units": "degree_north"}),
            "longitude": ("site", np.array(col[1], float), {"units": "degree_east"}),
            "elevation": ("site", np.array(col[2], float), {"units": "m"}),
            "wind_height": ("site", np.array(col[3], float), {"units": "m"}),
            "sampler_height": ("site", np.array(col[4], float), {"units": "m"}),
            "terrain_slope": ("site", np.array(col[5], float), {"units": "degree"}),
            "met_land_use": ("site", np.array(col[6], object)),
            "land_use": ("site", np.array(col[7], object)),
            "utc_offset_h": ("site", np.zeros(ns), {"units": "h"}),
            "active": (("site", "receptor"), active),
            "is_site_surface": (("site", "receptor"), is_own),
            "canopy_height": (("site", "receptor"), height, {"units": "m"}),
            "roughness_length": (("site", "receptor"), np.full((ns, nr), np.nan), {"units": "m"}),
            "displacement_height": (("site", "receptor"), np.full((ns, nr), np.nan), {"units": "m"}),
            "lai": (("site", "receptor", "month"), np.full((ns, nr, 12), np.nan), {"units": "m2 m-2"}),
        },
        coords={"site": list(sites), "receptor": receptors, "month": np.arange(1, 13)},
    )
    return ds


def make_met(surfaces, start="2021-01-01T01:00", hours=24 * 365, seed=1, optional=()) -> xr.Dataset:
    """Hourly met (site, time), time = end of hour UTC, with plausible cycles.

    Parameters
    ----------
    optional : iterable of str
        Optional variables to add: "cloud_cover", "friction_velocity",
        "sensible_heat_flux", "surface_wet", "snow_cover".
    """
    rng = np.random.default_rng(seed)
    time = pd.date_range(start, periods=hours, freq="h").values
    ns = surfaces.sizes["site"]
    doy, hour = time_parts(time - np.timedelta64(30, "m"))
    lat = surfaces["latitude"].values[:, None]
    lon = surfaces["longitude"].values[:, None]
    sin_el = solar_elevation_sine(doy[None, :], hour[None, :], lat, lon)
    season = np.cos(2 * np.pi * (doy[None, :] - 200) / 365.0) * np.sign(lat)
    cloud = np.clip(rng.beta(1.2, 1.2, (ns, hours)), 0, 1)
    k = np.maximum(990 * sin_el - 30, 0) * (1 - 0.75 * cloud ** 3.4)
    local = (hour[None, :] + lon / 15.0) % 24
    diurnal = np.cos(2 * np.pi * (local - 15) / 24)
    temp = 283.15 + 10 * season + 4 * diurnal + rng.normal(0, 1.5, (ns, hours)) - 6e-3 * surfaces[
        "elevation"].values[:, None]
    wind = np.clip(3.5 + 1.2 * diurnal + rng.gamma(2.0, 0.8, (ns, hours)) - 1.6, 0.2, None)
    rh = np.clip(0.75 - 0.18 * diurnal + rng.normal(0, 0.08, (ns, hours)), 0.2, 1.0)
    rain = np.where(rng.random((ns, hours)) < 0.08, rng.gamma(0.8, 1.5, (ns, hours)), 0.0)
    pres = 101325.0 * np.exp(-surfaces["elevation"].values[:, None] / 8400.0) + rng.normal(0, 300, (ns, hours))
    dims = ("site", "time")
    ds = xr.Dataset(
        {
            "wind_speed": (dims, wind, {"units": "m s-1"}),
            "temperature": (dims, temp, {"units": "K"}),
            "relative_humidity": (dims, rh, {"units": "1"}),
            "solar_radiation": (dims, k, {"units": "W m-2"}),
            "precipitation": (dims, rain, {"units": "mm"}),
            "pressure": (dims, pres, {"units": "Pa"}),
        },
        coords={"site": surfaces["site"].values, "time": time},
    )
    if "cloud_cover" in optional:
        ds["cloud_cover"] = (dims, cloud, {"units": "1"})
    if "surface_wet" in optional:
        ds["surface_wet"] = (dims, (rain > 0).astype(float), {"units": "1"})
    if "snow_cover" in optional:
        ds["snow_cover"] = (dims, (temp < 271.0).astype(float), {"units": "1"})
    if "friction_velocity" in optional:
        ds["friction_velocity"] = (dims, 0.08 * wind + 0.05, {"units": "m s-1"})
    if "sensible_heat_flux" in optional:
        ds["sensible_heat_flux"] = (dims, 0.25 * k - 20.0, {"units": "W m-2"})
    return ds
