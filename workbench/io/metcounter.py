"""Precipitation written as a gauge counter that restarts each day.

A logger that writes the day's running total (cumulative within the day, back to 0 at
the day's start) instead of each hour's amount draws a sawtooth: the values never fall
within a day and fall at one hour of the day only, the hour after the reset, from a
value held for hours (a day's total written into one hour, 0 in the others, falls at
one hour too, from a lone value).  An hourly
record's falls (a shower easing) come at every hour of the day: at the demo's sites the
most frequent hour holds 4.5-4.6 % of a site's falls (1/24 = 4.2 %), a daily counter's
100 %.  The values are masked with a reason that names the column, the hour and what to
write; they are never differenced back on a guess (a gap or a manual reset inside a day
would turn into a wrong amount without a trace).  A user who confirms the counter says
so in sites.toml (``met_precipitation = "daily_counter"``), and
:mod:`workbench.io.metdeclared` differences it.  numpy over rows, no loop over hours.
"""
from __future__ import annotations

import numpy as np

#: Share of a site's falls (consecutive hours, the later lower) at one hour of the day at
#: or above which its precipitation is judged a counter reset daily [-] (our choice:
#: an hourly record puts about 1/24 of its falls at each hour).
RESET_HOUR_SHARE = 0.9
#: Falls a site needs before it is judged [-] (a counter reset each day falls on every
#: day with rain: a month of a wet climate; our choice).
RESET_MIN_FALLS = 20
#: Share of those falls whose hour before the last rise already held a value (above 0
#: and not above the next) at or above which the shape is a counter [-]: a counter holds
#: the day's total for hours before its restart, a day's total written into one hour of
#: the day (0 in the others) does not (our choice).
RESET_HELD_SHARE = 0.5
#: Amount below which a fall is rounding, not a fall [mm] (half the 0.1 mm step a
#: tipping-bucket gauge writes; common practice).
FALL_MIN_MM = 0.05


def site_hours(codes, time_end, offset_h):
    """The rows in order of site and time, with each one's hour of the day.

    Parameters
    ----------
    codes : ndarray of int
        Site code of each row.
    time_end : ndarray of datetime64
        End of each row's hour [UTC].
    offset_h : ndarray of float
        Per site, the offset of its file's clock from UTC [h] (``utc_offset_h``).

    Returns
    -------
    order : ndarray of int
        Row indices sorted by site, then time.
    c : ndarray of int
        The site code of each sorted row.
    hour : ndarray of int
        The hour of the day of each sorted row's end on the file's clock [h].
    after : ndarray of bool
        The sorted row before is the same site's hour before (False for the first).
    """
    order = np.lexsort((np.asarray(time_end), codes))
    c = codes[order]
    minutes = np.asarray(time_end, "datetime64[m]")[order].astype(np.int64)
    hour = ((minutes + np.round(offset_h[c] * 60).astype(np.int64)) // 60) % 24
    after = np.zeros(len(order), bool)
    after[1:] = (c[1:] == c[:-1]) & (np.diff(minutes) == 60)
    return order, c, hour, after


def daily_reset_sites(pr, codes, n_sites, time_end, offset_h):
    """Per site: does its precipitation look like a counter reset each day?

    Parameters
    ----------
    pr : ndarray of float
        Precipitation of each row as read [mm].
    codes : ndarray of int
        Site code of each row (0 .. n_sites - 1).
    n_sites : int
    time_end : ndarray of datetime64
        End of each row's hour [UTC].
    offset_h : ndarray of float
        Per site, the offset of its file's clock from UTC [h] (``utc_offset_h``).

    Returns
    -------
    reset : ndarray of bool
        Per site.
    hour : ndarray of int
        Per site, the hour of the day (file's clock, hour end) at which most falls come.
    share : ndarray of float
        Per site, the share of its falls at that hour [-].
    falls : ndarray of int
        Per site, its falls.

    >>> t = np.datetime64("2020-01-01T01:00") + np.arange(72) * np.timedelta64(1, "h")
    >>> pr = np.tile(np.r_[0, 0, np.cumsum(np.ones(22))], 3)   # rain all day, reset 00:00
    >>> r, h, s, n = daily_reset_sites(pr, np.zeros(72, int), 1, t, np.zeros(1))
    >>> int(h[0]), float(s[0]), int(n[0])
    (1, 1.0, 2)
    """
    order, c, hour, after = site_hours(codes, time_end, offset_h)
    v = pr[order]
    pair = after[1:] & np.isfinite(v[1:]) & np.isfinite(v[:-1])
    fall = pair & (v[1:] < v[:-1] - FALL_MIN_MM)
    held = np.zeros(len(fall), bool)   # the pair before a fall: a value held, not a spike
    held[1:] = pair[:-1] & (v[:-2] > 0) & (v[:-2] <= v[1:-1])
    cell = c[1:][fall] * 24 + hour[1:][fall]
    counts = np.bincount(cell, minlength=n_sites * 24).reshape(n_sites, 24)
    falls = counts.sum(axis=1)
    top = counts.argmax(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = counts.max(axis=1) / falls
    n_held = np.bincount(c[1:][fall], held[fall].astype(float), minlength=n_sites)
    with np.errstate(invalid="ignore", divide="ignore"):
        held_share = n_held / falls
    reset = ((falls >= RESET_MIN_FALLS) & (share >= RESET_HOUR_SHARE)
             & (held_share >= RESET_HELD_SHARE))
    return reset, top, np.nan_to_num(share), falls


def reset_reason(header: str, hour: int, share: float, falls: int) -> str:
    """The reason of a site whose precipitation is a counter reset each day."""
    start = (hour - 1) % 24
    return (f"{header} looks like a gauge counter restarted each day, not each hour's "
            f"amount: {share:.0%} of its {falls} falls from one hour to the next come "
            f"at the hour ending {hour:02d}:00 (the file's clock), the restart at "
            f"{start:02d}:00: write each hour's amount (the difference from the hour "
            f"before, the day's first hour as read), expected 0 at most hours (masked)")
