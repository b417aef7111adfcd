"""Hourly met CSV of a whole network, read in chunks into an on-disk store.

The line-by-line reader (:class:`~workbench.io.table.RawTable`) holds every cell of the
file as text: for the hourly met of a large network (millions of rows) that is several
GB and most of the reading time.  :func:`read_met_csv_fast` reads the same file in
chunks of whole lines with the C parser of pandas straight into float64 arrays (the
site and the time as small integer codes, each distinct timestamp text parsed once).
The chunks are parsed on the engine's threads (:func:`workbench.threads.map_ordered`,
``WORKBENCH_THREADS``) while the calling thread inflates the gzip text
(:mod:`.linechunks`) and appends each parsed chunk, in file order, to scratch files
(times and values), keeping only the site code of each row (4 bytes) in memory.  It
then runs the plausibility checks of :mod:`workbench.io.metchecks` one group of whole
sites at a time, again on the threads (they are per site, so the result is the same):
when each site's rows are together in the file, a group's rows are read site by site
from the scratch files; when sites are interleaved, through the stable sort order of
the site codes (8 more bytes a row).  Each group's checked values go to the site-major
:class:`~workbench.io.metstore.MetStore` (read lazily per block of sites; a small one is
read back into memory), and the ledger is kept as codes
(:class:`~workbench.io.ledger.CodedRows`), its reasons numbered in file order.  So the
reading peak is set by the chunk and group sizes and the threads, not by the file
(plus 13 bytes a row of ledger).

It takes the files it can read exactly as the line-by-line reader does, spreadsheet
exports included: ``# key: value`` lines, blank lines and a UTF-8 byte-order mark above
the header, a quoted header, CRLF line ends, and in the data rows quoted cells, blanks
around the cells, empty lines and lines of commas (dropped, their line numbers
skipped), and empty columns after the last when the header has them too (``Unnamed:
k``, noted as not used).  Each chunk is first made plain (:func:`.linechunks.normalise`,
then the blank lines dropped): the cells the line reader would see, so everything below
runs on plain text.  A chunk that rule declines (free text in a column not read: quoted
commas, doubled quotes, letters beyond ASCII) is made plain by the line reader's own
parser, per chunk (:func:`.linechunks.parsed_cells`).  The rows of the columns read must
be plain ASCII, every line with the header's number of fields, and for the rows
themselves every cell a number or a missing-value text (counted for the ledger note as
the line reader counts them), a known site and a valid timestamp on the hour (a half
or quarter hour of a fractional offset moved to the whole UTC hour, :mod:`.methours`,
with the line reader's one note per site), each site's timestamps all zoned or all
naive (per-site tallies of the zone flags, :class:`~.metlocate.ZoneTally`), no
repeated hour but exact repeats (24 or more rows repeating an earlier row of their site
and hour in every value, every column read and no label moved: dropped here as the line
reader drops them, :func:`_exact_repeats`; fewer, or a file with a column not read, a
moved label or a line repeating the header, goes to the line reader; a repeated hour
with another value is located here, with the differing cell,
:func:`.metlocate.repeat_differs`).  An error of one row (the last
conditions) and a line with more fields than the header (``...,3.2,,`` where the header
ends at 3.2: the line reader's parser refuses the file) it locates itself as the line
reader does (:mod:`.metlocate`).  For the truly odd files (a quoted cell over several
lines or a quote left open, a comma or quote in a cell of a column read, a lone CR or
another line break of ``str.splitlines``, a line of blanks only, a line with fewer
fields than the header, a ``-0``, a ``#`` line below the header) it returns None and
:func:`workbench.io.met.read_met` reads the file line by line, which gives the located
error or handles the oddity (so the messages stay those of one reader); that reader
still holds every cell of the file as text (:class:`~workbench.io.table.RawTable`: its
checks run over whole columns).
The values, the ledger, the notes and the errors are the line-by-line reader's, on any
number of threads (tests/io/test_metfast.py, tests/io/test_sheet_exports.py).
"""
from __future__ import annotations

import io
import itertools
import re
import tempfile
import threading
import zlib
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd

from ..errors import InputError
from ..threads import map_ordered, threads_here
from ..units import parse_header
from . import metchecks, methours, metlocate
from .metclock import add_clock_notes
from .common import REPEAT_REASON, join_reasons, release_free_memory, repeat_note, unused_note
from .ledger import CodedRows, Ledger
from .linechunks import (Source, gunzip, header_cells, line_cells, normalise, parsed_cells,
                         plain, plain_rows, read_head)
from .metrows import Spill
from .metstore import MetStore, grid_rows, load_small
from .metvars import HOUR, MET_VARIABLES, convert_met, met_attrs
from .readbytes import HashingFile
from .table import (_OFFSET, SAMPLE_MISSING_TEXTS, YEARS, check_unit_brackets, end_of_day, end_of_day_note,
                    fields_error, parse_iso)

#: Bytes of text parsed at a time (by each thread; see :func:`workbench.threads.map_ordered`).
CHUNK_BYTES = 8 << 20
#: Rows of met checked at a time (whole sites; the checks are per site), divided among
#: the threads (each checks a group of ``CHECK_ROWS / threads`` rows).
CHECK_ROWS = 400_000
#: The missing-value texts of the sample readers (:data:`~.table.SAMPLE_MISSING_TEXTS`) in
#: every case ("NA", "Na", "nA", "na", ...), and the empty cell: the C parser's missing
#: values for a chunk that holds such a text (it compares them as typed).
_ANY_CASE = [""] + sorted({"".join(c) for t in SAMPLE_MISSING_TEXTS if t
                           for c in itertools.product(*({ch.lower(), ch.upper()} for ch in t))})
#: What :func:`_checked` returns for a repeated hour (located by :mod:`.metlocate`).
_REPEAT = object()
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


def read_met_csv_fast(path, catalogue, chunk_bytes=CHUNK_BYTES):
    """Read an hourly met CSV as :func:`workbench.io.met.read_met` does, in chunks.

    Parameters
    ----------
    path : str or Path
        The met CSV (optionally gzipped).
    catalogue : SiteCatalogue
    chunk_bytes : int
        Bytes of text parsed at a time.

    Returns
    -------
    (xarray.Dataset, Ledger) or None
        As :func:`~workbench.io.met.read_met`; None for a file to be read line by line.
    """
    path = Path(path)
    try:
        with open(path, "rb") as raw:
            magic = raw.read(2)
            raw.seek(0)
            size_hint = path.stat().st_size
            gz = path.suffix == ".gz" or magic == b"\x1f\x8b"
            if gz:
                raw.seek(-4, 2)         # gzip: the size of the text is in the last 4 bytes
                size_hint = max(int.from_bytes(raw.read(4), "little"), 3 * size_hint)
                raw.seek(0)
            f = HashingFile(raw, path)  # every block parsed is hashed as it is read
            source = Source(gunzip(f) if gz else plain(f))
            got = _read(source, path, catalogue, chunk_bytes, HOUR, MET_VARIABLES, convert_met,
                        size_hint)
            if got is not None:
                f.finish()
    except InputError:
        raise                             # located here as the line reader locates it
    except (OSError, EOFError, ValueError, UnicodeDecodeError, zlib.error,
            pd.errors.ParserError):
        return None
    return got


def _read(stream, path, catalogue, chunk_bytes, hour, variables, convert, size_hint):
    head = read_head(stream)
    if head is None:
        return None
    meta, n_meta, header = head
    if header.count(";") > header.count(",") or header.count("\t") > header.count(","):
        return None
    cells = header_cells(header)
    if cells is None:
        return None
    for c in cells:
        check_unit_brackets(path, n_meta + 1, c)
    names = [parse_header(c).name for c in cells]
    if len(set(names)) != len(names):
        return None
    heads = {parse_header(c).name: parse_header(c) for c in cells}
    raw_headers = dict(zip(names, cells))
    needed = ["site", "time"] + [k for k, v in variables.items() if v[1]]
    if any(n not in heads for n in needed):
        return None
    label = meta.get("time_label", "end").lower()
    if label not in ("end", "start"):
        return None
    used = ["site", "time"] + [n for n in variables if n in heads]
    units = {}
    for n in used[2:]:
        target = variables[n][0]
        unit = heads[n].unit if heads[n].unit else ("1" if target == "1" else None)
        if unit is None:
            return None
        try:
            convert(np.zeros(1), unit, n, target)
        except ValueError:
            return None
        units[n] = unit
    ids = np.array(list(catalogue.ids), dtype=object)
    parser = _ChunkParser(names, used, units, catalogue, ids, hour, label, convert, variables)
    with tempfile.TemporaryDirectory(prefix="workbench-metrows-") as tmp:
        rows = Spill(Path(tmp), used[2:], len(ids), n_meta + 2)
        try:
            ok, firsts = _parse(stream, rows, parser, chunk_bytes, size_hint)
        finally:
            rows.close()
        release_free_memory()     # what the parsing threads freed stays in their arenas
        if not ok:
            return None
        if ("fields",) in firsts:    # the line reader's parser refuses the file first
            line = firsts[("fields",)][0]
            raise fields_error(path, line, len(names), _line_cells(path, line),
                               list(raw_headers.values()), _first_rows(path, len(names)))
        got = None
        zones = None
        if not any(k[0] in ("site", "time") for k in firsts):   # else raised before
            zones = rows.zones.first_break()
            zones = None if zones is None else tuple(int(x) for x in rows.line_of(zones))
        if not firsts and zones is None:
            drops = not parser.moved and all(c in set(variables) | {"site", "time"}
                                             for c in raw_headers)
            got = _checked(rows, path, catalogue, ids, units, raw_headers, variables, hour,
                           drops)
            if got is not None and got is not _REPEAT:
                got[1].notes[:0] = methours.move_notes(   # as the line reader: first
                    list(ids), catalogue.utc_offsets(ids), parser.moved, parser.kept)
                if rows.end_of_day:                          # as the line reader: last
                    got[1].notes.append(end_of_day_note(path.name, [raw_headers["time"]],
                                                        np.concatenate(rows.end_of_day)))
            if got is not _REPEAT:
                return got
        before = any(k[0] in ("site", "time", "hour") for k in firsts)   # checked first
        before = before or zones is not None
        repeat = None if before else metlocate.first_repeat(rows, rows.line_of, CHECK_ROWS)
        if repeat is not None:
            # the first repeated hour with another value is the line reader's error (its
            # exact repeats are dropped before); an exact one, or a day of repeats (the
            # hint counts the repeats it keeps), is for the line reader to judge
            differs = None if repeat[2] >= methours.TWICE_ROWS else metlocate.repeat_differs(
                names, used, raw_headers, repeat,
                lambda line: line_cells(path, names, line, CHUNK_BYTES, used), catalogue)
            if differs is None:
                return None
            repeat = (*repeat, differs)
        metlocate.raise_first(path, meta, heads, raw_headers, firsts, catalogue, label, hour,
                              repeat, lambda line: line_cells(path, names, line, CHUNK_BYTES,
                                                                ("site", "time")),
                              zones)
        return None                    # nothing raised: the line reader judges the file


def _exact_repeats(key, values):
    """Rows repeating an earlier row of their (site, hour) `key` in every value read
    (NaN equal to NaN), sorted by key, no loop over rows.

    Returns
    -------
    again, of : ndarray of int or None
        Positions of the repeats and of the first row of their key; (None, None) when
        a repeat has another value (the line reader's located error).
    """
    order = np.argsort(key, kind="stable")
    sk = key[order]
    new = np.r_[True, sk[1:] != sk[:-1]]
    start = np.maximum.accumulate(np.where(new, np.arange(len(sk)), 0))
    again, of = order[~new], order[start[~new]]
    for v in values.values():
        a, b = v[again], v[of]
        if not ((a == b) | (np.isnan(a) & np.isnan(b))).all():
            return None, None
    return again, of


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


def _checked(rows, path, catalogue, ids, units, raw_headers, variables, hour, drops=False):
    """Repeats refused, per-site checks, the ledger as codes and the (site, time) store,
    one group of whole sites at a time.

    `drops`: exact repeats may be dropped here (every column is read and no label was
    moved onto the UTC hour, so the values read are every cell of a row); they are, as
    the line reader drops them, when there are :data:`~.methours.TWICE_ROWS` or more
    (fewer: the line reader judges the clock going back)."""
    if not rows.present.any():
        return None                          # "no values in any row": the line reader says so
    n, site = rows.n, rows.site
    rank = np.cumsum(rows.present) - 1
    site_ids = [str(s) for s in ids[rows.present]]
    t0 = rows.t_min
    n_t = int((rows.t_max - t0) // hour) + 1
    times = t0 + np.arange(n_t) * hour
    t0_ns, hour_ns = int(t0.astype("datetime64[ns]").view(np.int64)), int(hour / np.timedelta64(1, "ns"))
    store = MetStore(rows.names, len(site_ids), n_t)
    reason_codes = np.zeros(n, np.int32)
    rejected = np.zeros(n, bool)
    texts = {"": 0}
    gap_notes, repeats = [], []

    def check(grp):
        """One group of whole sites (on a thread): None for a repeated hour, else the
        rows, their reasons (as codes into `uniq`), their emptiness and the gap notes."""
        tt, st = rows.read("time", grp), site[grp]
        tv = tt.view(np.int64)
        lo_t = tv.min()
        span = int((tv.max() - lo_t) // hour_ns) + 1     # (site, hour) as one integer
        key = (st.astype(np.int64) - int(st.min())) * span + (tv - lo_t) // hour_ns
        sub = {k: rows.read(k, grp) for k in rows.names}
        again = of = np.empty(0, np.int64)
        if not (key[1:] > key[:-1]).all():    # rows not in (site, hour) order: sort them
            if drops:
                again, of = _exact_repeats(key, sub)
            elif (np.diff(np.sort(key)) == 0).any():
                again = None
            if again is None:
                return None                               # a repeated hour: the line reader
            if len(again):
                kept = np.ones(len(grp), bool)
                kept[again] = False
                sub = {k: v[kept] for k, v in sub.items()}
                tt, st, tv = tt[kept], st[kept], tv[kept]
                again, of, grp = grp[again], grp[of], grp[kept]
        del key
        empty = np.ones(len(grp), bool)
        for v in sub.values():
            empty &= np.isnan(v)
        reasons, sub = metchecks.run_row_checks(sub, ids[st], tt, catalogue, units,
                                                   missing="no value")
        reasons = np.asarray(reasons, dtype=object)
        if empty.any():                     # joined on the empty rows only (the same text)
            reasons[empty] = join_reasons([reasons[empty], np.full(int(empty.sum()),
                                                                   "no values in the row",
                                                                   object)])
        inv, uniq = pd.factorize(reasons)
        notes = []
        keep = ~empty
        if keep.any():
            r = rank[st[keep]]
            lo, hi = int(r.min()), int(r.max()) + 1
            grids, present = grid_rows(sub, keep, r - lo, (tv[keep] - t0_ns) // hour_ns,
                                       hi - lo, n_t)
            store.write(lo, grids, present)
            notes = metchecks.describe_gaps({   # what it reads of a Dataset, without one
                "row_present": SimpleNamespace(values=present),
                "site": SimpleNamespace(values=np.array(site_ids[lo:hi], dtype=object)),
                "time": SimpleNamespace(values=times)})
        return grp, inv, [str(u) for u in uniq], empty, notes, again, of

    # groups in flight: one per thread (map_ordered), so each is smaller on more threads
    checked = map_ordered(check, rows.groups(max(CHECK_ROWS // threads_here(), 1)))
    try:
        for got in checked:
            if got is None:
                checked.close()              # the groups still running finish first
                store.remove()
                return _REPEAT
            grp, inv, uniq, empty, notes, again, of = got
            for u in uniq:
                texts.setdefault(u, len(texts))
            reason_codes[grp] = np.array([texts[u] for u in uniq], np.int32)[inv]
            rejected[grp] = empty
            gap_notes += notes
            if len(again):
                repeats.append((again, of))
            del got, grp, inv, empty
    finally:
        checked.close()
    again = np.concatenate([a for a, _ in repeats]) if repeats else np.empty(0, np.int64)
    if 0 < len(again) < methours.TWICE_ROWS:     # a few: the clock going back? line reader
        store.remove()
        return _REPEAT
    if len(again):
        of = np.concatenate([o for _, o in repeats])
        order = np.argsort(again, kind="stable")            # file order
        again, of = again[order], of[order]
        reason_codes[again] = texts.setdefault(REPEAT_REASON, len(texts))
        rejected[again] = True
    lines = rows.all_lines()
    ledger = Ledger.for_codes(CodedRows(
        str(path), lines, site, ids,
        reason_codes, np.array(list(texts), dtype=object), rejected))
    ds = store.dataset(site_ids, times, met_attrs(rows.names, path, variables))
    ds = load_small(ds, store)
    release_free_memory()              # the groups' arrays, freed above
    ledger.notes.extend(gap_notes)
    if len(again):                           # after the gaps, as the line reader
        ledger.notes.append(repeat_note(SimpleNamespace(path=path), rows.line_of(again),
                                        rows.line_of(of)))
    add_clock_notes(ds, ledger, catalogue, path, CHECK_ROWS)   # after the gaps, as the line reader
    unknown = [raw_headers[c] for c in raw_headers if c not in set(variables) | {"site", "time"}]
    if unknown:
        ledger.notes.append(unused_note(path.name, unknown))
    note = metlocate.missing_note(path, raw_headers, rows.missing, 0)   # file lines kept
    if note:
        ledger.notes.append(note)
    return ds, ledger
