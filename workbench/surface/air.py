"""Properties of air and water vapour used by the surface layer and dry deposition.

All functions are pure and array-agnostic; temperatures in K, pressures in Pa.
"""
from __future__ import annotations

import numpy as np

from ..constants import (GAS_CONSTANT, MAGNUS_A, MAGNUS_B, MAGNUS_C, MOLAR_MASS_DRY_AIR,
                         MOLAR_MASS_WATER, STANDARD_PRESSURE, SUTHERLAND_MU_REF, SUTHERLAND_S,
                         SUTHERLAND_T_REF, ZERO_CELSIUS, GRAVITY)
from ..units import molar_density_air

#: Temperature lapse rate of the standard troposphere [K m-1] and its sea-level
#: temperature [K]; ISO 2533 / ICAO standard atmosphere.
STANDARD_LAPSE_RATE = 0.0065
STANDARD_SEA_LEVEL_TEMPERATURE = 288.15
#: Constants of the psychrometric constant of FAO-56, Eq. 8 (Allen, R. G., Pereira,
#: L. S., Raes, D. and Smith, M. 1998, FAO Irrigation and Drainage Paper 56, Eq. 8 and
#: Annex 3): specific heat of moist air c_p [J kg-1 K-1] (1.013e-3 MJ kg-1 degC-1),
#: ratio of the molar masses of water vapour and dry air epsilon [-] and latent heat
#: of vaporization lambda at 20 degC [J kg-1] (2.45 MJ kg-1).
FAO56_CP_MOIST_AIR = 1013.0
FAO56_EPSILON = 0.622
FAO56_LATENT_HEAT = 2.45e6


def air_density(temperature, pressure):
    """Density of (dry) air from the ideal-gas law [kg m-3].

    Parameters
    ----------
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]

    Returns
    -------
    rho : array_like
        [kg m-3]

    Notes
    -----
    .. math:: \\rho = p M_d / (R T)

    >>> round(float(air_density(288.15, 101325.0)), 3)
    1.225
    """
    return molar_density_air(temperature, pressure) * MOLAR_MASS_DRY_AIR


def dynamic_viscosity(temperature):
    """Dynamic viscosity of air by Sutherland's law [Pa s].

    Parameters
    ----------
    temperature : array_like
        [K]

    Returns
    -------
    mu : array_like
        [Pa s]

    Notes
    -----
    .. math:: \\mu = \\mu_0 (T/T_0)^{3/2} (T_0 + S)/(T + S)

    References
    ----------
    White, F. M. (2006), Viscous Fluid Flow, 3rd ed., McGraw-Hill, Eq. (1-36) and
    Table 1-2 (mu_0 = 1.716e-5 Pa s, T_0 = 273.15 K, S = 110.4 K; from memory).
    """
    t = temperature / SUTHERLAND_T_REF
    return SUTHERLAND_MU_REF * t ** 1.5 * (SUTHERLAND_T_REF + SUTHERLAND_S) / (
        temperature + SUTHERLAND_S)


def kinematic_viscosity(temperature, pressure, viscosity=None):
    """Kinematic viscosity of air nu = mu / rho [m2 s-1].

    Parameters
    ----------
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]
    viscosity : array_like, optional
        Dynamic viscosity mu of air when the caller has it already [Pa s];
        default :func:`dynamic_viscosity` of `temperature`.

    Returns
    -------
    nu : array_like
        [m2 s-1]
    """
    mu = dynamic_viscosity(temperature) if viscosity is None else viscosity
    return mu / air_density(temperature, pressure)


def mean_free_path(temperature, pressure, viscosity=None):
    """Mean free path of air molecules [m].

    Parameters
    ----------
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]
    viscosity : array_like, optional
        Dynamic viscosity mu of air when the caller has it already [Pa s];
        default :func:`dynamic_viscosity` of `temperature`.

    Returns
    -------
    lambda : array_like
        [m]

    Notes
    -----
    .. math:: \\lambda = \\frac{2\\mu}{p\\,(8 M_d/(\\pi R T))^{1/2}}

    References
    ----------
    Seinfeld, J. H. and Pandis, S. N. (2006), Atmospheric Chemistry and Physics,
    2nd ed., Wiley, Eq. (9.6) (0.0651 um at 298 K and 1 atm with their mu).
    """
    mu = dynamic_viscosity(temperature) if viscosity is None else viscosity
    return 2.0 * mu / (pressure * np.sqrt(8.0 * MOLAR_MASS_DRY_AIR /
                                          (np.pi * GAS_CONSTANT * temperature)))


def saturation_vapour_pressure(temperature):
    """Saturation vapour pressure over liquid water, Magnus form [Pa].

    Parameters
    ----------
    temperature : array_like
        [K]

    Returns
    -------
    e_s : array_like
        [Pa]

    Notes
    -----
    .. math:: e_s = A \\exp\\left(\\frac{B t}{t + C}\\right),\\ t = T - 273.15

    References
    ----------
    Alduchov, O. A. and Eskridge, R. E. (1996), J. Appl. Meteorol. 35, 601-609, Eq. (21).
    """
    t = temperature - ZERO_CELSIUS
    return MAGNUS_A * np.exp(MAGNUS_B * t / (t + MAGNUS_C))


def saturation_slope(temperature):
    """Slope of the saturation vapour pressure curve de_s/dT [Pa K-1].

    Parameters
    ----------
    temperature : array_like
        [K]

    Returns
    -------
    s : array_like
        [Pa K-1], the derivative of :func:`saturation_vapour_pressure`.
    """
    t = temperature - ZERO_CELSIUS
    return saturation_vapour_pressure(temperature) * MAGNUS_B * MAGNUS_C / (t + MAGNUS_C) ** 2


def psychrometric_constant(pressure):
    """Psychrometric constant gamma = c_p p / (epsilon lambda) of FAO-56 [Pa K-1].

    Parameters
    ----------
    pressure : array_like
        [Pa]

    Returns
    -------
    gamma : array_like
        [Pa K-1] (0.6648e-3 p: 67.35 Pa/K at 101.325 kPa).

    Notes
    -----
    .. math:: \\gamma = \\frac{c_p\\,p}{\\varepsilon\\,\\lambda}

    with FAO-56's c_p of moist air, epsilon = 0.622 and lambda at 20 degC
    (:data:`FAO56_CP_MOIST_AIR`, :data:`FAO56_EPSILON`, :data:`FAO56_LATENT_HEAT`).
    Until 2026-12 the dry-air c_p (1004.67) and the latent heat at 0 degC (2.501e6)
    were used, 2.9 % below the cited equation (found against ``refet``'s FAO-56 value,
    tests/surface/test_air_reference_libs.py).

    References
    ----------
    Allen, R. G., Pereira, L. S., Raes, D. and Smith, M. (1998), FAO Irrigation and
    Drainage Paper 56, Eq. (8).

    >>> round(float(psychrometric_constant(101325.0)), 2)
    67.35
    """
    return FAO56_CP_MOIST_AIR * pressure / (FAO56_EPSILON * FAO56_LATENT_HEAT)


def specific_humidity_deficit(temperature, relative_humidity, pressure):
    """Saturation deficit in specific humidity q_s - q [kg kg-1].

    Parameters
    ----------
    temperature : array_like
        [K]
    relative_humidity : array_like
        Fraction 0-1. [1]
    pressure : array_like
        [Pa]

    Returns
    -------
    dq : array_like
        [kg kg-1]

    Notes
    -----
    :math:`q \\approx \\varepsilon e / p` with :math:`e = RH\\,e_s`.
    """
    eps = MOLAR_MASS_WATER / MOLAR_MASS_DRY_AIR
    return eps * saturation_vapour_pressure(temperature) * (1.0 - relative_humidity) / pressure


def standard_pressure_at(elevation):
    """Pressure of the ISO standard atmosphere at an elevation [Pa].

    Parameters
    ----------
    elevation : array_like
        Height above sea level. [m]

    Returns
    -------
    p : array_like
        [Pa]

    Notes
    -----
    .. math:: p = p_0 (1 - \\Gamma z / T_0)^{g M_d / (R \\Gamma)}

    References
    ----------
    ISO 2533:1975, Standard Atmosphere (troposphere, Gamma = 6.5 K/km, T_0 = 288.15 K).

    >>> round(float(standard_pressure_at(1000.0)))
    89875
    """
    expo = GRAVITY * MOLAR_MASS_DRY_AIR / (GAS_CONSTANT * STANDARD_LAPSE_RATE)
    return STANDARD_PRESSURE * (1.0 - STANDARD_LAPSE_RATE * elevation /
                                STANDARD_SEA_LEVEL_TEMPERATURE) ** expo


def station_pressure(pressure, elevation):
    """Measured station pressure, or the standard atmosphere's where it is missing [Pa].

    Parameters
    ----------
    pressure : array_like
        Measured pressure, NaN where missing. [Pa]
    elevation : array_like
        Height above sea level, broadcastable to `pressure`. [m]

    Returns
    -------
    p : numpy.ndarray
        [Pa]
    estimated : numpy.ndarray of bool
        True where :func:`standard_pressure_at` stands in.
    """
    estimated = np.isnan(pressure)
    return np.where(estimated, standard_pressure_at(elevation), pressure), estimated
