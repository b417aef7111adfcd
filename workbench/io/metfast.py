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
The parsing of the chunks is in :mod:`workbench.io.metchunks` (re-exported here).
"""
from __future__ import annotations

import tempfile
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
from .linechunks import Source, gunzip, header_cells, line_cells, plain, read_head
from .metrows import Spill
from .metstore import MetStore, grid_rows, load_small
from .metvars import HOUR, MET_VARIABLES, convert_met, met_attrs
from .readbytes import HashingFile
from .table import check_unit_brackets, end_of_day_note, fields_error
# the parsing of chunks of lines (defined here before)
from .metchunks import (_ANY_CASE, _ChunkParser, _HASH_LINE, _TimeTexts, _WORDS, _first_rows,  # noqa: F401
                        _line_cells, _parse)

#: Bytes of text parsed at a time (by each thread; see :func:`workbench.threads.map_ordered`).
CHUNK_BYTES = 8 << 20
#: Rows of met checked at a time (whole sites; the checks are per site), divided among
#: the threads (each checks a group of ``CHECK_ROWS / threads`` rows).
CHECK_ROWS = 400_000
#: What :func:`_checked` returns for a repeated hour (located by :mod:`.metlocate`).
_REPEAT = object()


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
        if not np.array_equal(v[again], v[of], equal_nan=True):
            return None, None
    return again, of


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
    gap_notes, repeats, declared_notes = [], [], []

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
        site_notes = []
        reasons, sub = metchecks.run_row_checks(sub, ids[st], tt, catalogue, units,
                                                missing="no value", notes=site_notes)
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
                "time": SimpleNamespace(values=times)}, values=grids)
        return grp, inv, [str(u) for u in uniq], empty, notes, again, of, site_notes

    # groups in flight: one per thread (map_ordered), so each is smaller on more threads
    checked = map_ordered(check, rows.groups(max(CHECK_ROWS // threads_here(), 1)))
    try:
        for got in checked:
            if got is None:
                checked.close()              # the groups still running finish first
                store.remove()
                return _REPEAT
            grp, inv, uniq, empty, notes, again, of, more = got
            declared_notes += more
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
    ledger.notes.extend(declared_notes)          # after the gaps, as the line reader
    if len(again):                           # after the gaps, as the line reader
        ledger.notes.append(repeat_note(SimpleNamespace(path=path), rows.line_of(again),
                                        rows.line_of(of)))
    add_clock_notes(ds, ledger, catalogue, path, CHECK_ROWS,   # after the gaps, as the line reader
                    zoned_sites=set(ids[rows.zones.zoned > 0]))
    unknown = [raw_headers[c] for c in raw_headers if c not in set(variables) | {"site", "time"}]
    if unknown:
        ledger.notes.append(unused_note(path.name, unknown))
    note = metlocate.missing_note(path, raw_headers, rows.missing, 0)   # file lines kept
    if note:
        ledger.notes.append(note)
    return ds, ledger
