"""Plausibility checks of hourly meteorology.

Nothing here refuses a file.  A value that cannot be right (a unit slip, a cumulative
series) is set to NaN and its row flagged with a hint; a value that is doubtful but
usable (pressure reduced to sea level, radiation at night) is kept and flagged.
Thresholds are common practice in station QA unless a source is named.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import STANDARD_PRESSURE, ZERO_CELSIUS
from ..surface.air import standard_pressure_at
from ..surface.solar import solar_elevation_sine, time_parts
from ..units import written_in
from .common import join_reasons
from .metcolumns import column_checks
from .metvars import MET_VARIABLES, convert_met

#: The variables every met row needs: an empty cell of one flags its row.
REQUIRED_NAMES = tuple(k for k, (_, req, _) in MET_VARIABLES.items() if req)
from .metdegf import fahrenheit_days, fahrenheit_edges
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


def expected_station_pressure(elevation_m):
    """Station pressure of the ICAO standard atmosphere at an elevation [Pa]
    (:func:`workbench.surface.air.standard_pressure_at`)."""
    return standard_pressure_at(np.asarray(elevation_m, float))


def _celsius_as_f(temp, med, frame, t, per_site, mask, unit):
    """Mask the temperature [K] of the sites whose degF record looks like degC (the rule
    of :data:`CELSIUS_AS_F_MAX`); `med` is each row's site median [K]."""
    lo, hi = RANGES["temperature"]                 # single bad hours: the hard range
    t_k = np.where((med > KELVIN_MEDIAN_MIN) | (temp < lo) | (temp > hi), np.nan, temp)
    ok = np.isfinite(t_k)
    month = np.where(ok, pd.DatetimeIndex(t).month.to_numpy(), -1)
    g = frame.assign(v=t_k, m=np.where(ok, month, np.nan)).groupby("site")
    tmax = g["v"].transform("max").to_numpy()
    months = g["m"].transform("nunique").to_numpy()
    judged = ((np.abs(per_site("latitude")) < CELSIUS_AS_F_LATITUDE)
              & (per_site("elevation_m") < CELSIUS_AS_F_ELEVATION))
    mask("temperature", judged & (months == 12) & (tmax < CELSIUS_AS_F_MAX),
         f"temperature looks like degC although the header says {unit}: no hour at or above "
         "41 degF in a whole year at a site below 50 deg latitude and 1000 m (masked)")


def run_row_checks(values, sites, t, catalogue, raw_units, missing: str | None = None):
    """Run the per-row and per-site checks.

    Parameters
    ----------
    missing : str, optional
        How a missing value is written in the file (``"no value"``): a row
        holding some values but not one of :data:`REQUIRED_NAMES` is flagged
        ``"<variable> missing (<missing>)"``.  None (the grid, whose missing hours have
        a note of their own): not flagged.

    Returns
    -------
    reasons : ndarray of str
        "; "-joined flags per row.
    values : dict
        Same arrays with implausible values set to NaN.
    """
    n = len(sites)
    values = {k: np.array(v, float) for k, v in values.items()}
    parts = []
    # integer codes of the sites (hashed once): every check below is per site
    codes, names = pd.factorize(np.asarray(sites, dtype=object))
    codes = codes.astype(np.int64)

    def per_site(attr):
        return np.array([getattr(catalogue[str(u)], attr) for u in names], float)[codes]
    frame = pd.DataFrame({"site": codes, "month": t.astype("datetime64[M]")})

    def rows(sel, reason):
        # an object array of one shared string per row: np.where(sel, reason, "") made a
        # fixed-width text copy (4 bytes per character per row: 280 MB for one check
        # of 80 characters on a grid block of 0.88 M cell-hours), this takes 8 bytes
        out = np.full(n, "", dtype=object)
        out[sel] = reason
        return out

    def mask(name, sel, reason):
        if sel.any():
            values[name] = np.where(sel, np.nan, values[name])
            parts.append(rows(sel, reason))

    def flag(sel, reason):
        if sel.any():
            parts.append(rows(sel, reason))

    # an empty cell of a required variable in a row that holds other values: a gap of
    # that variable at that hour, flagged (a row of empty cells is rejected elsewhere)
    if missing is not None:
        some = np.zeros(n, bool)
        for v in values.values():
            some |= ~np.isnan(v)
        for name in REQUIRED_NAMES:
            if name in values:
                flag(np.isnan(values[name]) & some,
                     f"{name.replace('_', ' ')} missing ({missing})")
    # missing-value codes first: one -999 or 9999 must not make a site look mis-scaled
    coded, coded_reasons = missing_codes(values, raw_units)
    for name, sel in coded.items():
        values[name] = np.where(sel, np.nan, values[name])
    parts.extend(coded_reasons)
    # the sun at each row's hour middle (the column checks and the night check)
    sun_deg = None
    if "solar_radiation" in values:
        sun_deg = solar_elevation_deg(t - np.timedelta64(30, "m"), per_site("latitude"),
                                      per_site("longitude"))
    # a column holding another variable (shifted or swapped): before the unit checks,
    # whose reasons would name a unit for it
    for name, sel, reason in column_checks(values, codes, len(names), sun_deg, raw_units, t):
        if name == "solar_radiation" or reason.endswith("(kept)"):
            flag(sel, reason)             # radiation: a clock many hours off looks the same
        else:
            mask(name, sel, reason)
    # relative humidity written as a fraction under a % header (or the reverse)
    if "relative_humidity" in values:
        rh = values["relative_humidity"]
        unit = str(raw_units.get("relative_humidity", "")).strip()
        gmax = frame.assign(v=rh).groupby(["site", "month"])["v"].transform("max").to_numpy()
        gcount = frame.assign(v=rh).groupby(["site", "month"])["v"].transform("count").to_numpy()
        if unit in ("%", "percent"):
            mask("relative_humidity", (gmax <= 0.015) & (gcount >= 24),
                 "relative humidity looks like a fraction (0-1) although the header says % (masked)")
        else:
            mask("relative_humidity", (gmax > 1.5) & (gcount >= 24),
                 "relative humidity looks like % although the header says a fraction (masked)")
    # pressure: unit slips and reduction to sea level
    if "pressure" in values:
        p = values["pressure"]
        elev = per_site("elevation_m")
        p_exp = expected_station_pressure(elev)
        med = frame.assign(v=p).groupby("site")["v"].transform("median").to_numpy()
        ratio = med / p_exp
        unit_slip = (ratio < 0.5) | (ratio > 2.0)
        unit = str(raw_units.get("pressure", "")).strip()
        for c in np.unique(codes[unit_slip]):
            i = int(np.flatnonzero(codes == c)[0])
            mask("pressure", codes == c, pressure_slip_reason(med[i], p_exp[i], elev[i], unit))
        sea = (~unit_slip & (elev > 200) & (np.abs(med - STANDARD_PRESSURE) < np.abs(med - p_exp))
               & (np.abs(ratio - 1) > 0.015))
        flag(sea, "pressure looks reduced to sea level, not station pressure (kept)")
    # solar radiation units
    if "solar_radiation" in values:
        sr = values["solar_radiation"]
        g = frame.assign(v=sr).groupby("site")["v"]
        smax, scount = g.transform("max").to_numpy(), g.transform("count").to_numpy()
        hi_sr = RANGES["solar_radiation"][1]
        gh = frame.assign(hi=sr > hi_sr, sun=sr > 0).groupby("site")
        n_hi = gh["hi"].transform("sum").to_numpy()
        n_sun = gh["sun"].transform("sum").to_numpy()
        lat = per_site("latitude")
        mask("solar_radiation", (n_hi >= RADIATION_SLIP_HOURS)
             & (n_hi >= RADIATION_SLIP_SHARE * n_sun),
             f"solar radiation above {hi_sr:g} W/m2 at many hours of this site: unit likely "
             "not W/m2 (masked)")
        mask("solar_radiation", (smax < 50) & (scount >= 24 * 60) & (np.abs(lat) < 60),
             "solar radiation never above 50 W/m2 at this site: unit likely not W/m2 (masked)")
    # cumulative precipitation
    if "precipitation" in values:
        pr = values["precipitation"]
        order = np.lexsort((t, codes))
        ps, ss = pr[order], codes[order]
        d = np.diff(ps)
        same = ss[1:] == ss[:-1]
        df = pd.DataFrame({"site": ss[1:][same], "neg": (d[same] < 0), "nz": ps[1:][same] > 0})
        stats = df.groupby("site").agg(neg=("neg", "mean"), nz=("nz", "mean"))
        pmax = pd.Series(pr).groupby(codes).max()
        cum_sites = [s for s in stats.index
                     if stats.loc[s, "nz"] > 0.5 and stats.loc[s, "neg"] < 0.1 and pmax[s] > 10]
        mask("precipitation", np.isin(codes, cum_sites),
             "precipitation looks cumulative, not hourly (masked)")
    # temperature in kelvin under a degC (or degF) header: a median above 150 degC
    if "temperature" in values:
        unit = str(raw_units.get("temperature", "")).strip()
        if not written_in(unit, "K"):
            med = frame.assign(v=values["temperature"]).groupby("site")["v"] \
                .transform("median").to_numpy()
            mask("temperature", med > KELVIN_MEDIAN_MIN,
                 f"temperature looks like kelvin although the header says {unit or 'degC'} "
                 "(masked)")
            if written_in(unit, "degF"):
                _celsius_as_f(values["temperature"], med, frame, t, per_site, mask, unit)
            else:
                as_read = np.where(med > KELVIN_MEDIAN_MIN, np.nan, values["temperature"])
                days = fahrenheit_days(as_read, codes, t)
                edges = fahrenheit_edges(as_read, codes, t,
                                         values.get("relative_humidity")) & ~days
                mask("temperature", days,
                     f"temperature looks like degF although the header says {unit or 'degC'}: "
                     "the day's mean stands over 20 K above the median of the 121 days "
                     "around it and, read as degF, matches it (masked)")
                mask("temperature", edges,
                     f"temperature looks like degF although the header says {unit or 'degC'}: "
                     "the run's first hour is 1.8 x the hour before + 32 and the hour after "
                     "its last is back to the degC reading, read as degF it matches the "
                     "hours around it (masked)")
                t_k = np.where(med > KELVIN_MEDIAN_MIN, np.nan, values["temperature"])
                g = frame.assign(v=t_k, hot=t_k > RANGES["temperature"][1]).groupby("site")
                n_hot = g["hot"].transform("sum").to_numpy()
                count = g["v"].transform("count").to_numpy()
                med_f = g["v"].transform("median").to_numpy()
                fahrenheit = (((med_f > FAHRENHEIT_MEDIAN_MIN) & (count >= MEDIAN_MIN_HOURS))
                              | ((n_hot >= RADIATION_SLIP_HOURS)
                                 & (n_hot >= RADIATION_SLIP_SHARE * count)))
                mask("temperature", fahrenheit,
                     f"temperature looks like degF although the header says {unit or 'degC'} "
                     "(masked)")
    # wind in km/h under an m/s header: kept, flagged
    if "wind_speed" in values and written_in(raw_units.get("wind_speed", ""), "m/s"):
        g = frame.assign(v=values["wind_speed"]).groupby("site")["v"]
        med_u = g.transform("median").to_numpy()
        flag((med_u > KMH_MEDIAN_MIN) & (g.transform("count").to_numpy() >= MEDIAN_MIN_HOURS),
             f"wind speed median above {KMH_MEDIAN_MIN:g} m/s at this site: km/h under an m/s "
             "header? (kept)")
    # hard ranges
    for name, (lo, hi) in RANGES.items():
        if name in values:
            v = values[name]
            mask(name, (v < lo) | (v > hi), f"{name} outside {range_text(name, lo, hi)} (masked)")
    # radiation at night
    if "solar_radiation" in values:
        night = sun_deg < NIGHT_ELEVATION_DEG
        bad = night & (values["solar_radiation"] > NIGHT_RADIATION_MAX)
        share = pd.Series(bad[night]).groupby(codes[night]).mean() if night.any() else pd.Series(dtype=float)
        systematic = np.isin(codes, share.index[share > NIGHT_SHARE_HINT].to_numpy())
        flag(bad & systematic, "solar radiation at night at many hours: " + NIGHT_SUN_HINT)
        flag(bad & ~systematic, "solar radiation above 25 W/m2 at night")
    return join_reasons(parts) if parts else np.full(n, "", object), values


def describe_gaps(met) -> list[str]:
    """Text notes on missing hours per site between its first and last row."""
    notes = []
    present = met["row_present"].values
    times = met["time"].values
    for i, site in enumerate(met["site"].values):
        p = present[i]
        if not p.any():
            notes.append(f"met {site}: no rows")
            continue
        a, b = np.flatnonzero(p)[[0, -1]]
        inner = ~p[a:b + 1]
        n_miss = int(inner.sum())
        if n_miss == 0:
            notes.append(f"met {site}: complete hourly record {str(times[a])[:16]} to {str(times[b])[:16]} UTC")
            continue
        edges = np.diff(np.concatenate([[0], inner.astype(int), [0]]))
        starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
        k = int(np.argmax(ends - starts))
        notes.append(f"met {site}: {n_miss} missing hour{'s' if n_miss != 1 else ''} in "
                     f"{len(starts)} gap{'s' if len(starts) != 1 else ''}; longest "
                     f"{int(ends[k] - starts[k])} h from {str(times[a + starts[k]])[:16]} UTC"
                     + clock_forward_hint(times[a + starts[(ends - starts) == 1]],
                                          (b - a + 1) / 8766.0))
    return notes


#: Months in which clocks go forward to summer time (March, April in the north;
#: September, October in the south; common practice).
CLOCK_FORWARD_MONTHS = (3, 4, 9, 10)
#: Window of the hour a clock skips, in UTC [h after Saturday 00:00 UTC]: clocks go
#: forward in the night of Saturday to Sunday at 01:00-03:00 local time (common
#: practice), which is Saturday 14:00 to Sunday 12:00 UTC for offsets of -9 to +12 h.
CLOCK_FORWARD_UTC_WINDOW = (14, 36)
#: Most one-hour gaps per year of a site's record for the hint [-]: a clock skips one
#: hour a year; a logger that drops single hours often drops one on a Sunday night by
#: chance (our choice, benchmarks/clock_forward_gaps.py).
CLOCK_FORWARD_MAX_PER_YEAR = 2.0


def clock_forward_hint(single, years: float = 1.0) -> str:
    """A hint when a gap of one hour sits where a clock going forward to summer time
    skips one: a night of Saturday to Sunday (:data:`CLOCK_FORWARD_UTC_WINDOW`) in a
    month of clocks going forward (:data:`CLOCK_FORWARD_MONTHS`), at a site with few
    one-hour gaps (:data:`CLOCK_FORWARD_MAX_PER_YEAR`); after it a naive label is an hour
    late (the twin of :func:`workbench.io.methours.clock_change_hint`); "" otherwise.

    Parameters
    ----------
    single : ndarray of datetime64
        The missing hour of each one-hour gap (UTC hour ends).
    years : float
        Length of the site's record [year].

    >>> clock_forward_hint(np.array(["2020-03-29T01:00"], "datetime64[ns]"))[:51]
    '; 1 h missing at 2020-03-29T01:00 UTC, in the night'
    >>> clock_forward_hint(np.array(["2020-07-05T01:00"], "datetime64[ns]"))
    ''
    >>> clock_forward_hint(np.array(["2020-03-25T01:00"], "datetime64[ns]"))   # a Wednesday
    ''
    """
    single = np.asarray(single, "datetime64[ns]")
    if len(single) > CLOCK_FORWARD_MAX_PER_YEAR * max(years, 1.0):
        return ""
    months = single.astype("datetime64[M]").astype(int) % 12 + 1
    # hours since the Saturday 00:00 UTC before: 1970-01-03 was a Saturday
    since = ((single - np.datetime64("1970-01-03", "ns")) // np.timedelta64(1, "h")) % 168
    lo, hi = CLOCK_FORWARD_UTC_WINDOW
    hit = single[np.isin(months, CLOCK_FORWARD_MONTHS) & (since >= lo) & (since <= hi)]
    if not len(hit):
        return ""
    more = f" (and {len(hit) - 1} more)" if len(hit) > 1 else ""
    return (f"; 1 h missing at {str(hit[0])[:16]} UTC{more}, in the night to a Sunday "
            "of a month of clock changes: the clock going forward to summer time? Then "
            "every later label is an hour late; write the times in the site's standard "
            "time (utc_offset_h) or with their offset, e.g. 01:00+01:00 then 03:00+02:00")


def gauge_comparison(met, samples, low=0.5, high=2.0, min_depth_mm=2.0):
    """Compare hourly met precipitation summed over each sample with its gauge depth.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly met (site, time) with ``precipitation`` [mm], ``time`` = end of hour.
    samples : xarray.Dataset
        Precipitation samples (dim ``sample``).
    low, high : float
        Accepted range of the ratio met / gauge [-] (common practice: a factor of two);
        a ratio on a bound (to the rounding of :data:`workbench.wet.qa.THRESHOLD_RTOL`)
        is inside.
    min_depth_mm : float
        Smaller depths are not judged [mm]; a depth equal to it (to rounding) is.

    Returns
    -------
    pandas.DataFrame
        ``line, site, start, end, gauge_depth, met_depth, met_hours_missing, ratio,
        judged`` (every met hour present and a depth of at least `min_depth_mm`),
        ``suspicious`` for every sample of a site that has met.
    """
    sites = samples["site"].values.astype(str)
    have = np.isin(sites, met["site"].values.astype(str))
    out = pd.DataFrame({"line": samples["line"].values[have], "site": sites[have],
                        "start": samples["start"].values[have], "end": samples["end"].values[have],
                        "gauge_depth": samples["gauge_depth"].values[have]})
    if out.empty:
        return out.assign(met_depth=[], met_hours_missing=[], ratio=[], suspicious=[])
    from ..wet.hourly import site_positions, window_sums
    total, n_valid, n_hours = window_sums(met["precipitation"],
                                          site_positions(out["site"], met["site"].values),
                                          out["start"].to_numpy(), out["end"].to_numpy())
    out["met_depth"] = total
    out["met_hours_missing"] = n_hours - n_valid
    with np.errstate(divide="ignore", invalid="ignore"):
        out["ratio"] = out["met_depth"] / out["gauge_depth"]
    from ..wet.qa import at_least, outside_band      # on a bound in the decimals typed:
    deepest = np.maximum(out["gauge_depth"], out["met_depth"]).to_numpy()   # judged, inside
    out["judged"] = (out["met_hours_missing"] == 0).to_numpy() & at_least(deepest, min_depth_mm)
    out["suspicious"] = out["judged"].to_numpy() & outside_band(out["ratio"].to_numpy(), low, high)
    return out


#: Unit factors between two depth records (met / gauge) that a slip makes, with words
#: (pint's definitions: 1 inch = 25.4 mm, 1 cm = 10 mm).
DEPTH_SLIPS = ((25.4, "inch and mm"), (10.0, "cm and mm"))
#: Samples of a site that must be compared before a slip is named, the share of them
#: that must be far from their gauge, and how near the median ratio must come to a
#: factor [1] (our choice).
SLIP_MIN_SAMPLES, SLIP_SHARE, SLIP_RTOL = 8, 0.5, 0.1


def gauge_slip_notes(gc, file_name: str) -> list[str]:
    """A note per site whose samples mostly fail the gauge comparison by a unit factor.

    Parameters
    ----------
    gc : pandas.DataFrame
        :func:`gauge_comparison`'s table.
    file_name : str
        The met file's name.

    Returns
    -------
    list of str
        e.g. ``met.csv: precipitation at fell: 40 of 41 samples far from their gauge depth,
        median met/gauge 0.039, near 1/25.4: inch and mm mixed between the met's
        precipitation and the gauge depths?``; the values are not changed.
    """
    from ..wet.qa import outside_band
    if gc is None or gc.empty:
        return []
    judged = gc[gc["judged"] & np.isfinite(gc["ratio"]) & (gc["ratio"] > 0)]
    notes = []
    for site, g in judged.groupby("site", sort=False):
        n_bad = int(g["suspicious"].sum())
        if len(g) < SLIP_MIN_SAMPLES or n_bad <= SLIP_SHARE * len(g):
            continue
        med = float(np.median(g["ratio"]))
        for factor, words in DEPTH_SLIPS:
            for f, text in ((factor, f"{factor:g}"), (1 / factor, f"1/{factor:g}")):
                if not outside_band(np.array([med / f]), 1 - SLIP_RTOL, 1 + SLIP_RTOL)[0]:
                    notes.append(f"{file_name}: precipitation at {site}: {n_bad} of {len(g)} "
                                 f"samples far from their gauge depth, median met/gauge "
                                 f"{med:.3g}, near {text}: {words} mixed between the met's "
                                 f"precipitation and the gauge depths?")
    return notes
