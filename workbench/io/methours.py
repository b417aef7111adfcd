"""Met time labels onto the whole UTC hours of the met grid.

The met grid is hourly on whole UTC hours (hour-ending).  A site whose ``utc_offset_h``
has a fractional part (9.5, 5.75, -3.5: real time zones) writes its local hours on the
half or quarter UTC hour: 2021-06-01T10:00 at +9.5 h ends at 00:30 UTC.  The same
holds for a zoned label whose offset is fractional (``10:00+09:30``).  Such a label,
on the whole hour of its own clock, is moved to the nearest whole UTC hour end, a tie
(exactly half past) to the later hour: +5.75 h 15 min earlier, +9.5 h and -3.5 h
30 min later.  A label already on the whole UTC hour (10:30 at +9.5 h) stays as it
is (it marks a UTC hour end exactly), with a note of its own; one on neither (10:20 at a
whole-hour site, 10:15 at +9.5 h) stays an error.  Every such site gets one ledger note
(:func:`move_notes`), for moved labels and for those kept.  All three CSV paths
(:func:`workbench.io.met.read_met`, :mod:`.metfast`, :mod:`.metlocate`) use these
functions, so they move, refuse and note alike.  Why the later hour on a tie:
docs/data_formats.md, section 4.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import HALF_HOUR
_ZONE = r"(?:(?P<z>Z)|(?P<sign>[+-])(?P<hh>\d\d)(?::?(?P<mm>\d\d))?)$"


def site_offsets_ns(off_h) -> np.ndarray:
    """UTC offsets [h] as timedelta64[ns] (the readers' own conversion)."""
    return (np.asarray(off_h, dtype=float) * 3600e9).astype("timedelta64[ns]")


def zone_offsets(text) -> np.ndarray:
    """The offset of zoned ISO 8601 labels (``Z``, ``+09:30``, ``-0330``, ``+05``).

    Parameters
    ----------
    text : array_like of str
        Labels that carry a zone (``table._OFFSET`` matched).

    Returns
    -------
    numpy.ndarray of timedelta64[ns]
        East of UTC positive; 0 for ``Z``.
    """
    parts = pd.Series(np.asarray(text, dtype=object), dtype=object).str.extract(_ZONE)
    hh = pd.to_numeric(parts["hh"], errors="coerce").fillna(0).to_numpy()
    mm = pd.to_numeric(parts["mm"], errors="coerce").fillna(0).to_numpy()
    sign = np.where(parts["sign"].to_numpy(dtype=object) == "-", -1, 1)
    minutes = (sign * (hh * 60 + mm)).astype(np.int64)
    return minutes.astype("timedelta64[m]").astype("timedelta64[ns]")


def clock_offsets(text, zoned, site_off_ns) -> np.ndarray:
    """The offset of each label's own clock [timedelta64[ns]]: its zone where it carries
    one (`zoned`), else its site's (`site_off_ns`, per row)."""
    out = np.asarray(site_off_ns, dtype="timedelta64[ns]").copy()
    zoned = np.asarray(zoned, bool)
    if zoned.any():
        out[zoned] = zone_offsets(np.asarray(text, dtype=object)[zoned])
    return out


def floor_hour(t):
    """The whole UTC hour at or before each time [datetime64[ns]]."""
    return np.asarray(t).astype("datetime64[h]").astype("datetime64[ns]")


def to_hour_ends(t, clock_off):
    """Move hour ends onto the whole UTC hour.

    Parameters
    ----------
    t : numpy.ndarray of datetime64[ns]
        End of each row's hour [UTC] (after a ``start`` label's hour is added).
    clock_off : numpy.ndarray of timedelta64[ns]
        The offset of each label's clock (:func:`clock_offsets`).

    Returns
    -------
    moved : numpy.ndarray of datetime64[ns]
        The nearest whole UTC hour, a tie to the later one; `t` where off the hour.
    off_hour : numpy.ndarray of bool
        The label is neither on the whole UTC hour nor on the whole hour of its own
        clock (an error).
    """
    t = np.asarray(t, dtype="datetime64[ns]")
    off_hour = t != floor_hour(t)
    if not (clock_off % np.timedelta64(1, "h")).any():       # whole-hour clocks only
        return t, off_hour
    clock = t + clock_off            # a label on the UTC hour (10:30 at +9.5 h) stays
    off_hour &= clock != floor_hour(clock)
    moved = np.where(off_hour, t, floor_hour(t + HALF_HOUR))
    return moved, off_hour


def kept_on_utc(measured, clock_off) -> np.ndarray:
    """Labels of a fractional clock that lie on the whole UTC hour (10:30 at +9.5 h):
    read as they are, not moved (:func:`to_hour_ends`), and named in a note.

    Parameters
    ----------
    measured : numpy.ndarray of datetime64[ns]
        Hour end of each row as read [UTC].
    clock_off : numpy.ndarray of timedelta64[ns]
        The offset of each label's clock (:func:`clock_offsets`).

    Returns
    -------
    numpy.ndarray of bool
    """
    measured = np.asarray(measured, dtype="datetime64[ns]")
    frac = (np.asarray(clock_off, "timedelta64[ns]") % np.timedelta64(1, "h")) != \
        np.timedelta64(0, "ns")
    return frac & (measured == floor_hour(measured))


def shift_minutes(clock_off) -> np.ndarray:
    """Minutes [int] each on-hour label of a clock is moved (later positive)."""
    past = (-np.asarray(clock_off, "timedelta64[ns]")) % np.timedelta64(1, "h")
    past = (past // np.timedelta64(1, "m")).astype(int)       # minutes past the UTC hour
    return np.where(past == 0, 0, np.where(past >= 30, 60 - past, -past))


def _zone_text(off_min: int) -> str:
    hh, mm = divmod(abs(int(off_min)), 60)
    return f"{'+' if off_min >= 0 else '-'}{hh:02d}:{mm:02d}"


def _moved_text(shift: int) -> str:
    return f"{abs(shift)} min {'later' if shift > 0 else 'earlier'}"


def move_notes(site_ids, site_off_h, pairs, kept=()) -> list[str]:
    """One ledger note per site whose hours were moved.

    Parameters
    ----------
    site_ids : sequence of str
        Catalogue ids, in catalogue order (the notes' order).
    site_off_h : sequence of float
        Their ``utc_offset_h`` [h].
    pairs : iterable of (int, int, bool)
        (catalogue position, clock offset [min], zoned) of the moved labels (repeats
        allowed).
    kept : iterable of (int, int, bool)
        The same of labels of a fractional clock already on the whole UTC hour, read as
        they are (:func:`kept_on_utc`).

    Returns
    -------
    list of str
    """
    by_site, by_kept = {}, {}
    for s, off_min, zoned in set(pairs):
        by_site.setdefault(int(s), set()).add((bool(zoned), int(off_min)))
    for s, off_min, zoned in set(kept):
        by_kept.setdefault(int(s), set()).add((bool(zoned), int(off_min)))
    notes = []
    for s in sorted(set(by_site) | set(by_kept)):
        sid = site_ids[s]
        parts = []
        for zoned, off_min in sorted(by_site.get(s, ()), key=lambda p: (p[0], -p[1])):
            shift = int(shift_minutes(np.array([off_min], "timedelta64[m]"))[0])
            past = (-off_min) % 60
            where = ("on the half UTC hour" if past == 30
                     else f"at {past} min past the UTC hour")
            who = (f"labels at {_zone_text(off_min)} put the hours" if zoned else
                   f"utc_offset_h {float(site_off_h[s]):g} puts the local hours")
            parts.append(f"{who} {where}; each hour moved {_moved_text(shift)} to the "
                         f"nearest UTC hour end (the sun and the sample periods see the hour "
                         f"{_moved_text(shift)} than it was measured)")
        for zoned, off_min in sorted(by_kept.get(s, ()), key=lambda p: (p[0], -p[1])):
            who = (f"labels at {_zone_text(off_min)}" if zoned else
                   f"labels at utc_offset_h {float(site_off_h[s]):g}")
            parts.append(f"{who} already on the whole UTC hour (minute {off_min % 60:02d} "
                         f"of their clock) read as UTC hour ends, not moved")
        if s in by_site and s in by_kept:
            parts.append("the site mixes both kinds of label: check its logger's clock")
        notes.append(f"met {sid}: " + "; ".join(parts))
    return notes


def moved_pairs(site_idx, clock_off, zoned, moved):
    """The (site, clock offset [min], zoned) of the moved rows, each once."""
    if not np.asarray(moved).any():
        return set()
    m = np.asarray(moved, bool)
    z = np.zeros(len(m), bool) if zoned is None else np.asarray(zoned, bool)
    minutes = (np.asarray(clock_off)[m] // np.timedelta64(1, "m")).astype(np.int64)
    frame = pd.DataFrame({"s": np.asarray(site_idx)[m], "o": minutes,
                          "z": z[m]}).drop_duplicates()
    return set(zip(frame["s"].tolist(), frame["o"].tolist(), frame["z"].tolist()))


def repeat_hint(moved_either: bool) -> str:
    """The hint of a repeated hour that the move made (two labels, one UTC hour end)."""
    if not moved_either:
        return ""
    return ("; a label on the half or quarter UTC hour (utc_offset_h or its zone) is "
            "moved to the nearest whole UTC hour end, and these two labels land on the same "
            "one: write a site's hours on the whole hours of one clock")


#: Rows repeating an earlier row's site and hour from which a repeat is named as records
#: put in the file twice (two exports joined, a file pasted after itself) [row]: one
#: repeated hour is a clock going back or a typing slip, a day of them is no slip (our
#: choice).
TWICE_ROWS = 24


def twice_hint(count: int, adjacent: bool) -> str:
    """The hint of `count` rows that repeat an earlier row's site and hour, the first not
    next to the row it repeats: records put in the file twice [text]."""
    if count < TWICE_ROWS or adjacent:
        return ""
    return (f"; {count} rows repeat the site and hour of an earlier row: the same records "
            "put in the file twice (two exports joined, a file pasted after itself)? keep "
            "one copy of each hour")


#: Months in which clocks go back from summer time, north and south (common practice).
CLOCK_BACK_MONTHS = (3, 4, 9, 10, 11)


def clock_change_hint(adjacent: bool, month: int) -> str:
    """A hint when a repeated hour looks like the hour a clock repeats when it goes back
    from summer time: the two rows follow each other for their site and fall in a month
    of clock changes (:data:`CLOCK_BACK_MONTHS`); "" otherwise.

    >>> clock_change_hint(True, 10)[:48]
    '; the clock going back from summer time? Write t'
    >>> clock_change_hint(True, 7), clock_change_hint(False, 10)
    ('', '')
    """
    if not adjacent or month not in CLOCK_BACK_MONTHS:
        return ""
    return ("; the clock going back from summer time? Write the times in the site's "
            "standard time (utc_offset_h) or with their offset, e.g. 02:00+02:00 then "
            "02:00+01:00")


def same_cells(frame: pd.DataFrame, rows, of_rows, labels=None):
    """Per pair of rows (`rows`, `of_rows` of `frame`): the first column whose cells
    differ, or None (numbers compared as numbers, so 1.5 and 1.50 are equal; text as
    typed, stripped), the sample readers' rule (:func:`~.common.duplicate_rows`).  With
    `labels` (datetime64 per row of `frame`: the time as labelled, before any move onto
    the UTC hour), the ``time`` column compares those, so ``2021-01-21 14:00`` and
    ``2021-01-21T14:00`` are the same label and 09:30 and 10:00 are not.

    Returns
    -------
    differ : ndarray of int
        Position in ``frame.columns`` of the first differing column; -1 where every
        cell is the same.
    """
    rows, of_rows = np.asarray(rows, np.int64), np.asarray(of_rows, np.int64)
    differ = np.full(len(rows), -1, np.int64)
    for k, c in enumerate(frame.columns):          # a loop over columns, not rows
        col = frame[c].to_numpy(dtype=object)
        a, b = col[rows], col[of_rows]
        same = a == b
        if c == "time" and labels is not None:
            same = np.asarray(labels)[rows] == np.asarray(labels)[of_rows]
        elif not same.all():
            na = pd.to_numeric(pd.Series(a[~same]), errors="coerce").to_numpy(float)
            nb = pd.to_numeric(pd.Series(b[~same]), errors="coerce").to_numpy(float)
            same[~same] = na == nb
        differ = np.where((differ < 0) & ~same, k, differ)
    return differ


def exact_repeats(frame: pd.DataFrame, sites, t, labels=None):
    """Rows that repeat an earlier row of their site and hour cell for cell (the time
    label and every other column, read or not): the copies of a met file pasted after
    itself, with or without its header.  A repeat with another value in any cell is
    not one (:func:`workbench.io.met.check_hours` refuses it, naming both lines), nor,
    in a file of fewer than :data:`TWICE_ROWS` repeats, one that follows its twin in a
    month of :data:`CLOCK_BACK_MONTHS` (the clock going back; refused with that hint).

    Parameters
    ----------
    frame : DataFrame
        The file's cells as text (:attr:`~.table.RawTable.frame`).
    sites : ndarray of str
    t : ndarray of datetime64[ns]
        End of each row's hour (UTC).
    labels : ndarray of datetime64[ns], optional
        The times as labelled (:func:`same_cells`); default: the ``time`` text.

    Returns
    -------
    drop : ndarray of bool
        The exact repeats (not read).
    of_row : ndarray of int
        Row (0-based, of `frame`) that each row repeats: the first of its site and hour
        (-1 for a row that repeats none).
    """
    n = len(sites)
    of_row = np.full(n, -1, np.int64)
    key = pd.DataFrame({"s": sites, "t": t})
    later = key.duplicated().to_numpy()
    if not later.any():
        return np.zeros(n, bool), of_row
    group = key.groupby(["s", "t"], sort=False, dropna=False).ngroup().to_numpy()
    _, first = np.unique(group, return_index=True)    # first row of each group
    rows = np.flatnonzero(later)
    of_row[rows] = first[group[rows]]
    drop = np.zeros(n, bool)
    drop[rows] = same_cells(frame, rows, of_row[rows], labels) < 0
    if len(rows) < TWICE_ROWS:
        # a few repeats, each the next row of its site after its twin, in a month of
        # clock changes: the hour a clock going back writes twice (a calm night can read
        # the same in every column), never dropped: refused with the clock hint
        prev = pd.Series(np.arange(n)).groupby(np.asarray(sites, dtype=object),
                                               sort=False).shift(1).to_numpy()
        month = pd.DatetimeIndex(np.asarray(t)[rows]).month.to_numpy()
        clock = (prev[rows] == of_row[rows]) & np.isin(month, CLOCK_BACK_MONTHS)
        drop[rows[clock]] = False
    return drop, of_row
