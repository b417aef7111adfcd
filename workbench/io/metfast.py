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

It takes only files it can read exactly as the line-by-line reader does: plain
``# key: value`` lines above the header, no quotes, no blanks in the data rows, no
blank lines, ASCII data, every row with the header's number of fields, and for the
rows themselves every cell a number or a missing-value text (counted for the ledger
note as the line reader counts them), a known site and a valid timestamp on the hour,
each site's timestamps all zoned or all naive (per-site tallies of the zone flags,
:class:`~.metlocate.ZoneTally`), no repeated hour.  An error of one row (the last
conditions) it locates itself as the line reader does (:mod:`.metlocate`); for any
other file it returns None and :func:`workbench.io.met.read_met` reads it line by
line, which gives the located error or handles the oddity (so the messages stay those
of one reader).  The values, the ledger, the notes and the errors are the line-by-line
reader's, on any number of threads (tests/io/test_metfast.py).
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
from . import metchecks, metlocate
from .common import join_reasons, release_free_memory
from .ledger import CodedRows, Ledger
from .linechunks import Source, gunzip, line_cells, normalise, plain
from .metstore import MetStore, grid_rows, load_small
from .metvars import HOUR, MET_VARIABLES, convert_met, met_attrs
from .table import _OFFSET, SAMPLE_MISSING_TEXTS, YEARS, parse_iso

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
#: No rows: what a chunk of blank lines only holds, and the blank lines of most chunks.
_NONE = np.empty(0, np.int64)
#: Cells the C parser reads as a number but the line reader refuses ("True" is 1.0 there).
#: The parser does so only for a column of the chunk whose every cell is such a word or
#: missing (a word beside a number is an error), so the text is searched only when a
#: column holds nothing but 0, 1 and NaN (a search of every chunk cost 1.5 s at 1,000
#: site-years).
_WORDS = re.compile(rb"(?:^|,)(?:[Tt]rue|TRUE|[Ff]alse|FALSE)(?=,|\n|$)", re.MULTILINE)


def _head(stream):
    """(meta, number of lines above the header, header text) or None, by the rules of
    :meth:`~workbench.io.table.RawTable.read`: ``#`` lines (``key: value`` read as
    metadata), a blank line after them when each held a key, then blank lines; CRLF
    line ends and a UTF-8 byte-order mark as there.  None for what only the line reader
    may judge (another line break inside a line, a ``#`` line taken for the header)."""
    meta, n_meta, in_meta = {}, 0, True
    while True:
        raw = stream.readline(1 << 16)
        if not raw:
            return None
        try:
            ln = raw.decode("utf-8" if n_meta else "utf-8-sig")
        except UnicodeDecodeError:
            return None
        if not ln.endswith("\n"):
            return None
        ln = ln[:-2] if ln.endswith("\r\n") else ln[:-1]
        if ln.splitlines() not in ([ln], []):
            return None          # a lone CR (...) inside: more lines to the line reader
        s = ln.strip()
        if in_meta and s.startswith("#"):
            n_meta += 1
            body = s.lstrip("#").strip()
            if ":" in body:
                key, val = body.split(":", 1)
                meta[key.strip().lower()] = val.strip()
            continue
        if in_meta and s == "" and n_meta == len(meta) and n_meta:
            n_meta += 1
            continue
        in_meta = False
        if s == "":
            n_meta += 1          # blank lines above the header
            continue
        if s.startswith("#"):
            return None
        return meta, n_meta, ln


def _header_cells(header):
    """The column names of the header line as the line reader's parser names them
    (quotes removed, spaces before a cell skipped, ``Unnamed: k`` for an empty one);
    None for a header with a quote left open."""
    if header.count('"') % 2:
        return None
    cols = pd.read_csv(io.StringIO(header + "\n"), dtype=str, keep_default_na=False,
                       skip_blank_lines=False, skipinitialspace=True, index_col=False).columns
    return [str(c) for c in cols]


class _Rows:
    """A column of the whole file, filled chunk by chunk into one array (grown when the
    estimate was short): per-chunk pieces kept until the end would fragment the heap
    and hold about twice their size."""

    def __init__(self, dtype, capacity):
        self.data = np.empty(max(int(capacity), 1), dtype)
        self.n = 0

    def add(self, v):
        if self.n + len(v) > len(self.data):
            bigger = np.empty(max(int(len(self.data) * 1.5), self.n + len(v)), self.data.dtype)
            bigger[:self.n] = self.data[:self.n]
            self.data = bigger
        self.data[self.n:self.n + len(v)] = v
        self.n += len(v)

    def done(self) -> np.ndarray:
        out = self.data[:self.n] if self.n > 0.9 * len(self.data) else self.data[:self.n].copy()
        self.data = None
        return out


class _TimeTexts:
    """Timestamp texts parsed once each (a network repeats every hour once per site);
    shared by the parsing threads (the table grows under a lock)."""

    def __init__(self):
        self.text = pd.Index([], dtype=object)
        self.value = np.empty(0, dtype="datetime64[ns]")
        self.aware = np.empty(0, bool)
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
                where[new] = len(self.text) + np.arange(int(new.sum()))
                self.text = self.text.append(pd.Index(text.to_numpy(dtype=object)))
                self.value = np.concatenate([self.value, parsed])
                self.aware = np.concatenate([self.aware, aware])
            return where, self.value, self.aware

    def rows(self, cats, codes, off_ns, site_idx):
        """End-of-row times [ns] (UTC) of a chunk and the rows whose text carries a zone
        (None: none does); None when a text is no valid time."""
        got = self._lookup(pd.Index(np.asarray(cats, dtype=object)))
        if got is None:
            return None
        where, value, aware = got
        k = where[codes]
        t = value[k]
        zoned = aware[k]
        if not zoned.any():
            return t - off_ns[site_idx], None
        naive = ~zoned
        t[naive] = t[naive] - off_ns[site_idx[naive]]
        return t, zoned


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
        with open(path, "rb") as f:
            magic = f.read(2)
            f.seek(0)
            size_hint = path.stat().st_size
            if path.suffix == ".gz" or magic == b"\x1f\x8b":
                f.seek(-4, 2)           # gzip: the size of the text is in the last 4 bytes
                size_hint = max(int.from_bytes(f.read(4), "little"), 3 * size_hint)
                f.seek(0)
                source = Source(gunzip(f))
            else:
                source = Source(plain(f))
            got = _read(source, path, catalogue, chunk_bytes, HOUR, MET_VARIABLES, convert_met,
                        size_hint)
    except InputError:
        raise                             # located here as the line reader locates it
    except (OSError, EOFError, ValueError, UnicodeDecodeError, zlib.error,
            pd.errors.ParserError):
        return None
    return got


def _read(stream, path, catalogue, chunk_bytes, hour, variables, convert, size_hint):
    head = _head(stream)
    if head is None:
        return None
    meta, n_meta, header = head
    if header.count(";") > header.count(",") or header.count("\t") > header.count(","):
        return None
    cells = _header_cells(header)
    if cells is None:
        return None
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
        rows = _Spill(Path(tmp), used[2:], len(ids), n_meta + 2)
        try:
            ok, firsts = _parse(stream, rows, parser, chunk_bytes, size_hint)
        finally:
            rows.close()
        release_free_memory()     # what the parsing threads freed stays in their arenas
        if not ok:
            return None
        if ("fields",) in firsts:    # the line reader's parser refuses the file first
            raise InputError("malformed CSV row (wrong number of fields)", file=path,
                             line=firsts[("fields",)][0],
                             expected=f"{len(names)} fields as in the header")
        got = None
        zones = None
        if not any(k[0] in ("site", "time") for k in firsts):   # else raised before
            zones = rows.zones.first_break()
            zones = None if zones is None else tuple(int(x) for x in rows.line_of(zones))
        if not firsts and zones is None:
            got = _checked(rows, path, catalogue, ids, units, raw_headers, variables, hour)
            if got is not _REPEAT:
                return got
        before = any(k[0] in ("site", "time", "hour") for k in firsts)   # checked first
        before = before or zones is not None
        repeat = None if before else metlocate.first_repeat(rows, rows.line_of, CHECK_ROWS)
        metlocate.raise_first(path, meta, heads, raw_headers, firsts, catalogue, label, hour,
                              repeat, lambda line: line_cells(path, names, line, CHUNK_BYTES),
                              zones)
        return None                    # nothing raised: the line reader judges the file


class _Spill:
    """The parsed rows of a file: site codes in memory (4 bytes a row), times and values
    appended to scratch files, with what the grid needs (span of the hours with a value,
    the sites with a value, whether each site's rows are consecutive), and the blank
    lines between the rows (dropped, as the line reader drops them; their lines are
    skipped in the rows' line numbers, :meth:`line_of`)."""

    def __init__(self, folder, names, n_sites, first_line):
        self.folder, self.names = folder, list(names)
        self.first_line = first_line
        self._blanks = [_NONE]
        self._blank_at = _NONE
        self.files = {n: open(folder / f"{n}.bin", "wb") for n in ["time"] + self.names}
        self.site = None
        self.n = 0
        self.count = np.zeros(n_sites, np.int64)
        self.first = np.full(n_sites, -1, np.int64)
        self.present = np.zeros(n_sites, bool)
        self.seen = np.zeros(n_sites, bool)
        self.grouped = True
        self.last = -1
        self.t_min = self.t_max = None
        self.zones = metlocate.ZoneTally(n_sites)
        #: column -> {missing-value text: [count, first (at most 5) rows of the file]}
        self.missing = {}

    def add_blanks(self, before):
        """Blank lines, each given by the number of rows of the file above it."""
        self._blanks.append(np.asarray(before, np.int64))

    def line_of(self, rows):
        """File lines (1-based) of rows of the file (0-based, the blank lines not
        counted) [-]."""
        if len(self._blanks) > 1:
            self._blank_at = np.concatenate(self._blanks)
            self._blanks = [self._blank_at]
        rows = np.asarray(rows, np.int64)
        if not len(self._blank_at):
            return rows + self.first_line
        return rows + self.first_line + np.searchsorted(self._blank_at, rows, side="right")

    def all_lines(self):
        """The file line of every row (int32 when they fit) [-]."""
        last = int(self.line_of([max(self.n - 1, 0)])[0])
        dtype = np.int32 if last < 2**31 else np.int64
        if not len(self._blank_at):
            return np.arange(self.first_line, self.first_line + self.n, dtype=dtype)
        return self.line_of(np.arange(self.n)).astype(dtype)

    def count_missing(self, found, row0):
        """Count the missing-value texts of a chunk starting at file row `row0` (their
        first five file lines kept)."""
        for name, texts in found.items():
            for text, at in texts.items():
                e = self.missing.setdefault(name, {}).setdefault(text, [0, []])
                e[0] += len(at)
                e[1].extend(self.line_of(row0 + at[:max(5 - len(e[1]), 0)]).tolist())

    def add(self, site, t, values, capacity):
        if self.site is None:
            self.site = _Rows(np.int32, capacity)
        empty = np.ones(len(site), bool)
        for v in values.values():
            empty &= np.isnan(v)
        kept = t[~empty]
        if len(kept):
            lo, hi = kept.min(), kept.max()
            self.t_min = lo if self.t_min is None else min(self.t_min, lo)
            self.t_max = hi if self.t_max is None else max(self.t_max, hi)
        self.present[site[~empty]] = True
        change = np.flatnonzero(np.diff(site)) + 1
        run_sites = site[np.concatenate([[0], change])]
        if run_sites[0] == self.last:
            run_sites = run_sites[1:]
        if len(np.unique(run_sites)) < len(run_sites) or self.seen[run_sites].any():
            self.grouped = False       # a site's rows in more than one run: sorted below
        self.seen[run_sites] = True
        self.last = site[-1]
        u, at = np.unique(site, return_index=True)
        new = self.first[u] < 0
        self.first[u[new]] = self.n + at[new]
        self.count += np.bincount(site, minlength=len(self.count))
        self.site.add(site.astype(np.int32))
        t.view(np.int64).tofile(self.files["time"])
        for n in self.names:
            values[n].tofile(self.files[n])
        self.n += len(site)

    def close(self):
        for f in self.files.values():
            f.close()
        if isinstance(self.site, _Rows):
            self.site = self.site.done()

    def read(self, name, rows):
        """Values of `name` at `rows` (from the scratch file; nothing stays mapped)."""
        dtype = np.int64 if name == "time" else np.float64
        m = np.memmap(self.folder / f"{name}.bin", dtype=dtype, mode="r", shape=(self.n,))
        try:
            out = np.array(m[rows])
        finally:
            del m
        return out.view("datetime64[ns]") if name == "time" else out

    def groups(self, limit):
        """Row numbers of groups of whole sites (about `limit` rows each), each site's
        rows in file order, the sites in catalogue order."""
        sites = np.flatnonzero(self.count)
        order = None if self.grouped else np.argsort(self.site, kind="stable")
        ends = np.cumsum(self.count[sites])
        starts = ends - self.count[sites]
        i = 0
        while i < len(sites):
            j = i + 1
            while j < len(sites) and ends[j] - starts[i] <= limit:
                j += 1
            if order is not None:
                yield order[starts[i]:ends[j - 1]]
            else:
                yield np.concatenate([np.arange(self.first[s], self.first[s] + self.count[s])
                                      for s in sites[i:j]])
            i = j


class _ChunkParser:
    """Parse one chunk of whole data lines (called on several threads at once): the
    chunk's blank lines (each as the number of its rows above it), its number of rows,
    and the rows' site codes, end-of-hour times [ns] (UTC) and converted values (None
    when it holds no row); None for a chunk only the line reader may judge.

    A chunk is first made plain (:func:`~.linechunks.normalise`: CRLF, quotes, blanks
    around the cells), then its blank lines (empty, or commas only) are dropped."""

    def __init__(self, names, used, units, catalogue, ids, hour, label, convert, variables):
        self.names, self.used, self.units = names, used, units
        self.index = {s: i for i, s in enumerate(ids)}
        self.off_ns = (catalogue.utc_offsets(ids) * 3600e9).astype("timedelta64[ns]")
        self.dtype = {"site": "category", "time": "category",
                      **{n: "float64" for n in used[2:]}}
        self.hour, self.label, self.convert, self.variables = hour, label, convert, variables
        self.times = _TimeTexts()

    def __call__(self, chunk):
        n_bytes = len(chunk)
        if not chunk.isascii():
            return None
        chunk = normalise(chunk)                      # numpy: no interpreter lock held
        if chunk is None:
            return None
        got = _lines(chunk, len(self.names))
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
        t, zoned = got
        if self.label == "start":
            t = t + self.hour
        if (t != t.astype("datetime64[h]").astype("datetime64[ns]")).any():
            return self._locate(chunk)
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
        return site_idx, t, got, n, n_bytes, zoned, found

    def _frame(self, chunk, na):
        return pd.read_csv(io.BytesIO(chunk), header=None, names=self.names,
                           usecols=self.used, dtype=self.dtype,
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


def _lines(chunk, n_fields):
    """The rows of a plain chunk: (chunk without its blank lines, the blank lines (each
    as the number of rows above it), rows, the row of the first line with more fields
    than the header or None); None for a line with fewer (the line reader's parser fills
    it up: its rules).  A blank line is empty or holds commas only, the header's number
    of fields (the line reader drops the rows whose cells are all empty)."""
    text = np.frombuffer(chunk, np.uint8)
    ends = np.flatnonzero(text == 10)
    n = len(ends) + (not chunk.endswith(b"\n"))
    if (np.count_nonzero(text == 44) == n * (n_fields - 1)
            and not (len(ends) and (ends[0] == 0 or (np.diff(ends) == 1).any()))):
        return chunk, _NONE, n, None                     # most chunks
    if not chunk.endswith(b"\n"):
        ends = np.append(ends, len(chunk))
    starts = np.concatenate([[0], ends[:-1] + 1])
    commas = np.flatnonzero(text == 44)
    per = np.searchsorted(commas, ends) - np.searchsorted(commas, starts)
    blank = (ends == starts) | ((ends - starts == per) & (per == n_fields - 1))
    if (~blank & (per < n_fields - 1)).any():
        return None
    at = np.flatnonzero(blank)
    before = at - np.arange(len(at))                   # rows above each blank line
    long = np.flatnonzero(~blank & (per > n_fields - 1))
    long = None if not len(long) else int(long[0] - np.count_nonzero(at < long[0]))
    if len(at):
        keep = np.repeat(~blank, ends - starts + 1)[:len(text)]
        chunk = text[keep].tobytes()
    return chunk, before, n - len(at), long


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
                site_idx, t, values, n, n_bytes, zoned, found = got
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


def _checked(rows, path, catalogue, ids, units, raw_headers, variables, hour):
    """Repeats refused, per-site checks, the ledger as codes and the (site, time) store,
    one group of whole sites at a time."""
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
    gap_notes = []

    def check(grp):
        """One group of whole sites (on a thread): None for a repeated hour, else the
        rows, their reasons (as codes into `uniq`), their emptiness and the gap notes."""
        tt, st = rows.read("time", grp), site[grp]
        tv = tt.view(np.int64)
        lo_t = tv.min()
        span = int((tv.max() - lo_t) // hour_ns) + 1     # (site, hour) as one integer
        key = (st.astype(np.int64) - int(st.min())) * span + (tv - lo_t) // hour_ns
        if not (key[1:] > key[:-1]).all():    # rows not in (site, hour) order: sort them
            key = np.sort(key)
            if (key[1:] == key[:-1]).any():
                return None                               # a repeated hour: the line reader
        del key
        sub = {k: rows.read(k, grp) for k in rows.names}
        empty = np.ones(len(grp), bool)
        for v in sub.values():
            empty &= np.isnan(v)
        reasons, sub = metchecks.run_row_checks(sub, ids[st], tt, catalogue, units)
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
        return grp, inv, [str(u) for u in uniq], empty, notes

    # groups in flight: one per thread (map_ordered), so each is smaller on more threads
    checked = map_ordered(check, rows.groups(max(CHECK_ROWS // threads_here(), 1)))
    try:
        for got in checked:
            if got is None:
                checked.close()              # the groups still running finish first
                store.remove()
                return _REPEAT
            grp, inv, uniq, empty, notes = got
            for u in uniq:
                texts.setdefault(u, len(texts))
            reason_codes[grp] = np.array([texts[u] for u in uniq], np.int32)[inv]
            rejected[grp] = empty
            gap_notes += notes
            del got, grp, inv, empty
    finally:
        checked.close()
    lines = rows.all_lines()
    ledger = Ledger.for_codes(CodedRows(
        str(path), lines, site, ids,
        reason_codes, np.array(list(texts), dtype=object), rejected))
    ds = store.dataset(site_ids, times, met_attrs(rows.names, path, variables))
    ds = load_small(ds, store)
    release_free_memory()              # the groups' arrays, freed above
    ledger.notes.extend(gap_notes)
    unknown = [raw_headers[c] for c in raw_headers if c not in set(variables) | {"site", "time"}]
    if unknown:
        ledger.notes.append(f"{path.name}: columns not used: {', '.join(unknown)}")
    note = metlocate.missing_note(path, raw_headers, rows.missing, 0)   # file lines kept
    if note:
        ledger.notes.append(note)
    return ds, ledger
