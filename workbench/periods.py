"""Period tables and the splitting of time intervals across periods.

A *period table* is a :class:`pandas.DataFrame` with one row per reporting period
and the columns

=========  ===================================================================
column     meaning
=========  ===================================================================
``label``  unique text label (``"2021-01"``, ``"2021-DJF"``, ``"2021"``,
           ``"HY2021"``, or the label given for a custom range)
``start``  first instant of the period, inclusive (datetime64, UTC)
``end``    end of the period, exclusive (datetime64, UTC)
``kind``   ``"month"``, ``"season"``, ``"year"``, ``"hydro_year"`` or ``"custom"``
``year``   the year the label names (int; -1 for custom ranges)
``season`` ``"DJF"``, ``"MAM"``, ``"JJA"``, ``"SON"`` for months and seasons, else ``""``
``hours``  length of the period [h]
=========  ===================================================================

Conventions (common practice, stated so that they can be checked):

* Seasons are meteorological: DJF, MAM, JJA, SON.  A winter is labelled by the year
  of its January (``"2021-DJF"`` runs from 1 December 2020 to 1 March 2021).
* A hydrological year starts on the first day of a configurable month and is
  labelled by the calendar year in which it ends (``"HY2021"`` with a first month of
  October runs from 1 October 2020 to 1 October 2021; the US water-year habit).

An interval ``[start, end)`` (a precipitation sample, an air-sampling period, an
hour) is shared among the periods it overlaps by the share of its hours in each
(:func:`split_intervals`, :func:`overlap_matrix`).  Hourly records whose time stamp is
the END of the hour are assigned with :func:`assign_hours`.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .constants import HALF_HOUR

#: Reporting resolutions understood by :func:`make_periods`.
RESOLUTIONS = ("month", "season", "year", "hydro_year", "custom")
#: Meteorological seasons (common practice) and the month each starts in.
SEASON_NAMES = ("DJF", "MAM", "JJA", "SON")
SEASON_START_MONTH = {"DJF": 12, "MAM": 3, "JJA": 6, "SON": 9}
#: Season of each calendar month (index 1..12; index 0 unused).
MONTH_SEASON = np.array(["", "DJF", "DJF", "MAM", "MAM", "MAM", "JJA", "JJA", "JJA",
                         "SON", "SON", "SON", "DJF"], dtype=object)
#: Default first month of a hydrological year (October; the US water-year habit,
#: common practice).
DEFAULT_HYDRO_START_MONTH = 10
#: Months per step and anchor month of the regular resolutions.
_STEP_MONTHS = {"month": 1, "season": 3, "year": 12, "hydro_year": 12}
_ONE_HOUR = np.timedelta64(1, "h")

COLUMNS = ("label", "start", "end", "kind", "year", "season", "hours")


def _to_datetime64(values) -> np.ndarray:
    """Naive UTC datetime64[ns] array from timestamps, strings or datetime64."""
    arr = np.atleast_1d(np.asarray(values))
    out = pd.to_datetime(pd.Index(arr), format="ISO8601") if arr.dtype.kind in "OUS" \
        else pd.to_datetime(pd.Index(arr))
    if out.tz is not None:
        out = out.tz_convert("UTC").tz_localize(None)
    return out.values.astype("datetime64[ns]")


def _hours(delta) -> np.ndarray:
    """Length of timedelta64 values [h] as float."""
    return np.asarray(delta, dtype="timedelta64[ns]") / _ONE_HOUR


def _anchor(ts: pd.Timestamp, step: int, first_month: int) -> pd.Timestamp:
    """First instant of the regular period (of `step` months) that contains `ts`."""
    month0 = pd.Timestamp(ts.year, ts.month, 1)
    offset = (ts.month - first_month) % step
    return month0 - pd.DateOffset(months=offset)


def make_periods(start, end, resolution: str = "month", *,
                 hydro_start_month: int = DEFAULT_HYDRO_START_MONTH,
                 ranges=None, clip: bool = False) -> pd.DataFrame:
    """Table of the reporting periods that overlap ``[start, end)``.

    Parameters
    ----------
    start, end : str or datetime-like
        The span to cover (UTC); `end` is exclusive.
    resolution : {"month", "season", "year", "hydro_year", "custom"}
        Kind of period.
    hydro_start_month : int
        First month (1-12) of the hydrological year. [month]
    ranges : sequence or DataFrame, optional
        For ``"custom"``: ``(start, end)`` or ``(start, end, label)`` tuples, or a
        DataFrame with ``start``, ``end`` and optionally ``label`` columns.  Custom
        ranges may leave gaps or overlap each other.  A date alone is its first instant
        and each `end` is exclusive: the week of 8 to 14 March is
        ``("2021-03-08", "2021-03-15")`` (``"2021-03-14"`` would leave the 14th out).
    clip : bool
        When True, the first and last regular periods are cut to ``[start, end)``;
        by default whole calendar periods are returned.

    Returns
    -------
    pandas.DataFrame
        The period table described in the module docstring, sorted by start.

    Examples
    --------
    >>> p = make_periods("2020-11-15", "2021-03-01", "season")
    >>> list(p["label"]), str(p["start"].iloc[1].date())
    (['2020-SON', '2021-DJF'], '2020-12-01')
    >>> list(make_periods("2020-01-01", "2022-01-01", "hydro_year", hydro_start_month=10)["label"])
    ['HY2020', 'HY2021', 'HY2022']
    """
    if resolution not in RESOLUTIONS:
        raise ValueError(f"unknown period resolution {resolution!r}; "
                         f"expected one of {', '.join(RESOLUTIONS)}")
    if resolution == "custom":
        return _custom_periods(ranges)
    if not 1 <= int(hydro_start_month) <= 12:
        raise ValueError(f"hydro_start_month must be 1..12, got {hydro_start_month!r}")
    t0, t1 = (pd.Timestamp(_to_datetime64(start)[0]), pd.Timestamp(_to_datetime64(end)[0]))
    if not t1 > t0:
        raise ValueError(f"period span end {t1} is not after start {t0}")
    step = _STEP_MONTHS[resolution]
    first_month = {"month": 1, "season": SEASON_START_MONTH["DJF"], "year": 1,
                   "hydro_year": int(hydro_start_month)}[resolution]
    first = _anchor(t0, step, first_month)
    starts = pd.date_range(first, t1, freq=f"{step}MS", inclusive="left")
    ends = starts + pd.DateOffset(months=step)
    starts_v, ends_v = starts.values.astype("datetime64[ns]"), ends.values.astype("datetime64[ns]")
    if clip:
        starts_v = np.maximum(starts_v, np.datetime64(t0, "ns"))
        ends_v = np.minimum(ends_v, np.datetime64(t1, "ns"))
    month = starts.month.values
    year = starts.year.values
    if resolution == "month":
        labels = [f"{y:04d}-{m:02d}" for y, m in zip(year, month)]
        season = MONTH_SEASON[month]
        label_year = year
    elif resolution == "season":
        season = MONTH_SEASON[month]
        label_year = year + (month == SEASON_START_MONTH["DJF"])
        labels = [f"{y:04d}-{s}" for y, s in zip(label_year, season)]
    elif resolution == "year":
        labels = [f"{y:04d}" for y in year]
        season = np.full(len(year), "", dtype=object)
        label_year = year
    else:
        label_year = ends.year.values if hydro_start_month != 1 else year
        labels = [f"HY{y:04d}" for y in label_year]
        season = np.full(len(year), "", dtype=object)
    return _table(labels, starts_v, ends_v, resolution, label_year, season)


def _table(labels, starts, ends, kind, year, season) -> pd.DataFrame:
    """Assemble and check a period table."""
    table = pd.DataFrame({
        "label": pd.Series(labels, dtype=object).astype(str).values,
        "start": np.asarray(starts, dtype="datetime64[ns]"),
        "end": np.asarray(ends, dtype="datetime64[ns]"),
        "kind": kind,
        "year": np.asarray(year, dtype=int),
        "season": np.asarray(season, dtype=object),
    })
    table["hours"] = _hours(table["end"].values - table["start"].values)
    if (table["hours"] <= 0).any():
        bad = table.loc[table["hours"] <= 0, "label"].tolist()
        raise ValueError(f"periods with end not after start: {bad}")
    if table["label"].duplicated().any():
        raise ValueError("period labels must be unique; duplicated: "
                         f"{sorted(set(table.loc[table['label'].duplicated(), 'label']))}")
    return table.sort_values("start", kind="stable").reset_index(drop=True)


def _custom_periods(ranges) -> pd.DataFrame:
    """Period table of user-given ranges."""
    if ranges is None:
        raise ValueError("resolution 'custom' needs `ranges`: (start, end[, label]) tuples")
    if isinstance(ranges, pd.DataFrame):
        frame = ranges
    else:
        rows = [tuple(r) for r in ranges]
        if not rows:
            raise ValueError("`ranges` is empty")
        frame = pd.DataFrame([r[:2] for r in rows], columns=["start", "end"])
        if any(len(r) > 2 for r in rows):
            frame["label"] = [r[2] if len(r) > 2 else None for r in rows]
    starts, ends = _to_datetime64(frame["start"]), _to_datetime64(frame["end"])
    if "label" in frame:
        labels = [str(lab) if lab is not None and str(lab) != "nan" else None
                  for lab in frame["label"]]
    else:
        labels = [None] * len(starts)
    labels = [lab if lab is not None else
              f"{pd.Timestamp(s):%Y-%m-%d}/{pd.Timestamp(e):%Y-%m-%d}"
              for lab, s, e in zip(labels, starts, ends)]
    return _table(labels, starts, ends, "custom", np.full(len(starts), -1),
                  np.full(len(starts), "", dtype=object))


def _is_partition(p_start: np.ndarray, p_end: np.ndarray) -> bool:
    """True when the periods are sorted and do not overlap."""
    return bool(np.all(np.diff(p_start) > np.timedelta64(0)) and
                np.all(p_end[:-1] <= p_start[1:]))


def split_intervals(starts, ends, periods: pd.DataFrame) -> pd.DataFrame:
    """Share intervals ``[start, end)`` among the periods they overlap, by hours.

    Parameters
    ----------
    starts, ends : array_like of datetime64
        The intervals (samples, air periods, hours). [UTC]
    periods : pandas.DataFrame
        A period table (needs ``start`` and ``end``).

    Returns
    -------
    pandas.DataFrame
        One row per (interval, period) pair with a positive overlap: ``interval``
        (position in `starts`), ``period`` (position in `periods`), ``start`` and
        ``end`` of the overlap, ``hours`` of overlap [h], and ``fraction`` [1], the
        share of the interval's hours that falls in the period.  Parts of an
        interval outside every period are absent, so the fractions of an interval
        sum to 1 only when the periods cover it.  An interval of zero length is
        given wholly (fraction 1, hours 0) to the period containing its start.

    Notes
    -----
    For interval *i* and period *p*,

    .. math:: f_{ip} = \\frac{\\max(0,\\ \\min(e_i, E_p) - \\max(s_i, S_p))}{e_i - s_i}

    (the share-of-hours rule).  When the periods form a sorted partition (every
    regular resolution), the candidate periods of each interval are found by binary
    search, so the cost grows with the number of pairs, not with intervals x periods.

    Examples
    --------
    >>> p = make_periods("2021-01-01", "2021-03-01", "month")
    >>> t = split_intervals(["2021-01-26"], ["2021-02-02"], p)
    >>> t["period"].tolist(), t["hours"].tolist(), t["fraction"].round(4).tolist()
    ([0, 1], [144.0, 24.0], [0.8571, 0.1429])
    """
    s, e = _to_datetime64(starts), _to_datetime64(ends)
    if s.shape != e.shape:
        raise ValueError("starts and ends differ in length")
    if np.any(e < s):
        raise ValueError("an interval ends before it starts")
    ps = periods["start"].values.astype("datetime64[ns]")
    pe = periods["end"].values.astype("datetime64[ns]")
    if len(ps) and _is_partition(ps, pe):
        lo = np.searchsorted(pe, s, side="right")          # first period ending after s
        hi = np.searchsorted(ps, e, side="left")           # periods starting before e
        zero = e == s
        hi = np.where(zero, np.searchsorted(ps, s, side="right"), hi)
        count = np.maximum(hi - lo, 0)
        interval = np.repeat(np.arange(len(s)), count)
        first = np.repeat(lo, count)
        offset = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
        period = first + offset
    else:
        ii, pp = np.meshgrid(np.arange(len(s)), np.arange(len(ps)), indexing="ij")
        interval, period = ii.ravel(), pp.ravel()
    a = np.maximum(s[interval], ps[period])
    b = np.minimum(e[interval], pe[period])
    hours = _hours(b - a)
    length = _hours(e[interval] - s[interval])
    zero_len = length == 0
    inside = (s[interval] >= ps[period]) & (s[interval] < pe[period])
    keep = np.where(zero_len, inside, hours > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        fraction = np.where(zero_len, 1.0, hours / np.where(zero_len, 1.0, length))
    out = pd.DataFrame({"interval": interval, "period": period, "start": a, "end": b,
                        "hours": np.where(zero_len, 0.0, hours), "fraction": fraction})
    return out[keep].reset_index(drop=True)


def overlap_matrix(starts, ends, periods: pd.DataFrame) -> np.ndarray:
    """Dense matrix of the share of each interval's hours in each period [1].

    Parameters
    ----------
    starts, ends : array_like of datetime64
        The intervals. [UTC]
    periods : pandas.DataFrame
        A period table.

    Returns
    -------
    numpy.ndarray
        Shape (n_intervals, n_periods); row *i* holds :math:`f_{ip}` of
        :func:`split_intervals` (0 where there is no overlap).

    Examples
    --------
    >>> p = make_periods("2021-01-01", "2021-03-01", "month")
    >>> overlap_matrix(["2021-01-31 12:00"], ["2021-02-01 12:00"], p).tolist()
    [[0.5, 0.5]]
    """
    table = split_intervals(starts, ends, periods)
    n = len(np.atleast_1d(np.asarray(starts)))
    out = np.zeros((n, len(periods)))
    np.add.at(out, (table["interval"].values, table["period"].values), table["fraction"].values)
    return out


def hour_bounds(times, starts, ends):
    """Index range [a, b) of the hours whose middle lies in [start, end).

    The one rule by which the wet and dry chains take the hours of a sample, an air
    period or a reporting period: for windows on whole hours, the hours inside them.

    Parameters
    ----------
    times : numpy.ndarray of datetime64
        Hour ends, in time order. [UTC]
    starts, ends : array_like of datetime64
        The windows. [UTC]

    Returns
    -------
    a, b : numpy.ndarray of int
        Positions in `times`.

    Examples
    --------
    >>> t = np.arange(1, 5).astype("datetime64[h]")            # hours ending 01:00-04:00
    >>> [x.tolist() for x in hour_bounds(t, t[:1] - 1, t[2:3])]  # [00:00, 03:00)
    [[0], [3]]
    """
    mid = np.asarray(times) - HALF_HOUR
    return (np.searchsorted(mid, np.asarray(starts), side="left"),
            np.searchsorted(mid, np.asarray(ends), side="left"))


def assign_hours(times, periods: pd.DataFrame, label: str = "end") -> np.ndarray:
    """Position in `periods` of the period that holds each hourly record.

    Parameters
    ----------
    times : array_like of datetime64
        Time stamps of hourly records. [UTC]
    periods : pandas.DataFrame
        A period table whose periods do not overlap.
    label : {"end", "start"}
        Whether a time stamp names the end of its hour (the workbench's convention
        for meteorology) or its start.

    Returns
    -------
    numpy.ndarray of int
        Period position of each hour, -1 where the hour lies in no period.

    Examples
    --------
    >>> p = make_periods("2021-01-01", "2021-03-01", "month")
    >>> assign_hours(["2021-02-01 00:00", "2021-02-01 01:00"], p).tolist()
    [0, 1]
    """
    if label not in ("end", "start"):
        raise ValueError(f"label must be 'end' or 'start', got {label!r}")
    t = _to_datetime64(times)
    hour_start = t - _ONE_HOUR if label == "end" else t
    ps = periods["start"].values.astype("datetime64[ns]")
    pe = periods["end"].values.astype("datetime64[ns]")
    if len(ps) and not _is_partition(ps, pe):
        raise ValueError("assign_hours needs periods that do not overlap")
    idx = np.searchsorted(ps, hour_start, side="right") - 1
    ok = (idx >= 0) & (hour_start < pe[np.clip(idx, 0, max(len(pe) - 1, 0))]) if len(ps) else \
        np.zeros(len(t), dtype=bool)
    return np.where(ok, idx, -1)


def season_of(times) -> np.ndarray:
    """Meteorological season (``"DJF"`` ...) of each time stamp.

    >>> season_of(["2021-12-05", "2021-07-01"]).tolist()
    ['DJF', 'JJA']
    """
    return MONTH_SEASON[pd.DatetimeIndex(_to_datetime64(times)).month.values]


#: Days of a calendar year that the record may reach into at its start or end and the
#: default reporting span still leave that year out [d]: the tail of the last weekly
#: samples (or of an hourly record stopped with them) a few days into a new year is no
#: year of the record.  A month, the longest usual sampling period (our choice; the
#: slack of :data:`workbench.preflight.COVERAGE_SLACK_DAYS`).
EDGE_YEAR_DAYS = 31


def _year_start(t, shift=0):
    """1 January of the year of `t` (plus `shift` years), as datetime64[ns]."""
    y = np.datetime64(t, "Y").astype(int) + 1970 + int(shift)
    return np.datetime64(f"{y:04d}-01-01", "ns")


def default_span(record_start, record_end):
    """The default reporting span ``[start, end)`` of a record: its calendar years,
    without a first or last year that the record reaches into by at most
    :data:`EDGE_YEAR_DAYS` days.

    The last weekly sample, 2021-12-28 to 2022-01-04, made 2022 a period of its own
    (four days of data, the rest of the year without any): a year that reads as a
    year of the record in every table.  Here the default end is then 2022-01-01; the
    days cut off are said by :func:`excluded_record_notes` (the run notes).  A year
    the record reaches into by more (a site closed in June) stays, a partial year that
    completeness flags.  A record shorter than that on both sides of a New Year keeps
    its whole span.

    Parameters
    ----------
    record_start, record_end : datetime64
        The earliest start and latest end of the samples and air periods (UTC; end
        exclusive).

    Returns
    -------
    (numpy.datetime64, numpy.datetime64)
        Start and exclusive end [ns, UTC].

    Examples
    --------
    >>> d = lambda t: np.datetime64(t, "ns")
    >>> s, e = default_span(d("2021-01-05"), d("2022-01-04T10:00"))
    >>> str(s)[:10], str(e)[:10]
    ('2021-01-05', '2022-01-01')
    """
    s0, e0 = np.datetime64(record_start, "ns"), np.datetime64(record_end, "ns")
    edge = np.timedelta64(EDGE_YEAR_DAYS, "D")
    start, end = s0, e0
    first_next = _year_start(s0, 1)              # 1 January after the record's start
    if first_next - s0 <= edge:
        start = first_next
    last_first = _year_start(e0 - np.timedelta64(1, "ns"))   # 1 January of its last year
    if e0 - last_first <= edge:
        end = last_first
    if not end > start:
        return s0, e0
    return start, end


def excluded_record_notes(record_start, record_end, use_start=True, use_end=True) -> list:
    """The notes of the days of the record that :func:`default_span` leaves out (the
    head of the first samples before the first year, the tail of the last samples
    after the last year), each with its reason and how to keep them.

    `use_start`, `use_end`: whether the default start or end is in force (``[period]``
    gives neither).
    """
    s0, e0 = np.datetime64(record_start, "ns"), np.datetime64(record_end, "ns")
    start, end = default_span(s0, e0)
    day = lambda t: str(np.datetime64(t, "m")).replace("T00:00", "")   # noqa: E731
    out = []
    if use_end and end < e0:
        days = (e0 - end) / np.timedelta64(1, "D")
        out.append(f"period: the default [period] end is {day(end)}: the record reaches "
                   f"{days:.2g} days into {day(end)[:4]} (to {day(e0)} UTC, the tail of "
                   f"its last samples), and a year of so few days would read as a year of "
                   f"the record; those days are left out of every table (give [period] "
                   f"end = \"{day(_year_start(e0 - np.timedelta64(1, 'ns'), 1))}\" to keep "
                   "them, as a period of their own)")
    if use_start and start > s0:
        days = (start - s0) / np.timedelta64(1, "D")
        out.append(f"period: the default [period] start is {day(start)}: the record "
                   f"begins {days:.2g} days before it (from {day(s0)} UTC, the head of "
                   f"its first samples), and a year of so few days would read as a year of "
                   f"the record; those days are left out of every table (give [period] "
                   f"start = \"{day(_year_start(s0))}\" to keep them, as a period of their own)")
    return out
