"""Is the met's clock the sun's?  The lag of measured solar radiation against the sun.

A met file whose labels are an hour or two off (local time while ``utc_offset_h`` says
otherwise, summer-time labels, hour-beginning labels read as hour ends, a logger clock
set wrong) passes the night-radiation check of :mod:`.metchecks` in silence, yet moves
the surface chain's day/night pattern by that much.  This module estimates, per site,
how late the measured global radiation runs against the package's own sun
(:func:`workbench.surface.solar.solar_elevation_sine`) and writes a ledger note when the
lag is clearly not zero.  Nothing is shifted or masked.

Method (per site, vectorized over sites and days; no loop over hours):

1. The hours are cut into days of the site's mean solar clock (UTC + the longitude
   rounded to whole hours), so that solar noon falls near the middle of each day.
   A day counts when every one of its 24 hours has a radiation value.
2. For each day, the centroid in time of the radiation above a zero-offset floor
   (``sum(w h) / sum(w)``, w = max(G - floor, 0)) and the centroid of cos(zenith)
   (above the horizon) at the same hour middles.  On a clear day both are symmetric
   about solar noon, so their difference is the lag of the labels [h] (positive: the
   radiation comes later than the sun says).
3. Only sunny days are used: daily clearness index (radiation over the top-of-atmosphere
   irradiance of the same hours) at least :data:`SUNNY_CLEARNESS`; broken cloud moves a
   day's centroid at random, which the median over days then ignores.
4. The site's lag is the median of its sunny days, over the whole record and over the
   summer and winter halves (April-September and October-March, swapped south of the
   equator), so that summer-time labels (a lag in summer only) are named as such, and
   per calendar year (a clock reset between years); each figure needs
   :data:`MIN_SUNNY_DAYS` sunny days, else it is "not judged".
5. The whole record's figure that the note and the half-hour hint judge is the median of
   the clearest tenth of the sunny days (at least :data:`MIN_SUNNY_DAYS`): a daily cloud
   cycle (afternoon convection, morning fog) moves the centroid of the cloudy hours by up
   to 0.4 h either way, as much as a half hour itself, while a day that clouds scarcely
   touched keeps its centroid where the sun puts it.  So are the halves' and the years'
   figures (their clearest tenth, at least :data:`MIN_SUNNY_DAYS` days): a cloud
   cycle at a fixed solar hour moves the short winter days' centroid more than the
   summer's.

Why the centroid and not the best lag of a correlation with cos(zenith): it gives a
lag in fractions of an hour from one pass of the solar code (a correlation needs one
pass per candidate lag), it is exact on clear days whatever the shape of the clear-sky
curve (any function of cos(zenith) is symmetric about noon), and the median over days
makes it robust to cloudy days, which the correlation would average in.  The threshold
and its measurement: docs/data_formats.md, section 4.
"""
from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from ..surface.solar import (DEGREES_PER_HOUR, HOURS_PER_DAY, NS_PER_HOUR, SOLAR_NOON_HOUR,
                             solar_elevation_sine, time_parts)
from .metlimits import negative_radiation_notes

#: Solar constant [W m-2] (Kopp & Lean 2011, Geophys. Res. Lett. 38, L01706: 1360.8),
#: without the Earth-Sun distance factor (+-3.4 % over the year; our simplification, a
#: small change of the clearness index that selects the sunny days only).
SOLAR_CONSTANT = 1361.0
#: Radiation below this is taken as the radiometer's zero offset and left out of the
#: centroid [W m-2] (thermopile offsets are a few W m-2; from memory).
RADIATION_FLOOR = 5.0
#: Daily clearness index from which a day is sunny [-] (Liu & Jordan's classes put clear
#: days above about 0.6, overcast below 0.3, from memory; 0.5 keeps the clear and the
#: mostly clear days, about a third of the demo's; docs/data_formats.md, section 4).
SUNNY_CLEARNESS = 0.5
#: Sunny days an estimate needs before it is judged [d] (measured: the median of 20
#: sunny days drawn from the demo's stays within 0.21 h of the truth in 99.9 % of draws,
#: of 10 days within 0.33 h; docs/data_formats.md, section 4).
MIN_SUNNY_DAYS = 20
#: A lag at or beyond this is noted [h]: half-way between no error and the smallest clock
#: error that labels make (a whole hour), beyond the lags of clean cloudy records (at
#: most 0.06 h a year on the demo, -0.40 h with a strong afternoon cloud maximum over all
#: sunny days, -0.26 h over the clearest tenth that the whole-record note judges;
#: section 4; our choice from these measured lags).
LAG_NOTE_H = 0.75
#: A whole-record lag (of the clearest days, :data:`CLEAREST_SHARE`) of this size or
#: more but under LAG_NOTE_H, either sign, gives a hint [h]: a logger that labels
#: the middle of its averaging interval runs 0.5 h late when its labels are read as
#: interval ends, 0.5 h early when read as interval starts (``# time_label: start``).
#: The whole-record lag of all sunny days cannot tell a half hour from a daily cloud
#: cycle (an afternoon maximum pulls it early by up to 0.42 h, a forenoon maximum late by
#: up to 0.40 h, on the invented years of tests/clock_years.py); the clearest days hold
#: the bias to -0.26..+0.19 h (docs/data_formats.md, section 4).  0.3 h is beyond the
#: 20-day sampling spread of a clean record (0.21 h, section 4) and beyond the clearest
#: days' cloud bias; measured detection rates: section 4 (our choice from these numbers).
HALF_HOUR_HINT_H = 0.3
#: The clearest share of a site's sunny days whose median lag is the whole record's [-],
#: at least MIN_SUNNY_DAYS of them: a day that clouds scarcely touched keeps its
#: centroid where the sun puts it, whatever the hour at which a site's cloud usually
#: builds (measured on the invented years of tests/clock_years.py: the tenth, the
#: clearest 20 or 30 days and the clearest quarter differ by under 0.05 h; our choice).
CLEAREST_SHARE = 0.1
#: Months of the summer half north of the equator (swapped south of it): April to
#: September, the half-year around the June solstice (common practice).
SUMMER_MONTHS_NORTH = (4, 5, 6, 7, 8, 9)
#: Summer-time labels: the summer half this much later than the winter half [h], to
#: within SUMMER_TIME_TOL_H [h] (the clock change of summer time; common practice).
SUMMER_TIME_STEP_H, SUMMER_TIME_TOL_H = 1.0, 0.5


def day_lags(radiation, time_end, latitude, longitude):
    """Lag of the radiation against the sun, per site and day [h].

    Parameters
    ----------
    radiation : ndarray, shape (site, time)
        Hourly mean global radiation [W m-2]; NaN where missing.
    time_end : ndarray of datetime64, shape (time,)
        End of each hour [UTC], contiguous hourly.
    latitude, longitude : ndarray, shape (site,)
        [degree north], [degree east]

    Returns
    -------
    lag : ndarray, shape (site, day)
        Radiation centroid minus cos(zenith) centroid of each complete day [h];
        NaN for a day with a missing hour or without sun.
    clearness : ndarray, shape (site, day)
        Daily clearness index [-] (NaN as `lag`).
    month : ndarray of int, shape (site, day)
        Calendar month (1-12) of each day's middle (UTC).
    year : ndarray of int, shape (site, day)
    """
    rad = np.asarray(radiation, float)
    n_s, n_t = rad.shape
    t_end = np.asarray(time_end, dtype="datetime64[ns]")
    lat = np.asarray(latitude, float)[:, None]
    lon = np.asarray(longitude, float)[:, None]
    mid = t_end - np.timedelta64(NS_PER_HOUR // 2, "ns")
    doy, hour = time_parts(mid)
    mu = solar_elevation_sine(doy, hour, lat, lon)               # (site, time)
    # days of each site's mean solar clock, whole hours: slot 0 starts at local 00:00
    zone = np.rint(np.asarray(longitude, float) / DEGREES_PER_HOUR).astype(np.int64)
    h0 = int((t_end[0] - t_end[0].astype("datetime64[D]")) // np.timedelta64(1, "h")) - 1
    start = h0 + zone                                              # zone hour of hour 0
    first = int(np.floor(start.min() / HOURS_PER_DAY))
    n_d = int(np.floor((start.max() + n_t - 1) / HOURS_PER_DAY)) - first + 1
    day = int(HOURS_PER_DAY)
    pos = (first * day + np.arange(n_d * day))[None, :] \
        - start[:, None]                                           # (site, day*24) -> time
    inside = (pos >= 0) & (pos < n_t)
    at = np.clip(pos, 0, n_t - 1)
    g = np.where(inside, np.take_along_axis(rad, at, axis=1), np.nan).reshape(n_s, n_d, day)
    m = np.where(inside, np.take_along_axis(mu, at, axis=1), np.nan).reshape(n_s, n_d, day)
    clock = np.arange(day) + 0.5                                  # slot middles [h]
    complete = np.isfinite(g).all(axis=2)
    w_g = np.fmax(g - RADIATION_FLOOR, 0.0)               # fmax: 0 where NaN
    w_m = np.fmax(m, 0.0)
    s_g, s_m = w_g.sum(axis=2), w_m.sum(axis=2)
    ok = complete & (s_g > 0) & (s_m > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        lag = np.where(ok, (w_g @ clock) / s_g - (w_m @ clock) / s_m, np.nan)
        clear = np.where(ok, np.fmax(g, 0.0).sum(axis=2) / (SOLAR_CONSTANT * s_m), np.nan)
    # the calendar of each day's middle (zone noon), UTC
    noon = (t_end[0].astype("datetime64[D]").astype("datetime64[h]")
            + ((np.arange(n_d) + first) * day + int(SOLAR_NOON_HOUR))[None, :]
            .astype("timedelta64[h]")
            - zone[:, None].astype("timedelta64[h]"))
    month = (noon.astype("datetime64[M]").astype(np.int64) % 12 + 1)
    year = noon.astype("datetime64[Y]").astype(np.int64) + 1970
    return lag, clear, month, year


def _median(x):
    """Median of each row, ignoring NaN; NaN for a row of NaN only [units of x]."""
    if x.shape[1] == 0:
        return np.full(x.shape[0], np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)          # rows of NaN only
        return np.nanmedian(x, axis=1)


def _clearest(sel, clear):
    """The clearest :data:`CLEAREST_SHARE` of the days `sel` of each site, at least
    :data:`MIN_SUNNY_DAYS` of them (all when fewer) [bool, shape of `sel`]."""
    n = sel.sum(axis=1)
    k = np.maximum(MIN_SUNNY_DAYS, np.ceil(CLEAREST_SHARE * n)).astype(int)
    order = np.argsort(np.where(sel, -clear, np.inf), axis=1, kind="stable")
    rank = np.argsort(order, axis=1, kind="stable")
    return sel & (rank < k[:, None])


def site_lags(radiation, time_end, latitude, longitude):
    """The clock lag of each site: median over sunny days, whole record and halves.

    Parameters
    ----------
    radiation : ndarray, shape (site, time)
        [W m-2]
    time_end : ndarray of datetime64, shape (time,)
        [UTC], hour ends.
    latitude, longitude : ndarray, shape (site,)
        [degree]

    Returns
    -------
    pandas.DataFrame
        One row per site: ``lag`` [h] (median of all the sunny days; NaN with fewer
        than :data:`MIN_SUNNY_DAYS`), ``lag_clear``, ``lag_summer``, ``lag_winter`` [h]
        (median of the clearest :data:`CLEAREST_SHARE` of the sunny days of the whole
        record and of each half, at least :data:`MIN_SUNNY_DAYS` of them; NaN with fewer
        sunny days), ``days``, ``days_summer``, ``days_winter`` (sunny complete days),
        ``days_clear`` (the clearest days of the whole record) and ``year_lags`` (dict
        year -> lag [h] of each calendar year with enough sunny days, its clearest
        days).
    """
    lag, clear, month, year = day_lags(radiation, time_end, latitude, longitude)
    sunny = np.isfinite(lag) & (clear >= SUNNY_CLEARNESS)
    north = (np.asarray(latitude, float) >= 0)[:, None]
    summer = np.isin(month, SUMMER_MONTHS_NORTH) == north
    out = {}
    for name, sel in (("", sunny), ("_summer", sunny & summer), ("_winter", sunny & ~summer)):
        n = sel.sum(axis=1)
        # the whole record over all its sunny days (for the notes' words); the halves
        # and the whole record's judged figure over their clearest days
        days = sel if name == "" else _clearest(sel, clear)
        med = _median(np.where(days, lag, np.nan))
        out["lag" + name] = np.where(n >= MIN_SUNNY_DAYS, med, np.nan)
        out["days" + name] = n
    clearest = _clearest(sunny, clear)
    out["lag_clear"] = np.where(out["days"] >= MIN_SUNNY_DAYS,
                                _median(np.where(clearest, lag, np.nan)), np.nan)
    out["days_clear"] = clearest.sum(axis=1)
    years = np.unique(year) if year.size else np.array([], int)
    per_year = []
    for y in years:                                   # a handful of calendar years
        sel = sunny & (year == y)
        n = sel.sum(axis=1)
        med = _median(np.where(_clearest(sel, clear), lag, np.nan))
        per_year.append(np.where(n >= MIN_SUNNY_DAYS, med, np.nan))
    out["year_lags"] = [{int(y): float(v[i]) for y, v in zip(years, per_year)
                         if np.isfinite(v[i])} for i in range(len(out["lag"]))]
    return pd.DataFrame(out)


def _hours(x) -> str:
    """A lag for a note, signed, to 0.1 h; "not judged" for NaN [text]."""
    if not np.isfinite(x):
        return f"not judged (under {MIN_SUNNY_DAYS} sunny days)"
    v = round(float(x), 1)
    return f"{v if v != 0 else 0.0:+.1f} h"                  # no "-0.0"


def _cause(lag, off, utc_labels=False, zoned=False) -> str:
    """The likely causes of a whole-record lag `lag` [h] at a site of ``utc_offset_h``
    `off` [h], and what to write [text]; `utc_labels`: the file's times are read as UTC
    (NetCDF, zarr), not at ``utc_offset_h``; `zoned`: the site's CSV labels carry their
    zone (``Z``, ``+01:00``), so ``utc_offset_h`` does not move them."""
    n = int(np.rint(lag))
    way = "late" if n > 0 else "early"
    if zoned and not utc_labels:
        plain = (f"the whole record sits {abs(n)} h {way} against the zone its labels "
                 f"carry (utc_offset_h does not move a zoned label): every column on the "
                 f"logger's clock is read {abs(n)} h {way}")
        local = (f"labels written with a zone the logger did not keep: its clock runs "
                 f"{n:+g} h from the zone written (with 'Z': a logger kept at UTC{n:+g}"
                 + (", the site's utc_offset_h" if n == off else "")
                 + f")? If so, write the labels without the zone (naive labels take "
                 f"utc_offset_h = {off:g}) where the logger kept the site's standard time, "
                 f"or with the zone it kept (with 'Z': 2021-06-01T13:00{_zone(n)})")
    elif utc_labels:
        plain = (f"the whole record sits {abs(n)} h {way} against its declared clock (UTC, "
                 f"as NetCDF and zarr times are read): every variable on the logger's clock "
                 f"is read {abs(n)} h {way}")
        local = (f"times in local time of UTC{n:+g}"
                 + (" (the site's utc_offset_h)" if n == off else "")
                 + f" written without their zone? If so, convert them to UTC or give the "
                 f"time units their offset, e.g. 'hours since 2021-01-01 00:00:00{_zone(n)}'")
    else:
        true = off + n
        plain = (f"the whole record sits {abs(n)} h {way} against its declared clock "
                 f"(UTC{off:+g}, utc_offset_h): every column on the logger's clock is read "
                 f"{abs(n)} h {way}")
        local = (f"labels in local time of UTC{true:+g} while utc_offset_h = {off:g} (if so, "
                 f"set utc_offset_h = {true:g} in sites.toml, or write each label with its "
                 f"zone, e.g. 2021-06-01T13:00{_zone(true)}; utc_offset_h moves the naive "
                 f"labels of the site's precipitation and air files too: where those are on "
                 f"the declared clock, give this file's labels their zone)")
    if n > 0:
        extra = ("; or hour-ending labels under '# time_label: start' (remove that line; "
                 "NetCDF/zarr: the time_label attribute)") if n == 1 else ""
        if utc_labels and n == 1:
            extra = ("; or hour-ending times under the global attribute time_label = "
                     "\"start\" (remove it)")
        return (f"the radiation runs late against the sun: {plain}. "
                f"{local[:1].upper()}{local[1:]}{extra}")
    extra = ("; or hour-beginning labels read as hour ends (write '# time_label: start' "
             "above the header; NetCDF/zarr: the global attribute time_label = \"start\")"
             ) if n == -1 else ""
    if utc_labels and n == -1:
        extra = ("; or hour-beginning times read as hour ends (set the global attribute "
                 "time_label = \"start\")")
    return (f"the radiation runs early against the sun: {plain}. "
            f"{local[:1].upper()}{local[1:]}{extra}")


def _zone(hours) -> str:
    """An ISO 8601 zone of an offset [h], e.g. +02:00, -03:30 [text]."""
    return (f"{'+' if hours >= 0 else '-'}{int(abs(hours)):02d}:"
            f"{int(round(abs(hours) % 1 * 60)):02d}")


def _summer_time(row, off, seen) -> str:
    """The note's words for summer-time labels: summer 1 h later than winter, one of the
    two halves on time [text]."""
    standard, summer = off + np.rint(row.lag_winter), off + np.rint(row.lag_summer)
    if np.rint(row.lag_winter) == 0:
        where = f"late against the sun in summer only: {seen}"
        fix = (f"write the file in standard time (UTC{standard:+g}) all year, or give each "
               f"label its zone (summer rows UTC{summer:+g}, e.g. "
               f"2021-07-01T14:00{_zone(summer)})")
    else:
        where = (f"early against the sun in winter only: {seen}; utc_offset_h = {off:g} "
                 f"looks like the summer-time offset")
        fix = (f"set utc_offset_h = {standard:g} (standard time) in sites.toml and write "
               f"the file in standard time all year, or give each label its zone (winter "
               f"rows UTC{standard:+g}, e.g. 2021-01-15T13:00{_zone(standard)})")
    return (f"radiation {where}: local summer-time (daylight saving) labels? Naive labels "
            f"are read at utc_offset_h = {off:g} all year: {fix}")


def _half_hour(lag) -> str:
    """The hint's words for a lag of about half an hour, late or early [text]."""
    if lag > 0:
        return ("the radiation runs late against the sun by about half an hour. Labels of "
                "the middle of the averaging interval read as its end (+0.5 h)? If so, the "
                "interval ends 30 min after each label. Fog or low cloud clearing late on "
                "the clearest days too also makes a late lag, and an afternoon cloud "
                "maximum can pull a whole-hour error down to this")
    return ("the radiation runs early against the sun by about half an hour. Labels of the "
            "middle of the averaging interval read as its start ('# time_label: start', "
            "or the NetCDF/zarr attribute time_label = \"start\", -0.5 h)? If so, the "
            "interval began 30 min before each label. Afternoon cloud on the clearest "
            "days too (convection every afternoon) also makes an early lag, and a forenoon "
            "cloud maximum can pull a whole-hour error down to this")


def notes_from_lags(table, site_ids, catalogue, file_name, utc_labels=False,
                    coordinate_hints=None, zoned_sites=()) -> list[str]:
    """The ledger notes of :func:`site_lags`'s table [text].

    Parameters
    ----------
    table : pandas.DataFrame
        :func:`site_lags`, one row per site of `site_ids`.
    site_ids : sequence of str
    catalogue : SiteCatalogue
        For ``utc_offset_h`` and the hemisphere.
    file_name : str
        The met file's name.
    utc_labels : bool
        The file's times are read as UTC (NetCDF, zarr): a whole-hour lag is named as
        local times written without their zone.
    coordinate_hints : dict, optional
        site id -> text (:func:`coordinate_hints`) added to the site's whole-record note:
        its coordinates typed wrong explain the lag too.
    zoned_sites : collection of str, optional
        Sites of a CSV file whose labels carry their zone: a whole-hour lag is named as
        a zone the logger did not keep (a 'Z' on local time), not as ``utc_offset_h``.

    Returns
    -------
    list of str
        A note per site whose lag is at least :data:`LAG_NOTE_H` (whole record, summer
        only, or changing between halves or years), one per site not judged, and a
        hint per site whose whole-record lag is under :data:`LAG_NOTE_H` while the
        lag of its clearest sunny days (``lag_clear``) is :data:`HALF_HOUR_HINT_H` or
        more, late or early (a half hour).
    """
    notes = []
    for site, row in zip(site_ids, table.itertuples(index=False)):
        head = f"{file_name}: clock check of met site {site!r} (solar radiation against the sun)"
        if not np.isfinite(row.lag):
            notes.append(f"{head}: not judged, {int(row.days)} sunny days with a complete "
                         f"day of radiation ({MIN_SUNNY_DAYS} needed)")
            continue
        off = float(catalogue[site].utc_offset_h)
        north = float(catalogue[site].latitude) >= 0
        halves = "April-September" if north else "October-March"
        both = np.isfinite(row.lag_summer) and np.isfinite(row.lag_winter)
        kept = "; values kept as read, not shifted"
        if both and abs(row.lag_summer - row.lag_winter) >= LAG_NOTE_H:
            seen = (f"summer half ({halves}, {int(row.days_summer)} sunny days) "
                    f"{_hours(row.lag_summer)}, winter half ({int(row.days_winter)} days) "
                    f"{_hours(row.lag_winter)}")
            if abs(row.lag_summer - row.lag_winter - SUMMER_TIME_STEP_H) < SUMMER_TIME_TOL_H and \
                    min(abs(row.lag_winter), abs(row.lag_summer)) < LAG_NOTE_H:
                notes.append(f"{head}: {_summer_time(row, off, seen)}{kept}")
            else:
                notes.append(f"{head}: the lag differs between the halves of the year: {seen}: "
                             f"a logger clock reset or drifting, or summer-time labels "
                             f"written by hand? Check the logger's clock log{kept}")
            continue
        years = {y: v for y, v in row.year_lags.items()}
        each = ", ".join(f"{y}: {_hours(v)}" for y, v in sorted(years.items()))
        apart = len(years) > 1 and max(years.values()) - min(years.values()) >= LAG_NOTE_H
        whole = row.lag_clear              # the clearest days: not moved by a cloud cycle
        seen = (f"median of the clearest {int(row.days_clear)} of {int(row.days)} sunny "
                f"days; all sunny days {_hours(row.lag)}, summer {_hours(row.lag_summer)}, "
                f"winter {_hours(row.lag_winter)}")
        # years apart, one of them on time: a mix, whose whole-record figure means nothing
        mixed = apart and min(abs(v) for v in years.values()) < LAG_NOTE_H
        if abs(whole) >= LAG_NOTE_H and not mixed:
            by_year = (f"; it changes between years ({each}): a logger clock reset or "
                       f"drifting?" if apart else "")
            coords = (coordinate_hints or {}).get(site, "")
            notes.append(f"{head}: lag {_hours(whole)} ({seen}): {_cause(whole, off, utc_labels, site in zoned_sites)}"
                         f"{by_year}{coords}{kept}")
        elif apart:
            notes.append(f"{head}: the lag changes between years ({each}): a logger clock "
                         f"reset or drifting? Check the logger's clock log{kept}")
        if HALF_HOUR_HINT_H <= abs(whole) < LAG_NOTE_H and not apart:   # not a mix of years
            notes.append(f"{head}: hint: lag {_hours(whole)} ({seen}), below the "
                         f"{LAG_NOTE_H:g} h of a clock error: {_half_hour(whole)}{kept}")
    return notes


#: Records (site x hour) checked at a time unless the caller says [record]: the met
#: readers' group of whole sites (``io.met.NETCDF_GROUP_RECORDS``, ``io.metfast.CHECK_ROWS``; our choice: a memory bound, not a physical value).
GROUP_RECORDS = 400_000


def clock_notes(met, catalogue, file_name, group_records=None,
                utc_labels=False, judged=None, zoned_sites=()) -> list[str]:
    """The clock check of a met Dataset: :func:`site_lags`, then :func:`notes_from_lags`.

    Parameters
    ----------
    met : xarray.Dataset
        (site, time), ``solar_radiation`` [W m-2], ``time`` the hour ends [UTC]; in
        memory or reading a store; checked a group of whole sites at a time.
    catalogue : SiteCatalogue
    file_name : str
    group_records : int, optional
        Records per group [record] (default :data:`GROUP_RECORDS`): the reader's own
        group, so that the check's peak memory is the reader's, whatever the number of
        sites.
    utc_labels : bool
        As :func:`notes_from_lags`.
    judged : set, optional
        Given: the ids of the sites judged (a whole-record lag of :data:`MIN_SUNNY_DAYS`
        sunny days or more) are added to it.
    zoned_sites : collection of str, optional
        As :func:`notes_from_lags`.

    Returns
    -------
    list of str
    """
    if "solar_radiation" not in met or met.sizes.get("site", 0) == 0 \
            or met.sizes.get("time", 0) == 0:
        return []
    ids = [str(s) for s in met["site"].values]
    lat = np.array([catalogue[s].latitude for s in ids], float)
    lon = np.array([catalogue[s].longitude for s in ids], float)
    time_end = met["time"].values
    step = max(1, (group_records or GROUP_RECORDS) // len(time_end))
    parts = []
    for k in range(0, len(ids), step):
        rad = np.asarray(met["solar_radiation"].isel(site=slice(k, k + step)).values, float)
        parts.append(site_lags(rad, time_end, lat[k:k + step], lon[k:k + step]))
    table = pd.concat(parts, ignore_index=True)
    if judged is not None:
        judged.update(s for s, lag in zip(ids, table["lag"]) if np.isfinite(lag))
    return notes_from_lags(table, ids, catalogue, file_name, utc_labels,
                           coordinate_hints(met, table, ids, lat, lon), zoned_sites)


def coordinate_hints(met, table, site_ids, latitude, longitude) -> dict:
    """Sites whose clock lag their coordinates explain: typed in each other's place, or
    the longitude's sign lost (a west longitude typed positive, or the reverse) [text].

    A swapped latitude and longitude (``latitude = 7.2``, ``longitude = 54.5`` for a site
    at 54.5 N, 7.2 E) moves the site's solar noon by the difference of the two over 15
    degrees an hour, which the clock check reads as a clock error of hours.  For each site
    whose whole-record lag is noted (:data:`LAG_NOTE_H` or more), the lag is measured
    again at the swapped coordinates (when the longitude can be a latitude, within
    +-90 degrees) and with the longitude's sign turned; the first that brings the lag
    under :data:`HALF_HOUR_HINT_H` (on time) is named.  A loop over the few noted
    sites, not over hours.

    Parameters
    ----------
    met : xarray.Dataset
        As :func:`clock_notes`.
    table : pandas.DataFrame
        :func:`site_lags` of `site_ids`.
    site_ids : sequence of str
    latitude, longitude : ndarray, shape (site,)
        [degree], from the catalogue.

    Returns
    -------
    dict
        site id -> the text added to its note (none for a site its coordinates do not
        explain).
    """
    hints = {}
    time_end = met["time"].values
    for i, row in enumerate(table.itertuples(index=False)):
        if not (np.isfinite(row.lag_clear) and abs(row.lag_clear) >= LAG_NOTE_H):
            continue
        la, lo = float(latitude[i]), float(longitude[i])
        tries = []
        if abs(lo) <= 90 and la != lo:
            tries.append(("latitude and longitude typed in each other's place", lo, la))
        if lo != 0:
            tries.append(("the longitude's sign lost (east is positive, west negative)",
                          la, -lo))
        if not tries:
            continue
        rad = np.asarray(met["solar_radiation"].isel(site=[i] * len(tries)).values, float)
        again = site_lags(rad, time_end, np.array([t[1] for t in tries]),
                          np.array([t[2] for t in tries]))
        for (what, la2, lo2), lag in zip(tries, again["lag_clear"]):
            if np.isfinite(lag) and abs(lag) < HALF_HOUR_HINT_H:
                hints[site_ids[i]] = (
                    f"; or the site's coordinates in the site catalogue (latitude {la:g}, "
                    f"longitude {lo:g}): at latitude {la2:g}, longitude {lo2:g} the "
                    f"radiation keeps time with the sun (lag {_hours(lag)}): {what}?")
                break
    return hints


def add_clock_notes(met, ledger, catalogue, path, group_records=None,
                    zoned_sites=()) -> None:
    """Append :func:`clock_notes` of a met Dataset just read to its ledger's notes (each
    met reader's last step: the CSV readers and the NetCDF/zarr path), and the sites it
    judged to the ledger's ``clock_judged``; then the notes of radiation below 0
    (:func:`.metlimits.negative_radiation_notes`).

    Parameters
    ----------
    met : xarray.Dataset
    ledger : Ledger
        Changed in place.
    catalogue : SiteCatalogue
    path : str or Path
        The file read (its name heads the notes).
    group_records : int, optional
        As :func:`clock_notes`.
    zoned_sites : collection of str, optional
        The sites of a CSV file whose labels carry their zone (:func:`notes_from_lags`).
    """
    from .zarrstore import is_zarr_path
    path = Path(path)
    utc = path.suffix in (".nc", ".nc4", ".netcdf") or is_zarr_path(path)
    ledger.notes.extend(clock_notes(met, catalogue, path.name, group_records, utc,
                                    ledger.clock_judged, set(zoned_sites)))
    # radiation below 0 kept by the hard range: said once, after the clock's notes
    ledger.notes.extend(negative_radiation_notes(met, path.name))

