"""Plausibility checks of hourly meteorology.

Nothing here refuses a file.  A value that cannot be right (a unit slip, a cumulative
series) is set to NaN and its row flagged with a hint; a value that is doubtful but
usable (pressure reduced to sea level, radiation at night) is kept and flagged.
Thresholds are common practice in station QA unless a source is named.

Where the parts are: the hard ranges, the thresholds, night, the station pressure and
the missing-value codes (:data:`RANGES`, :func:`missing_codes`,
:func:`solar_elevation_deg`...) in :mod:`workbench.io.metlimits`; the notes on missing
hours (:func:`describe_gaps`, :func:`clock_forward_hint`) in
:mod:`workbench.io.metgaps`; the gauge comparison (:func:`gauge_comparison`,
:func:`gauge_slip_notes`) in :mod:`workbench.io.metgauge`; what a site's catalogue entry
says of how its file is written (``met_wind_unit``, ``met_precipitation``), applied
first, and the notes of the slips only suspected in :mod:`workbench.io.metdeclared`.
The checks of the rows (:func:`run_row_checks`, looked up here by the readers) are here;
this module re-exports the others, so that ``workbench.io.metchecks.<name>`` keeps
working.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import STANDARD_PRESSURE
from ..units import written_in
from .common import join_reasons
from .metcolumns import column_checks
from .metvars import MET_VARIABLES
from .metcounter import daily_reset_sites, reset_reason
from .metdeclared import (counter_sites, declared_wind, difference_daily_counter,
                          suspected_notes, unused_notes)
from .metwind import wind_unit_findings

#: The variables every met row needs: an empty cell of one flags its row.
REQUIRED_NAMES = tuple(k for k, (_, req, _) in MET_VARIABLES.items() if req)
from .metdegf import fahrenheit_days, fahrenheit_edges
# the notes on missing hours (defined here before)
from .metgaps import (CLOCK_FORWARD_MAX_PER_YEAR, CLOCK_FORWARD_MONTHS,  # noqa: F401
                      CLOCK_FORWARD_UTC_WINDOW, COMPLETE_RECORD, clock_forward_hint,
                      describe_gaps)
# the gauge comparison (defined here before)
from .metgauge import (DEPTH_SLIPS, SLIP_MIN_SAMPLES, SLIP_RTOL, SLIP_SHARE,  # noqa: F401
                       gauge_comparison, gauge_slip_notes)
# the ranges, thresholds and codes (defined here before)
from .metlimits import (FOOT_M, PRESSURE_RTOL, elevation_feet_reason,  # noqa: F401
                        CELSIUS_AS_F_ELEVATION, CELSIUS_AS_F_LATITUDE,  # noqa: F401
                        CELSIUS_AS_F_MAX, FAHRENHEIT_MEDIAN_MIN, KELVIN_MEDIAN_MIN,
                        KMH_MEDIAN_MIN, MEDIAN_MIN_HOURS, NIGHT_ELEVATION_DEG,
                        NIGHT_RADIATION_MAX, NIGHT_SHARE_HINT, NIGHT_SUN_HINT,
                        PRESSURE_UNITS, RADIATION_SLIP_HOURS, RADIATION_SLIP_SHARE, RANGES,
                        expected_station_pressure, missing_codes, pressure_slip_reason,
                        range_text, solar_elevation_deg)


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


def run_row_checks(values, sites, t, catalogue, raw_units, missing: str | None = None,
                   notes: list | None = None):
    """Run the per-row and per-site checks.

    What a site's catalogue entry says of how its file is written is applied first
    (:mod:`workbench.io.metdeclared`: ``met_wind_unit`` converts its wind speed,
    ``met_precipitation = "daily_counter"`` differences its precipitation); the checks
    then judge the values as converted.

    Parameters
    ----------
    missing : str, optional
        How a missing value is written in the file (``"no value"``): a row
        holding some values but not one of :data:`REQUIRED_NAMES` is flagged
        ``"<variable> missing (<missing>)"``.  None (the grid, whose missing hours have
        a note of their own): not flagged.
    notes : list, optional
        The input notes of the sites (what was converted or differenced, the rows of a
        wind unit or a daily counter only suspected, with counts) are appended here.

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

    def per_site_of(attr):
        return np.array([getattr(catalogue[str(u)], attr) for u in names], float)

    def per_site(attr):
        return per_site_of(attr)[codes]
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

    def head_text(name):
        u = str(raw_units.get(name, "")).strip()
        return f"column {name}" + (f" [{u}]" if u else "")

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
    # a declaration of the catalogue with nothing to act on here: one located note each
    new_notes = unused_notes(values, codes, names, catalogue, raw_units)
    # what the catalogue says of the file: the wind's unit, converted once (pint)
    wind_declared = np.zeros(len(names), bool)
    if "wind_speed" in values:
        values["wind_speed"], wind_declared, got = declared_wind(
            values["wind_speed"], codes, names, catalogue, raw_units.get("wind_speed", ""))
        new_notes += got
    rows_per_site = np.bincount(codes, minlength=len(names))
    suspected = {"wind": [], "median": np.empty(0, np.int64), "counter": np.empty(0, np.int64),
                 "hour": np.zeros(len(names), np.int64)}
    # the sun at each row's hour middle (the column checks and the night check)
    sun_deg = None
    if "solar_radiation" in values:
        sun_deg = solar_elevation_deg(t - np.timedelta64(30, "m"), per_site("latitude"),
                                      per_site("longitude"))
    # precipitation as a gauge counter restarted each day (a sawtooth): before the
    # column checks and the cumulative rule, whose reasons would name another cause
    if "precipitation" in values:
        offset = per_site_of("utc_offset_h")
        reset, hour, share, falls = daily_reset_sites(values["precipitation"], codes,
                                                      len(names), t, offset)
        counter, given = counter_sites(names, catalogue)
        if counter.any():                 # declared a daily counter: differenced here
            values["precipitation"], why, got = difference_daily_counter(
                values["precipitation"], codes, t, offset, names, counter, given,
                (hour, share, falls), head_text("precipitation"))
            if (why != "").any():
                parts.append(why)
            new_notes += got
        reset &= ~counter
        suspected["counter"], suspected["hour"] = np.flatnonzero(reset), hour
        for s in np.flatnonzero(reset):
            mask("precipitation", codes == s,
                 reset_reason(f"{head_text('precipitation')} at site {names[s]}", int(hour[s]), float(share[s]),
                              int(falls[s])))
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
        # the catalogue's elevation written in feet: the pressure fits the height in m
        p_feet = expected_station_pressure(elev * FOOT_M)
        feet = (~unit_slip & (np.abs(ratio - 1) > PRESSURE_RTOL)
                & (np.abs(med / p_feet - 1) <= PRESSURE_RTOL)
                & (np.abs(med - p_feet) < np.abs(med - STANDARD_PRESSURE)))
        for c in np.unique(codes[feet]):
            i = int(np.flatnonzero(codes == c)[0])
            flag(codes == c, elevation_feet_reason(med[i], p_exp[i], elev[i]))
        sea = (~unit_slip & ~feet & (elev > 200)
               & (np.abs(med - STANDARD_PRESSURE) < np.abs(med - p_exp))
               & (np.abs(ratio - 1) > PRESSURE_RTOL))
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
    # wind in knots, mph or km/h under an m/s header: kept, flagged (metwind.py: the
    # log law from a measured u*, else the potential wind; then a median above 10 m/s)
    if "wind_speed" in values and written_in(raw_units.get("wind_speed", ""), "m/s"):
        ws = values["wind_speed"]
        by_ustar, found = wind_unit_findings(ws, values.get("friction_velocity"), codes,
                                             names, catalogue, head_text("wind_speed"))
        found = [(c, r) for c, r in found if not wind_declared[c]]    # the user has said
        suspected["wind"] = found
        for c, reason in found:
            flag(codes == c, reason)
        named = np.zeros(len(names), bool)
        named[[c for c, _ in found]] = True
        g = frame.assign(v=ws).groupby("site")["v"]
        med_u = g.transform("median").to_numpy()
        by_median = ((med_u > KMH_MEDIAN_MIN)
                     & (g.transform("count").to_numpy() >= MEDIAN_MIN_HOURS)
                     & ~(by_ustar | named | wind_declared)[codes])
        suspected["median"] = np.unique(codes[by_median])
        flag(by_median,
             f"wind speed median above {KMH_MEDIAN_MIN:g} m/s at this site: km/h (x 3.6) or "
             "knots (x 1.94) under an m/s header? (kept)")
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
    if notes is not None:
        notes.extend(new_notes + suspected_notes(names, rows_per_site, suspected["wind"],
                                                 suspected["median"], suspected["counter"],
                                                 suspected["hour"]))
    return join_reasons(parts) if parts else np.full(n, "", object), values
