"""Hourly met CSV of a whole network, read in chunks into an on-disk store.

The line-by-line reader (:class:`~workbench.io.table.RawTable`) holds every cell of the
file as text: for the hourly met of a large network (millions of rows) that is several
GB and most of the reading time.  :func:`read_met_csv_fast` reads the same file in
chunks of bytes with the C parser of pandas straight into float64 arrays (the site and
the time as small integer codes, each distinct timestamp text parsed once) and appends
each chunk's times and values to scratch files, keeping only the site code of each row
(4 bytes) in memory.  It then runs the plausibility checks of
:mod:`workbench.io.metchecks` one group of whole sites at a time (they are per site,
so the result is the same): when each site's rows are together in the file, a group's
rows are read site by site from the scratch files; when sites are interleaved, through
the stable sort order of the site codes (8 more bytes a row).  Each group's checked
values go to the site-major :class:`~workbench.io.metstore.MetStore` (read lazily per
block of sites; a small one is read back into memory), and the ledger is kept as codes
(:class:`~workbench.io.ledger.CodedRows`).  So the reading peak is set by the chunk and
group sizes, not by the file (plus 13 bytes a row of ledger).

It takes only files it can read exactly as the line-by-line reader does: plain
``# key: value`` lines above the header, no quotes, no blanks in the data rows, no
blank lines, ASCII data, every row with the header's number of fields, every cell a
number, a known site and a valid timestamp, no repeated hour.  For any other file it
returns None and :func:`workbench.io.met.read_met` reads it line by line, which gives
the located error or handles the oddity (so the messages stay those of one reader).
The values, the ledger and the notes are the line-by-line reader's
(tests/io/test_metfast.py).
"""
from __future__ import annotations

import gzip
import io
import re
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from ..units import parse_header
from . import metchecks
from .common import join_reasons, release_free_memory
from .ledger import CodedRows, Ledger
from .metstore import MetStore, grid_rows, load_small
from .metvars import HOUR, MET_VARIABLES, convert_met, met_attrs
from .table import _OFFSET, MISSING_TEXTS, YEARS

#: Bytes of text parsed at a time.
CHUNK_BYTES = 32 << 20
#: Rows of met checked at a time (whole sites; the checks are per site).
CHECK_ROWS = 400_000
#: Blanks other than the newline (what ``\s`` matches in bytes), found by a substring
#: search each (a regular expression over 32 MB chunks cost 10 s at 1,000 site-years).
_BLANKS = (b" ", b"\t", b"\r", b"\f", b"\v")
#: Texts without which no cell is a word of :data:`_WORDS` (searched first, as fast).
_WORD_PARTS = (b"rue", b"RUE", b"alse", b"ALSE")
#: Cells the C parser reads as a number but the line reader refuses ("True" is 1.0 there).
_WORDS = re.compile(rb"(?:^|,)(?:[Tt]rue|TRUE|[Ff]alse|FALSE)(?=,|\n|$)", re.MULTILINE)


def _head(stream):
    """(meta, number of lines above the header, header text) or None."""
    lines = []
    while True:
        raw = stream.readline(1 << 16)
        if not raw:
            return None
        try:
            ln = raw.decode("utf-8-sig" if not lines else "utf-8")
        except UnicodeDecodeError:
            return None
        if not ln.endswith("\n"):
            return None
        ln = ln[:-1]
        s = ln.strip()
        if s.startswith("#"):
            lines.append(ln)
            continue
        if s == "" or ln != s:
            return None          # blank lines and indented headers: the line reader
        break
    meta = {}
    for m in lines:
        body = m.strip().lstrip("#").strip()
        if ":" not in body:
            return None
        key, val = body.split(":", 1)
        meta[key.strip().lower()] = val.strip()
    return meta, len(lines), ln


def _chunks(stream, size):
    """Whole lines of `stream`, about `size` bytes at a time."""
    rest = b""
    while True:
        block = stream.read(size)
        if not block:
            if rest:
                yield rest
            return
        block = rest + block
        cut = block.rfind(b"\n")
        if cut < 0:
            rest = block
            continue
        rest = block[cut + 1:]
        yield block[:cut + 1]


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
    """Timestamp texts parsed once each (a network repeats every hour once per site)."""

    def __init__(self):
        self.text = pd.Index([], dtype=object)
        self.value = np.empty(0, dtype="datetime64[ns]")
        self.aware = np.empty(0, bool)

    def rows(self, cats, codes, off_ns, site_idx):
        """End-of-row times [ns] (UTC) of a chunk; None when a text is no valid time."""
        cats = pd.Index(np.asarray(cats, dtype=object))
        where = self.text.get_indexer(cats)
        new = where < 0
        if new.any():
            text = pd.Series(np.asarray(cats[new], dtype=object))
            aware = text.str.contains(_OFFSET).to_numpy()
            parsed = np.empty(len(text), dtype="datetime64[ns]")
            for sel, utc in ((aware, True), (~aware, False)):
                if not sel.any():
                    continue
                t = pd.to_datetime(text[sel], format="ISO8601", utc=utc, errors="coerce")
                if utc:
                    t = t.dt.tz_localize(None)
                tv = t.to_numpy().astype("datetime64[ns]")
                if np.isnat(tv).any() or ((tv < YEARS[0]) | (tv >= YEARS[1])).any():
                    return None
                parsed[sel] = tv
            where[new] = len(self.text) + np.arange(int(new.sum()))
            self.text = self.text.append(pd.Index(text.to_numpy(dtype=object)))
            self.value = np.concatenate([self.value, parsed])
            self.aware = np.concatenate([self.aware, aware])
        k = where[codes]
        t = self.value[k]
        naive = ~self.aware[k]
        t[naive] = t[naive] - off_ns[site_idx[naive]]
        return t


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
            stream = gzip.GzipFile(fileobj=f) if path.suffix == ".gz" or magic == b"\x1f\x8b" \
                else f
            size_hint = path.stat().st_size
            if stream is not f:         # gzip: the size of the text is in the last 4 bytes
                f.seek(-4, 2)
                size_hint = max(int.from_bytes(f.read(4), "little"), 3 * size_hint)
                f.seek(0)
            got = _read(stream, path, catalogue, chunk_bytes, HOUR, MET_VARIABLES, convert_met,
                        size_hint)
    except (OSError, EOFError, ValueError, UnicodeDecodeError, pd.errors.ParserError):
        return None
    return got


def _read(stream, path, catalogue, chunk_bytes, hour, variables, convert, size_hint):
    head = _head(stream)
    if head is None:
        return None
    meta, n_meta, header = head
    if header.count(";") > header.count(",") or header.count("\t") > header.count(",") \
            or '"' in header:
        return None
    cells = header.split(",")
    if any(c != c.strip() or not c for c in cells):
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
    with tempfile.TemporaryDirectory(prefix="workbench-metrows-") as tmp:
        rows = _Spill(Path(tmp), used[2:], len(ids))
        try:
            ok = _parse(stream, rows, names, used, units, catalogue, ids, chunk_bytes, hour,
                        label, convert, variables, size_hint)
        finally:
            rows.close()
        if not ok:
            return None
        return _checked(rows, n_meta + 2, path, catalogue, ids, units, raw_headers, variables,
                        hour)


class _Spill:
    """The parsed rows of a file: site codes in memory (4 bytes a row), times and values
    appended to scratch files, with what the grid needs (span of the hours with a value,
    the sites with a value, whether each site's rows are consecutive)."""

    def __init__(self, folder, names, n_sites):
        self.folder, self.names = folder, list(names)
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


def _parse(stream, rows, names, used, units, catalogue, ids, chunk_bytes, hour, label,
           convert, variables, size_hint) -> bool:
    """Parse the data rows chunk by chunk into `rows` (False: a file for the line reader)."""
    index = {s: i for i, s in enumerate(ids)}
    off_ns = (catalogue.utc_offsets(ids) * 3600e9).astype("timedelta64[ns]")
    dtype = {"site": "category", "time": "category", **{n: "float64" for n in used[2:]}}
    times = _TimeTexts()
    cells = len(names)
    for chunk in _chunks(stream, chunk_bytes):
        n = chunk.count(b"\n") + (not chunk.endswith(b"\n"))
        if (not chunk.isascii() or b'"' in chunk or b"\n\n" in chunk or chunk[:1] == b"\n"
                or any(b in chunk for b in _BLANKS) or chunk.count(b",") != n * (cells - 1)
                or (any(w in chunk for w in _WORD_PARTS) and _WORDS.search(chunk))):
            return False
        try:
            df = pd.read_csv(io.BytesIO(chunk), header=None, names=names,
                             usecols=used, dtype=dtype, na_values=list(MISSING_TEXTS),
                             keep_default_na=False, skip_blank_lines=False)
        except (ValueError, IndexError, TypeError, pd.errors.ParserError):
            return False             # a cell that is no number: the line reader names it
        if len(df) != n:
            return False
        sc = df["site"].cat
        site_map = np.array([index.get(s, -1) for s in sc.categories], dtype=np.int32)
        codes = sc.codes.to_numpy()
        if (codes < 0).any() or (site_map[codes] < 0).any():
            return False
        site_idx = site_map[codes]
        tc = df["time"].cat
        tcodes = tc.codes.to_numpy()
        if (tcodes < 0).any():
            return False
        t = times.rows(tc.categories, tcodes, off_ns, site_idx)
        if t is None:
            return False
        if label == "start":
            t = t + hour
        if (t != t.astype("datetime64[h]").astype("datetime64[ns]")).any():
            return False
        got = {}
        for name in used[2:]:
            v = df[name].to_numpy(dtype=float)
            # inf is refused by the line reader; a "-0" it may read as +0 (whole-number
            # columns parse as integers there): both left to it
            if np.isinf(v).any() or ((v == 0) & np.signbit(v)).any():
                return False
            got[name] = convert(v, units[name], name, variables[name][0])
        est = int(size_hint / max(len(chunk), 1) * n * 1.02) + n   # rows, from the size
        rows.add(site_idx, t, got, est)
        del df, got
    return rows.n > 0


def _checked(rows, first_line, path, catalogue, ids, units, raw_headers, variables, hour):
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
    store = MetStore(rows.names, len(site_ids), n_t)
    reason_codes = np.zeros(n, np.int32)
    rejected = np.zeros(n, bool)
    texts = {"": 0}
    gap_notes = []
    for grp in rows.groups(CHECK_ROWS):
        tt, st = rows.read("time", grp), site[grp]
        by_t = np.lexsort((tt, st))
        if ((tt[by_t][1:] == tt[by_t][:-1]) & (st[by_t][1:] == st[by_t][:-1])).any():
            store.remove()
            return None                                   # a repeated hour: the line reader
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
        for u in uniq:
            texts.setdefault(str(u), len(texts))
        reason_codes[grp] = np.array([texts[str(u)] for u in uniq], np.int32)[inv]
        rejected[grp] = empty
        keep = ~empty
        if keep.any():
            r = rank[st[keep]]
            lo, hi = int(r.min()), int(r.max()) + 1
            grids, present = grid_rows(sub, keep, r - lo, (tt[keep] - t0) // hour, hi - lo, n_t)
            store.write(lo, grids, present)
            gap_notes += metchecks.describe_gaps(xr.Dataset(
                {"row_present": (("site", "time"), present)},
                coords={"site": site_ids[lo:hi], "time": times}))
        del sub, tt, st
    line_dtype = np.int32 if first_line + n < 2**31 else np.int64
    ledger = Ledger.for_codes(CodedRows(
        str(path), np.arange(first_line, first_line + n, dtype=line_dtype), site, ids,
        reason_codes, np.array(list(texts), dtype=object), rejected))
    ds = store.dataset(site_ids, times, met_attrs(rows.names, path, variables))
    ds = load_small(ds, store)
    release_free_memory()              # the groups' arrays, freed above
    ledger.notes.extend(gap_notes)
    unknown = [raw_headers[c] for c in raw_headers if c not in set(variables) | {"site", "time"}]
    if unknown:
        ledger.notes.append(f"{path.name}: columns not used: {', '.join(unknown)}")
    return ds, ledger
