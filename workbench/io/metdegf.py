"""Days of a met record written in degF under a degC header.

The whole-site rules of :func:`workbench.io.metchecks.run_row_checks` (a median above
40 degC, or over 1 % of the hours above 60 degC) see a record written in degF from end
to end.  A logger's export of a few days or weeks in degF among degC rows escapes them
in the cool months (40 "degC" in January passes the hard range) and, in a summer, made
the hot-hours rule mask the whole site's temperature, its good rows too.
:func:`fahrenheit_days` judges each day against the days around it: the day's mean
read as degC stands at least :data:`EXCESS_MIN` above the median of the daily means of
the :data:`WINDOW_DAYS` days around it (a run shorter than half the window leaves that
median at the true level), and read as degF ((value - 32) / 1.8) it comes within
:data:`MATCH_K` of that median.  Where that median is below :data:`COLDEST_REFERENCE`
the two scales lie too close (they meet at -40) and a winter warm spell could look the
same: such days are not judged.  A run of found days must start with a rise (or end
with a drop) of :data:`JUMP_MIN` from one hour to the next: a logger's unit changes at
an hour, a warm spell comes over hours.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import ZERO_CELSIUS
from ..units import convert_plain

#: Smallest excess of a day's mean over the median of the days around it [K] (20 K: a
#: daily mean that far above a four-month median is a rare warm spell; a degF day at a
#: median of -5 degC or above stands 28 K above it, less 1.8 x its own anomaly; with
#: 15 K, invented tundra summers gave 0.9 false days a year, benchmarks/met_degf.py;
#: our choice).
EXCESS_MIN = 20.0
#: Largest distance of the day's mean read as degF from that median [K] (6 K: about
#: the day-to-day scatter of daily means about a seasonal median (sd 3-7 K in the
#: invented climates of benchmarks/met_degf.py); 4 K found half the days of a degF run
#: in a temperate winter, 10 K gave false days in a tundra summer; our choice).
MATCH_K = 6.0
#: Days of the centred window of daily means [d] (121: a run of up to two months of degF
#: days leaves its median at the degC level; the seasonal curvature over four months
#: moves the median by 2-3 K at most, from memory; our choice).
WINDOW_DAYS = 121
#: Fewest days with a mean in the window [d] (our choice).
WINDOW_MIN_DAYS = 30
#: Smallest change from one hour to the next at an end of a run of found days [K] (10 K:
#: a degF run at a median of -5 degC or above starts with a rise of about 28 K; warm
#: spells come over hours, fronts rarely bring 10 K in an hour, from memory; our choice).
JUMP_MIN = 10.0
#: Fewest hours of a day for its mean [h] (half a day; common practice).
DAY_MIN_HOURS = 12
#: Coldest median of the window at which a day is judged [K] (-5 degC: below it a warm
#: spell of 20-25 K can match the degF reading; our choice).
COLDEST_REFERENCE = ZERO_CELSIUS - 5.0


def fahrenheit_days(temperature_k, codes, t) -> np.ndarray:
    """Rows on days that look written in degF under a degC header.

    Parameters
    ----------
    temperature_k : ndarray
        Temperature as read from a degC header [K] (NaN where missing).
    codes : ndarray of int
        Site code of each row.
    t : ndarray of datetime64
        Hour of each row.

    Returns
    -------
    ndarray of bool
        True on the rows of the days found.
    """
    x = np.asarray(temperature_k, float) - ZERO_CELSIUS          # degC as read
    day = np.asarray(t, "datetime64[D]")
    order = np.lexsort((t, codes))
    xs, cs = x[order], codes[order]
    step = np.r_[np.nan, np.diff(xs)]
    step[np.r_[True, cs[1:] != cs[:-1]]] = np.nan            # no step across sites
    frame = pd.DataFrame({"site": cs, "day": day[order], "x": xs,
                          "rise": step, "drop": -step})
    daily = frame.groupby(["site", "day"]).agg(
        mean=("x", "mean"), count=("x", "count"), rise=("rise", "max"),
        drop=("drop", "max")).reset_index()
    daily.loc[daily["count"] < DAY_MIN_HOURS, "mean"] = np.nan
    ref = (daily.set_index("day").groupby("site")["mean"]
           .rolling(f"{WINDOW_DAYS}D", center=True, min_periods=WINDOW_MIN_DAYS).median())
    daily["ref"] = ref.to_numpy()
    d, r = daily["mean"].to_numpy(), daily["ref"].to_numpy()
    as_f = convert_plain(d, "degF", "degC")                   # the day read as degF
    with np.errstate(invalid="ignore"):
        bad = ((d - r >= EXCESS_MIN) & (np.abs(as_f - r) <= MATCH_K)
               & (r >= COLDEST_REFERENCE - ZERO_CELSIUS))
    bad &= _edged(daily, bad)
    hit = daily.loc[bad, ["site", "day"]]
    if hit.empty:
        return np.zeros(len(x), bool)
    key = pd.MultiIndex.from_arrays([codes, day])
    return key.isin(pd.MultiIndex.from_frame(hit))


def _edged(daily, bad) -> np.ndarray:
    """Whether each found day's run of consecutive found days starts with an hourly rise
    or ends with an hourly drop of at least :data:`JUMP_MIN` (on its first day or the
    day before; its last day or the day after): a logger's unit changes from one hour to
    the next, a warm spell comes over hours and days."""
    site = daily["site"].to_numpy()
    dayn = daily["day"].to_numpy().astype("datetime64[D]").astype(np.int64)
    rise = daily["rise"].to_numpy()
    drop = daily["drop"].to_numpy()
    prev_same = np.r_[False, (site[1:] == site[:-1]) & (dayn[1:] == dayn[:-1] + 1)]
    next_same = np.r_[prev_same[1:], False]
    start = bad & ~(np.r_[False, bad[:-1]] & prev_same)
    block = np.cumsum(start)
    rise_before = np.where(prev_same, np.r_[np.nan, rise[:-1]], np.nan)
    drop_after = np.where(next_same, np.r_[drop[1:], np.nan], np.nan)
    with np.errstate(invalid="ignore"):
        first_edge = start & ((rise >= JUMP_MIN) | (rise_before >= JUMP_MIN))
        end = bad & ~(np.r_[bad[1:], False] & next_same)
        last_edge = end & ((drop >= JUMP_MIN) | (drop_after >= JUMP_MIN))
    ok_blocks = np.unique(block[bad & (first_edge | last_edge)])
    return np.isin(block, ok_blocks) & bad
