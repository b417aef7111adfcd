"""The located error of a met CSV whose cells the chunked reader refused, without a
whole-file read.

The line-by-line reader (:class:`~workbench.io.table.RawTable` and
:func:`workbench.io.met.read_met`) holds every cell of a file as text; at 1,000
site-years that is several GB just to print the error of one bad cell.  Its checks
run in a fixed order (unknown sites, timestamps, hours off the whole hour, repeated
hours, then each variable's numbers), and within a check the first row of the file
that fails it is named.  So the error it raises is fixed by the first row of the
file of each *kind* of failure: :func:`suspicious_rows` finds, in a chunk the fast
parser refused, the first row of each kind (by the same tests as the line reader);
the chunked reader keeps the first of each kind over the file; :func:`raise_first`
puts those few rows (with their file line numbers) into a small ``RawTable`` and
runs the line reader's own checks on it, with the repeated hours found over all rows
(:func:`first_repeat`).  A good row never fails a check, so the checks fail on the
small table exactly where they fail on the whole file.

The chunks come made plain (:func:`~.linechunks.normalise`: quotes and blanks around
the cells removed, blank lines dropped), so the cells are those the line reader
checks.  A line with more fields than the header is the line reader's first error
(its parser refuses the file); the chunked reader names it itself.  Chunks with what
is not a failure of one row (a quote around a comma or a doubled quote, a line with
fewer fields, a ``-0``) and kinds not covered here still go to the line reader with the
whole file (the caller returns None).  tests/io/test_metfast.py and
tests/io/test_sheet_exports.py hold the errors to the line reader's.
"""
from __future__ import annotations

import io
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError
from . import methours
from .table import _OFFSET, SAMPLE_MISSING_TEXTS, YEARS, RawTable, parse_iso
from .tabletimes import minute_59_hint


class Located:
    """What :func:`suspicious_rows` found in one chunk.

    Attributes
    ----------
    site_idx : numpy.ndarray of int32
        Catalogue position of each row's site (-1: not in the catalogue); None for a
        chunk with a line of more fields than the header (kind ``("fields",)``).
    t : numpy.ndarray of datetime64[ns]
        End of each row's hour (UTC); NaT where the time is missing or not valid.
    firsts : dict
        Kind -> (row in the chunk, {column name: cell text}) of the first row of
        each kind of failure.
    n, n_bytes : int
        Rows and bytes of the chunk.
    zoned : numpy.ndarray of bool
        The row's time carries a zone (``Z`` or an offset).
    """

    def __init__(self, site_idx, t, firsts, n, n_bytes, zoned):
        self.site_idx, self.t, self.firsts, self.n, self.n_bytes = site_idx, t, firsts, n, n_bytes
        self.zoned = zoned

    @property
    def valid(self) -> bool:
        """Every row has a known site and a valid time on the whole hour."""
        return not any(k[0] in ("site", "time", "hour", "fields") for k in self.firsts)


def suspicious_rows(chunk, names, used, index, off_ns, label, hour):
    """The first row of each kind of failure in a chunk the fast parser refused.

    Parameters
    ----------
    chunk : bytes
        Whole data lines made plain (:func:`~.linechunks.normalise`: ASCII, no quotes,
        no blanks around a cell, no blank lines, each line with the header's number of
        fields).
    names : list of str
        Column names of the header.
    used : list of str
        ``site``, ``time`` and the met variables of the file.
    index : dict
        Site id -> catalogue position.
    off_ns : numpy.ndarray of timedelta64[ns]
        UTC offset of each catalogue site.
    label : {"end", "start"}
        What the timestamps label.
    hour : numpy.timedelta64

    Returns
    -------
    Located or None
        None where the chunk holds no such failure (its oddity is for the line reader)
        or a row that the line reader would drop (every cell empty).
    """
    try:
        df = pd.read_csv(io.BytesIO(chunk), header=None, names=names, dtype=str,
                         keep_default_na=False, na_filter=False, skip_blank_lines=False,
                         index_col=False)
    except (ValueError, pd.errors.ParserError):
        return None
    if (df == "").all(axis=1).any():
        return None
    n = len(df)
    firsts = {}

    def first(kind, sel):
        sel = np.asarray(sel, bool)
        if sel.any() and kind not in firsts:
            i = int(np.flatnonzero(sel)[0])
            firsts[kind] = (i, {c: str(df[c].iat[i]) for c in used})

    sites = df["site"].to_numpy(dtype=object)
    if (sites == "site").any():
        return None            # the header repeated? the line reader drops it or says so
    site_idx = np.array([index.get(s, -1) for s in sites], dtype=np.int32)
    first(("site",), site_idx < 0)
    s = df["time"]
    t = np.full(n, np.datetime64("NaT"), dtype="datetime64[ns]")
    first(("time", "missing"), (s == "").to_numpy())
    aware = s.str.contains(_OFFSET).to_numpy()
    for sub, utc in ((aware, True), (~aware, False)):
        sel = sub & (s != "").to_numpy()
        if not sel.any():
            continue
        tv = parse_iso(s[sel], utc)
        bad = np.isnat(tv)
        odd = ~bad & ((tv < YEARS[0]) | (tv >= YEARS[1]))
        where = np.flatnonzero(sel)
        first(("time", utc, "years"), np.isin(np.arange(n), where[odd]))
        first(("time", utc, "bad"), np.isin(np.arange(n), where[bad]))
        ok = where[~bad & ~odd]
        tv = tv[~bad & ~odd]
        if not utc:
            known = site_idx[ok] >= 0
            tv = np.where(known, tv - off_ns[np.maximum(site_idx[ok], 0)], np.datetime64("NaT"))
        t[ok] = tv
    if label == "start":
        t = t + hour
    good = ~np.isnat(t)
    clock = methours.clock_offsets(s.to_numpy(object), aware,
                                   np.where(site_idx >= 0, off_ns[np.maximum(site_idx, 0)],
                                            np.timedelta64(0, "ns")))
    moved, off_hour = methours.to_hour_ends(t, clock)   # as the chunked reader
    off_hour = good & off_hour
    first(("hour",), off_hour)
    t = np.where(good & ~off_hour, moved, np.datetime64("NaT"))
    for name in used[2:]:
        cells = df[name]
        v = pd.to_numeric(cells, errors="coerce").to_numpy(dtype=float)
        odd = np.isnan(v)
        first((name, "censored"), odd & cells.str.startswith("<").to_numpy())
        first((name, "text"), odd & ~cells.str.lower().isin(SAMPLE_MISSING_TEXTS).to_numpy())
        first((name, "inf"), np.isinf(v))
    if not firsts:
        return None
    return Located(site_idx, t, firsts, n, len(chunk), aware)


def first_repeat(rows, line_of, limit):
    """The first row of the file that repeats a site's hour, and that hour's first row.

    Parameters
    ----------
    rows : workbench.io.metrows.Spill
        Every row's site and time.
    line_of : callable
        ``line_of(rows)`` -> the file lines of rows of the file (0-based).
    limit : int
        Rows per group of whole sites.

    Returns
    -------
    (int, int, int) or None
        File lines of the repeating row and of the first row of its site and hour
        (as ``pandas.DataFrame.duplicated`` marks them in the line reader), and the
        number of rows that repeat an earlier row's site and hour.
    """
    best = None
    count = 0
    for grp in rows.groups(limit):
        st = rows.site[grp].astype(np.int64)
        tv = rows.read("time", grp).view(np.int64)
        order = np.lexsort((grp, tv, st))            # by site, hour, then file row
        same = (st[order][1:] == st[order][:-1]) & (tv[order][1:] == tv[order][:-1])
        if not same.any():
            continue
        count += int(same.sum())
        rep = grp[order[1:][same]]
        j = int(np.argmin(rep))
        i = int(rep[j])
        k = np.flatnonzero(same)[j]                    # back to the first of the run
        while k > 0 and same[k - 1]:
            k -= 1
        if best is None or i < best[0]:
            best = (i, int(grp[order[k]]))
    if best is None:
        return None
    return (*(int(x) for x in line_of(list(best))), count)


def raise_first(path, meta, headers, raw_headers, firsts, catalogue, label, hour, repeat,
                line_text, zones=None):
    """Raise the line reader's error from the first rows of each kind (or return).

    Parameters
    ----------
    path : Path
    meta : dict
        ``# key: value`` lines of the file.
    headers, raw_headers : dict
        Column name -> :class:`~workbench.units.Header` and -> header text.
    firsts : dict
        Kind -> (file line, {column name: cell text}), the first of each kind.
    catalogue : SiteCatalogue
    label : {"end", "start"}
    hour : numpy.timedelta64
    repeat : (int, int) or None
        From :func:`first_repeat` (None: no repeated hour, or not looked for).
    line_text : callable
        ``line_text(line)`` -> the cells of that file line (for the repeated hour).
    zones : (int, int) or None
        File lines of the first label breaking its site's zone convention and of the
        site's first label in that convention (:meth:`ZoneTally.first_break`).

    Raises
    ------
    InputError
        As :func:`workbench.io.met.read_met` raises it for the whole file.
    """
    if not firsts:
        if zones is not None:
            _raise_zones(path, meta, headers, raw_headers, catalogue, zones, line_text)
        if repeat is not None:
            _raise_repeat(path, raw_headers, repeat, line_text, catalogue)
        return
    from .common import check_sites
    from .metvars import MET_VARIABLES
    rows = sorted({line: cells for line, cells in firsts.values()}.items())
    lines = np.array([line for line, _ in rows], dtype=np.int64)
    frame = pd.DataFrame({c: pd.Series([cells[c] for _, cells in rows], dtype=object)
                          for c in rows[0][1]})
    tab = RawTable(Path(path), meta, frame, lines, {c: headers[c] for c in frame.columns},
                   {c: raw_headers[c] for c in frame.columns})
    sites = check_sites(tab, catalogue)
    t = tab.times("time", catalogue.utc_offsets(sites))
    if zones is not None:                       # after the timestamps, before the hours
        _raise_zones(path, meta, headers, raw_headers, catalogue, zones, line_text)
    if label == "start":
        t = t + hour
    clock = methours.clock_offsets(tab.frame["time"].to_numpy(object), tab.zoned["time"],
                                   methours.site_offsets_ns(catalogue.utc_offsets(sites)))
    _, off_hour = methours.to_hour_ends(t, clock)
    if off_hour.any():                          # as workbench.io.met.check_hours
        i = int(np.flatnonzero(off_hour)[0])
        raise tab.error("timestamp not on the hour" + minute_59_hint(t[i]), row=i, column="time",
                        value=tab.frame["time"].iloc[i], expected="hourly timestamps (minutes 00)")
    if repeat is not None:
        _raise_repeat(path, raw_headers, repeat, line_text, catalogue)
    for name in MET_VARIABLES:         # as workbench.io.met._convert (units checked before)
        if tab.has(name):
            tab.numbers(name, missing="samples")


def repeat_differs(names, used, raw_headers, repeat, line_text, catalogue):
    """The words of the first cell where the repeated hour's row (:func:`first_repeat`)
    differs from the first row of its site and hour, as the line reader's
    :func:`workbench.io.met.check_hours` says them (", which has 'pressure [hPa]'
    '1010.0' where this line has '1011.0'"); None when the two rows are the same in every
    cell (an exact repeat, which the line reader drops: the chunked reader hands the file
    to it).  The cells compared as :func:`workbench.io.methours.same_cells` compares them
    (numbers as numbers, the time label as the time it names).

    Parameters
    ----------
    names : list of str
        Column names of the header, in order.
    used : list of str
        The columns read (``site``, ``time``, the met variables): those whose cells
        `line_text` gives right; another column before the first difference: None (the
        line reader compares it).
    line_text : callable
        ``line_text(line)`` -> {name: cell} of the columns `used` of that file line.
    """
    line, first = repeat[:2]
    here, there = line_text(line), line_text(first)
    for c in names:
        if c not in used:
            return None
        a, b = str(here.get(c, "")), str(there.get(c, ""))
        if c == "time":
            same = _label_utc(a, here.get("site", ""), catalogue) == \
                _label_utc(b, there.get("site", ""), catalogue)
        else:
            same = a == b or _number(a) == _number(b)
        if not same:
            return f", which has {raw_headers.get(c, c)!r} {b!r} where this line has {a!r}"
    return None


def _number(text):
    try:
        return float(text)
    except ValueError:
        return np.nan


def _label_utc(text, site, catalogue):
    """The time a label names (UTC, before any move onto the whole UTC hour)."""
    zoned = bool(_OFFSET.search(str(text)))
    t = parse_iso(pd.Series([str(text)], dtype=object), zoned)
    if not zoned:
        t = t - methours.site_offsets_ns(catalogue.utc_offsets([site]))
    return t[0]


def _raise_repeat(path, raw_headers, repeat, line_text, catalogue):
    """The line reader's error for a repeated hour (workbench.io.met.check_hours); the
    words of the differing cell, when `repeat` carries them (:func:`repeat_differs`)."""
    line, first, count = repeat[:3]
    differs = repeat[3] if len(repeat) > 3 else ""
    value = line_text(line)["time"]
    moved = False     # was either label moved onto the whole UTC hour (off it as read)?
    for k in (line, first):
        cells = line_text(k)
        zoned = bool(_OFFSET.search(str(cells["time"])))
        t = parse_iso(pd.Series([str(cells["time"])], dtype=object), zoned)
        if not zoned:
            t = t - methours.site_offsets_ns(catalogue.utc_offsets([cells["site"]]))
        moved = moved or bool((t != methours.floor_hour(t))[0])
    try:
        month = pd.Timestamp(str(value)[:10]).month
    except ValueError:
        month = 0
    raise InputError("duplicate hourly timestamp", file=Path(path), line=line,
                     column=raw_headers["time"], value=value,
                     expected=f"one row per site and hour (also on line {first}{differs})"
                     + methours.clock_change_hint(line == first + 1, month)
                     + methours.repeat_hint(moved)
                     + methours.twice_hint(count, line == first + 1))


class ZoneTally:
    """Per site, over the rows of a file in order: the rows, the rows whose time carries
    a zone, and the first row of each kind (0-based rows of the file), so that the
    line reader's :func:`~workbench.io.common.check_time_zones` (a site's labels all
    zoned or all naive, the site's convention that of most of its labels, on a tie of
    its first) can be judged without keeping a flag per row."""

    def __init__(self, n_sites):
        self.count = np.zeros(n_sites, np.int64)
        self.zoned = np.zeros(n_sites, np.int64)
        self.first = {True: np.full(n_sites, -1, np.int64), False: np.full(n_sites, -1, np.int64)}

    def add(self, site, zoned, row0):
        """Rows `row0`, `row0` + 1, ... of the file: catalogue positions `site` (all
        known) and the zone flags `zoned` (None: none zoned)."""
        counts = np.bincount(site, minlength=len(self.count))
        self.count += counts
        if zoned is None or not zoned.any():
            parts = ((False, site, None, counts),)
        elif zoned.all():
            parts = ((True, site, None, counts),)
        else:
            at_z, at_n = np.flatnonzero(zoned), np.flatnonzero(~zoned)
            parts = ((True, site[at_z], at_z, None), (False, site[at_n], at_n, None))
        for kind, s, at_rows, c in parts:
            c = np.bincount(s, minlength=len(self.count)) if c is None else c
            if kind:
                self.zoned += c
            fk = self.first[kind]
            if not ((c > 0) & (fk < 0)).any():      # no site's first of this kind here
                continue
            u, at = np.unique(s, return_index=True)
            at = at if at_rows is None else at_rows[at]
            new = fk[u] < 0
            fk[u[new]] = row0 + at[new]

    def first_break(self):
        """(row, reference row): the first row of the file whose label breaks its site's
        convention and the site's first row in that convention; None when every site
        keeps one."""
        s = np.flatnonzero((self.zoned > 0) & (self.zoned < self.count))
        if not len(s):
            return None
        fz, fn = self.first[True][s], self.first[False][s]
        two = 2 * self.zoned[s]
        conv = np.where(two == self.count[s], fz < fn, two > self.count[s])
        off, ref = np.where(conv, fn, fz), np.where(conv, fz, fn)
        j = int(np.argmin(off))
        return int(off[j]), int(ref[j])


def _raise_zones(path, meta, headers, raw_headers, catalogue, zones, line_text):
    """The line reader's error for a label breaking its site's zone convention: its own
    check on a table of the two lines, the reference line twice (so that it holds the
    site's majority, as over the whole file)."""
    from .common import check_time_zones
    line, ref = zones
    cells = {line: line_text(line), ref: line_text(ref)}
    order = sorted([line, ref, ref])
    frame = pd.DataFrame({c: pd.Series([cells[k][c] for k in order], dtype=object)
                          for c in ("site", "time")})
    tab = RawTable(Path(path), meta, frame, np.array(order, dtype=np.int64),
                   {c: headers[c] for c in frame.columns},
                   {c: raw_headers[c] for c in frame.columns})
    sites = tab.text("site")
    tab.times("time", catalogue.utc_offsets(sites))
    check_time_zones(tab, sites, names=("time",))


def missing_texts(chunk, names, nan):
    """The missing-value texts of a chunk, from the byte positions of its cells.

    Parameters
    ----------
    chunk : bytes
        Whole data lines (ASCII, no quotes, blanks or blank lines, each line with the
        header's number of fields), parsed with every missing-value text as missing.
    names : list of str
        Column names of the header.
    nan : dict
        Column name -> bool array, the rows parsed as missing (every non-empty one holds
        a missing-value text).

    Returns
    -------
    dict or None
        Column -> {text as typed: its rows in the chunk}, the texts in order of first
        appearance; the empty cells left out.  None when the lines are not the rows.
    """
    n = len(next(iter(nan.values()))) if nan else 0
    if not n:
        return {}
    text = np.frombuffer(chunk, np.uint8)
    ends = np.flatnonzero(text == 10)[:n]
    if len(ends) < n:                           # the last line without a line break
        ends = np.append(ends, len(chunk))
    commas = np.flatnonzero(text == 44)
    if len(commas) != n * (len(names) - 1):
        return None                             # not one row per line: the line reader
    commas = commas.reshape(n, len(names) - 1)
    starts = np.concatenate([[0], ends[:-1] + 1])
    found = {}
    for name, rows in nan.items():
        j = names.index(name)
        at = np.flatnonzero(rows)
        a = starts[at] if j == 0 else commas[at, j - 1] + 1
        b = ends[at] if j == len(names) - 1 else commas[at, j]
        typed_at = at[b > a]                      # not the empty cells
        if not len(typed_at):
            continue
        typed = np.array([chunk[x:y].decode("ascii") for x, y in
                          zip(a[b > a].tolist(), b[b > a].tolist())], dtype=object)
        found[name] = {t: typed_at[typed == t] for t in pd.unique(typed)}
    return found


def missing_note(path, raw_headers, missing, first_line):
    """The line reader's ledger note on the texts read as missing
    (:meth:`RawTable.missing_note`), from the counts of the chunked reader; "" when
    there were none.

    Parameters
    ----------
    raw_headers : dict
        Column name -> header text, in the file's order.
    missing : dict
        Column name -> {text as typed: [count, first (at most 5) rows of the file]},
        the texts in order of first appearance.
    first_line : int
        File line of row 0 (0 when `missing` holds file lines).
    """
    cols = [c for c in raw_headers if c in missing]
    lines, seen = [], {}
    for c in cols:
        seen[c] = {}
        for text, (count, first) in missing[c].items():
            seen[c][text] = _Counted(np.arange(len(lines), len(lines) + len(first)), count)
            lines += [first_line + r for r in first]
    tab = RawTable(Path(path), {}, pd.DataFrame(columns=cols), np.array(lines, np.int64),
                   {}, raw_headers, seen)
    return tab.missing_note()


class _Counted:
    """The rows of one missing-value text as :meth:`RawTable.missing_note` reads them
    (their number and the first ones), without an index per row."""

    def __init__(self, first, count):
        self.first_rows, self.count = first, count

    def __len__(self):
        return self.count

    def __getitem__(self, k):
        return self.first_rows[k]
