"""The dry-deposition velocity calculation for every site, receptor and hour.

:func:`velocities` strings the pure functions of :mod:`workbench.surface` and of the
scheme modules together, vectorized over (site, receptor, time) with xarray, so
that a dask-chunked met Dataset stays lazy.  Steps (docs/methods_dry.md):

1. pressure (filled from elevation where missing), air density and viscosity;
2. solar elevation and cloud cover (measured, else inferred from radiation, else
   the option's night value; each hour's source is returned);
3. u* and the heat flux over the wind mast's surface (measured, or energy balance
   by day and theta* by night);
4. u* over each receptor through the blending height, its floor, its heat flux and
   Obukhov length; Ra at the sampler (or reference) height, with its cap;
5. seasonal category and surface wetness;
6. Rb, Rc (and its paths) and Vd of each gas; mass-weighted Vd of each particle.
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from .. import landuse
from ..constants import CP_DRY_AIR, VON_KARMAN
from ..landuse import LAND_USE
from ..surface import energy_balance as eb
from ..surface._array import where
from ..surface.aerodynamic import (aerodynamic_resistance, apply_cap, apply_floor,
                                   reference_height, transfer_ustar)
from ..surface.air import (air_density, kinematic_viscosity, specific_humidity_deficit,
                           standard_pressure_at)
from ..surface.roughness import charnock_roughness, land_use_roughness
from ..surface.solar import solar_elevation_sine, time_parts
from . import gas as _gas
from . import particles as _particles
from . import seasons as _seasons
from . import wetness as _wetness
from .options import DryOptions

#: Start value of the Charnock iteration [m] (numerical device).
CHARNOCK_START_Z0 = 1e-4
#: Smallest heat flux passed to the unstable solver [W m-2] (numerical device).
_MIN_DAY_FLUX = 1e-3
#: Codes of ``surface_layer_method``.
METHOD = {0: "measured u* and H", 1: "measured u*, H from energy balance or theta*",
          2: "measured H > 0, u* solved", 3: "energy balance by day (Holtslag-van Ulden)",
          4: "theta* by night (van Ulden-Holtslag, Venkatram)"}
#: Codes of ``cloud_cover_source``.
CLOUD_SOURCE = {0: "met file", 1: "inferred from global radiation (Kasten-Czeplak)",
                2: "night_cloud_cover option"}
NH3_NOTE = ("NH3: deposition only (no compensation point, no emission); vd_NH3 is the "
            "deposition velocity of a unidirectional flux")


def _var(met, name, like):
    """``met[name]`` as float, or NaN of the shape of `like` when absent."""
    if name in met:
        return met[name].astype(float)
    return xr.full_like(like, np.nan, dtype=float)


def _da(values, surf, dims=("site", "receptor")):
    return xr.DataArray(values, dims=dims, coords={d: surf[d] for d in dims})


def _met_surface(surf, receptors, opt):
    """Class, z0, d, albedo and PT alpha of the surface around each wind mast."""
    names = [str(x) for x in surf["met_land_use"].values]
    heights, z0o, do = [], [], []
    for i, m in enumerate(names):
        landuse.check(m)
        own = [j for j, r in enumerate(receptors)
               if r == m and bool(surf["is_site_surface"].values[i, j])]
        if own:
            j = own[0]
            heights.append(float(surf["canopy_height"].values[i, j]))
            z0o.append(float(surf["roughness_length"].values[i, j]))
            do.append(float(surf["displacement_height"].values[i, j]))
        else:
            heights.append(LAND_USE[m][1])
            z0o.append(np.nan)
            do.append(np.nan)
    z0, d = land_use_roughness(names, np.array(heights), np.array(z0o), np.array(do),
                               opt.roughness)
    return names, z0, d


def _attrs(da, units, long_name, **extra):
    da.attrs = {"units": units, "long_name": long_name, **extra}
    return da


def velocities(met: xr.Dataset, surfaces: xr.Dataset, options: DryOptions | None = None) -> xr.Dataset:
    """Dry deposition velocities and every resistance, per site, receptor and hour.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly meteorology, dims (site, time), as in docs/data_model.md: wind_speed
        [m s-1], temperature [K], relative_humidity [1], solar_radiation [W m-2],
        precipitation [mm], pressure [Pa], optional cloud_cover [1],
        friction_velocity [m s-1], sensible_heat_flux [W m-2], surface_wet [0/1],
        snow_cover [0/1].  May be dask-backed (chunked over time or site).
    surfaces : xarray.Dataset
        Receptor surfaces, dims (site, receptor), as produced by
        ``SiteCatalogue.surfaces()``.
    options : DryOptions, optional

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, time); every variable has ``units`` and
        ``long_name``.  NaN where an input is missing.  See docs/methods_dry.md for
        the list of variables.
    """
    opt = options or DryOptions()
    scheme = _gas.get_scheme(opt.gas_scheme)
    surf = surfaces.sel(site=met["site"].values)
    receptors = [str(r) for r in surf["receptor"].values]
    for r in receptors:
        landuse.check(r)
    is_water = _da(np.array([r == "water" for r in receptors]), surf, ("receptor",))

    # --- 1. inputs, pressure, air ------------------------------------------------------
    temp = met["temperature"].astype(float)
    u = met["wind_speed"].astype(float)
    rh = met["relative_humidity"].astype(float)
    k_down = met["solar_radiation"].astype(float)
    precip = met["precipitation"].astype(float)
    p_in = _var(met, "pressure", temp)
    pressure_estimated = np.isnan(p_in)
    pres = where(pressure_estimated, standard_pressure_at(surf["elevation"].astype(float)), p_in)
    rho = air_density(temp, pres)
    nu = kinematic_viscosity(temp, pres)
    snow = _var(met, "snow_cover", temp)

    # --- 2. sun and clouds ---------------------------------------------------------------
    mid = met["time"] - np.timedelta64(30, "m")
    doy, hour = time_parts(mid)
    sin_el = solar_elevation_sine(doy, hour, surf["latitude"].astype(float),
                                  surf["longitude"].astype(float))
    n_meas = _var(met, "cloud_cover", temp)
    n_inf = eb.cloud_cover_from_radiation(k_down, sin_el)
    cloud = where(~np.isnan(n_meas), n_meas, where(~np.isnan(n_inf), n_inf, opt.night_cloud_cover))
    cloud_src = where(~np.isnan(n_meas), 0.0, where(~np.isnan(n_inf), 1.0, 2.0))

    # --- 3. the wind mast's surface ----------------------------------------------------
    met_names, z0_m_static, d_m = _met_surface(surf, receptors, opt)
    d_m = xr.DataArray(d_m, dims="site", coords={"site": surf["site"]})
    z_wind = surf["wind_height"].astype(float)
    met_is_water = xr.DataArray(np.isnan(z0_m_static), dims="site", coords={"site": surf["site"]})
    z0_m = xr.DataArray(np.where(np.isnan(z0_m_static), CHARNOCK_START_Z0, z0_m_static),
                        dims="site", coords={"site": surf["site"]})
    if bool(met_is_water.any()):
        z0_w = CHARNOCK_START_Z0 + 0.0 * u
        for _ in range(opt.charnock_iterations):
            us_n = np.maximum(VON_KARMAN * u / np.log((z_wind - d_m) / z0_w), opt.ustar_floor)
            z0_w = charnock_roughness(us_n, nu)
        z0_m = where(met_is_water, z0_w, z0_m)
    z_eff = np.maximum(z_wind - d_m, opt.ra_min_height_z0 * z0_m)
    us_meas = _var(met, "friction_velocity", temp)
    h_meas = _var(met, "sensible_heat_flux", temp)
    has_us, has_h = ~np.isnan(us_meas), ~np.isnan(h_meas)
    alb_m = xr.DataArray([eb.ALBEDO[m] for m in met_names], dims="site", coords={"site": surf["site"]})
    alpha_m = xr.DataArray([eb.PT_ALPHA[m] for m in met_names], dims="site", coords={"site": surf["site"]})
    alb_m = where(snow > 0.5, eb.SNOW_ALBEDO, alb_m)
    h_pt_m = eb.sensible_heat_flux(eb.net_radiation(k_down, temp, cloud, alb_m), temp, pres, alpha_m)
    h_day = where(has_h, h_meas, h_pt_m)
    day = h_day > 0
    us_unst, _ = eb.ustar_unstable(u, z_eff, z0_m, np.maximum(h_day, _MIN_DAY_FLUX), temp, rho,
                                   opt.unstable_iterations)
    theta_n = eb.theta_star_night(cloud)
    us_st, theta_lim, limited = eb.ustar_stable(u, z_eff, z0_m, theta_n, temp)
    us_m = where(has_us, us_meas, where(day, us_unst, us_st))
    theta_m = where(has_us, theta_n, theta_lim)
    h_m = where(has_h, h_meas, where(day, h_day, -rho * CP_DRY_AIR * us_m * theta_m))
    method = where(has_us & has_h, 0.0, where(has_us, 1.0, where(has_h & day, 2.0,
                                                                  where(day, 3.0, 4.0))))
    ok = ~np.isnan(temp) & (has_us | ~np.isnan(u)) & (has_h | ~np.isnan(k_down))
    theta_limited = limited & ~has_us & ~day & ok
    us_m = where(ok, us_m, np.nan)
    night = ~day & ~has_h

    # --- 4. receptors --------------------------------------------------------------------
    z0_s, d_r = land_use_roughness(receptors, surf["canopy_height"].values.astype(float),
                                   surf["roughness_length"].values.astype(float),
                                   surf["displacement_height"].values.astype(float),
                                   opt.roughness)
    water_static = np.isnan(z0_s)
    z0_r = _da(np.where(water_static, CHARNOCK_START_Z0, z0_s), surf)
    d_r = _da(d_r, surf)
    zb = opt.blending_height
    if water_static.any():
        z0_w = CHARNOCK_START_Z0 + 0.0 * us_m
        for _ in range(opt.charnock_iterations):
            us_w = np.maximum(transfer_ustar(us_m, z0_m, d_m, z0_w, 0.0, zb), opt.ustar_floor)
            z0_w = charnock_roughness(us_w, nu)
        z0_r = where(_da(water_static, surf), z0_w, z0_r)
    us_r = transfer_ustar(us_m, z0_m, d_m, z0_r, d_r, zb)
    us_r, floor_used = apply_floor(us_r, opt.ustar_floor)
    alb_r = _da(np.array([eb.ALBEDO[r] for r in receptors]), surf, ("receptor",))
    alb_r = where(snow > 0.5, eb.SNOW_ALBEDO, alb_r)
    alpha_r = _da(np.array([eb.PT_ALPHA[r] for r in receptors]), surf, ("receptor",))
    h_pt_r = eb.sensible_heat_flux(eb.net_radiation(k_down, temp, cloud, alb_r), temp, pres, alpha_r)
    theta_r = where(np.isnan(us_m), np.nan, -h_m / (rho * CP_DRY_AIR * us_m))
    h_r = where(has_h, h_meas, where(day, h_pt_r, -rho * CP_DRY_AIR * us_r * theta_r))
    h_r = where(is_water, 0.0, h_r)
    inv_l = eb.inverse_obukhov(us_r, h_r, temp, rho)
    z_s = surf["sampler_height"].astype(float)
    z_ref, raised = reference_height(z_s, d_r, z0_r, opt.ra_min_height_z0)
    ra = aerodynamic_resistance(z_ref, d_r, z0_r, us_r, inv_l)
    ra, cap_used = apply_cap(ra, opt.ra_cap)
    valid = ~np.isnan(us_r) & ~np.isnan(inv_l)
    floor_used = floor_used & valid
    cap_used = cap_used & valid

    # --- 5. season and wetness -------------------------------------------------------------
    cat, cat_src = _seasons.seasonal_category(met["time"], surf["latitude"].astype(float), temp,
                                              snow if "snow_cover" in met else None,
                                              opt.seasonal_category)
    rain = _wetness.rain_wet(precip, precip.shift(time=1))
    dew = _wetness.dew_wet(specific_humidity_deficit(temp, rh, pres), us_r)
    given = met["surface_wet"].astype(float) if "surface_wet" in met else None
    wet, kind, wet_src = _wetness.wetness(opt.wetness_rule, rain, dew, given)

    # --- 6. gases and particles ---------------------------------------------------------------
    out = {}
    state = _gas.CanopyState(tuple(receptors), cat, k_down, temp, kind,
                             surf["terrain_slope"].astype(float), us_r, None, "receptor")
    for g in opt.gases:
        rb = _gas.quasi_laminar_resistance(g, us_r, temp, pres)
        comp = scheme.surface_resistance(g, state)
        out[f"rb_{g}"] = _attrs(rb, "s m-1", f"quasi-laminar resistance of {g}")
        out[f"rc_{g}"] = _attrs(comp["rc"], "s m-1", f"surface resistance of {g} ({scheme.NAME})")
        if opt.components:
            for path in ("stomatal", "mesophyll", "upper_canopy", "lower_canopy", "ground"):
                out[f"rc_{g}_{path}"] = _attrs(comp[path], "s m-1",
                                               f"{path.replace('_', ' ')} resistance of {g}")
            out["rc_convection"] = _attrs(comp["convection"], "s m-1",
                                          "in-canopy buoyant convection resistance r_dc")
            out["rc_canopy_transfer"] = _attrs(comp["canopy_transfer"], "s m-1",
                                               "in-canopy aerodynamic transfer resistance r_ac")
        if g == "HNO3":
            out["rc_floor_used_HNO3"] = _attrs(comp["floor_used"] & valid, "1",
                                               "HNO3 surface resistance raised to its floor")
        vd = _gas.deposition_velocity(ra, rb, comp["rc"])
        extra = {"note": NH3_NOTE} if g == "NH3" else {}
        out[f"vd_{g}"] = _attrs(vd, "m s-1", f"dry deposition velocity of {g}", **extra)
    cache = {}
    for sp in opt.particles:
        spec = opt.mode_of(sp)
        parts = []
        for frac, mode in ((spec.fine_fraction, spec.fine), (1.0 - spec.fine_fraction, spec.coarse)):
            if frac <= 0.0:
                continue
            if mode not in cache:
                cache[mode] = _particles.mass_weighted_velocity(
                    mode, rh, us_r, ra, temp, pres, tuple(receptors), cat, wet,
                    opt.size_nodes, "receptor")
            parts.append(frac * cache[mode])
        vd = sum(parts[1:], parts[0])
        out[f"vd_{sp}"] = _attrs(vd, "m s-1", f"mass-weighted dry deposition velocity of {sp} "
                                 "(Zhang et al. 2001)", fine_fraction=spec.fine_fraction,
                                 fine_mmd_m=spec.fine.mmd, fine_gsd=spec.fine.gsd,
                                 coarse_mmd_m=spec.coarse.mmd, coarse_gsd=spec.coarse.gsd)

    # --- assemble -----------------------------------------------------------------------------
    obukhov = where(inv_l == 0, np.inf, 1.0 / where(inv_l == 0, 1.0, inv_l))
    base = {
        "friction_velocity": _attrs(us_r, "m s-1", "friction velocity over the receptor"),
        "obukhov_length": _attrs(obukhov, "m", "Obukhov length over the receptor (inf: neutral)"),
        "sensible_heat_flux": _attrs(where(valid, h_r, np.nan), "W m-2",
                                     "sensible heat flux over the receptor, positive upward"),
        "roughness_length": _attrs(z0_r + 0.0 * us_r, "m", "roughness length for momentum"),
        "displacement_height": _attrs(d_r, "m", "displacement height"),
        "ra": _attrs(ra, "s m-1", "aerodynamic resistance from the reference height"),
        "ra_reference_height": _attrs(z_ref, "m", "height at which Ra is evaluated"),
        "ra_height_raised": _attrs(raised, "1", "sampler below d + m z0: Ra taken higher"),
        "ustar_floor_used": _attrs(floor_used, "1", "friction velocity raised to its floor"),
        "ra_cap_used": _attrs(cap_used, "1", "aerodynamic resistance lowered to its cap"),
        "seasonal_category": _attrs(cat, "1", "Wesely seasonal category (1-5)",
                                    codes=str(_seasons.SOURCE)),
        "seasonal_source": _attrs(cat_src, "1", "why this seasonal category",
                                  codes=str(_seasons.SOURCE)),
        "surface_wet": _attrs(wet, "1", "surface wetness used (1 wet, 0 dry)"),
        "wet_kind": _attrs(kind, "1", "kind of wetness: 0 dry, 1 dew, 2 rain"),
        "wetness_source": _attrs(wet_src, "1", "source of the wetness",
                                 codes=str(_wetness.SOURCE)),
        "met_friction_velocity": _attrs(us_m, "m s-1", "friction velocity over the wind mast's surface"),
        "met_sensible_heat_flux": _attrs(where(ok, h_m, np.nan), "W m-2",
                                         "sensible heat flux over the wind mast's surface"),
        "surface_layer_method": _attrs(where(ok, method, np.nan), "1", "how u* and H were found",
                                       codes=str(METHOD)),
        "theta_star_limited": _attrs(theta_limited, "1",
                                     "night theta* reduced so that the stable profile has a root"),
        "cloud_cover_used": _attrs(cloud, "1", "cloud cover used"),
        "cloud_cover_source": _attrs(cloud_src, "1", "source of the cloud cover",
                                     codes=str(CLOUD_SOURCE)),
        "pressure_estimated": _attrs(pressure_estimated, "1",
                                     "pressure missing: standard atmosphere at the site elevation"),
        "night": _attrs(night, "1", "stable (night) branch of the surface layer"),
        "active": _attrs(surf["active"], "1", "the site wants this receptor"),
    }
    counts = {
        "n_ustar_floor": floor_used, "n_ra_cap": cap_used, "n_theta_star_limited": theta_limited,
        "n_cloud_default": cloud_src == 2, "n_pressure_estimated": pressure_estimated,
    }
    if "rc_floor_used_HNO3" in out:
        counts["n_hno3_rc_floor"] = out["rc_floor_used_HNO3"]
    for name, flag in counts.items():
        base[name] = _attrs(flag.sum("time"), "1", f"hours counted: {name[2:].replace('_', ' ')}")
    ds = xr.Dataset({**base, **out})
    order = [d for d in ("site", "receptor", "time") if d in ds.dims]
    ds = ds.transpose(*order, ...)
    drop = [c for c in ds.coords if c not in ("site", "receptor", "time")]
    ds = ds.reset_coords(drop, drop=True)
    ds.attrs = {"gas_scheme": scheme.REFERENCE,
                "particle_scheme": "Zhang et al. (2001), Atmos. Environ. 35, 549-560",
                "nh3": NH3_NOTE, "wetness_rule": opt.wetness_rule,
                "ustar_floor_m_s": opt.ustar_floor, "ra_cap_s_m": opt.ra_cap,
                "blending_height_m": opt.blending_height,
                "time_convention": "end of each hour, UTC"}
    return ds
