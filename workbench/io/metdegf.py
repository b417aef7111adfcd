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

:func:`fahrenheit_edges` finds the runs the daily test cannot judge (a few hours, whose
day's mean moves little; days below -5 degC) by their two edges: the first hour of the
run is 1.8 x (the hour before) + 32 and the hour after its last is back to the degC
reading (see its docstring); below -10 degC, where that jump is the size of a natural
spell, only where the relative humidity holds steady across both edges; and, reflected
about -40 degC, runs colder than -50 degC, where the degF reading lies below the degC
one (between -30 and -50 degC the jump is too small to tell from the weather).
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
    x, order, xs, cs, _, step = _sorted_steps(temperature_k, codes, t, by_hour=False)
    day = np.asarray(t, "datetime64[D]")
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


#: Largest distance of an hour after a rise from 1.8 x (the hour before) + 32, and of the
#: hour before a drop from 1.8 x (the hour after) + 32 [K] (3 K: an hour's natural change
#: of up to about 1.7 K, times 1.8; our choice, with benchmarks/met_degf.py).
EDGE_TOL = 3.0
#: Smallest rise (and drop) at an edge [K] (24 K: the jump of the degF reading of an
#: hour at -10 degC or warmer (14 degF); natural changes of 24 K within an hour are
#: extremely rare (a foehn in the lee of a range, from memory); with 10 K or 20 K,
#: invented abrupt spells of 8-25 K within an hour were masked at -5 to -27 degC, with
#: 24 K none were, and runs were found as often or more, benchmarks/met_degf.py; our
#: choice).
EDGE_JUMP_MIN = 24.0
#: Smallest rise (and drop) at an edge where the relative humidity holds steady across
#: it [K] (8 K: the jump of the degF reading at -30 degC (0.8 T + 32); common practice
#: for the formula, the floor is our choice).  Between -30 and -10 degC the degF jump
#: (8-24 K) is the size of a natural spell, but a natural rise of 8 K within an hour at
#: the same vapour pressure lowers the relative humidity by 40 % of its value or more
#: (the saturation vapour pressure grows about 7 % per K below 0 degC, Magnus formula of
#: WMO-No. 8 (2008) Annex 4.B), while a unit switch leaves it as it was; see
#: :data:`RH_STEADY`.
COLD_JUMP_MIN = 8.0
#: Largest change of the relative humidity [1] across a cold edge (from the hour before
#: the rise to the rise, from the hour before the drop to the drop) for it to count as
#: steady (0.1: ten points; an hour's natural change of relative humidity at a steady
#: temperature is a few points; our choice, with benchmarks/met_degf.py).
RH_STEADY = 0.10
#: Highest relative humidity [1] on either side of a cold edge for its steadiness to
#: count (0.95: saturated air keeps about 1 across a cooling, by condensation, and
#: across a warming in rain or fog; an invented warm spell of 25 K whose end cooled
#: saturated air by 17.5 K with the relative humidity at 0.99-1.01 was masked for 34
#: days without this bound, benchmarks/met_degf.py; our choice).
RH_SATURATED = 0.95
#: Longest run between a rise and its drop judged by the edges [h] (62 days; longer runs
#: are the daily test's; our choice).
EDGE_MAX_HOURS = 62 * 24
#: Hours before the rise and after the drop whose mean is the run's neighbourhood [h].
EDGE_NEIGHBOUR_HOURS = 24
#: Largest distance of the run's mean read as degF from the mean of its neighbourhood
#: [K] (8 K: a run of days may drift with the weather; our choice).
EDGE_MATCH_K = 8.0
#: Smallest ratio of the spread of the run's hourly changes to that of its neighbours
#: for a long run [-] (degF stretches every change by 1.8; a warm spell keeps its own,
#: about 1; 1.2 is our choice, with benchmarks/met_degf.py).
EDGE_SPREAD_RATIO = 1.2
#: Shortest run whose spread of hourly changes is compared [h] (two days: over one day
#: the ratio of a degF run to its neighbours scattered from 1.2 to 2.4 in invented
#: temperate records; our choice).
EDGE_SPREAD_HOURS = 48


#: The temperature at which the degC and degF scales meet [degC] (-40 degC = -40 degF;
#: from the conversion F = 1.8 C + 32).  The relation of a degF reading to its degC
#: hour keeps its form under the reflection C -> 2 x (-40) - C, which is how
#: :func:`fahrenheit_edges` finds runs colder than this, where the degF reading lies
#: below the degC one.
SCALES_MEET = -40.0


def fahrenheit_edges(temperature_k, codes, t, relative_humidity=None) -> np.ndarray:
    """Rows of runs bounded by a jump to the degF reading of the hour before and a jump
    back to the degC reading of the hour after: :func:`_rising_edges` on the record as
    read (runs warmer than -40 degC, where degF reads higher), and on the record
    reflected about -40 degC (C -> -80 - C, under which F = 1.8 C + 32 keeps its form:
    runs colder than -40 degC, where degF reads lower, a drop at the start and a rise
    at the end; found below -50 degC with a steady relative humidity, -70 degC
    without).  Parameters and returns as :func:`_rising_edges`."""
    hit = _rising_edges(temperature_k, codes, t, relative_humidity)
    x = np.asarray(temperature_k, float) - ZERO_CELSIUS
    with np.errstate(invalid="ignore"):
        if not (x < SCALES_MEET).any():      # nothing colder than -40: no cold run
            return hit
    mirrored = 2 * SCALES_MEET - x + ZERO_CELSIUS
    return hit | _rising_edges(mirrored, codes, t, relative_humidity)


def _rising_edges(temperature_k, codes, t, relative_humidity=None) -> np.ndarray:
    """Rows of runs bounded by a rise to the degF reading of the hour before and a drop
    back to the degC reading of the hour after.

    A logger that switches to degF for some hours or days writes, at the first such
    hour, 1.8 x (the hour's degC) + 32, and at the first hour back the degC value whose
    degF reading the hour before held.  :func:`fahrenheit_days` sees such runs only on
    whole days above -5 degC; these edges see them at any length (a few hours up) and at
    any temperature where the degF reading stands :data:`EDGE_JUMP_MIN` above the degC
    one (-10 degC or warmer), and, with the relative humidity, down to -30 degC where it
    holds steady across both edges.  A run is found when, on consecutive hours of one
    site:

    * a rise of at least :data:`EDGE_JUMP_MIN` (or of :data:`COLD_JUMP_MIN` with the
      relative humidity changing by :data:`RH_STEADY` at most from the hour before and
      at most :data:`RH_SATURATED` on both hours)
      lands within :data:`EDGE_TOL` of 1.8 x (the hour before, as it is or carried on by
      its own trend from the hour before it, whichever is nearer) + 32;
    * the next such drop (the hour before it within :data:`EDGE_TOL` of 1.8 x the hour
      after, as it is or carried back by its trend, + 32; of the same size, with the
      same condition on the relative humidity) follows within :data:`EDGE_MAX_HOURS`,
      with no other rise between;
    * the run's mean read as degF lies within :data:`EDGE_MATCH_K` of the mean of the
      :data:`EDGE_NEIGHBOUR_HOURS` hours before the rise and after the drop;
    * a run of :data:`EDGE_SPREAD_HOURS` or more changes from hour to hour
      :data:`EDGE_SPREAD_RATIO` times as much as its neighbours (degF stretches every
      change by 1.8; a warm spell keeps its own).

    Parameters
    ----------
    temperature_k : ndarray
        Temperature as read from a degC header [K] (NaN where missing).
    codes : ndarray of int
        Site code of each row.
    t : ndarray of datetime64
        Hour of each row.
    relative_humidity : ndarray, optional
        Relative humidity of each row [1] (NaN where missing); without it, only edges of
        :data:`EDGE_JUMP_MIN` count.

    Returns
    -------
    ndarray of bool
        True on the rows of the runs found.
    """
    x, order, xs, cs, linked, _ = _sorted_steps(temperature_k, codes, t)
    n = len(x)
    out = np.zeros(n, bool)
    if n < 3:
        return out
    prev = np.r_[np.nan, xs[:-1]]
    # the degC hour next to an edge carried on by one hour (its trend from the hour
    # beyond; the diurnal cycle is smooth), where that hour is linked too
    prev2 = np.where(np.r_[False, linked[:-1]], np.r_[np.nan, np.nan, xs[:-2]], np.nan)
    ahead = np.where(np.r_[linked[1:], False], np.r_[xs[1:], np.nan], np.nan)
    on_rise = np.where(np.isfinite(prev2), 2 * prev - prev2, prev)
    on_drop = np.where(np.isfinite(ahead), 2 * xs - ahead, xs)
    with np.errstate(invalid="ignore"):
        # the nearer of the two guesses (the hour itself, or carried on by its trend):
        # a noisy logger's hour-to-hour scatter spoils the trend, a smooth one's diurnal
        # slope spoils the hour itself
        off_rise = np.fmin(np.abs(xs - convert_plain(prev, "degC", "degF")),
                           np.abs(xs - convert_plain(on_rise, "degC", "degF")))
        off_drop = np.fmin(np.abs(prev - convert_plain(xs, "degC", "degF")),
                           np.abs(prev - convert_plain(on_drop, "degC", "degF")))
        if relative_humidity is None:
            steady = np.zeros(n, bool)
        else:
            rh = np.asarray(relative_humidity, float)[order]
            rh_prev = np.r_[np.nan, rh[:-1]]
            # near saturation the relative humidity stays pinned whatever the
            # temperature does (fog, condensation on cooling): no evidence there
            steady = (linked & (np.abs(rh - rh_prev) <= RH_STEADY)
                      & (np.fmax(rh, rh_prev) <= RH_SATURATED))
        big = np.where(steady, COLD_JUMP_MIN, EDGE_JUMP_MIN)
        rise = linked & (xs - prev >= big) & (off_rise <= EDGE_TOL)
        drop = linked & (prev - xs >= big) & (off_drop <= EDGE_TOL)
    r_idx, d_idx = np.flatnonzero(rise), np.flatnonzero(drop)
    if not len(r_idx) or not len(d_idx):
        return out
    k = np.searchsorted(d_idx, r_idx, side="right")           # the next drop of each rise
    has = k < len(d_idx)
    r_idx, d = r_idx[has], d_idx[k[has]]
    nxt = np.searchsorted(r_idx, r_idx, side="right")         # the next rise
    next_rise = np.where(nxt < len(r_idx), r_idx[np.minimum(nxt, len(r_idx) - 1)], n)
    ok = (next_rise >= d) & (d - r_idx <= EDGE_MAX_HOURS) & (cs[r_idx] == cs[d - 1])
    # the whole run must be consecutive hours of one site
    gaps = np.concatenate([[0], np.cumsum(~linked)])
    ok &= gaps[d] - gaps[r_idx + 1] == 0
    r_idx, d = r_idx[ok], d[ok]
    if not len(r_idx):
        return out
    csum = np.concatenate([[0.0], np.nancumsum(xs)])
    ccnt = np.concatenate([[0], np.cumsum(np.isfinite(xs))])
    dx = np.where(linked, xs - prev, np.nan)
    csq = np.concatenate([[0.0], np.nancumsum(dx ** 2)])
    cdn = np.concatenate([[0], np.cumsum(np.isfinite(dx))])

    def mean(a, b, c=csum, k=ccnt):
        with np.errstate(invalid="ignore", divide="ignore"):
            return (c[b] - c[a]) / (k[b] - k[a])
    lo = np.maximum(r_idx - EDGE_NEIGHBOUR_HOURS, 0)
    hi = np.minimum(d + EDGE_NEIGHBOUR_HOURS, n)
    same_lo = cs[lo] == cs[r_idx]
    same_hi = cs[hi - 1] == cs[d]
    with np.errstate(invalid="ignore", divide="ignore"):
        around = ((csum[r_idx] - csum[lo] + csum[hi] - csum[d])
                  / (ccnt[r_idx] - ccnt[lo] + ccnt[hi] - ccnt[d]))
        inside_f = convert_plain(mean(r_idx, d), "degF", "degC")   # the run read as degF
        level = np.abs(inside_f - around) <= EDGE_MATCH_K
        # the spread of hourly changes inside (without the rise) against outside
        sd_in = np.sqrt(mean(r_idx + 1, d, csq, cdn))
        sd_out = np.sqrt((csq[r_idx] - csq[lo + 1] + csq[hi] - csq[d + 1])
                         / (cdn[r_idx] - cdn[lo + 1] + cdn[hi] - cdn[d + 1]))
        spread = (d - r_idx < EDGE_SPREAD_HOURS) | (sd_in >= EDGE_SPREAD_RATIO * sd_out)
    good = level & spread & same_lo & same_hi
    mark = np.zeros(n + 1, int)
    np.add.at(mark, r_idx[good], 1)
    np.add.at(mark, d[good], -1)
    out[order] = np.cumsum(mark[:-1]) > 0
    return out


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


def _sorted_steps(temperature_k, codes, t, by_hour=True):
    """The shared start of the degF checks: the record sorted by site and hour.

    Parameters
    ----------
    temperature_k : ndarray
        Temperature as read from a degC header [K] (NaN where missing).
    codes : ndarray of int
        Site code of each row.
    t : ndarray of datetime64
        Hour of each row.
    by_hour : bool
        Whether a step needs the next row to be the next hour (True; the edges) or only
        the same site (False; the daily test's largest rise and drop of a day).

    Returns
    -------
    x : ndarray
        degC as read, in the rows' order [degC].
    order : ndarray of int
        The rows sorted by site, then hour.
    xs, cs : ndarray
        `x` and `codes` in that order [degC, -].
    linked : ndarray of bool
        Row i of the sorted record follows row i - 1 (same site; and, with `by_hour`,
        the next hour).
    step : ndarray
        ``xs[i] - xs[i - 1]`` where linked, NaN elsewhere [K].

    >>> t = np.array(["2020-01-01T02", "2020-01-01T01", "2020-01-01T05"], "datetime64[h]")
    >>> _, order, xs, _, linked, step = _sorted_steps(np.array([3.0, 1.0, 9.0]) + ZERO_CELSIUS,
    ...                                               np.zeros(3, int), t)
    >>> order.tolist(), linked.tolist(), np.round(step, 6).tolist()
    ([1, 0, 2], [False, True, False], [nan, 2.0, nan])
    """
    x = np.asarray(temperature_k, float) - ZERO_CELSIUS          # degC as read
    codes = np.asarray(codes)
    order = np.lexsort((t, codes))
    xs, cs = x[order], codes[order]
    linked = np.r_[False, cs[1:] == cs[:-1]]                    # no step across sites
    if by_hour:
        ts = np.asarray(t, "datetime64[h]")[order].astype(np.int64)
        linked &= np.r_[False, ts[1:] - ts[:-1] == 1]            # hour i-1 -> i
    step = np.where(linked, np.r_[np.nan, np.diff(xs)], np.nan)
    return x, order, xs, cs, linked, step
