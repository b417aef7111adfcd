"""The notes on a met record's missing hours per site, with the hint of a clock going
forward to summer time.

Part of :mod:`workbench.io.metchecks` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np

from .metvars import MET_VARIABLES

#: The words of a site's note when its met record has a row for every hour and a value
#: of every required variable (:data:`VALUE_NAMES`) in every hour
#: (``met farm: complete hourly record 2016-01-01T00:00 to ...``): a note that nothing is
#: amiss, which the end of ``workbench run`` leaves out of its input notes
#: (:func:`workbench.cli_status.input_note_lines`).
COMPLETE_RECORD = "complete hourly record"

#: The variables whose hours with a value the note of a site counts: the required ones
#: of :data:`workbench.io.metvars.MET_VARIABLES` (the optional ones are often absent).
VALUE_NAMES = tuple(k for k, (_, req, _) in MET_VARIABLES.items() if req)


#: The met variables without any value of which no hour of a site has a deposition
#: velocity (measured: each blanked in turn in the synthetic met of
#: tests/drydep/dry_synthetic.py leaves no Vd of SO2, HNO3 or pSO4 under the default
#: scheme; blank relative humidity or precipitation leave a part of the hours, blank
#: pressure none, as it is filled from the site's elevation).
VD_NEEDS = ("wind_speed", "temperature", "solar_radiation")
#: The required met variables a deposition velocity reads (all of :data:`VALUE_NAMES`
#: but the pressure, filled from the elevation where missing): those a site lacks in
#: every hour are named where it has no Vd in any hour.
VD_INPUTS = tuple(k for k in VALUE_NAMES if k != "pressure")


def value_hours(values, rows, i: int) -> dict:
    """The hours with a value of each variable of :data:`VALUE_NAMES` in `values` among
    the hours with a row of site `i` (the count behind :func:`value_counts`).

    Returns
    -------
    dict of str to int
    """
    rows = np.asarray(rows, bool)
    return {name: int(np.count_nonzero(~np.isnan(np.asarray(values[name][i], float)[rows])))
            for name in VALUE_NAMES if name in values}


#: The shortest stretch of hours without a value of a variable (among hours with a row)
#: that the met note of a site dates [h]: a week, as the budget's notes of sampling
#: gaps (:data:`workbench.budgetstatus_notes.SAMPLING_GAP_NOTE_H`; our choice).
VALUE_GAP_NOTE_H = 168


def true_runs(mask) -> tuple[np.ndarray, np.ndarray]:
    """The runs of True in a 1-D boolean `mask`: their first indices and the indices
    after their last ([a, b) each).

    >>> [x.tolist() for x in true_runs([0, 1, 1, 0, 1])]
    [[1, 4], [3, 5]]
    """
    edges = np.diff(np.concatenate([[0], np.asarray(mask, bool).astype(np.int8), [0]]))
    return np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)


def longest_without(mask, times) -> str:
    """The longest stretch of `mask` (hours with a row and no value of a variable) as
    words, " (none for 1008 h from 2019-02-28T23:00 UTC)", where it lasts at least
    :data:`VALUE_GAP_NOTE_H` hours; "" otherwise.  The hours are counted on the time
    axis: a stretch broken by hours without a row is two stretches.

    >>> t = np.arange(1, 301).astype("datetime64[h]")
    >>> longest_without(np.arange(300) >= 100, t)
    ' (none for 200 h from 1970-01-05T05:00 UTC)'
    >>> longest_without(np.arange(300) >= 290, t)
    ''
    """
    a, b = true_runs(mask)
    if not len(a):
        return ""
    k = int(np.argmax(b - a))
    if b[k] - a[k] < VALUE_GAP_NOTE_H:
        return ""
    return (f" (none for {int(b[k] - a[k])} h from "
            f"{str(np.datetime64(times[a[k]], 'm'))[:16]} UTC)")


def value_counts(values, rows, i: int, times=None) -> str:
    """The hours with a value of each variable of :data:`VALUE_NAMES` that lacks one in
    some hour with a row of the site, as words ("" when none lacks one).

    Parameters
    ----------
    values : dict of str to ndarray
        Each variable on (site, time) [any unit], NaN where no value.
    rows : ndarray of bool
        The hours of the site that have a row (its ``row_present``).
    i : int
        The site (position on the site axis of `values`).

    >>> v = {"wind_speed": np.full((1, 4), np.nan), "temperature": np.ones((1, 4)),
    ...      "relative_humidity": np.array([[0.5, np.nan, 0.5, 0.5]])}
    >>> value_counts(v, np.ones(4, bool), 0)
    'of its 4 hours with a row, wind speed has a value in 0 (none), relative humidity in 3'
    >>> value_counts(v, np.array([True, False, True, True]), 0)[:50]
    'of its 3 hours with a row, wind speed has a value '
    >>> value_counts({"temperature": np.ones((1, 4))}, np.ones(4, bool), 0)
    ''

    With `times` (the hour ends of the time axis), a variable with a value in some
    hours but none for a week or more in a row says its longest such stretch
    (:func:`longest_without`): "wind speed has a value in 69120 (none for 1008 h from
    2019-02-28T23:00 UTC)".
    """
    n = int(np.count_nonzero(rows))
    words = []
    for name, k in value_hours(values, rows, i).items():
        if k < n:
            what = name.replace("_", " ")
            count = f"{k} (none)" if k == 0 else str(k)
            if times is not None and k > 0:
                count += longest_without(np.asarray(rows, bool) & np.isnan(
                    np.asarray(values[name][i], float)), times)
            words.append(f"{what} in {count}" if words else f"{what} has a value in {count}")
    return f"of its {n} hours with a row, " + ", ".join(words) if words else ""


def without_value(met, sites, names=VALUE_NAMES) -> np.ndarray:
    """Per site of `sites`, the variables of `names` with a value in none of the site's
    hours with a row (the zeros of :func:`value_hours`, which the met note of the site
    says as "has a value in 0 (none)"), in words: "wind speed" or "wind speed and
    temperature"; "" where each has a value somewhere, where the site has no row and
    where `met` is None or holds no ``row_present``.

    Parameters
    ----------
    met : xarray.Dataset or None
        ``row_present``, ``site`` and the variables on (site, time).
    sites : sequence of str

    >>> import xarray as xr
    >>> m = xr.Dataset({"row_present": (("site", "time"), np.ones((2, 3), bool)),
    ...                 "wind_speed": (("site", "time"), [[np.nan] * 3, [1.0] * 3]),
    ...                 "temperature": (("site", "time"), np.ones((2, 3)))},
    ...                coords={"site": ["a", "b"]})
    >>> without_value(m, ["b", "a", "c"]).tolist()
    ['', 'wind speed', '']
    """
    out = np.full(len(sites), "", dtype=object)
    if met is None or "row_present" not in met:
        return out
    ids = [str(s) for s in met["site"].values]
    for j, site in enumerate(sites):
        if str(site) not in ids:
            continue
        i = ids.index(str(site))
        # one site at a time: a record held on disk is read a site's rows at a time
        rows = np.asarray(met["row_present"].isel(site=i).values, bool)
        if not rows.any():
            continue
        values = {k: met[k].isel(site=i).values[None] for k in names if k in met}
        none = [k.replace("_", " ") for k, n in value_hours(values, rows, 0).items()
                if n == 0]
        out[j] = " and ".join([", ".join(none[:-1]), none[-1]] if len(none) > 1 else none)
    return out


#: The name of the first kind of :func:`gap_runs`: hours without a row of the site's met
#: record (every variable lacks a value there).
NO_ROW = "row"


def gap_runs(met, sites, names=VD_INPUTS):
    """The runs of hours of each site of `sites` without a met row, and, among the hours
    with a row, without a value of each variable of `names`, as one table of runs (the
    input of :func:`workbench.drymetgaps.met_gap_words`, which counts them per period).

    Parameters
    ----------
    met : xarray.Dataset or None
        ``row_present``, ``site``, ``time`` and the variables on (site, time).
    sites : sequence of str
    names : tuple of str
        The variables whose hours without a value are told (default: those a
        deposition velocity reads, :data:`VD_INPUTS`).

    Returns
    -------
    pandas.DataFrame
        ``site`` (position in `sites`), ``kind`` (0: no row, :data:`NO_ROW`; 1 + i:
        no value of ``names[i]`` in an hour with a row), ``a``, ``b`` (the run's hours
        [a, b) on the met's time axis); empty where `met` is None or has no
        ``row_present``.  A variable absent from `met` is no gap of the record (an
        optional one is often absent; a required one is refused by the reader).

    >>> import xarray as xr
    >>> m = xr.Dataset({"row_present": (("site", "time"), [[True, True, True, False]]),
    ...                 "wind_speed": (("site", "time"), [[1.0, np.nan, np.nan, np.nan]])},
    ...                coords={"site": ["a"]})
    >>> gap_runs(m, ["a"], ("wind_speed",)).values.tolist()
    [[0, 0, 3, 4], [0, 1, 1, 3]]
    """
    import pandas as pd
    cols = {"site": [], "kind": [], "a": [], "b": []}
    if met is None or "row_present" not in met:
        return pd.DataFrame(cols, dtype=int)
    ids = [str(s) for s in met["site"].values]
    for j, site in enumerate(sites):        # one site at a time (a record held on disk)
        if str(site) not in ids:
            continue
        i = ids.index(str(site))
        rows = np.asarray(met["row_present"].isel(site=i).values, bool)
        masks = [~rows] + [rows & np.isnan(np.asarray(met[k].isel(site=i).values, float))
                           if k in met else np.zeros(rows.shape, bool) for k in names]
        for kind, m in enumerate(masks):
            a, b = true_runs(m)
            cols["site"].append(np.full(len(a), j))
            cols["kind"].append(np.full(len(a), kind))
            cols["a"].append(a)
            cols["b"].append(b)
    if not cols["a"]:
        return pd.DataFrame({k: [] for k in cols}, dtype=int)
    return pd.DataFrame({k: np.concatenate(v).astype(int) for k, v in cols.items()})


def describe_gaps(met, values=None) -> list[str]:
    """Text notes on missing hours per site between its first and last row, and on the
    hours without a value of a required variable (:func:`value_counts`): a site whose
    hours all have a row but whose wind speed is blank throughout is not "complete".

    Parameters
    ----------
    met : xarray.Dataset or mapping
        ``row_present``, ``site`` and ``time`` (each with ``.values``), and the
        variables on (site, time) when `values` is None.
    values : dict of str to ndarray, optional
        Each variable on (site, time), NaN where no value (the grids of a reader that
        builds no Dataset); default: the variables of :data:`VALUE_NAMES` in `met`.
    """
    notes = []
    present = met["row_present"].values
    times = met["time"].values
    if values is None:
        values = {k: met[k].values for k in VALUE_NAMES if k in met}
    for i, site in enumerate(met["site"].values):
        p = present[i]
        if not p.any():
            notes.append(f"met {site}: no rows")
            continue
        a, b = np.flatnonzero(p)[[0, -1]]
        inner = ~p[a:b + 1]
        n_miss = int(inner.sum())
        counts = value_counts(values, p, i, times)
        span = f"{str(times[a])[:16]} to {str(times[b])[:16]} UTC"
        if n_miss == 0 and not counts:
            notes.append(f"met {site}: {COMPLETE_RECORD} {span}")
            continue
        if n_miss == 0:
            notes.append(f"met {site}: a row for every hour {span}, not every value: {counts}")
            continue
        starts, ends = true_runs(inner)
        k = int(np.argmax(ends - starts))
        notes.append(f"met {site}: {n_miss} missing hour{'s' if n_miss != 1 else ''} in "
                     f"{len(starts)} gap{'s' if len(starts) != 1 else ''}; longest "
                     f"{int(ends[k] - starts[k])} h from {str(times[a + starts[k]])[:16]} UTC"
                     + clock_forward_hint(times[a + starts[(ends - starts) == 1]],
                                          (b - a + 1) / 8766.0)
                     + (f"; {counts}" if counts else ""))
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
