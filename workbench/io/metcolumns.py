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


def column_checks(values, codes, n_sites, elevation_deg, raw_headers=None):
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
        for s in np.flatnonzero(bad):
            out.append(("precipitation", codes == s,
                        f"{head('precipitation')} is above 0 at {share[s]:.0%} of this "
                        f"site's hours with a median of {med[s]:.3g} mm: not an hourly "
                        f"precipitation (a column shifted or swapped?), expected 0 at most "
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
    return out
