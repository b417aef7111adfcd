"""Does each met column hold its variable?  Shifted and swapped columns.

A spreadsheet export can put one variable under another's header: a column moved by
one place, two columns swapped, wind direction under the wind speed header.  Such
values pass the hard ranges in part (a direction of 40 deg reads as 40 m/s, a relative
humidity of 55 % as 55 degC, a temperature of 12 degC as 12 % humidity), so a range
check alone masks some hours and lets the rest through as wrong numbers.  The checks
here judge a site's whole column by what it must look like, and by its relation to
the sun, and mask the site's column with a reason that names the column, what it looks
like and what was expected (the ledger adds the file and the lines):

* solar radiation: zero at night.  The sun's position (the package's own sun,
  :mod:`workbench.surface.solar`) gives the night hours; a radiometer reads its offset
  of a few W/m2 there against day means of hundreds, and a clock a few hours wrong
  lights a minority of the nights (the night check and the clock check name it), so
  the median of the nights stays at zero; any other variable (temperature, humidity,
  pressure, wind) has a night median of the order of its day mean;
* precipitation: zero most hours (common practice: even the wettest climates have
  rain in well under half of the hours); a column above 0 at most hours with a median
  of over 1 mm/h is another variable;
* wind speed: a wind direction (0-360 deg) puts most hours above the 75 m/s hard
  maximum and none above 360;
* temperature and relative humidity: their daily cycles are opposite (the afternoon
  is warm and dry), so against the sun a temperature rises and a humidity falls.  A
  temperature column whose median reads above 40 degC, whose values all lie within
  0-100 and which falls when the sun is up holds a relative humidity in %; a
  humidity column that rises with the sun and reads below 45 % holds a temperature in
  degC.  Both at once, or one of them with the other column reading like the first's
  variable (a temperature median above 40 degC within 0-100, a humidity median below
  45 %): the two columns are swapped.

Every check needs :data:`MIN_HOURS` hours of the site (a week: our choice) and runs
before the unit checks of :mod:`.metchecks`, whose reasons (degF, km/h, kPa) would
otherwise name a unit for what is another variable.  Thresholds are our choice, each
measured on the demo network and the long-record fixture (no site is masked there;
tests/io/test_met_columns.py).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import ZERO_CELSIUS

#: Hours of a site a column needs before it is judged [h] (a week; our choice).
MIN_HOURS = 168
#: Night: the sun this far below the horizon [degree] (as the night check of metchecks).
NIGHT_ELEVATION_DEG = -3.0
#: Sun elevation above which an hour is day for the radiation check [degree] (our choice).
DAY_ELEVATION_DEG = 10.0
#: The median of a site's night values (absolute) above this share of its mean with the
#: sun above DAY_ELEVATION_DEG: the column is not radiation [-] (our choice: a radiometer
#: reads its offset of a few W/m2 at night against day means of hundreds, and a clock
#: a few hours wrong leaves the night median at zero; a temperature, humidity, pressure
#: or wind column differs little between night and day; measured on the demo: 0).
NIGHT_DAY_RATIO = 0.2
#: Night hours a site needs for the radiation column to be judged [h] (10 nights).
MIN_NIGHT_HOURS = 100
#: Precipitation: share of hours above 0 and median [mm] from which the column is not
#: hourly precipitation (common practice: rain falls in well under half of the hours).
RAIN_HOURS_SHARE, RAIN_MEDIAN_MM = 0.6, 1.0
#: Wind: share of hours above the 75 m/s hard maximum, all within 0..360, from which
#: the column holds a direction [-], with as large a share above 180 (a direction
#: spreads over 0-360 deg: most hours above 75, about half above 180; a wind speed has
#: none, a km/h speed read as m/s few above 180; our choice).
DIRECTION_SHARE = 0.25
#: Correlation with the solar radiation beyond which a column follows (or opposes) the
#: sun [-] (our choice; measured on the demo: temperature +0.4 to +0.6, relative
#: humidity -0.5 to -0.6 at every site; tests/io/test_met_columns.py).
SUN_CORRELATION = 0.2
#: A relative humidity column below this median [fraction] that rises with the sun holds
#: a temperature in degC (read as %: 12 degC -> 0.12; our choice).
RH_AS_TEMPERATURE_MEDIAN = 0.45
#: A temperature whose median reads above this [K] (40 degC, as metchecks' degF rule).
HOT_MEDIAN = ZERO_CELSIUS + 40.0


def _site_stats(codes, n_sites, x, sel=None):
    """Per site: count, median of the finite values of `x` (where `sel`) [units of x]."""
    ok = np.isfinite(x) if sel is None else (np.isfinite(x) & sel)
    count = np.bincount(codes[ok], minlength=n_sites)
    order = np.lexsort((x[ok], codes[ok]))
    xs = x[ok][order]
    start = np.concatenate([[0], np.cumsum(count)[:-1]])
    med = np.full(n_sites, np.nan)
    has = count > 0
    lo = start[has] + (count[has] - 1) // 2
    hi = start[has] + count[has] // 2
    med[has] = 0.5 * (xs[lo] + xs[hi])
    return count, med


def _site_share(codes, n_sites, cond, ok):
    """Per site: the share of the `ok` rows where `cond` holds [-], and their count."""
    n = np.bincount(codes[ok], minlength=n_sites)
    k = np.bincount(codes[ok & cond], minlength=n_sites)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, k / np.maximum(n, 1), np.nan), n


def site_correlation(codes, n_sites, x, y):
    """Pearson correlation of `x` and `y` per site, over the rows where both are finite
    [-] (NaN for a site with fewer than :data:`MIN_HOURS` such rows or a constant).

    >>> import numpy as np
    >>> c = np.array([0, 0, 0, 1, 1, 1])
    >>> r = site_correlation(c, 2, np.array([1., 2, 3, 1, 2, 3]), np.array([2., 4, 6, 3, 2, 1]))
    >>> [float(v) for v in np.isnan(r)]       # fewer than MIN_HOURS rows: not judged
    [1.0, 1.0]
    """
    ok = np.isfinite(x) & np.isfinite(y)
    c = codes[ok]
    xv, yv = x[ok], y[ok]
    n = np.bincount(c, minlength=n_sites).astype(float)
    sx, sy = np.bincount(c, xv, n_sites), np.bincount(c, yv, n_sites)
    with np.errstate(invalid="ignore", divide="ignore"):
        mx, my = sx / n, sy / n
        dx, dy = xv - mx[c], yv - my[c]
        sxy = np.bincount(c, dx * dy, n_sites)
        sxx = np.bincount(c, dx * dx, n_sites)
        syy = np.bincount(c, dy * dy, n_sites)
        r = sxy / np.sqrt(sxx * syy)
    return np.where((n >= MIN_HOURS) & (sxx > 0) & (syy > 0), r, np.nan)


#: Share of a site's consecutive pairs of hours (both read) in which the precipitation
#: does not fall, at or above which a column above 0 at most hours is named a
#: cumulative counter [-] (99 %: a counter falls only at a reset or a gap filled
#: with another value; our choice).
COUNTER_SHARE = 0.99


def _rising_share(values, codes, n_sites, time_end):
    """Per site, the share of consecutive pairs of its rows (in time order, both
    finite) in which `values` do not fall [-]; None without times."""
    if time_end is None:
        return None
    order = np.lexsort((np.asarray(time_end), codes))
    v, c = values[order], codes[order]
    pair = (c[1:] == c[:-1]) & np.isfinite(v[1:]) & np.isfinite(v[:-1])
    up = pair & (v[1:] >= v[:-1])
    n = np.bincount(c[1:][pair], minlength=n_sites)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.bincount(c[1:][up], minlength=n_sites) / n


def column_checks(values, codes, n_sites, elevation_deg, raw_headers=None, time_end=None):
    """Judge each site's columns by what their variable must look like.

    Parameters
    ----------
    values : dict of str to ndarray
        Converted values per variable [internal units: K, fraction, W m-2, mm, m s-1];
        not changed.
    codes : ndarray of int
        The site of each row, as codes 0 .. n_sites - 1.
    n_sites : int
    elevation_deg : ndarray or None
        Solar elevation at each row's hour middle [degree] (None: no radiation check,
        no relation to the sun).
    raw_headers : dict of str to str, optional
        The unit each variable was written in, for the reasons.
    time_end : ndarray of datetime64, optional
        Hour end of each row [UTC] (None: no check of a column pasted rows off).

    Returns
    -------
    list of (str, ndarray of bool, str)
        (variable, rows to mask, reason) per finding; the reason names the column, what
        it looks like and what was expected.
    """
    units = raw_headers or {}
    out = []

    def head(name):
        u = str(units.get(name, "")).strip()
        return f"column {name}" + (f" [{u}]" if u else "")

    def site_rows(bad_sites):
        return bad_sites[codes]

    sane_radiation = None
    # solar radiation: zero at night, against its daytime mean
    if "solar_radiation" in values and elevation_deg is not None:
        sr = values["solar_radiation"]
        finite = np.isfinite(sr)
        night = (elevation_deg < NIGHT_ELEVATION_DEG) & finite
        day = (elevation_deg > DAY_ELEVATION_DEG) & finite
        _, med_night = _site_stats(codes, n_sites, np.abs(sr), night)
        n_night = np.bincount(codes[night], minlength=n_sites)
        n_day = np.bincount(codes[day], minlength=n_sites)
        with np.errstate(invalid="ignore", divide="ignore"):
            day_mean = np.bincount(codes[day], np.where(day, sr, 0.0)[day], n_sites) / n_day
        bad = ((n_night >= MIN_NIGHT_HOURS) & (n_day >= MIN_NIGHT_HOURS)
               & (med_night > NIGHT_DAY_RATIO * np.fmax(day_mean, 0.0)))
        for s in np.flatnonzero(bad):
            out.append(("solar_radiation", codes == s,
                        f"{head('solar_radiation')} has a median of {med_night[s]:.3g} "
                        f"(absolute) at this site's night hours against a mean of "
                        f"{day_mean[s]:.3g} with the sun above {DAY_ELEVATION_DEG:g} deg: "
                        f"not a global radiation (a column shifted or swapped?), or labels "
                        f"many hours off, expected about 0 W/m2 at night (kept)"))
        sane_radiation = np.where(site_rows(bad), np.nan, sr)
    # precipitation: zero at most hours
    if "precipitation" in values:
        pr = values["precipitation"]
        ok = np.isfinite(pr)
        share, n = _site_share(codes, n_sites, pr > 0, ok)
        _, med = _site_stats(codes, n_sites, pr)
        bad = (n >= MIN_HOURS) & (share >= RAIN_HOURS_SHARE) & (med > RAIN_MEDIAN_MM)
        rising = _rising_share(pr, codes, n_sites, time_end) if bad.any() else None
        for s in np.flatnonzero(bad):
            cause = ("a cumulative counter? it never falls at "
                     f"{rising[s]:.0%} of this site's consecutive hours: write each hour's "
                     "amount, the difference of consecutive readings"
                     if rising is not None and rising[s] >= COUNTER_SHARE
                     else "a column shifted or swapped?")
            out.append(("precipitation", codes == s,
                        f"{head('precipitation')} is above 0 at {share[s]:.0%} of this "
                        f"site's hours with a median of {med[s]:.3g} mm: not an hourly "
                        f"precipitation ({cause}), expected 0 at most "
                        f"hours (masked)"))
    # wind speed holding a direction
    if "wind_speed" in values:
        u = values["wind_speed"]
        ok = np.isfinite(u)
        share, n = _site_share(codes, n_sites, u > 75.0, ok)
        beyond, _ = _site_share(codes, n_sites, (u > 360.0) | (u < 0.0), ok)
        # a direction spreads over the whole circle; a speed in km/h has few hours
        # above 180 (50 m/s)
        half, _ = _site_share(codes, n_sites, u > 180.0, ok)
        bad = ((n >= MIN_HOURS) & (share >= DIRECTION_SHARE) & (half >= DIRECTION_SHARE)
               & (beyond == 0))
        for s in np.flatnonzero(bad):
            out.append(("wind_speed", codes == s,
                        f"{head('wind_speed')} is above 75 m/s at {share[s]:.0%} of this "
                        f"site's hours, all within 0..360: a wind direction in degrees (a "
                        f"column shifted or swapped?), expected a wind speed of 0..75 m/s "
                        f"(masked)"))
    # temperature and relative humidity against the sun
    if sane_radiation is not None:
        t_bad = np.zeros(n_sites, bool)
        rh_bad = np.zeros(n_sites, bool)
        r_t = r_rh = np.full(n_sites, np.nan)
        if "temperature" in values:
            tk = values["temperature"]
            r_t = site_correlation(codes, n_sites, tk, sane_radiation)
            _, med = _site_stats(codes, n_sites, tk)
            inside, _ = _site_share(codes, n_sites, (tk >= ZERO_CELSIUS)
                                    & (tk <= ZERO_CELSIUS + 100.0), np.isfinite(tk))
            t_bad = (med > HOT_MEDIAN) & (inside == 1.0) & (r_t < -SUN_CORRELATION)
            t_med = med
        if "relative_humidity" in values:
            rh = values["relative_humidity"]
            r_rh = site_correlation(codes, n_sites, rh, sane_radiation)
            _, med = _site_stats(codes, n_sites, rh)
            rh_bad = (med < RH_AS_TEMPERATURE_MEDIAN) & (r_rh > SUN_CORRELATION)
            rh_med = med
        # one column found, the other read like the first's variable: swapped, though
        # its own relation to the sun is weak (a winter's short days)
        if "temperature" in values and "relative_humidity" in values:
            t_like = (t_med > HOT_MEDIAN) & (inside == 1.0)
            t_bad, rh_bad = (t_bad | (rh_bad & t_like),
                             rh_bad | (t_bad & (rh_med < RH_AS_TEMPERATURE_MEDIAN)))
        for s in np.flatnonzero(t_bad | rh_bad):
            both = t_bad[s] and rh_bad[s]
            if t_bad[s]:
                what = ("the temperature and relative humidity columns look swapped"
                        if both else "a relative humidity in % (a column shifted or "
                        "swapped?)")
                out.append(("temperature", codes == s,
                            f"{head('temperature')} reads {t_med[s] - ZERO_CELSIUS:.3g} "
                            f"degC as median, all within 0..100 (correlation "
                            f"{r_t[s]:+.2f} with the solar radiation): {what}, expected a "
                            f"temperature, warmest in the afternoon (masked)"))
            if rh_bad[s]:
                what = ("the temperature and relative humidity columns look swapped"
                        if both else "a temperature in degC (a column shifted or swapped?)")
                out.append(("relative_humidity", codes == s,
                            f"{head('relative_humidity')} reads {rh_med[s]:.0%} as median "
                            f"(correlation {r_rh[s]:+.2f} with the solar radiation): "
                            f"{what}, expected a relative humidity, lowest in the afternoon "
                            f"(masked)"))
    # a wind speed column holding a temperature in degC (inside 0..75 m/s)
    if "wind_speed" in values and time_end is not None \
            and not any(f[0] == "wind_speed" for f in out):
        out.extend(_wind_as_temperature(values["wind_speed"], codes, n_sites, time_end,
                                        head("wind_speed")))
    # the temperature pasted rows off against the radiation (once both passed above)
    if (sane_radiation is not None and time_end is not None and "temperature" in values
            and not any(f[0] == "temperature" for f in out)):
        out.extend(_temperature_shift(values["temperature"], sane_radiation, codes,
                                      n_sites, time_end, head("temperature")))
    # the humidity pasted rows off, judged the same way (its minimum as a maximum)
    if (sane_radiation is not None and time_end is not None
            and "relative_humidity" in values
            and not any(f[0] == "relative_humidity" for f in out)):
        out.extend(_temperature_shift(-values["relative_humidity"], sane_radiation, codes,
                                      n_sites, time_end, head("relative_humidity"),
                                      name="relative_humidity"))
    return out


def smoothness_and_season(x, codes, n_sites, time_end):
    """Per site: the standard deviation of the hour-to-hour changes over that of the
    values [-], the range of the 12 calendar months' means over the standard deviation
    [-] (NaN without all 12 months), and the count of finite values.

    The hour-to-hour changes are taken between consecutive hours of a site only (rows
    sorted by site and time; a gap breaks the pair).
    """
    t = np.asarray(time_end, dtype="datetime64[ns]")
    order = np.lexsort((t, codes))
    c, tv, xv = codes[order], t[order], np.asarray(x, float)[order]
    pair = (c[1:] == c[:-1]) & ((tv[1:] - tv[:-1]) == np.timedelta64(1, "h"))
    dx = np.where(pair, xv[1:] - xv[:-1], np.nan)
    okd = np.isfinite(dx)
    nd = np.bincount(c[1:][okd], minlength=n_sites)
    with np.errstate(invalid="ignore", divide="ignore"):
        sd_d = np.sqrt(np.bincount(c[1:][okd], dx[okd] ** 2, n_sites) / nd)
    ok = np.isfinite(xv)
    n = np.bincount(c[ok], minlength=n_sites).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.bincount(c[ok], xv[ok], n_sites) / n
        sd = np.sqrt(np.bincount(c[ok], (xv[ok] - mean[c[ok]]) ** 2, n_sites) / n)
    month = (tv - np.timedelta64(30, "m")).astype("datetime64[M]").astype(np.int64) % 12
    key = c[ok] * 12 + month[ok]
    nm = np.bincount(key, minlength=12 * n_sites).reshape(n_sites, 12)
    with np.errstate(invalid="ignore", divide="ignore"):
        mm = (np.bincount(key, xv[ok], 12 * n_sites).reshape(n_sites, 12) / nm)
        rng = np.where((nm > 0).all(axis=1), mm.max(axis=1) - mm.min(axis=1), np.nan)
        return sd_d / sd, rng / sd, n


#: A wind speed column smoother than this (hour-to-hour changes over its standard
#: deviation) [-] (measured: demo winds 0.44, temperatures 0.12, the long-record
#: fixture's noisy temperature 0.39, missed; a wind's hourly persistence of about 0.9
#: gives 0.45, invented winds of persistence 0.95 with a seasonal cycle of 4 m/s
#: 0.17-0.19, of 0.98 and 4 m/s 0.11-0.13, flagged: benchmarks/met_row_shift.py; our
#: choice)
WIND_SMOOTHNESS_MAX = 0.15
#: ... with calendar months whose means span at least this many standard deviations
#: [-] holds a temperature (measured: demo temperatures 2.2-2.3, long-record 2.5; demo
#: winds 0.6-0.7, long-record 0.03; an invented monsoon wind of 2-4 m/s seasonal
#: amplitude 1.4-2.5, which the smoothness rules out but at a persistence of 0.98; our
#: choice)
WIND_SEASON_MIN = 1.5


def _wind_as_temperature(u, codes, n_sites, time_end, head):
    """A wind speed column as smooth from hour to hour and as seasonal as a
    temperature (a temperature in degC, inside the wind's hard range but for frost): a
    flag (kept) on the site's rows [list of (variable, rows, reason)]."""
    smooth, season, n = smoothness_and_season(u, codes, n_sites, time_end)
    bad = (n >= MIN_HOURS) & (smooth < WIND_SMOOTHNESS_MAX) & (season >= WIND_SEASON_MIN)
    return [("wind_speed", codes == s,
             f"{head} changes from hour to hour by {smooth[s]:.2f} of its spread and its "
             f"monthly means span {season[s]:.1f} times its spread: as smooth and as "
             f"seasonal as a temperature (in degC? a column shifted or swapped?), "
             f"expected a wind speed, which changes by about half its spread from hour "
             f"to hour (kept)") for s in np.flatnonzero(bad)]


def _temperature_shift(temperature, radiation, codes, n_sites, time_end, head,
                       name="temperature"):
    """The findings of :func:`temperature_lag_steps`: a change of at least
    :data:`SHIFT_STEP_H` at a line with one side's lag outside :data:`PLAUSIBLE_LAG_H`;
    the rows of that side are flagged (kept) [list of (variable, rows, reason)].
    `name` ``"relative_humidity"``: `temperature` is the humidity, negated (its daily
    minimum judged as a temperature's maximum)."""
    humid = name == "relative_humidity"
    step, day, before, after, days = temperature_lag_steps(
        temperature, radiation, codes, n_sites, time_end,
        amplitude_min=HUMIDITY_AMPLITUDE if humid else None)
    lo, hi = PLAUSIBLE_LAG_H
    out_before = (before < lo) | (before > hi)
    out_after = (after < lo) | (after > hi)
    bad = (np.abs(step) >= SHIFT_STEP_H) & (out_before ^ out_after)
    if not bad.any():
        return []
    mid_day = (np.asarray(time_end, dtype="datetime64[ns]")
               - np.timedelta64(30, "m")).astype("datetime64[D]")
    what = ("its daily minimum lags the solar radiation's maximum" if humid else
            "its daily cycle lags the solar radiation's")
    who = "the humidity is lowest" if humid else "a temperature lags the sun"
    found = []
    for s in np.flatnonzero(bad):                       # a handful of sites
        first, last = _change_day(days[days["site"] == s], day[s], before[s], after[s])
        when = (f"on {first}" if first == last else
                f"between {first} and {last} (days of a weak daily cycle between)")
        later = mid_day >= (first if out_after[s] else last)
        rows = (codes == s) & (later if out_after[s] else ~later)
        wrong, right = (after[s], before[s]) if out_after[s] else (before[s], after[s])
        moved = wrong - right                          # + : the column comes late
        way = "down" if moved > 0 else "up"
        side = "after" if out_after[s] else "before"
        found.append((name, rows,
                      f"{head}: {what} by "
                      f"{wrong:+.1f} h (median of {SHIFT_WINDOW_DAYS} days with a clear "
                      f"daily cycle) {side} a change {when}, against {right:+.1f} h on "
                      f"the other side: outside the {lo:g} to {hi:+g} h {who} after the "
                      f"sun, and a change of {abs(step[s]):.1f} h at once, not "
                      f"with the season: the column pasted about {abs(round(moved)):.0f} "
                      f"rows {way} against the others? (kept)"))
    return found


#: Smallest daily amplitude of the relative humidity for a judged day [-] (0.05, 5 %RH:
#: an overcast or foggy day has no phase; our choice, as TEMPERATURE_AMPLITUDE_K).
HUMIDITY_AMPLITUDE = 0.05


#: Days on either side of a candidate line whose median lags are compared [d] (a month:
#: long enough for the weather of single days to drop out of a median, our choice).
SHIFT_WINDOW_DAYS = 30
#: A day's daily cycles count when the radiation's first harmonic has at least this
#: amplitude [W m-2] and the temperature's at least TEMPERATURE_AMPLITUDE_K [K] (a
#: polar night or an overcast, windy day has no phase; our choice).
RADIATION_AMPLITUDE = 50.0
TEMPERATURE_AMPLITUDE_K = 1.0
#: A change of the temperature's lag behind the radiation between the months either
#: side of a line, of this much or more [h], with the lag of one side outside
#: PLAUSIBLE_LAG_H, is a paste rows off (our choice, from the measured changes of clean
#: records: up to 1.4 h on invented years, 3.1 h on the demo, whose winter cycles
#: change their phase at once; docs/data_formats.md, section 4).
SHIFT_STEP_H = 2.0
#: The range of a month's median lag of the temperature's daily cycle behind the
#: radiation's (first harmonics) that a site's air can make [h]: the warmest hour comes
#: 1-3 h after solar noon (from memory; measured: demo -0.3 to +3.3 h, long-record
#: fixture +2.4 to +3.3 h, invented years with a 1.5-5 h thermal response -0.3 to
#: +3.8 h), with a margin of 1.2 h either side (our choice).
PLAUSIBLE_LAG_H = (-1.5, 5.0)
#: Splits this many day votes short of the best still place the change [-] (our choice).
CHANGE_VOTES = 2
_TWO_PI = 2.0 * np.pi


def _harmonic_phase(x):
    """Hour [0, 24) of the maximum of the first daily harmonic of each row of `x`
    (shape (day, 24), slot k the hour k..k+1), and its amplitude [units of x]."""
    w = _TWO_PI * (np.arange(24) + 0.5) / 24.0
    a = x @ np.cos(w)
    b = x @ np.sin(w)
    return (np.arctan2(b, a) % _TWO_PI) * 24.0 / _TWO_PI, 2.0 * np.hypot(a, b) / 24.0


def _change_day(days, rough, before, after, window=SHIFT_WINDOW_DAYS):
    """The first day of the new lag near `rough`: the splits of the judged days within
    `window` of it that most days on either side agree with (each day's lag on the side
    of the midpoint of `before` and `after` that its side says; a sign count, robust to
    single days' weather), within :data:`CHANGE_VOTES` of the best; the first and the
    last such day [datetime64[D]] (winter days with a weak daily cycle leave the line
    uncertain by weeks)."""
    d = days["day"].to_numpy().astype("datetime64[D]")
    lag = days["lag"].to_numpy()
    i = int(np.searchsorted(d, rough))
    lo, hi = max(0, i - window), min(len(d), i + window)
    vote = np.sign((lag[lo:hi] - 0.5 * (before + after)) * np.sign(after - before))
    # score of a split before position j: -votes before it + votes from it on
    score = -np.concatenate([[0.0], np.cumsum(vote)]) + (vote.sum()
                                                         - np.concatenate([[0.0], np.cumsum(vote)]))
    near = np.flatnonzero(score[:-1] >= score[:-1].max() - CHANGE_VOTES)
    return (d[lo + near.min()].astype("datetime64[D]"),
            d[lo + near.max()].astype("datetime64[D]"))


def temperature_lag_steps(temperature, radiation, codes, n_sites, time_end,
                          window=SHIFT_WINDOW_DAYS, amplitude_min=None):
    """The temperature's daily lag behind the radiation and its largest change per site
    (any column whose daily maximum follows the sun's: the negated relative humidity,
    whose minimum comes with the warmest hours, with its own `amplitude_min`).

    Parameters
    ----------
    temperature, radiation : ndarray
        Per row [K], [W m-2].
    codes : ndarray of int
        Site code of each row (0 .. n_sites - 1).
    n_sites : int
    time_end : ndarray of datetime64
        Hour end of each row [UTC].
    window : int
        Days compared on either side [d].
    amplitude_min : float, optional
        Smallest daily amplitude of the column for a judged day [its unit] (default
        :data:`TEMPERATURE_AMPLITUDE_K`).

    Returns
    -------
    step : ndarray, shape (site,)
        The largest change (signed) of the median lag of the `window` judged days after
        a day against the `window` before it [h]; NaN when a site has too few.
    first_day : ndarray of datetime64[D], shape (site,)
        The first UTC day after that change (NaT if none).
    lag_before, lag_after : ndarray, shape (site,)
        The two medians [h].
    days : pandas.DataFrame
        The judged days: ``site``, ``day`` (days since 1970-01-01, UTC), ``lag`` [h].
    """
    t = np.asarray(time_end, dtype="datetime64[ns]") - np.timedelta64(30, "m")
    day = t.astype("datetime64[D]")
    slot = ((t - day) // np.timedelta64(1, "h")).astype(np.int64)
    key = codes.astype(np.int64) * 10_000_000 + day.astype(np.int64)
    ids, uniq = pd.factorize(key, sort=True)
    n_d = len(uniq)
    tt = np.full((n_d, 24), np.nan)
    rr = np.full((n_d, 24), np.nan)
    tt[ids, slot] = temperature
    rr[ids, slot] = radiation
    ok = np.isfinite(tt).all(axis=1) & np.isfinite(rr).all(axis=1)
    ph_t, amp_t = _harmonic_phase(np.where(ok[:, None], tt, 0.0))
    ph_r, amp_r = _harmonic_phase(np.where(ok[:, None], rr, 0.0))
    ok &= (amp_r >= RADIATION_AMPLITUDE) & (amp_t >= (
        TEMPERATURE_AMPLITUDE_K if amplitude_min is None else amplitude_min))
    lag = (ph_t - ph_r + 12.0) % 24.0 - 12.0
    d_site = (uniq // 10_000_000)[ok]
    d_day = (uniq % 10_000_000)[ok]
    frame = pd.DataFrame({"site": d_site, "lag": lag[ok]})
    g = frame.groupby("site")["lag"]
    before = g.transform(lambda s: s.shift(1).rolling(window, min_periods=window).median())
    after = g.transform(lambda s: s[::-1].rolling(window, min_periods=window).median()[::-1])
    step = (after - before).to_numpy()
    out_step = np.full(n_sites, np.nan)
    out_day = np.full(n_sites, np.datetime64("NaT"), dtype="datetime64[D]")
    out_b = np.full(n_sites, np.nan)
    out_a = np.full(n_sites, np.nan)
    fin = np.isfinite(step)
    if fin.any():
        mag = np.where(fin, np.abs(step), -1.0)
        order = np.lexsort((-mag, d_site))              # per site, largest first
        first = order[np.r_[True, d_site[order][1:] != d_site[order][:-1]]]
        first = first[fin[first]]
        s = d_site[first]
        out_step[s] = step[first]
        out_day[s] = d_day[first].astype("datetime64[D]")
        out_b[s] = before.to_numpy()[first]
        out_a[s] = after.to_numpy()[first]
    days = pd.DataFrame({"site": d_site, "day": d_day, "lag": lag[ok]})
    return out_step, out_day, out_b, out_a, days
