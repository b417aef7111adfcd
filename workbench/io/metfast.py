"""Hourly met CSV of a whole network, read in chunks into compact arrays.

The line-by-line reader (:class:`~workbench.io.table.RawTable`) holds every cell of the
file as text: for the hourly met of a large network (millions of rows) that is several
GB and most of the reading time.  :func:`read_met_csv_fast` reads the same file in
chunks of bytes with the C parser of pandas straight into float64 arrays (the site and
the time as small integer codes, each distinct timestamp text parsed once), runs the
plausibility checks of :mod:`workbench.io.metchecks` one group of sites at a time (they
are per site, so the result is the same) and keeps the ledger as codes
(:class:`~workbench.io.ledger.CodedRows`).

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
from pathlib import Path

import numpy as np
import pandas as pd

from ..units import parse_header
from . import metchecks
from .common import join_reasons, release_free_memory
from .ledger import CodedRows, Ledger
from .metvars import HOUR, MET_VARIABLES, convert_met, site_time_dataset
from .table import _OFFSET, MISSING_TEXTS, YEARS

#: Bytes of text parsed at a time.
CHUNK_BYTES = 32 << 20
#: Rows of met checked at a time (whole sites; the checks are per site).
CHECK_ROWS = 400_000
_BLANK = re.compile(rb"[^\S\n]")
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
    index = {s: i for i, s in enumerate(ids)}
    off_ns = (catalogue.utc_offsets(ids) * 3600e9).astype("timedelta64[ns]")
    dtype = {"site": "category", "time": "category", **{n: "float64" for n in used[2:]}}
    first_line = n_meta + 2
    parts = {}
    n_rows = 0
    times = _TimeTexts()
    for chunk in _chunks(stream, chunk_bytes):
        rows = chunk.count(b"\n") + (not chunk.endswith(b"\n"))
        if (not chunk.isascii() or b'"' in chunk or b"\n\n" in chunk or chunk[:1] == b"\n"
                or _BLANK.search(chunk) or chunk.count(b",") != rows * (len(cells) - 1)
                or _WORDS.search(chunk)):
            return None
        try:
            df = pd.read_csv(io.BytesIO(chunk), header=None, names=names,
                             usecols=used, dtype=dtype, na_values=list(MISSING_TEXTS),
                             keep_default_na=False, skip_blank_lines=False)
        except (ValueError, IndexError, TypeError, pd.errors.ParserError):
            return None              # a cell that is no number: the line reader names it
        if len(df) != rows:
            return None
        sc = df["site"].cat
        site_map = np.array([index.get(s, -1) for s in sc.categories], dtype=np.int32)
        codes = sc.codes.to_numpy()
        if (codes < 0).any() or (site_map[codes] < 0).any():
            return None
        site_idx = site_map[codes]
        tc = df["time"].cat
        tcodes = tc.codes.to_numpy()
        if (tcodes < 0).any():
            return None
        t = times.rows(tc.categories, tcodes, off_ns, site_idx)
        if t is None:
            return None
        got = {"site": site_idx, "time": t}
        for n in used[2:]:
            v = df[n].to_numpy(dtype=float)
            # inf is refused by the line reader; a "-0" it may read as +0 (whole-number
            # columns parse as integers there): both left to it
            if np.isinf(v).any() or ((v == 0) & np.signbit(v)).any():
                return None
            got[n] = convert(v, units[n], n, variables[n][0])
        if not parts:          # rows of the file estimated from its size and this chunk
            est = int(size_hint / max(len(chunk), 1) * rows * 1.02) + rows
            parts = {n: _Rows(v.dtype, est) for n, v in got.items()}
        for n, v in got.items():
            parts[n].add(v)
        n_rows += rows
        del df, got
    if not n_rows:
        return None
    site = parts.pop("site").done()
    t = parts.pop("time").done()
    if label == "start":
        t = t + hour
    if (t != t.astype("datetime64[h]").astype("datetime64[ns]")).any():
        return None
    values = {n: parts.pop(n).done() for n in used[2:]}
    return _checked(values, site, t, first_line, path, catalogue, ids, units, raw_headers,
                    variables)


def _checked(values, site, t, first_line, path, catalogue, ids, units, raw_headers, variables):
    """Repeats refused, per-site checks, the ledger as codes and the (site, time) grid."""
    n = len(site)
    order = np.argsort(site, kind="stable")             # rows of each site, in file order
    s_sorted = site[order]
    empty = np.ones(n, bool)
    for v in values.values():
        empty &= np.isnan(v)
    reason_codes = np.zeros(n, np.int32)
    texts = {"": 0}
    bounds = np.flatnonzero(np.diff(s_sorted)) + 1
    starts = np.concatenate([[0], bounds])
    ends = np.concatenate([bounds, [n]])
    i = 0
    while i < len(starts):                                # whole sites, about CHECK_ROWS rows
        j = i + 1
        while j < len(starts) and ends[j] - starts[i] <= CHECK_ROWS:
            j += 1
        rows = order[starts[i]:ends[j - 1]]
        tt, st = t[rows], site[rows]
        by_t = np.lexsort((tt, st))
        if ((tt[by_t][1:] == tt[by_t][:-1]) & (st[by_t][1:] == st[by_t][:-1])).any():
            return None                                   # a repeated hour: the line reader
        sub = {k: v[rows] for k, v in values.items()}
        reasons, sub = metchecks.run_row_checks(sub, ids[st], tt, catalogue, units)
        reasons = np.where(empty[rows], join_reasons(
            [reasons, np.full(len(rows), "no values in the row", object)]), reasons)
        for k, v in sub.items():
            values[k][rows] = v
        uniq, inv = np.unique(reasons.astype(str), return_inverse=True)
        for u in uniq:
            texts.setdefault(str(u), len(texts))
        reason_codes[rows] = np.array([texts[str(u)] for u in uniq], np.int32)[inv]
        i = j
    del order, s_sorted
    line_dtype = np.int32 if first_line + n < 2**31 else np.int64
    ledger = Ledger.for_codes(CodedRows(
        str(path), np.arange(first_line, first_line + n, dtype=line_dtype), site, ids,
        reason_codes, np.array(list(texts), dtype=object), empty))
    keep = ~empty
    if not keep.any():
        return None                          # "no values in any row": the line reader says so
    present = np.zeros(len(ids), bool)
    present[site[keep]] = True
    rank = np.cumsum(present) - 1
    site_ids = [str(s) for s in ids[present]]
    si = rank[site[keep]]
    ds = site_time_dataset(values, keep, site_ids, si, t[keep], path, variables)
    release_free_memory()              # the row arrays, freed above
    ledger.notes.extend(metchecks.describe_gaps(ds))
    unknown = [raw_headers[c] for c in raw_headers if c not in set(variables) | {"site", "time"}]
    if unknown:
        ledger.notes.append(f"{path.name}: columns not used: {', '.join(unknown)}")
    return ds, ledger
