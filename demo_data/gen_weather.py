"""Hourly weather generator for the invented demo network (used by ``make_demo.py``).

Everything is vectorized over (site, hour): AR(1) processes come from
:func:`scipy.signal.lfilter`, the wet/dry chain from geometric spell lengths drawn at
once.  The generator is a plausible-looking toy, not a climate model; each physical
relation it uses is named with its source below.

Sources
-------
* Solar declination and equation of time: Spencer, J. W. (1971), Fourier series
  representation of the position of the sun, Search 2(5), 172 (coefficients from
  memory).
* Clear-sky global irradiance: Haurwitz, B. (1945), Insolation in relation to
  cloudiness and cloud density, J. Meteorol. 2, 154-166:
  G = 1098 cos Z exp(-0.057 / cos Z) [W m-2] (from memory).
* Cloud attenuation: Kasten, F. and Czeplak, G. (1980), Solar and terrestrial
  radiation dependent on the amount and type of cloud, Solar Energy 24, 177-189:
  G = G_clear (1 - 0.75 N^3.4) (from memory).
* Saturation vapour pressure: Magnus form of Alduchov, O. A. and Eskridge, R. E.
  (1996), J. Appl. Meteorol. 35, 601-609, Eq. 21: e_s = 6.1094 exp(17.625 T/(T+243.04)).
* Station pressure: hypsometric (barometric) equation p = p0 exp(-g M z / (R T_m))
  with the constants of ``workbench/constants.py``.
* A two-state (wet/dry) Markov chain has geometric spell lengths; common practice in
  weather generators (e.g. Richardson 1981, Water Resour. Res. 17, 182-190).
"""
from __future__ import annotations

import numpy as np
from scipy.signal import lfilter
from scipy.special import gamma as gamma_fn, ndtr

from workbench.constants import GAS_CONSTANT, GRAVITY, MOLAR_MASS_DRY_AIR, ZERO_CELSIUS

#: Haurwitz (1945) clear-sky coefficients [W m-2], [-].
HAURWITZ_A, HAURWITZ_B = 1098.0, 0.057
#: Kasten and Czeplak (1980) cloud attenuation coefficients [-].
KC_A, KC_B = 0.75, 3.4
#: Magnus coefficients of Alduchov and Eskridge (1996) [hPa], [-], [degC].
MAGNUS_E0, MAGNUS_A, MAGNUS_B = 6.1094, 17.625, 243.04
#: Standard atmosphere lapse rate [K m-1] (ISA, ICAO 1993).
LAPSE_RATE = 0.0065
#: Sea-level mean pressure of the invented region [hPa] (common practice, ~1013).
MSLP_MEAN = 1012.5
#: Tipping-bucket resolution of the hourly gauges [mm] (common practice).
TIP_MM = 0.2
#: von Karman constant used for the invented friction velocity [-].
KARMAN = 0.41
#: Roughness length of the grass clearing under the ridge mast [m] (common practice).
Z0_CLEARING = 0.03

#: Air temperature below which an hour's precipitation is counted as snow [degC]
#: (common practice: rain/snow threshold near 0-1 degC).
SNOW_T = 0.5

DAYS_PER_YEAR = 365.25
HOURS_PER_DAY = 24.0


def ar1(rng, shape, tau, sigma=1.0):
    """Stationary AR(1) series along the last axis with e-folding time `tau` [steps]."""
    phi = np.exp(-1.0 / tau)
    e = rng.standard_normal(shape)
    u = sigma * np.sqrt(1.0 - phi ** 2) * e
    u[..., 0] = sigma * e[..., 0]
    return lfilter([1.0], [1.0, -phi], u, axis=-1)


def smooth(x, tau):
    """Two-sided exponential smoothing along the last axis (forward then backward)."""
    phi = np.exp(-1.0 / tau)
    y = lfilter([1.0 - phi], [1.0, -phi], x, axis=-1)
    return lfilter([1.0 - phi], [1.0, -phi], y[..., ::-1], axis=-1)[..., ::-1]


def seasonal(doy, peak_doy, amplitude):
    """1 + amplitude * cos(2 pi (doy - peak) / 365.25)."""
    return 1.0 + amplitude * np.cos(2 * np.pi * (doy - peak_doy) / DAYS_PER_YEAR)


def solar_cos_zenith(t_utc_mid, latitude, longitude):
    """Cosine of the solar zenith angle at UTC times `t_utc_mid` (datetime64) [-].

    Declination and equation of time from Spencer (1971); hour angle from the true
    solar time = UTC + longitude / 15 deg + equation of time.
    """
    t = t_utc_mid.astype("datetime64[s]")
    year_start = t.astype("datetime64[Y]").astype("datetime64[s]")
    doy0 = (t - year_start).astype(np.float64) / 86400.0          # days since Jan 1, 00 UTC
    hours = (t - t.astype("datetime64[D]").astype("datetime64[s]")).astype(np.float64) / 3600.0
    g = 2 * np.pi * doy0 / 365.0                                   # fractional year [rad]
    decl = (0.006918 - 0.399912 * np.cos(g) + 0.070257 * np.sin(g) - 0.006758 * np.cos(2 * g)
            + 0.000907 * np.sin(2 * g) - 0.002697 * np.cos(3 * g) + 0.00148 * np.sin(3 * g))
    eot_min = 229.18 * (0.000075 + 0.001868 * np.cos(g) - 0.032077 * np.sin(g)
                        - 0.014615 * np.cos(2 * g) - 0.040849 * np.sin(2 * g))
    lat = np.deg2rad(np.asarray(latitude, dtype=float))[..., None]
    lon = np.asarray(longitude, dtype=float)[..., None]
    solar_time = hours + lon / 15.0 + eot_min / 60.0
    h = np.deg2rad(15.0 * (solar_time - 12.0))
    return np.sin(lat) * np.sin(decl) + np.cos(lat) * np.cos(decl) * np.cos(h)


def magnus(t_c):
    """Saturation vapour pressure over water [hPa] at `t_c` [degC] (Alduchov & Eskridge 1996)."""
    return MAGNUS_E0 * np.exp(MAGNUS_A * t_c / (t_c + MAGNUS_B))


def wet_dry_chain(rng, n, doy, mean_dry, mean_wet, season_amp, peak_doy):
    """Regional wet (True) / dry hours from a two-state Markov chain [bool, (n,)].

    Spell lengths are geometric with seasonally varying means: the means at each
    spell's start are taken from a first pass with the annual means (the season
    changes slowly compared with a spell, so one correction pass suffices).
    """
    npair = int(n / (mean_dry + mean_wet) * 2) + 50
    u = rng.random((2, npair))
    means = np.array([[mean_dry], [mean_wet]])

    def lengths(m):
        p = 1.0 / np.maximum(m, 1.0 + 1e-9)
        return np.maximum(1, np.ceil(np.log(u) / np.log1p(-p))).astype(np.int64)

    first = lengths(means).T.ravel()                       # dry, wet, dry, wet, ...
    starts = np.concatenate([[0], np.cumsum(first)[:-1]])
    s = seasonal(doy[np.minimum(starts, n - 1)], peak_doy, season_amp).reshape(npair, 2).T
    m = np.vstack([mean_dry / s[0], mean_wet * np.sqrt(s[1])])
    second = lengths(m).T.ravel()
    state = np.tile([False, True], npair)
    wet = np.repeat(state, second)[:n]
    spell_id = np.repeat(np.arange(second.size), second)[:n]
    return wet, spell_id


def hourly_weather(rng, sites, times_local, force_dry=None):
    """Hourly weather for every site.

    Parameters
    ----------
    rng : numpy.random.Generator
    sites : list of dict
        Site configurations (``latitude``, ``longitude``, ``elevation_m``,
        ``utc_offset_h`` and the ``climate`` sub-dict of make_demo.py).
    times_local : numpy.ndarray of datetime64[m]
        Hour-ending local timestamps, shape (n,).
    force_dry : numpy.ndarray of bool, (nsite, n), optional
        Hours forced dry at a site (planted dry weeks); where every site is forced
        dry the regional chain is dry too, so that cloud and pressure follow.

    Returns
    -------
    dict of numpy.ndarray, each (nsite, n)
        ``wind_speed`` [m s-1], ``temperature`` [degC], ``relative_humidity`` [%],
        ``solar_radiation`` [W m-2], ``precipitation`` [mm] (tipping-bucket hourly),
        ``precipitation_true`` [mm] (unquantized), ``pressure`` [hPa],
        ``cloud_cover`` [1], ``friction_velocity`` [m s-1] (NaN except where asked).
    """
    ns, n = len(sites), times_local.size
    clim = [s["climate"] for s in sites]
    col = lambda key: np.array([c[key] for c in clim], dtype=float)[:, None]  # noqa: E731
    offset = np.array([s["utc_offset_h"] for s in sites], dtype=float)
    elev = np.array([s["elevation_m"] for s in sites], dtype=float)[:, None]

    mid_local = times_local - np.timedelta64(30, "m")
    doy = (mid_local - mid_local.astype("datetime64[Y]")).astype("timedelta64[m]").astype(float) / 1440.0
    hour_local = (mid_local - mid_local.astype("datetime64[D]")).astype("timedelta64[m]").astype(float) / 60.0
    # UTC midpoints per site (naive local = UTC + offset)
    mid_utc = mid_local[None, :] - (offset * 60).astype("timedelta64[m]")[:, None]

    # --- wet/dry chain (regional) and precipitation amounts ------------------------
    wet_reg, spell = wet_dry_chain(rng, n, doy, mean_dry=26.0, mean_wet=5.0,
                                   season_amp=0.30, peak_doy=340.0)
    if force_dry is None:
        force_dry = np.zeros((ns, n), dtype=bool)
    wet_reg = wet_reg & ~force_dry.all(axis=0)
    u_site = rng.random((ns, n))
    wet = (wet_reg[None, :] & (u_site < col("wet_share"))) | (
        ~wet_reg[None, :] & (u_site < col("shower_share")))
    wet &= ~force_dry
    spell_intensity = np.exp(0.55 * rng.standard_normal(spell.max() + 1))[spell]
    summer_burst = seasonal(doy, 200.0, 0.35)             # heavier hourly rates in summer
    amount = rng.gamma(0.8, 1.0, (ns, n)) * spell_intensity * summer_burst * wet
    years = n / (DAYS_PER_YEAR * HOURS_PER_DAY)
    amount *= col("annual_precip_mm") * years / amount.sum(axis=1, keepdims=True)
    tips = np.floor(np.cumsum(amount, axis=1) / TIP_MM + 1e-9)
    precip = np.diff(tips, axis=1, prepend=0.0) * TIP_MM

    wet_f = wet.astype(float)
    wet_smooth = smooth(wet_reg.astype(float), 6.0)
    wet_synoptic = smooth(wet_reg.astype(float), 36.0)

    # --- cloud cover (oktas / 8) ---------------------------------------------------
    z_cloud = ar1(rng, (n,), 8.0) * 0.8 + 0.4 * ar1(rng, (ns, n), 4.0) + 3.0 * wet_smooth
    cloud = 1.0 / (1.0 + np.exp(-(1.6 * z_cloud + col("cloud_bias"))))
    cloud = np.where(wet, np.maximum(cloud, 0.875), cloud)
    cloud = np.round(cloud * 8.0) / 8.0

    # --- temperature [degC] ----------------------------------------------------------
    t_mean = col("sea_level_t_mean") - LAPSE_RATE * elev
    season_t = col("t_amplitude") * np.cos(2 * np.pi * (doy - 200.0) / DAYS_PER_YEAR)
    synoptic_t = ar1(rng, (n,), 60.0, 2.8) + ar1(rng, (ns, n), 12.0, 0.6)
    t_slow = t_mean + season_t + synoptic_t - 0.8 * smooth(wet_f, 3.0)
    sun_season = seasonal(doy, 172.0, 0.45)
    diurnal_amp = col("diurnal_t") * sun_season * (1.0 - 0.65 * smooth(cloud, 4.0))
    temperature = t_slow + diurnal_amp * np.cos(2 * np.pi * (hour_local - 14.5) / HOURS_PER_DAY)

    # --- humidity from a dew-point depression on the slow temperature ------------------
    depression = np.exp(np.log(col("dew_depression"))
                        + 0.35 * np.cos(2 * np.pi * (doy - 190.0) / DAYS_PER_YEAR)
                        + 0.45 * ar1(rng, (ns, n), 24.0))
    depression *= 1.0 - 0.75 * smooth(wet_f, 3.0)
    dew = t_slow - depression
    rh = np.clip(100.0 * magnus(dew) / magnus(temperature), 18.0, 100.0)

    # --- solar radiation [W m-2] --------------------------------------------------------
    lat = np.array([s["latitude"] for s in sites])
    lon = np.array([s["longitude"] for s in sites])
    mu = solar_cos_zenith(mid_utc, lat, lon)
    mu_pos = np.clip(mu, 1e-6, None)
    clear = np.where(mu > 0, HAURWITZ_A * mu_pos * np.exp(-HAURWITZ_B / mu_pos), 0.0)
    solar = clear * (1.0 - KC_A * cloud ** KC_B) * np.exp(0.06 * rng.standard_normal((ns, n)))

    # --- pressure [hPa] ------------------------------------------------------------------
    p_anom = ar1(rng, (n,), 72.0, 8.5) - 9.0 * (wet_synoptic - wet_synoptic.mean())
    p_sl = MSLP_MEAN + p_anom + ar1(rng, (ns, n), 6.0, 0.3)
    t_layer = temperature + ZERO_CELSIUS + LAPSE_RATE * elev / 2.0
    pressure = p_sl * np.exp(-GRAVITY * MOLAR_MASS_DRY_AIR * elev / (GAS_CONSTANT * t_layer))

    # --- wind speed [m s-1], Weibull marginal ------------------------------------------------
    z_w = (0.75 * ar1(rng, (n,), 10.0) + 0.45 * ar1(rng, (ns, n), 4.0)
           - 0.45 * p_anom[None, :] / 8.5)
    z_w /= np.sqrt(0.75 ** 2 + 0.45 ** 2 + 0.45 ** 2)
    k = col("weibull_k")
    scale = col("wind_mean") / gamma_fn(1.0 + 1.0 / k)
    diurnal_w = np.cos(2 * np.pi * (hour_local - 14.0) / HOURS_PER_DAY)
    factor = seasonal(doy, 15.0, 0.15) * (1.0 + col("wind_diurnal") * diurnal_w)
    wind = scale * factor * (-np.log1p(-np.clip(ndtr(z_w), 0.0, 1.0 - 1e-12))) ** (1.0 / k)

    # --- friction velocity where a sonic anemometer is invented -------------------------------
    ustar = np.full((ns, n), np.nan)
    sonic = np.array([bool(c.get("sonic", False)) for c in clim])
    if sonic.any():
        neutral = KARMAN * wind / np.log(col("wind_height") / Z0_CLEARING)
        stab = 1.0 + 0.3 * np.clip(solar, 0, None) / 500.0 - 0.25 * (mu <= 0) * (1.0 - cloud)
        ust = neutral * stab * np.exp(0.12 * rng.standard_normal((ns, n)))
        ustar[sonic] = ust[sonic]

    return {
        "wind_speed": wind, "temperature": temperature, "relative_humidity": rh,
        "solar_radiation": solar, "precipitation": precip, "precipitation_true": amount,
        "pressure": pressure, "cloud_cover": cloud, "friction_velocity": ustar,
        "snow": temperature < SNOW_T,
    }
