"""Friction velocity and Obukhov length from routine meteorology.

By day the sensible heat flux comes from the surface energy balance of Holtslag
and van Ulden (1983): net radiation from global radiation, temperature and cloud
cover, soil heat flux as a fraction of it, and the modified Priestley-Taylor
partition; u* and L then follow from the Monin-Obukhov wind profile by a
bracketed bisection with a fixed number of steps (it always terminates).

By night the temperature scale theta* of van Ulden and Holtslag (1985) sets the
heat flux, and u* follows in closed form from the log-linear stable profile
(Venkatram 1980).  Where no real solution exists (light wind), theta* is reduced
to the largest value that has one and the hour is flagged.

Scheme constants are data of their papers and sit here with their sources.
"""
from __future__ import annotations

import numpy as np

from ..constants import (BUSINGER_DYER_BETA, CP_DRY_AIR, GRAVITY, STEFAN_BOLTZMANN,
                         VON_KARMAN)
from ._array import where
from .aerodynamic import wind_profile_factor
from .air import psychrometric_constant, saturation_slope

# --- Holtslag and van Ulden (1983), J. Clim. Appl. Meteorol. 22, 517-529 -------------
#: Swinbank-type clear-sky longwave coefficient c1 [W m-2 K-6] (HvU 1983, Eq. 9;
#: from memory).
HVU_C1 = 5.31e-13
#: Cloud longwave coefficient c2 [W m-2] (HvU 1983, Eq. 9; from memory).
HVU_C2 = 60.0
#: Surface-temperature correction c3 [-] (HvU 1983, Eq. 9; from memory).
HVU_C3 = 0.12
#: Soil heat flux fraction c_G of net radiation [-] (HvU 1983, Eq. 10; from memory).
HVU_CG = 0.1
#: Priestley-Taylor offset beta [W m-2] (HvU 1983, Eq. 5; from memory).
HVU_BETA = 20.0
# --- van Ulden and Holtslag (1985), J. Clim. Appl. Meteorol. 24, 1196-1207 -----------
#: Night temperature scale theta*_1 [K] of theta* = theta*_1 (1 - 0.5 N^2) (from memory).
THETA_STAR_CLEAR = 0.09
THETA_STAR_CLOUD_FACTOR = 0.5
# --- Kasten and Czeplak (1980), Solar Energy 24, 177-189 -----------------------------
#: Clear-sky global radiation K = a1 sin(elevation) + a2 [W m-2] and the cloud
#: reduction K/K_clear = 1 - b1 N^b2 [-] (from memory).
KC_A1 = 990.0
KC_A2 = -30.0
KC_B1 = 0.75
KC_B2 = 3.4
#: Least solar elevation sine for inferring cloud cover from radiation (about 6
#: degrees; below it the clear-sky fit is poor; our choice).
KC_MIN_SIN_ELEVATION = 0.1

#: Surface albedo r [-] by our class; Oke (1987), Boundary Layer Climates, 2nd ed.,
#: Table 1.1, mid-range values (from memory); grass 0.23 as FAO-56.
ALBEDO = {
    "conifer_forest": 0.10, "deciduous_forest": 0.17, "mixed_forest": 0.14, "grass": 0.23,
    "crops": 0.20, "moorland": 0.15, "wetland": 0.14, "water": 0.08, "urban": 0.15,
    "barren": 0.25, "snow_ice": 0.70,
}
#: Albedo of snow cover on any class [-] (Oke 1987, Table 1.1, old snow; from memory).
SNOW_ALBEDO = 0.60
#: Priestley-Taylor moisture parameter alpha [-] by our class: 1 for well-watered
#: vegetation (HvU 1983), 1.26 for open water (Priestley and Taylor 1972, Mon. Wea.
#: Rev. 100, 81), smaller for dry or sealed surfaces (common practice, from memory).
PT_ALPHA = {
    "conifer_forest": 1.0, "deciduous_forest": 1.0, "mixed_forest": 1.0, "grass": 1.0,
    "crops": 1.0, "moorland": 0.8, "wetland": 1.2, "water": 1.26, "urban": 0.5,
    "barren": 0.3, "snow_ice": 1.0,
}

#: Bisection bracket for unstable u*: [u*_N, factor u*_N] [-] and the least u* [m s-1]
#: of the bracket (numerical devices of this solver).
UNSTABLE_BRACKET_FACTOR = 30.0
SOLVE_USTAR_MIN = 1e-3


def net_radiation(global_radiation, temperature, cloud_cover, albedo):
    """Net radiation from global radiation, temperature and cloud cover [W m-2].

    Parameters
    ----------
    global_radiation : array_like
        Downward short-wave radiation K. [W m-2]
    temperature : array_like
        Air temperature T. [K]
    cloud_cover : array_like
        Fraction N. [1]
    albedo : array_like
        r. [-]

    Returns
    -------
    q_star : array_like
        [W m-2]

    Notes
    -----
    .. math:: Q^* = \\frac{(1-r)K + c_1 T^6 - \\sigma T^4 + c_2 N}{1 + c_3}

    References
    ----------
    Holtslag, A. A. M. and van Ulden, A. P. (1983), J. Clim. Appl. Meteorol. 22,
    517-529, Eq. (9) (from memory).
    """
    return ((1.0 - albedo) * global_radiation + HVU_C1 * temperature ** 6
            - STEFAN_BOLTZMANN * temperature ** 4 + HVU_C2 * cloud_cover) / (1.0 + HVU_C3)


def sensible_heat_flux(q_star, temperature, pressure, alpha=1.0):
    """Daytime sensible heat flux, modified Priestley-Taylor [W m-2].

    Parameters
    ----------
    q_star : array_like
        Net radiation. [W m-2]
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]
    alpha : array_like
        Priestley-Taylor moisture parameter. [-]

    Returns
    -------
    h : array_like
        Positive upward. [W m-2]

    Notes
    -----
    .. math:: H = \\frac{(1-\\alpha) + \\gamma/s}{1 + \\gamma/s}(Q^* - G) - \\beta,
              \\quad G = c_G Q^*

    References
    ----------
    Holtslag and van Ulden (1983), Eqs. (5) and (10); de Bruin, H. A. R. and Holtslag,
    A. A. M. (1982), J. Appl. Meteorol. 21, 1610-1621 (from memory).
    """
    ratio = psychrometric_constant(pressure) / saturation_slope(temperature)
    return ((1.0 - alpha) + ratio) / (1.0 + ratio) * (1.0 - HVU_CG) * q_star - HVU_BETA


def cloud_cover_from_radiation(global_radiation, sin_elevation):
    """Cloud cover inferred from measured global radiation [1].

    Parameters
    ----------
    global_radiation : array_like
        [W m-2]
    sin_elevation : array_like
        Sine of the solar elevation. [-]

    Returns
    -------
    cloud_cover : array_like
        [1], clipped to 0-1; NaN where the sun is too low (sin < 0.1).

    Notes
    -----
    Inverts :math:`K = (a_1\\sin\\alpha + a_2)(1 - b_1 N^{b_2})`.

    References
    ----------
    Kasten, F. and Czeplak, G. (1980), Solar Energy 24, 177-189 (from memory), as
    used by Holtslag and van Ulden (1983), Eq. (8).
    """
    k_clear = KC_A1 * sin_elevation + KC_A2
    ok = sin_elevation >= KC_MIN_SIN_ELEVATION
    frac = np.clip((1.0 - global_radiation / np.maximum(k_clear, 1.0)) / KC_B1, 0.0, 1.0)
    return where(ok, frac ** (1.0 / KC_B2), np.nan)


def theta_star_night(cloud_cover):
    """Night-time temperature scale theta* [K].

    Parameters
    ----------
    cloud_cover : array_like
        [1]

    Returns
    -------
    theta_star : array_like
        [K]

    Notes
    -----
    .. math:: \\theta_* = \\theta_{*1}(1 - 0.5 N^2),\\quad \\theta_{*1} = 0.09\\ \\mathrm{K}

    References
    ----------
    van Ulden, A. P. and Holtslag, A. A. M. (1985), J. Clim. Appl. Meteorol. 24,
    1196-1207 (from memory).
    """
    return THETA_STAR_CLEAR * (1.0 - THETA_STAR_CLOUD_FACTOR * cloud_cover ** 2)


def inverse_obukhov(ustar, heat_flux, temperature, air_density):
    """Inverse Obukhov length 1/L [m-1].

    Parameters
    ----------
    ustar : array_like
        [m s-1]
    heat_flux : array_like
        Sensible heat flux H, positive upward. [W m-2]
    temperature : array_like
        [K]
    air_density : array_like
        [kg m-3]

    Returns
    -------
    inv_l : array_like
        [m-1]; negative in unstable air, 0 when neutral.

    Notes
    -----
    .. math:: \\frac{1}{L} = -\\frac{\\kappa g H}{\\rho c_p T u_*^3}

    References
    ----------
    Obukhov (1946); Stull (1988), Eq. (5.7c).
    """
    return -VON_KARMAN * GRAVITY * heat_flux / (air_density * CP_DRY_AIR * temperature * ustar ** 3)


def ustar_unstable(wind_speed, z, z0, heat_flux, temperature, air_density, iterations=30):
    """Friction velocity in unstable air from wind and heat flux [m s-1].

    Parameters
    ----------
    wind_speed : array_like
        At height z above d. [m s-1]
    z : array_like
        Height above the displacement height. [m]
    z0 : array_like
        [m]
    heat_flux : array_like
        H > 0. [W m-2]
    temperature, air_density : array_like
        [K], [kg m-3]
    iterations : int
        Bisection steps on ln u* (30 steps give a relative precision of 3e-9).

    Returns
    -------
    ustar : array_like
        [m s-1]
    at_bracket : array_like of bool
        True where no root lay inside the bracket (u* set to its edge).

    Notes
    -----
    Solves :math:`u_*\\,[\\ln(z/z_0) - \\psi_m(z/L) + \\psi_m(z_0/L)] = \\kappa u` with
    L from :func:`inverse_obukhov`.  The left side increases with u*, and the root
    lies in :math:`[u_{*N}, 30 u_{*N}]` where :math:`u_{*N}` is the neutral value.
    """
    u_n = np.maximum(VON_KARMAN * wind_speed / np.log(z / z0), SOLVE_USTAR_MIN)
    lo = np.log(u_n)
    hi = lo + np.log(UNSTABLE_BRACKET_FACTOR)

    # the parts of inverse_obukhov and wind_profile_factor that do not change with u*,
    # once (the same operations in the same order: the same values)
    log_z_z0 = np.log(z / z0)
    flux_term = -VON_KARMAN * GRAVITY * heat_flux
    air_term = air_density * CP_DRY_AIR * temperature
    target = VON_KARMAN * wind_speed

    def excess(log_u):
        u = np.exp(log_u)
        inv_l = flux_term / (air_term * u ** 3)  # inverse_obukhov
        return u * wind_profile_factor(z, z0, inv_l, log_z_z0) - target

    at_top = excess(hi) < 0.0
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        pos = excess(mid) > 0.0
        hi = where(pos, mid, hi)
        lo = where(pos, lo, mid)
    return np.exp(0.5 * (lo + hi)), at_top


def ustar_stable(wind_speed, z, z0, theta_star, temperature):
    """Friction velocity in stable air from wind and theta*, closed form [m s-1].

    Parameters
    ----------
    wind_speed : array_like
        At height z above d. [m s-1]
    z : array_like
        Height above the displacement height. [m]
    z0 : array_like
        [m]
    theta_star : array_like
        Temperature scale, > 0. [K]
    temperature : array_like
        [K]

    Returns
    -------
    ustar : array_like
        [m s-1]
    theta_star_used : array_like
        theta*, reduced where no real root exists. [K]
    limited : array_like of bool
        True where theta* was reduced.

    Notes
    -----
    The log-linear profile :math:`u = (u_*/\\kappa)[\\ln(z/z_0) + \\beta z/L]` with
    :math:`L = T u_*^2/(\\kappa g \\theta_*)` gives

    .. math:: u_* = \\frac{C_D u}{2}\\left[1 + \\sqrt{1 - \\frac{4 \\beta z g \\theta_*}
              {C_D T u^2}}\\right],\\quad C_D = \\frac{\\kappa}{\\ln(z/z_0)}

    where the root is complex, theta* is set to :math:`C_D T u^2/(4\\beta z g)`.

    References
    ----------
    Venkatram, A. (1980), Boundary-Layer Meteorol. 19, 481-485; beta = 5 from Dyer
    (1974). The reduction of theta* is our rule (the existence condition of the root).
    """
    c_d = VON_KARMAN / np.log(z / z0)
    theta_max = c_d * temperature * wind_speed ** 2 / (4.0 * BUSINGER_DYER_BETA * z * GRAVITY)
    limited = theta_star > theta_max
    theta = where(limited, theta_max, theta_star)
    disc = np.maximum(1.0 - theta / np.maximum(theta_max, np.finfo(float).tiny), 0.0)
    return 0.5 * c_d * wind_speed * (1.0 + np.sqrt(disc)), theta, limited
