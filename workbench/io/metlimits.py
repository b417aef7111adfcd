"""What a met value may be: the hard ranges, the thresholds of the per-site unit rules,
night and its radiation, the expected station pressure and the units a pressure is
written in, and the missing-value codes typed as values.

Part of :mod:`workbench.io.metchecks` (which re-exports every name here and runs the
checks).  Thresholds are common practice in station QA unless a source is named.
"""
from __future__ import annotations

import numpy as np

from ..constants import ZERO_CELSIUS
from ..surface.air import standard_pressure_at
from ..surface.solar import solar_elevation_sine, time_parts
from .metvars import MET_VARIABLES, convert_met
from .plausible import SENTINELS


#: Hard ranges (internal units) beyond which a value is masked (common practice).
RANGES = {
    "wind_speed": (0.0, 75.0),
    "temperature": (ZERO_CELSIUS - 90.0, ZERO_CELSIUS + 60.0),
    "relative_humidity": (0.0, 1.05),
    "precipitation": (0.0, 250.0),
    "pressure": (40000.0, 110000.0),
    "solar_radiation": (-20.0, 1500.0),
    "cloud_cover": (0.0, 1.0),
    "friction_velocity": (0.0, 5.0),
    "sensible_heat_flux": (-600.0, 1200.0),
    "surface_wet": (0.0, 1.0),
    "snow_cover": (0.0, 1.0),
}
#: Hours above the hard maximum of solar radiation at a site, as a count and as a share
#: of its hours with sunshine, from which the site's whole record is taken as written in
#: another unit [-]; fewer are single bad hours, masked by the hard range (common practice).
RADIATION_SLIP_HOURS, RADIATION_SLIP_SHARE = 3, 0.01
#: Median temperature of a site above which a degC (or degF) header holds kelvin [K]
#: (60 degC read from the header: no station reports that as its median; common practice).
KELVIN_MEDIAN_MIN = ZERO_CELSIUS + 150.0
#: Median temperature of a site above which a degC header holds degF [K]: no station's
#: median is above 40 degC (the hottest annual means are near 35 degC; from memory), and
#: 40 degF is 4.4 degC.  With the hours above the hard maximum (60 degC) at
#: RADIATION_SLIP_HOURS and RADIATION_SLIP_SHARE of the site's hours, this also finds a
#: cold site's degF record by its summer (common practice).
FAHRENHEIT_MEDIAN_MIN = ZERO_CELSIUS + 40.0
#: degC under a degF header: a site below CELSIUS_AS_F_LATITUDE [deg] and
#: CELSIUS_AS_F_ELEVATION [m] whose record (read as degF) spans all twelve calendar months
#: without one hour at or above CELSIUS_AS_F_MAX [K] (41 degF = 5 degC).  From memory: no
#: lowland station equatorward of 50 deg stays below 5 degC for a whole year (the coldest,
#: sub-Antarctic islands near 49 S, pass 10 degC in summer), while a degC record read as
#: degF stays below 41 "degF" unless it reaches 41 degC.  Polar and mountain sites are not
#: judged: a real degF record there may stay below 41 degF all year (common practice to
#: leave them to the user).
CELSIUS_AS_F_LATITUDE, CELSIUS_AS_F_ELEVATION = 50.0, 1000.0
CELSIUS_AS_F_MAX = ZERO_CELSIUS + 5.0
#: Median wind speed of a site above which an m/s header may hold km/h [m s-1]: 10 m/s
#: as the median is found only on exposed summits and polar coasts (from memory); the
#: values are kept, the rows flagged (common practice).
KMH_MEDIAN_MIN = 10.0
#: Hours a site needs before its median is judged [h] (a month; our choice).
MEDIAN_MIN_HOURS = 720


#: What to check where the sun shines at night at many hours of a site (the grid's
#: note words it for a time coordinate: :func:`workbench.grid_output`).
NIGHT_SUN_HINT = ("check utc_offset_h, whether times label the start or the end of the "
                  "hour, and the site's latitude and longitude")


def range_text(name, lo, hi) -> str:
    """The hard range of a variable with its unit, in degC too for temperature [text].

    >>> range_text("relative_humidity", 0.0, 1.05)
    '0..1.05 (fraction)'
    """
    unit = MET_VARIABLES.get(name, ("",))[0].replace("**", "")
    text = f"{lo:g}..{hi:g} " + ("(fraction)" if unit == "1" else unit)
    text = text.rstrip()
    if name == "temperature":
        text += f" ({lo - ZERO_CELSIUS:g}..{hi - ZERO_CELSIUS:g} degC)"
    return text


#: Night is when the sun is this far below the horizon [degree] (allows for refraction
#: and the hour's averaging; common practice).
NIGHT_ELEVATION_DEG = -3.0
#: Irradiance above which a night hour is suspicious [W m-2] (common practice).
NIGHT_RADIATION_MAX = 25.0
#: Share of suspicious night hours at which the time base is questioned [-] (5 %: a
#: shifted clock puts dawn or dusk hours in the night every day, far above the few
#: stray readings of a sound radiometer; our choice).
NIGHT_SHARE_HINT = 0.05


def solar_elevation_deg(time_utc, latitude, longitude):
    """Solar elevation [degree] at UTC times (from :mod:`workbench.surface.solar`).

    Parameters
    ----------
    time_utc : array of datetime64
    latitude, longitude : array_like
        [degree]
    """
    t = np.asarray(time_utc).astype("datetime64[ns]")
    doy, hour = time_parts(t)
    s = solar_elevation_sine(doy, hour, np.asarray(latitude, float), np.asarray(longitude, float))
    return np.rad2deg(np.arcsin(np.clip(s, -1, 1)))


def missing_codes(values, raw_units):
    """Mask the missing-value codes typed as met values.

    A code of :data:`workbench.io.plausible.SENTINELS` (-999, 9999, ...) is recognised
    in the file's own unit (the codes are converted as the column was, so the match is
    exact).  A negative code is always taken as a code: the hard ranges catch all of
    them but -99 to -99.99 W/m2 of sensible heat, which would otherwise enter as data.
    A positive code is taken as a code only outside the variable's hard range, since
    999.9 hPa or 999.9 W/m2 can be real.  Runs before the per-site unit checks, so that
    one code does not make a site's whole record look like another unit.

    Parameters
    ----------
    values : dict of str to ndarray
        Converted values per variable [internal units]; not changed.
    raw_units : dict of str to str
        The unit each variable was written in.

    Returns
    -------
    masked : dict of str to ndarray of bool
        Per variable with a code, the rows holding one.
    reasons : list of ndarray of str
        Per such variable, ``<variable> <code> <unit> looks like a missing-value code
        (masked)`` at those rows, "" elsewhere.

    >>> import numpy as np
    >>> m, r = missing_codes({"sensible_heat_flux": np.array([-99.0, -45.0])},
    ...                      {"sensible_heat_flux": "W/m2"})
    >>> m["sensible_heat_flux"].tolist(), str(r[0][0])
    ([True, False], 'sensible heat flux -99 W/m2 looks like a missing-value code (masked)')
    """
    codes = np.asarray(SENTINELS, float)
    masked, reasons = {}, []
    for name, v in values.items():
        unit = raw_units.get(name)
        if unit is None or name not in MET_VARIABLES:
            continue
        conv = np.asarray(convert_met(codes, str(unit), name, MET_VARIABLES[name][0]), float)
        lo, hi = RANGES.get(name, (-np.inf, np.inf))
        # codes that the hard range lets through: only a negative one counts as a code there
        inside = (conv >= lo) & (conv <= hi)
        check = ~inside | (codes < 0)
        cand = (v < lo) | (v > hi)
        if (inside & check).any():
            cand |= np.isin(v, conv[inside & check])
        if not cand.any():
            continue
        idx = np.flatnonzero(cand)
        which = np.full(len(v), -1)
        for k in np.flatnonzero(check):
            which[idx[v[idx] == conv[k]]] = k
        hit = which >= 0
        if not hit.any():
            continue
        label = name.replace("_", " ")
        text = np.array([f"{label} {c:g} {str(unit).strip()} looks like a missing-value code "
                         "(masked)" for c in codes] + [""], dtype=object)
        masked[name] = hit
        reasons.append(text[np.where(hit, which, len(codes))])
    return masked, reasons


#: Units a station pressure is written in, with their size [Pa] (by definition).
PRESSURE_UNITS = (("Pa", 1.0), ("hPa", 100.0), ("kPa", 1000.0), ("bar", 1e5))


def pressure_slip_reason(median_pa, expected_pa, elevation_m, unit) -> str:
    """The reason of a site's pressure far from its expected station pressure [text]:
    the factor between them and, when it is a power of ten between two pressure
    units, which unit the values look written in; otherwise another variable.

    >>> pressure_slip_reason(962e3, 96.2e3, 420.0, "kPa")[:93]
    'pressure median 9.62e+05 Pa read under the header kPa, 10x the 962 hPa expected at 420 m: hPa'
    """
    ratio = float(median_pa) / float(expected_pa)
    head = (f"pressure median {float(median_pa):.3g} Pa read under the header {unit or '?'}, "
            f"{ratio:.3g}x the {float(expected_pa) / 100:.0f} hPa expected at "
            f"{float(elevation_m):.0f} m")
    k = np.log10(ratio) if ratio > 0 else np.nan
    if np.isfinite(k) and abs(k - np.rint(k)) < 0.05 and np.rint(k) != 0:
        factor = 10.0 ** np.rint(k)
        size = dict(PRESSURE_UNITS).get(unit)
        real = [u for u, f in PRESSURE_UNITS
                if size is not None and np.isclose(size / factor, f)]
        if real:
            return (f"{head}: {real[0]} written under a {unit} header?, expected the "
                    f"station pressure in {unit} (masked)")
        return f"{head}: a unit slip by a factor {factor:g}?, expected the station pressure (masked)"
    return (f"{head}: not a station pressure (a column shifted or swapped?), expected "
            f"the station pressure (masked)")


#: One international foot [m] (exact by definition, international yard and pound
#: agreement of 1959).
FOOT_M = 0.3048
#: Relative distance of a site's median pressure from its expected station pressure
#: within which it fits [-] (1.5 %, about 125 m of height near sea level; our choice,
#: above the spread of a long record's median around the standard atmosphere).
PRESSURE_RTOL = 0.015


def elevation_feet_reason(median_pa, expected_pa, elevation_m) -> str:
    """The reason of a site whose pressure fits its catalogue elevation read in feet
    [text] (flagged, values kept: the pressure is right, the elevation is not).

    >>> elevation_feet_reason(96.2e3, 86.0e3, 1378.0)[:80]
    'pressure median 962 hPa, 1.12x the 860 hPa expected at elevation_m = 1378: it fi'
    """
    m = float(elevation_m) * FOOT_M
    return (f"pressure median {float(median_pa) / 100:.0f} hPa, "
            f"{float(median_pa) / float(expected_pa):.3g}x the {float(expected_pa) / 100:.0f} "
            f"hPa expected at elevation_m = {float(elevation_m):g}: it fits {m:.0f} m, "
            f"the elevation read in feet ({float(elevation_m):g} ft = {m:.0f} m)? check "
            f"elevation_m in sites.toml, expected metres (kept)")


def expected_station_pressure(elevation_m):
    """Station pressure of the ICAO standard atmosphere at an elevation [Pa]
    (:func:`workbench.surface.air.standard_pressure_at`)."""
    return standard_pressure_at(np.asarray(elevation_m, float))


def negative_radiation_notes(met, file_name) -> list:
    """One note per site whose solar radiation holds values below 0 that the hard range
    keeps (down to -20 W/m2): a pyranometer's thermal offset at night (common practice),
    kept as read in the met Dataset and taken as 0 (no light) by the dry deposition
    chain (:mod:`workbench.drydep.micromet`).  Before, that was said nowhere.

    Parameters
    ----------
    met : xarray.Dataset
        Dims (site, time), ``solar_radiation`` [W m-2] after the checks.
    file_name : str

    >>> import xarray as xr
    >>> sr = np.array([[0.0, -1.5, 300.0, -4.0, np.nan], [0.0, 5.0, 200.0, 0.0, 0.0]])
    >>> met = xr.Dataset({"solar_radiation": (("site", "time"), sr)},
    ...                  coords={"site": ["alpha", "beta"]})
    >>> negative_radiation_notes(met, "met.csv")
    ["met.csv: solar_radiation at site 'alpha' below 0 in 2 h (down to -4 W/m2; a radiometer's offset at night?): kept as read, taken as 0 (no light) by the dry deposition chain"]
    """
    if "solar_radiation" not in met:
        return []
    sr = met["solar_radiation"]
    below = (sr < 0).sum("time").values
    if not below.any():
        return []
    low = sr.min("time").values
    return [f"{file_name}: solar_radiation at site {str(s)!r} below 0 in {int(k)} h (down "
            f"to {float(v):.3g} W/m2; a radiometer's offset at night?): kept as read, "
            "taken as 0 (no light) by the dry deposition chain"
            for s, k, v in zip(met["site"].values, below, low) if k]
