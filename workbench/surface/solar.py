"""Solar geometry: declination, equation of time and solar elevation.

Fourier series of Spencer (1971) in the form of Iqbal (1983).  The met time stamp
is the END of each hour; callers pass the middle of the hour.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

#: Spencer (1971) Fourier coefficients of the declination [rad]: constant, then
#: (cos k G, sin k G) for k = 1, 2, 3; Iqbal (1983), Eq. (1.3.1).
DECLINATION_COEFFS = (0.006918, (-0.399912, 0.070257), (-0.006758, 0.000907),
                      (-0.002697, 0.00148))
#: Spencer (1971) equation-of-time coefficients [rad of the day's angle]: constant,
#: then (cos k G, sin k G) for k = 1, 2; Iqbal (1983), Eq. (1.4.1).
EQUATION_OF_TIME_COEFFS = (0.000075, (0.001868, -0.032077), (-0.014615, -0.04089))
#: Minutes of time per radian of the equation of time series (1440 / 2 pi) [min].
MINUTES_PER_RADIAN = 1440.0 / (2.0 * np.pi)
#: Length of the year used in the day angle [d] (Spencer 1971).
DAYS_PER_YEAR = 365.0
#: Degrees of hour angle per hour [degree h-1].
DEGREES_PER_HOUR = 15.0
#: Hours per day and minutes per hour.
HOURS_PER_DAY = 24.0
MINUTES_PER_HOUR = 60.0
SOLAR_NOON_HOUR = 12.0
#: Nanoseconds per hour.
NS_PER_HOUR = 3_600_000_000_000


def day_angle(day_of_year, utc_hour=SOLAR_NOON_HOUR):
    """Day angle G = 2 pi (n - 1 + (h - 12)/24) / 365 [rad]; Iqbal (1983), Eq. (1.2.2)."""
    return 2.0 * np.pi * (day_of_year - 1.0 + (utc_hour - SOLAR_NOON_HOUR) / HOURS_PER_DAY) / DAYS_PER_YEAR


def _series(coeffs, g, trig=None):
    """Fourier series c0 + sum_k (a_k cos k G + b_k sin k G) [units of the coefficients].

    Parameters
    ----------
    coeffs : tuple
        c0, then (a_k, b_k) for k = 1, 2, ...
    g : array_like
        Day angle. [rad]
    trig : dict, optional
        k -> (cos k G, sin k G), filled and reused (two series of the same G).
    """
    trig = {} if trig is None else trig
    out = coeffs[0] + 0.0 * g
    for k, (a, b) in enumerate(coeffs[1:], start=1):
        if k not in trig:
            trig[k] = (np.cos(k * g), np.sin(k * g))
        cos_k, sin_k = trig[k]
        out = out + a * cos_k + b * sin_k
    return out


def declination(day_of_year, utc_hour=SOLAR_NOON_HOUR):
    """Solar declination [rad].

    Parameters
    ----------
    day_of_year : array_like
        1 on January 1. [d]
    utc_hour : array_like
        Hour of the day, UTC. [h]

    Returns
    -------
    delta : array_like
        [rad]

    References
    ----------
    Spencer, J. W. (1971), Search 2(5), 172; Iqbal, M. (1983), An Introduction to
    Solar Radiation, Academic Press, Eq. (1.3.1).
    """
    return _series(DECLINATION_COEFFS, day_angle(day_of_year, utc_hour))


def equation_of_time(day_of_year, utc_hour=SOLAR_NOON_HOUR):
    """Equation of time, apparent minus mean solar time [min].

    Parameters
    ----------
    day_of_year : array_like
        [d]
    utc_hour : array_like
        [h]

    Returns
    -------
    e_t : array_like
        [min]

    References
    ----------
    Spencer (1971); Iqbal (1983), Eq. (1.4.1).
    """
    return _series(EQUATION_OF_TIME_COEFFS, day_angle(day_of_year, utc_hour)) * MINUTES_PER_RADIAN


def solar_elevation_sine(day_of_year, utc_hour, latitude, longitude):
    """Sine of the solar elevation angle [-].

    Parameters
    ----------
    day_of_year : array_like
        [d]
    utc_hour : array_like
        [h]
    latitude : array_like
        [degree north]
    longitude : array_like
        [degree east]

    Returns
    -------
    sin_elevation : array_like
        [-]; negative below the horizon.

    Notes
    -----
    .. math:: \\sin\\alpha = \\sin\\varphi\\sin\\delta + \\cos\\varphi\\cos\\delta\\cos\\omega,
              \\quad \\omega = 15^\\circ (t_{solar} - 12)

    with the apparent solar time :math:`t_{solar} = t_{UTC} + \\lambda/15 + E_t/60`.

    References
    ----------
    Iqbal (1983), Eqs. (1.5.1) and (1.4.2).
    """
    # declination and equation_of_time, with the day angle and its cos/sin once
    g = day_angle(day_of_year, utc_hour)
    trig = {}
    delta = _series(DECLINATION_COEFFS, g, trig)
    e_t = _series(EQUATION_OF_TIME_COEFFS, g, trig) * MINUTES_PER_RADIAN
    solar_time = utc_hour + longitude / DEGREES_PER_HOUR + e_t / MINUTES_PER_HOUR
    omega = np.deg2rad(DEGREES_PER_HOUR * (solar_time - SOLAR_NOON_HOUR))
    phi = np.deg2rad(latitude)
    return np.sin(phi) * np.sin(delta) + np.cos(phi) * np.cos(delta) * np.cos(omega)


def time_parts(time):
    """Day of year [d] and UTC hour [h] of datetime64 values.

    Parameters
    ----------
    time : datetime64 array or DataArray
        UTC, naive.

    Returns
    -------
    day_of_year, utc_hour : same type as `time` (DataArray or ndarray of float)
    """
    if isinstance(time, xr.DataArray):
        doy = time.dt.dayofyear.astype(float)
        hour = (time - time.dt.floor("D")) / np.timedelta64(1, "h")
        return doy, hour.astype(float)
    t = np.asarray(time, dtype="datetime64[ns]")
    if np.isnat(t).any():  # pandas gives NaN there
        idx = pd.DatetimeIndex(np.ravel(t))
        shape = np.shape(time)
        doy = np.asarray(idx.day_of_year, dtype=float).reshape(shape)
        hour = np.asarray((idx - idx.floor("D")) / pd.Timedelta(hours=1),
                          dtype=float).reshape(shape)
        return doy, hour
    day = t.astype("datetime64[D]")
    doy = (day - t.astype("datetime64[Y]")).astype(np.int64).astype(float) + 1.0
    hour = (t - day).astype(np.int64) / float(NS_PER_HOUR)
    return doy, hour
