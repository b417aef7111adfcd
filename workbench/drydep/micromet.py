"""Steps 1-4 of the dry-deposition velocities: air, sun, the surface layer and Ra.

The ``micromet`` stage of :func:`workbench.drydep.core.velocities` (docs/engine.md):
pressure, air density and viscosity; solar elevation and cloud cover; u* and the heat
flux over the wind mast's surface; u* over each receptor, its floor, heat flux, Obukhov
length and Ra at the sampler height.  numpy arrays shaped (site, receptor, time) with
broadcasting, no loop over hours.
"""
from __future__ import annotations

import numpy as np

from ..constants import CP_DRY_AIR, HALF_HOUR, VON_KARMAN
from ..surface import energy_balance as eb
from ..surface.aerodynamic import (aerodynamic_resistance, apply_cap, apply_floor,
                                   coriolis_parameter, reference_height, transfer_ustar,
                                   transfer_ustar_drag_law)
from ..surface.air import air_density, kinematic_viscosity, station_pressure
from ..surface.roughness import charnock_roughness
from ..surface.solar import solar_elevation_sine, time_parts
from . import receptors as _receptors

#: Start value of the Charnock iteration [m] (numerical device).
CHARNOCK_START_Z0 = 1e-4
#: The met time stamp ends the hour; the sun is taken at its middle.
#: Smallest heat flux passed to the unstable solver [W m-2] (numerical device).
_MIN_DAY_FLUX = 1e-3
#: What steps 1-4 hand on (the cached result of the surface layer), and step 5.
OUT = ("temp", "u", "rh", "k_down", "precip", "pres", "rho", "snow", "cloud",
       "cloud_src", "pressure_estimated", "us_m", "h_m", "method", "ok",
       "theta_limited", "night", "us_r", "floor_used", "h_r", "inv_l", "z_ref",
       "raised", "ra", "cap_used", "valid", "z0_r")


def surface_layer(opt, block, surf, met_surf, receptors, st, site) -> dict:
    """Steps 1-4 of one in-memory block (the ``micromet`` stage).

    Parameters
    ----------
    opt : DryOptions
        The options (or the stage's guarded view of them).
    block : xarray.Dataset
        Met variables, dims (site, time) (units as in :func:`workbench.drydep.core.velocities`).
    surf, met_surf : xarray.Dataset
        The receptor surfaces of the call and every receptor surface of the sites
        (site, receptor), both at the sites of `block`.
    receptors : list of str
    st, site : callable
        A met variable of `block` as a (site, 1, time) float array (NaN when absent),
        and a site variable of `surf` as a (site, 1, 1) float array.

    Returns
    -------
    dict
        The arrays named in :data:`OUT` (SI units; flags as booleans, codes as floats).
    """
    def rec(values):  # (1, receptor, 1)
        return np.asarray(values)[None, :, None]

    # --- 1. inputs, pressure, air ------------------------------------------------------
    temp, u, rh = st("temperature"), st("wind_speed"), st("relative_humidity")
    # a pyranometer reads a few W m-2 below zero at night (its thermal offset; common
    # practice), which the reader accepts down to -20 W m-2: no light, taken as 0 here
    # once for every path (Wesely 1989's r_dc = 100 (1 + 1000/(G + 10)) turned negative
    # below G = -10 W m-2 and Eq. 3 opened the stomata at night; NaN stays NaN)
    k_down, precip = np.maximum(st("solar_radiation"), 0.0), st("precipitation")
    pres, pressure_estimated = station_pressure(st("pressure"), site("elevation"))
    rho = air_density(temp, pres)
    nu = kinematic_viscosity(temp, pres)
    snow = st("snow_cover")

    # --- 2. sun and clouds ---------------------------------------------------------------
    doy, hour = time_parts(block["time"].values - HALF_HOUR)
    sin_el = solar_elevation_sine(doy[None, None, :], hour[None, None, :], site("latitude"),
                                  site("longitude"))
    n_meas = st("cloud_cover")
    n_inf = eb.cloud_cover_from_radiation(k_down, sin_el)
    cloud = np.where(~np.isnan(n_meas), n_meas, np.where(~np.isnan(n_inf), n_inf,
                                                          opt.night_cloud_cover))
    cloud_src = np.where(~np.isnan(n_meas), 0.0, np.where(~np.isnan(n_inf), 1.0, 2.0))

    # --- 3. the wind mast's surface ----------------------------------------------------
    met_names, z0_ms, d_m = _receptors.met_surface(
        met_surf, [str(r) for r in met_surf["receptor"].values], opt)
    z0_ms, d_m = z0_ms[:, None, None], d_m[:, None, None]
    alb_m = np.array([eb.ALBEDO[m] for m in met_names])[:, None, None]
    alpha_m = np.array([eb.PT_ALPHA[m] for m in met_names])[:, None, None]
    if "met_land_use_in_force" in block:
        # the mast over an earlier class of the site's own surface in some hours
        # (a declared land-use change, met_land_use not given): its z0, d, albedo and
        # Priestley-Taylor alpha hour by hour, the class defaults as for the own surface
        z0_ms, d_m, alb_m, alpha_m = _receptors.mast_in_force(
            st("met_land_use_in_force"), z0_ms, d_m, alb_m, alpha_m, opt)
    z_wind = site("wind_height")
    met_water = np.isnan(z0_ms)
    z0_m = np.where(met_water, CHARNOCK_START_Z0, z0_ms) + 0.0 * u
    if met_water.any():
        z0_w = CHARNOCK_START_Z0 + 0.0 * u
        for _ in range(opt.charnock_iterations):
            us_n = np.maximum(VON_KARMAN * u / np.log((z_wind - d_m) / z0_w), opt.ustar_floor)
            z0_w = charnock_roughness(us_n, nu)
        z0_m = np.where(met_water, z0_w, z0_m)
    z_eff = np.maximum(z_wind - d_m, opt.ra_min_height_z0 * z0_m)
    us_meas, h_meas = st("friction_velocity"), st("sensible_heat_flux")
    has_us, has_h = ~np.isnan(us_meas), ~np.isnan(h_meas)
    alb_m = np.where(snow > 0.5, eb.SNOW_ALBEDO, alb_m)
    h_pt_m = eb.sensible_heat_flux(eb.net_radiation(k_down, temp, cloud, alb_m), temp, pres,
                                   alpha_m)
    h_day = np.where(has_h, h_meas, h_pt_m)
    day = h_day > 0
    # the unstable solve only for the hours that use it (day, u* not measured): the
    # same element-wise steps on fewer elements
    solve = day & ~has_us
    us_unst = np.full(solve.shape, np.nan)
    if solve.any():
        def sub(x):
            return np.broadcast_to(x, solve.shape)[solve]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            us_unst[solve], _ = eb.ustar_unstable(
                sub(u), sub(z_eff), sub(z0_m), sub(np.maximum(h_day, _MIN_DAY_FLUX)), sub(temp),
                sub(rho), opt.unstable_iterations)
    theta_n = eb.theta_star_night(cloud)
    us_st, theta_lim, limited = eb.ustar_stable(u, z_eff, z0_m, theta_n, temp)
    us_m = np.where(has_us, us_meas, np.where(day, us_unst, us_st))
    theta_m = np.where(has_us, theta_n, theta_lim)
    h_m = np.where(has_h, h_meas, np.where(day, h_day, -rho * CP_DRY_AIR * us_m * theta_m))
    method = np.where(has_us & has_h, 0.0, np.where(has_us, 1.0, np.where(
        has_h & day, 2.0, np.where(day, 3.0, 4.0))))
    ok = ~np.isnan(temp) & (has_us | ~np.isnan(u)) & (has_h | ~np.isnan(k_down))
    theta_limited = limited & ~has_us & ~day & ok
    us_m = np.where(ok, us_m, np.nan)
    night = ~day & ~has_h & ok

    # --- 4. receptors --------------------------------------------------------------------
    z0_s, d_r = _receptors.receptor_roughness(surf, receptors, opt)
    water = np.isnan(z0_s)[:, :, None]
    d_r = d_r[:, :, None]
    z0_r = np.where(water, CHARNOCK_START_Z0, z0_s[:, :, None])
    zb = opt.blending_height
    f_cor = coriolis_parameter(site("latitude"))

    blend = _receptors.receptor_transfers(surf, receptors, opt) == "blending_height"
    blend = blend[:, :, None]

    def transfer(z0_to, d_to):  # u* over the receptor (ustar_transfer, per receptor)
        if not blend.any():
            return transfer_ustar_drag_law(us_m, z0_m, z0_to, f_cor)
        if blend.all():
            return transfer_ustar(us_m, z0_m, d_m, z0_to, d_to, zb)
        return np.where(blend, transfer_ustar(us_m, z0_m, d_m, z0_to, d_to, zb),
                        transfer_ustar_drag_law(us_m, z0_m, z0_to, f_cor))
    with np.errstate(invalid="ignore", divide="ignore"):
        if water.any():
            z0_w = CHARNOCK_START_Z0 + 0.0 * us_m
            for _ in range(opt.charnock_iterations):
                us_w = np.maximum(transfer(z0_w, 0.0), opt.ustar_floor)
                z0_w = charnock_roughness(us_w, nu)
            z0_r = np.where(water, z0_w, z0_r)
        z0_r = z0_r + 0.0 * us_m
        us_r = transfer(z0_r, d_r)
        us_r, floor_used = apply_floor(us_r, opt.ustar_floor)
        alb_r = np.where(snow > 0.5, eb.SNOW_ALBEDO, rec([eb.ALBEDO[r] for r in receptors]))
        alpha_r = rec([eb.PT_ALPHA[r] for r in receptors])
        h_pt_r = eb.sensible_heat_flux(eb.net_radiation(k_down, temp, cloud, alb_r), temp, pres,
                                       alpha_r)
        # calm hours (u* = 0 at the mast, measured or from a wind of 0): the mast's own
        # temperature scale, not 0/0; the receptor's u* then sits on its floor (flagged)
        theta_r = np.where(us_m > 0, -h_m / (rho * CP_DRY_AIR * np.where(us_m > 0, us_m, 1.0)),
                           theta_m)
        h_r = np.where(has_h, h_meas, np.where(day, h_pt_r, -rho * CP_DRY_AIR * us_r * theta_r))
        h_r = np.where(water, 0.0, h_r)
        h_r = np.where(np.isnan(us_r), np.nan, h_r)
        inv_l = eb.inverse_obukhov(us_r, h_r, temp, rho)
        z_ref, raised = reference_height(site("sampler_height"), d_r, z0_r,
                                         opt.ra_min_height_z0)
        ra = aerodynamic_resistance(z_ref, d_r, z0_r, us_r, inv_l)
    ra, cap_used = apply_cap(ra, opt.ra_cap)
    valid = ~np.isnan(us_r) & ~np.isnan(inv_l)
    floor_used, cap_used = floor_used & valid, cap_used & valid

    here = locals()
    return {k: here[k] for k in OUT}
