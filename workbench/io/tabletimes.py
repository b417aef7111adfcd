"""Time texts of our CSV files: ISO 8601 labels (a day's end written 24:00 read as the
next day's 00:00, with its ledger note), the plausible years, and the readings of a date
written day/month or month/day.

Moved from :mod:`workbench.io.table`, which re-exports them.
"""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .ledger import compact_lines


#: First words of a spreadsheet's totals or summary row (common practice of sheets), in
#: a site or a time cell.
SUMMARY_ROW = re.compile(r"(?:grand )?(?:totals?|sums?|mean|average|median|min(?:imum)?|"
                         r"max(?:imum)?|count)\b", re.IGNORECASE)
_OFFSET = re.compile(r"[T ]\d\d.*(?:Z|[+-]\d\d(?::?\d\d)?)$")

#: Timestamps outside [YEARS[0], YEARS[1]) are typing slips in the year (common practice).
YEARS = (np.datetime64("1900-01-01", "ns"), np.datetime64("2100-01-01", "ns"))
#: The end of a day written as 24:00 (ISO 8601:2004, 4.2.3; from memory), with or without
#: seconds and a zone: read as 00:00 of the next day, with a note.
_END_OF_DAY = re.compile(r"\d{4}-\d\d-\d\d[T ]24:00(?::00(?:\.0+)?)?(?:Z|[+-]\d\d(?::?\d\d)?)?")


def end_of_day(text: pd.Series) -> np.ndarray:
    """True for the texts that label a day's end as 24:00 [bool].

    >>> end_of_day(pd.Series(["2021-04-03T24:00", "2021-04-03 24:00+01:00", "24:00",
    ...                       "2021-04-03T23:00", "2021-04-03T24:30"])).tolist()
    [True, True, False, False, False]
    """
    return text.astype(str).str.fullmatch(_END_OF_DAY).to_numpy(dtype=bool)


def parse_iso(text: pd.Series, utc: bool) -> np.ndarray:
    """ISO 8601 time texts as datetime64[ns]; NaT where a text is no time.

    `utc`: the texts carry an offset (converted to UTC, the zone dropped); else they are
    naive and returned as written (local standard time, shifted by the caller).  A day's
    end written 24:00 is 00:00 of the next day (:func:`end_of_day`).
    """
    eod = end_of_day(text)
    if eod.any():
        text = text.copy()
        text[eod] = text[eod].str.replace("24:00", "00:00", n=1, regex=False)
    t = pd.to_datetime(text, format="ISO8601", utc=utc, errors="coerce")
    if utc:
        t = t.dt.tz_localize(None)
    out = t.to_numpy().astype("datetime64[ns]")
    if eod.any():
        out[eod] = out[eod] + np.timedelta64(1, "D")
    return out


#: A date in day/month or month/day order (``01/02/2021``, ``1.2.21``, ``21-01-2021``),
#: with the rest of the label (a time) after it.
_DAY_MONTH = re.compile(r"(\d{1,2})([./-])(\d{1,2})\2(\d{4}|\d{2})(?![\d./-])(.*)")


def day_month_readings(text: str) -> str:
    """The ISO 8601 readings of a date written day/month or month/day ("" if none).

    A two-digit year is read in 2000-2099 (our choice: the records we read are of
    this century; the message shows the reading, so a wrong one is seen).

    >>> day_month_readings("01/02/2021")
    '2021-02-01 if day first, 2021-01-02 if month first'
    >>> day_month_readings("21.1.21 14:00")
    '2021-01-21T14:00 (day first; no month 21)'
    >>> day_month_readings("2021/01/21")
    ''
    """
    m = _DAY_MONTH.fullmatch(text.strip())
    if not m:
        return ""
    a, b, year, rest = int(m.group(1)), int(m.group(3)), m.group(4), m.group(5).strip()
    year = int(year) + 2000 if len(year) == 2 else int(year)
    tail = "T" + rest if re.fullmatch(r"\d\d:\d\d(:\d\d)?", rest) else ""

    def iso(month, day):
        return f"{year:04d}-{month:02d}-{day:02d}{tail}"
    day_first, month_first = 1 <= b <= 12 and 1 <= a <= 31, 1 <= a <= 12 and 1 <= b <= 31
    if day_first and month_first:
        return (iso(b, a) if a == b else
                f"{iso(b, a)} if day first, {iso(a, b)} if month first")
    if day_first:
        return f"{iso(b, a)} (day first; no month {a})"
    if month_first:
        return f"{iso(a, b)} (month first; no month {b})"
    return "no day/month reading fits; e.g. 2020-01-09T14:00"


def order_witness(texts: pd.Series):
    """The first of `texts` whose date, written day/month or month/day, fits one order
    only (a day above 12): (position, text, "day first" or "month first"), or None.

    >>> order_witness(pd.Series(["07/01/2016 14:00", "", "14/01/2016 14:00"]))
    (2, '14/01/2016 14:00', 'day first')
    >>> order_witness(pd.Series(["07/01/2016", "08/01/2016", "2016-01-14T09:00"])) is None
    True
    """
    parts = texts.astype(str).str.strip().str.extract(f"^{_DAY_MONTH.pattern}$")
    a = pd.to_numeric(parts[0], errors="coerce").to_numpy()
    b = pd.to_numeric(parts[2], errors="coerce").to_numpy()
    with np.errstate(invalid="ignore"):
        day = (a > 12) & (a <= 31) & (b >= 1) & (b <= 12)
        month = (b > 12) & (b <= 31) & (a >= 1) & (a <= 12)
    one = np.flatnonzero(day | month)
    if not len(one):
        return None
    k = int(one[0])
    return k, str(texts.iloc[k]).strip(), "day first" if day[k] else "month first"


#: An end written at minute 59 of an hour, without seconds or with 00 (a logger's or a
#: spreadsheet's end inclusive to the minute: 00:00 to 00:59 for the hour 00-01).
_MINUTE_59 = re.compile(r"\d{4}-\d\d-\d\d[T ]\d\d:59(?::00(?:\.0+)?)?(?:Z|[+-]\d\d(?::?\d\d)?)?")
#: An end written at second 59 of minute 59 (inclusive to the second: 00:00:00 to
#: 00:59:59 for the hour 00-01).
_SECOND_59 = re.compile(r"\d{4}-\d\d-\d\d[T ]\d\d:59:59(?:\.0+)?(?:Z|[+-]\d\d(?::?\d\d)?)?")


def late_seconds(text: pd.Series) -> np.ndarray:
    """How far each label stands before the next whole hour when it is written at minute
    59 (60 s) or at 59:59 (1 s); 0 for any other label [s, int].

    >>> late_seconds(pd.Series(["2021-01-01T00:59", "2021-01-01 00:59:59+01:00",
    ...                         "2021-01-01T01:00", "2021-01-01T00:59:30"])).tolist()
    [60, 1, 0, 0]
    """
    t = text.astype(str).str.strip()
    return np.where(t.str.fullmatch(_MINUTE_59).to_numpy(dtype=bool), 60,
                    np.where(t.str.fullmatch(_SECOND_59).to_numpy(dtype=bool), 1, 0))


def minute_59_hint(t) -> str:
    """The hint for an hourly label written at minute 59 or 59:59 (an hour's end with
    its last minute or second included), "" for any other time [datetime64].

    >>> minute_59_hint(np.datetime64("2021-01-01T00:59"))
    ' (an hour end written at minute 59, its last minute included? write each hour end on the hour: 01:00, not 00:59)'
    >>> minute_59_hint(np.datetime64("2021-01-01T00:30"))
    ''
    """
    t = np.datetime64(t, "s")
    past = int((t - t.astype("datetime64[h]")).astype(np.int64))
    if past == 3540:
        return (" (an hour end written at minute 59, its last minute included? write each "
                "hour end on the hour: 01:00, not 00:59)")
    if past == 3599:
        return (" (an hour end written at 59:59, its last second included? write each "
                "hour end on the hour: 01:00:00, not 00:59:59)")
    return ""


def inclusive_ends(start_text: pd.Series, end_text: pd.Series, start, end, group):
    """The moves that read ends written inclusive (at minute 59, ``00:00`` to ``00:59``,
    or at 59:59) as the next whole hour, and a start written at that same label as the
    same whole hour [s, int].

    An end is moved (60 s, or 1 s at 59:59) when its period is a whole number of hours
    less that much.  A row whose start is the previous row's end (same `group`, rows in
    time order), written at minute 59 (or 59:59) with that end moved, starts on the same
    whole hour: the label names one instant on both sides (``00:00`` to ``00:59``, then
    ``00:59`` to ``01:59``: both 01:00).  Its end, at the same minute, then closes a
    whole number of hours less a minute and is moved too, and so on down the run of
    rows that share their labels.  A run whose first row starts at minute 59 (``00:59``
    to ``01:59``, ``01:59`` to ``02:59``) is of whole hours and read as written.

    Parameters
    ----------
    start_text, end_text : pandas.Series of str
        The labels as written.
    start, end : ndarray of datetime64
        The parsed start and end (UTC).
    group : ndarray, or a tuple of them
        A key per row (or the keys, site and sampler): rows of one key follow each
        other.

    Returns
    -------
    (start_move, end_move) : two int arrays [s]: 0, 1 or 60 per row.

    >>> t = lambda *x: np.array(x, dtype="datetime64[ns]")
    >>> s = ["2021-01-01T00:00", "2021-01-01T00:59", "2021-01-01T01:59", "2021-01-01T05:00"]
    >>> e = ["2021-01-01T00:59", "2021-01-01T01:59", "2021-01-01T02:59", "2021-01-01T05:59"]
    >>> sm, em = inclusive_ends(pd.Series(s), pd.Series(e), t(*s), t(*e), np.zeros(4))
    >>> sm.tolist(), em.tolist()
    ([0, 60, 60, 0], [60, 60, 60, 60])
    >>> sm, em = inclusive_ends(pd.Series(s[1:3]), pd.Series(e[1:3]), t(*s[1:3]),
    ...                         t(*e[1:3]), np.zeros(2))
    >>> sm.tolist(), em.tolist()
    ([0, 0], [0, 0])
    """
    start, end = np.asarray(start), np.asarray(end)
    n = len(start)
    s_late, e_late = late_seconds(start_text), late_seconds(end_text)
    length = (end - start).astype("timedelta64[s]").astype(np.int64)
    own = (e_late > 0) & (length > 0) & (length % 3600 == 3600 - e_late)
    sm, em = np.zeros(n, np.int64), np.zeros(n, np.int64)
    if not (own.any() and (s_late > 0).any()):
        return sm, np.where(own, e_late, 0)
    key = pd.MultiIndex.from_arrays([np.asarray(g) for g in group]).factorize()[0] \
        if isinstance(group, tuple) else pd.factorize(np.asarray(group))[0]
    order = np.lexsort((end, start, key))
    g = key[order]
    so, eo, sl, el, ln = start[order], end[order], s_late[order], e_late[order], length[order]
    joined = np.zeros(n, bool)
    joined[1:] = (g[1:] == g[:-1]) & (so[1:] == eo[:-1]) & (sl[1:] > 0) & (
        sl[1:] == el[:-1])
    # a row joined to the one before with both labels at the same :59 form: its end
    # moves as the run's first row's does
    through = joined & (sl == el) & (ln > 0) & (ln % 3600 == 0)
    head = np.maximum.accumulate(np.where(through, 0, np.arange(n)))
    moved = own[order][head]
    prev = np.zeros(n, bool)
    prev[1:] = moved[:-1]
    sm[order] = np.where(joined & prev, sl, 0)
    em[order] = np.where(moved, el, 0)
    return sm, em


def inclusive_end_notes(file_name: str, end_column: str, start_column: str,
                        start_move, end_move, lines) -> list:
    """The ledger notes of the labels moved by :func:`inclusive_ends`: one per form
    (minute 59, 59:59) with the count of the rows and their lines ([] for none).

    >>> inclusive_end_notes("air.csv", "end", "start", [0, 0, 0], [60, 60, 60], [3, 4, 5])
    ["air.csv: ends at minute 59 in 'end' (00:00 to 00:59, the end minute included) read as the next whole hour (00:00 to 01:00): 3 rows (lines 3-5); write the end as the next hour, 01:00, to silence this note"]
    >>> print(inclusive_end_notes("p.csv", "end", "start", [0, 1], [1, 1], [2, 3])[0]
    ...       .split("; ")[2])
    starts at 59:59 that are the end of the row before in 'start' (00:59:59 to 01:59:59 after 00:00:00 to 00:59:59) read as that same whole hour (01:00 to 02:00): 1 row (line 3)
    """
    sm, em = np.asarray(start_move), np.asarray(end_move)
    lines = np.asarray(lines, dtype=np.int64)
    out = []
    for late, at, eg, sg, whole in (
            (60, "minute 59", "(00:00 to 00:59, the end minute included)",
             "(00:59 to 01:59 after 00:00 to 00:59)", "01:00"),
            (1, "59:59", "(00:00:00 to 00:59:59, the end second included)",
             "(00:59:59 to 01:59:59 after 00:00:00 to 00:59:59)", "01:00")):
        e, s = np.unique(lines[em == late]), np.unique(lines[sm == late])
        if not len(e):
            continue
        text = (f"{file_name}: ends at {at} in {end_column!r} {eg} read as the next whole "
                f"hour (00:00 to 01:00): {_rows(e)}; write the end as the next hour, "
                f"{whole}, to silence this note")
        if len(s):
            text += (f"; starts at {at} that are the end of the row before in "
                     f"{start_column!r} {sg} read as that same whole hour (01:00 to "
                     f"02:00): {_rows(s)}")
        out.append(text)
    return out


def _rows(lines) -> str:
    """``3 rows (lines 3-5)``, ``1 row (line 3)``."""
    return f"{len(lines)} row{'s' * (len(lines) != 1)} ({compact_lines(lines)})"


def end_of_day_note(file_name: str, columns, lines) -> str:
    """The ledger note of the columns whose 24:00 labels were read as the next day's 00:00
    ("" for none), with the count of the rows and their lines (:func:`.ledger.compact_lines`).

    Parameters
    ----------
    file_name : str
    columns : list of str
        Header names of the time columns holding a 24:00 label.
    lines : array of int
        File lines (1-based) of the rows with such a label, in any of `columns` [1].

    >>> end_of_day_note("p.csv", ["start", "end"], [4, 5, 6, 9])
    "p.csv: labels at 24:00 (end of day) in 'start', 'end' read as 00:00 of the next day: 4 rows (lines 4-6, 9)"
    """
    if not columns:
        return ""
    v = np.unique(np.asarray(lines, dtype=np.int64))
    return (f"{file_name}: labels at 24:00 (end of day) in "
            f"{', '.join(repr(c) for c in columns)} read as 00:00 of the next day: "
            f"{len(v)} row{'s' * (len(v) != 1)} ({compact_lines(v)})")
