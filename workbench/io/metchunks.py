"""The parsing of a met CSV in chunks of whole data lines for :mod:`.metfast`: one chunk
on a thread (:class:`_ChunkParser`, the timestamp texts parsed once each in
:class:`_TimeTexts`), the chunks in order (:func:`_parse`), and the first rows and one
line of the file for the located errors.

Moved from :mod:`workbench.io.metfast`, which re-exports them.
"""
from __future__ import annotations

import io
import itertools
import re
import threading

import numpy as np
import pandas as pd

from ..threads import map_ordered
from . import methours, metlocate
from .linechunks import normalise, parsed_cells, plain_rows
from .table import _OFFSET, SAMPLE_MISSING_TEXTS, YEARS, end_of_day, parse_iso


#: The missing-value texts of the sample readers (:data:`~.table.SAMPLE_MISSING_TEXTS`) in
#: every case ("NA", "Na", "nA", "na", ...), and the empty cell: the C parser's missing
#: values for a chunk that holds such a text (it compares them as typed).
_ANY_CASE = [""] + sorted({"".join(c) for t in SAMPLE_MISSING_TEXTS if t
                           for c in itertools.product(*({ch.lower(), ch.upper()} for ch in t))})
#: Cells the C parser reads as a number but the line reader refuses ("True" is 1.0 there).
#: The parser does so only for a column of the chunk whose every cell is such a word or
#: missing (a word beside a number is an error), so the text is searched only when a
#: column holds nothing but 0, 1 and NaN (a search of every chunk cost 1.5 s at 1,000
#: site-years).
_WORDS = re.compile(rb"(?:^|,)(?:[Tt]rue|TRUE|[Ff]alse|FALSE)(?=,|\n|$)", re.MULTILINE)


class _TimeTexts:
    """Timestamp texts parsed once each (a network repeats every hour once per site);
    shared by the parsing threads (the table grows under a lock)."""

    def __init__(self):
        self.text = pd.Index([], dtype=object)
        self.value = np.empty(0, dtype="datetime64[ns]")
        self.aware = np.empty(0, bool)
        self.zone = np.empty(0, dtype="timedelta64[ns]")    # the zoned texts' offsets
        self.end_of_day = False                              # a 24:00 label was read
        self.eod = np.empty(0, bool)                         # each text is a 24:00 label
        self._lock = threading.Lock()

    def _lookup(self, cats):
        """Positions of `cats` in the table (new texts parsed and added), the values and
        the offset flags; None when a text is no valid time."""
        with self._lock:
            where = self.text.get_indexer(cats)
            new = where < 0
            if new.any():
                text = pd.Series(np.asarray(cats[new], dtype=object))
                aware = text.str.contains(_OFFSET).to_numpy()
                parsed = np.empty(len(text), dtype="datetime64[ns]")
                for sel, utc in ((aware, True), (~aware, False)):
                    if not sel.any():
                        continue
                    tv = parse_iso(text[sel], utc)
                    if np.isnat(tv).any() or ((tv < YEARS[0]) | (tv >= YEARS[1])).any():
                        return None
                    parsed[sel] = tv
                eod = end_of_day(text)
                self.end_of_day = self.end_of_day or bool(eod.any())
                self.eod = np.concatenate([self.eod, eod])
                where[new] = len(self.text) + np.arange(int(new.sum()))
                self.text = self.text.append(pd.Index(text.to_numpy(dtype=object)))
                self.value = np.concatenate([self.value, parsed])
                self.aware = np.concatenate([self.aware, aware])
                zone = np.zeros(len(text), dtype="timedelta64[ns]")
                if aware.any():
                    zone[aware] = methours.zone_offsets(text[aware])
                self.zone = np.concatenate([self.zone, zone])
            return where, self.value, self.aware, self.zone, self.eod

    def rows(self, cats, codes, off_ns, site_idx):
        """End-of-row times [ns] (UTC) of a chunk, the rows whose text carries a zone
        (None: none does) and the offset of each row's clock [ns] (its zone, else its
        site's), and the chunk's rows labelled 24:00 (indices; None: none is); None when
        a text is no valid time."""
        got = self._lookup(pd.Index(np.asarray(cats, dtype=object)))
        if got is None:
            return None
        where, value, aware, zone, eod = got
        k = where[codes]
        eod_rows = np.flatnonzero(eod[k]) if eod[where].any() else None
        t = value[k]
        zoned = aware[k]
        clock = off_ns[site_idx]
        if not zoned.any():
            return t - clock, None, clock, eod_rows
        naive = ~zoned
        t[naive] = t[naive] - clock[naive]
        clock[zoned] = zone[k[zoned]]
        return t, zoned, clock, eod_rows


#: A line starting with ``#`` (blanks before it allowed) in a chunk of data lines.
_HASH_LINE = re.compile(rb"^[ \t]*#", re.M)

class _ChunkParser:
    """Parse one chunk of whole data lines (called on several threads at once): the
    chunk's blank lines (each as the number of its rows above it), its number of rows,
    and the rows' site codes, end-of-hour times [ns] (UTC) and converted values (None
    when it holds no row); None for a chunk only the line reader may judge.

    A chunk is first made plain (:func:`~.linechunks.normalise`: CRLF, quotes, blanks
    around the cells), then its blank lines (empty, or commas only) are dropped."""

    def __init__(self, names, used, units, catalogue, ids, hour, label, convert, variables):
        self.names, self.used, self.units = names, used, units
        self.used_at = {names.index(c) for c in used}
        self.index = {s: i for i, s in enumerate(ids)}
        self.off_ns = methours.site_offsets_ns(catalogue.utc_offsets(ids))
        self.dtype = {"site": "category", "time": "category",
                      **{n: "float64" for n in used[2:]}}
        self.hour, self.label, self.convert, self.variables = hour, label, convert, variables
        self.times = _TimeTexts()
        self.moved = set()        # (site, clock offset [min], zoned) of rows moved
        self.kept = set()         # the same of fractional-clock rows on the UTC hour
        self._moved_lock = threading.Lock()

    def __call__(self, chunk):
        n_bytes = len(chunk)
        if b"#" in chunk and _HASH_LINE.search(chunk):
            return None      # a '#' line below the header: the line reader skips or locates it
        plain_text = normalise(chunk) if chunk.isascii() else None   # numpy: lock released
        if plain_text is None:                        # the line reader's parser, per chunk
            plain_text = parsed_cells(chunk, len(self.names), self.used_at)
            if plain_text is None:
                return None
        chunk = plain_text
        got = plain_rows(chunk, len(self.names))
        if got is None:
            return None
        chunk, blanks, n, long = got
        if long is not None:                          # the line reader's parser refuses it
            return blanks, n, metlocate.Located(None, None, {("fields",): (long, {})}, n,
                                                n_bytes, None)
        if not n:
            return blanks, 0, None
        got = self._rows(chunk, n, n_bytes)
        return None if got is None else (blanks, n, got)

    def _rows(self, chunk, n, n_bytes):
        found = None     # texts read as missing: column -> {text: rows of the chunk}
        try:             # low_memory=False: one pass over the chunk, no pieces to join
            df = self._frame(chunk, [""])
        except pd.errors.ParserError:
            return None
        except (ValueError, IndexError, TypeError):
            got = self._missing_texts(chunk)    # NA, N/A, - ... or a cell that is no number
            if got is None:
                return self._locate(chunk)
            df, found = got
        if len(df) != n:
            return None
        sc = df["site"].cat
        site_map = np.array([self.index.get(s, -1) for s in sc.categories], dtype=np.int32)
        codes = sc.codes.to_numpy()
        if (codes < 0).any() or (site_map[codes] < 0).any():
            return self._locate(chunk)
        site_idx = site_map[codes]
        tc = df["time"].cat
        tcodes = tc.codes.to_numpy()
        if (tcodes < 0).any():
            return self._locate(chunk)
        got = self.times.rows(tc.categories, tcodes, self.off_ns, site_idx)
        if got is None:
            return self._locate(chunk)
        t, zoned, clock, eod_rows = got
        if self.label == "start":
            t = t + self.hour
        measured = t
        t, off_hour = methours.to_hour_ends(t, clock)   # half/quarter hours: the UTC hour
        if off_hour.any():
            return self._locate(chunk)
        if t is not measured:
            pairs = methours.moved_pairs(site_idx, clock, zoned, t != measured)
            kept = methours.moved_pairs(site_idx, clock, zoned,
                                        methours.kept_on_utc(measured, clock))
            with self._moved_lock:
                self.moved |= pairs
                self.kept |= kept
        got, words = {}, False
        for name in self.used[2:]:
            v = df[name].to_numpy(dtype=float)
            # inf is refused by the line reader; a "-0" it may read as +0 (whole-number
            # columns parse as integers there): both left to it
            if ((v == 0) & np.signbit(v)).any():
                return None
            if np.isinf(v).any():
                return self._locate(chunk)
            words = words or bool(((v == 0) | (v == 1) | np.isnan(v)).all())
            got[name] = self.convert(v, self.units[name], name, self.variables[name][0])
        if words and _WORDS.search(chunk):
            return self._locate(chunk)
        return site_idx, t, got, n, n_bytes, zoned, found, eod_rows

    def _frame(self, chunk, na):
        df = self._read(chunk, na, self.dtype)
        if any(df[c].cat.categories.dtype.kind in "iufb" for c in ("site", "time")):
            # pandas infers numeric categories: station numbers ("0101" would become
            # 101) and spreadsheet serial dates are read again as text
            df = self._read(chunk, na, {**self.dtype, "site": str, "time": str})
            df["site"] = df["site"].astype(object).astype("category")
            df["time"] = df["time"].astype(object).astype("category")
        return df

    def _read(self, chunk, na, dtype):
        return pd.read_csv(io.BytesIO(chunk), header=None, names=self.names,
                           usecols=self.used, dtype=dtype,
                           na_values={c: na for c in self.used[2:]}, keep_default_na=False,
                           skip_blank_lines=False, low_memory=False)

    def _missing_texts(self, chunk):
        """(frame, texts) of a chunk whose only non-numbers are missing-value texts
        (:data:`~workbench.io.table.SAMPLE_MISSING_TEXTS`, any case): the values parsed
        as in a clean chunk with those texts as missing, and for each column the texts as
        typed -> their rows (in order of first appearance); None for any other chunk."""
        try:             # the same C parser as a clean chunk: the same values
            df = self._frame(chunk, _ANY_CASE)
        except (ValueError, IndexError, TypeError, pd.errors.ParserError):
            return None                  # another text beside them: located
        nan = {c: df[c].isna().to_numpy() for c in self.used[2:]}
        found = metlocate.missing_texts(chunk, self.names, {c: v for c, v in nan.items()
                                                            if v.any()})
        return (df, found) if found else None

    def _locate(self, chunk):
        """The first row of each kind of failure (metlocate), or None."""
        return metlocate.suspicious_rows(chunk, self.names, self.used, self.index, self.off_ns,
                                         self.label, self.hour)


def _first_rows(path, n_fields: int, n: int = 2000):
    """The first `n` rows of `n_fields` cells of a (gzipped) CSV (for the decimal-comma
    hint: which columns hold decimals); None when it cannot be read."""
    import csv
    import gzip
    import itertools
    try:
        with open(path, "rb") as f:
            gz = f.read(2) == b"\x1f\x8b"
        opener = gzip.open if gz else open
        with opener(path, "rt", encoding="utf-8-sig", errors="replace", newline="") as f:
            rows = csv.reader(ln for ln in itertools.islice(f, n) if not ln.startswith("#"))
            return [r for r in rows if len(r) == n_fields][1:]
    except (OSError, EOFError, ValueError, csv.Error):
        return None


def _line_cells(path, line: int):
    """The cells of file line `line` (1-based) of a (gzipped) CSV, read up to it, for
    the hint of a malformed row (:func:`workbench.io.table.fields_error`); None when it
    cannot be read."""
    import csv
    import gzip
    import itertools
    try:
        with open(path, "rb") as f:
            gz = f.read(2) == b"\x1f\x8b"
        opener = gzip.open if gz else open
        with opener(path, "rt", encoding="utf-8-sig", errors="replace", newline="") as f:
            text = next(itertools.islice(f, line - 1, None), None)
        return None if text is None else next(csv.reader([text]), None)
    except (OSError, EOFError, ValueError):
        return None


def _parse(source, rows, parser, chunk_bytes, size_hint):
    """Parse the data rows chunk by chunk into `rows`, in file order, the chunks on up to
    :func:`~workbench.threads.threads_here` threads.

    Returns (ok, firsts): ok False for a file for the line reader; `firsts` the first row
    of each kind of failure (kind -> (file line, cells); see :mod:`.metlocate`; kind
    ``("fields",)``: a line with more fields than the header).  After
    a row without a known site or a valid hour the rows are no longer kept (the error
    comes before any check over all rows), but every chunk is still parsed, since a
    later row may hold an error the line reader raises first."""
    parsed = map_ordered(parser, source.chunks(chunk_bytes))
    firsts, keep, zones_known, seen = {}, True, True, 0
    try:
        for got in parsed:
            if got is None:
                return False, {}
            blanks, n, got = got
            if len(blanks):
                rows.add_blanks(seen + blanks)
            if got is None:                          # blank lines only
                continue
            found = None
            if isinstance(got, metlocate.Located):
                for kind, (i, cells) in got.firsts.items():
                    firsts.setdefault(kind, (int(rows.line_of(seen + i)), cells))
                keep = keep and got.valid
                zones_known = zones_known and not any(k[0] in ("site", "time", "fields")
                                                      for k in got.firsts)
                site_idx, t, n, n_bytes = got.site_idx, got.t, got.n, got.n_bytes
                zoned = got.zoned
                values = {k: np.full(n, np.nan) for k in rows.names}
            else:
                site_idx, t, values, n, n_bytes, zoned, found, eod_rows = got
                if eod_rows is not None:
                    rows.end_of_day.append(rows.line_of(seen + eod_rows))
            if zones_known:          # the zone check comes before the hours: every row
                rows.zones.add(site_idx, zoned, seen)
            if found:
                rows.count_missing(found, seen)
            if keep:
                est = int(size_hint / max(n_bytes, 1) * n * 1.02) + n   # rows, from the size
                rows.add(site_idx, t, values, est)
            seen += n
            del got, values
    finally:
        parsed.close()       # a chunk declined: the chunks still running finish first
    return seen > 0, firsts
