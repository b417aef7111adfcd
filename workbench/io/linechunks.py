"""The text of a (gzipped) CSV file as chunks of whole lines, for the chunked readers.

:func:`gunzip` inflates a gzip file (one or more members) in blocks of a few MB with
zlib, which releases the interpreter lock while it works (the parsing threads of
:mod:`workbench.io.metfast` run meanwhile); :class:`Source` gives the first lines one
by one (the head of the file) and then the rest in chunks of whole lines.
:func:`normalise` turns a chunk of a spreadsheet export (CRLF line ends, every cell in
quotes, blanks around the cells) into the plain text of the cells as the line-by-line
reader (:class:`~workbench.io.table.RawTable`) sees them, and :func:`plain_rows` drops
its blank lines (noting where they were); :func:`read_head` and :func:`header_cells`
read the lines above the data rows by that reader's rules.
"""
from __future__ import annotations

import csv
import io
import re
import warnings
import zlib

import numpy as np
import pandas as pd

#: Compressed bytes read and text bytes returned per call of zlib [byte].
_GZ_READ, _GZ_OUT = 1 << 20, 4 << 20


def gunzip(f):
    """The text of the gzip file `f` (one or more members) in blocks; zlib releases the
    interpreter lock while it inflates, so this overlaps with the parsing threads."""
    d, data, started = zlib.decompressobj(31), b"", False
    while True:
        if not data:
            data = f.read(_GZ_READ)
            if not data:
                break
        if d is None:                           # between members: zero padding or the next
            data = data.lstrip(b"\0")
            if not data:
                continue
            d = zlib.decompressobj(31)
        started = True
        text = d.decompress(data, _GZ_OUT)
        data = d.unconsumed_tail
        if d.eof:
            data, d = d.unused_data, None
        if text:
            yield text
    if d is not None and started:
        raise EOFError("compressed file ended before the end-of-stream marker")


def plain(f):
    while True:
        block = f.read(_GZ_OUT)
        if not block:
            return
        yield block


class Source:
    """The text of a file: lines for the head (:meth:`readline`), then chunks of whole
    lines (:meth:`chunks`)."""

    def __init__(self, blocks):
        self._blocks, self._buf, self._pos = blocks, b"", 0

    def _more(self) -> bool:
        block = next(self._blocks, b"")
        if block:
            self._buf, self._pos = self._buf[self._pos:] + block, 0
        return bool(block)

    def readline(self, limit):
        while True:
            i = self._buf.find(b"\n", self._pos, self._pos + limit)
            if i >= 0 or len(self._buf) - self._pos >= limit or not self._more():
                end = i + 1 if i >= 0 else min(len(self._buf), self._pos + limit)
                line, self._pos = self._buf[self._pos:end], end
                return line

    def chunks(self, size):
        """Whole lines, about `size` bytes at a time (a last line without a newline too)."""
        pending, n = [self._buf[self._pos:]], len(self._buf) - self._pos
        self._buf, self._pos = b"", 0
        for block in self._blocks:
            pending.append(block)
            n += len(block)
            if n < size:
                continue
            data, start = b"".join(pending), 0
            while len(data) - start >= size:
                cut = data.rfind(b"\n", start, start + size)
                if cut < 0:
                    cut = data.find(b"\n", start + size)
                    if cut < 0:
                        break
                yield data[start:cut + 1]
                start = cut + 1
            pending = [data[start:]]
            n = len(pending[0])
        data, start = b"".join(pending), 0
        while start < len(data):
            cut = data.rfind(b"\n", start, start + size)
            if cut < 0:
                cut = data.find(b"\n", start + size)
            end = len(data) if cut < 0 else cut + 1
            yield data[start:end]
            start = end


def line_cells(path, names, line, chunk_bytes=8 << 20, read=None):
    """The cells of file line `line` (1-based), read again from the file, as the line
    reader sees them (:func:`normalise`, else :func:`parsed_cells`) [-]; only those of
    the columns `read` (names; default all) are sure to be right."""
    with open(path, "rb") as f:
        gz = path.suffix == ".gz" or f.read(2) == b"\x1f\x8b"
        f.seek(0)
        seen = 0
        for chunk in Source(gunzip(f) if gz else plain(f)).chunks(chunk_bytes):
            k = chunk.count(b"\n") + (not chunk.endswith(b"\n"))
            if seen + k >= line:
                raw = chunk.split(b"\n")[line - seen - 1] + b"\n"
                text = normalise(raw) if raw.isascii() else None
                if text is None:
                    at = {names.index(c) for c in (names if read is None else read)}
                    text = parsed_cells(raw, len(names), at)
                text = (raw if text is None else text).rstrip(b"\r\n").decode("utf-8")
                return dict(zip(names, text.split(",")))
            seen += k
    return {}


#: Bytes that are line breaks for the line reader (``str.splitlines``) or blanks that
#: ``str.strip`` removes, other than the newline, the CRLF pair, the space and the tab:
#: a chunk holding one goes to the line reader.
ODD_BYTES = (b"\v", b"\f", b"\x1c", b"\x1d", b"\x1e", b"\x1f")
_COMMA, _NL, _QUOTE, _SPACE, _TAB = 44, 10, 34, 32, 9
#: No rows: the blank lines of most chunks.
_NO_ROWS = np.empty(0, np.int64)


def normalise(chunk):
    """The cells of a chunk of whole lines as the line reader reads them: CRLF line ends
    as LF, the blanks around each cell removed (``str.strip``), and the quotes removed
    where a pair of them encloses a whole cell (blanks aside) that holds no comma, quote
    or line break.

    Parameters
    ----------
    chunk : bytes
        Whole lines of ASCII text.

    Returns
    -------
    bytes or None
        The chunk itself when it has no quote, blank or CR (most files: no copy); None
        for a chunk only the line reader may judge: a lone CR, a byte of
        :data:`ODD_BYTES`, a quote not enclosing a whole cell (a comma or a doubled quote
        inside, text beside it), a tab before an opening quote (the line reader keeps
        it and the quotes as text: only spaces are skipped before a quote,
        ``skipinitialspace``), a line of blanks only or a line of one empty quoted cell
        (a row of one field to the line reader, not a blank line).

    Notes
    -----
    The line reader (pandas ``read_csv`` with ``skipinitialspace=True``, then
    ``str.strip`` of every cell) gives ``3.2`` for each of ``3.2``, `` 3.2 ``,
    ``"3.2"``, `` "3.2" `` and ``" 3.2 "``; the blanks inside a cell (``2021-01-01
    00:00``) stay.  Blanks are found as runs: a run touching a comma, a line end, a
    quote or the end of the chunk is around a cell (removed), any other run is inside
    one (kept).  After the runs are removed, the quotes must come in pairs, each
    opening right after a comma or a line start and closing right before a comma or a
    line end with no comma or line break between them; then every quote is removed.
    """
    if any(b in chunk for b in ODD_BYTES):
        return None
    if b'"' in chunk:                      # most quoted files: every cell, no blanks
        unquoted = _every_cell_quoted(chunk)
        if unquoted is not None:
            chunk = unquoted             # LF, no quote: the blanks left (below)
    if b"\r" in chunk:
        if chunk.count(b"\r") != chunk.count(b"\r\n"):
            return None                  # a lone CR is a line break to the line reader
        chunk = chunk.replace(b"\r\n", b"\n")
    blanks = b" " in chunk or b"\t" in chunk
    if not blanks and b'"' not in chunk:
        return chunk
    if len(chunk) > _PIECE:              # the rule is per line: pieces of whole lines
        pieces = []
        for start, end in _pieces(chunk, _PIECE):
            got = _general(chunk[start:end])
            if got is None:
                return None
            pieces.append(got)
        return b"".join(pieces)
    return _general(chunk)


#: Bytes made plain by the general rule at a time (its arrays take about 12 times the
#: text: pieces keep them small beside the chunk) [byte].
_PIECE = 1 << 20


def _pieces(chunk, size):
    """(start, end) of pieces of whole lines of about `size` bytes."""
    start = 0
    while start < len(chunk):
        cut = chunk.find(b"\n", start + size)
        end = len(chunk) if cut < 0 else cut + 1
        yield start, end
        start = end


def _general(chunk):
    """:func:`normalise` of LF text by runs of blanks and pairs of quotes."""
    blanks = b" " in chunk or b"\t" in chunk
    text = np.frombuffer(chunk, np.uint8)
    if blanks:
        text = _strip_runs(text)
        if text is None:
            return None
    q = np.flatnonzero(text == _QUOTE)
    if len(q):
        if len(q) % 2:
            return None
        opens, closes = q[0::2], q[1::2]
        before = np.where(opens > 0, text[np.maximum(opens - 1, 0)], _NL)
        after = np.where(closes < len(text) - 1, text[np.minimum(closes + 1, len(text) - 1)],
                         _NL)
        if not (np.isin(before, (_COMMA, _NL)).all() and np.isin(after, (_COMMA, _NL)).all()):
            return None
        if ((before == _NL) & (after == _NL) & (closes == opens + 1)).any():
            return None                  # a line of one empty field: not a blank line there
        breaks = np.flatnonzero((text == _COMMA) | (text == _NL))
        if (np.searchsorted(breaks, opens) != np.searchsorted(breaks, closes)).any():
            return None                  # a comma or a line break inside the quotes
        keep = np.ones(len(text), bool)
        keep[q] = False
        text = text[keep]
    return text.tobytes()


def _every_cell_quoted(chunk):
    r"""The chunk without its quotes (and CRs) when every cell of every line is one quoted
    text without a quote, comma or line break inside (``"a","b"`` lines, LF or CRLF;
    blanks inside the quotes stay), else None; by substring counts and one deletion
    (a fraction of the time of the general rule in :func:`normalise`).

    Notes
    -----
    With E the line end (``\n`` or ``\r\n``): as many ``","`` as commas and as many
    ``"E"`` as line ends but a last one (counted without overlap, so no quote serves
    two commas or two line ends), no ``,"E`` or ``E",`` (a quote serving a comma and a
    line end), the chunk starting with a quote not followed by a comma or line end and
    ending with a quote (and E) not after one: then every comma and line end has a
    quote of its own on each side, 2 (commas + lines) quotes.  When the chunk holds
    exactly that many, there is no other quote, so each cell is a quote, a text
    without quote, comma or line break, and a quote."""
    crlf = b"\r" in chunk
    end = b"\r\n" if crlf else b"\n"
    if crlf and chunk.count(b"\r") != chunk.count(b"\r\n"):
        return None
    commas, breaks = chunk.count(b","), chunk.count(b"\n")
    last = chunk.endswith(b'"' + end)
    lines = breaks + (not chunk.endswith(b"\n"))
    if (chunk[:1] != b'"' or chunk[1:2] in (b",", b"\n", b"\r")
            or not (last or chunk.endswith(b'"')) or chunk.count(b'"') != 2 * (commas + lines)):
        return None
    tail = chunk[:len(chunk) - len(end) * last]
    if tail[-2:-1] in (b",", b"\n") or chunk.count(b'","') != commas \
            or chunk.count(b'"' + end + b'"') != breaks - last:
        return None
    if chunk.count(b',"' + end) or chunk.count(end + b'",'):
        return None
    out = chunk.translate(None, b'"\r')
    if not out or out.startswith(b"\n") or b"\n\n" in out or (not last and out.endswith(b"\n")):
        return None                      # a line of one empty field: not a blank line
    return out


def _strip_runs(text):
    """`text` without the runs of blanks around its cells; None for a line of blanks
    only or a tab before an opening quote."""
    at = np.flatnonzero((text == _SPACE) | (text == _TAB))
    cut = np.flatnonzero(np.diff(at) != 1) + 1
    starts, ends = at[np.concatenate([[0], cut])], at[np.concatenate([cut - 1, [len(at) - 1]])]
    left = np.where(starts > 0, text[np.maximum(starts - 1, 0)], _NL)
    right = np.where(ends < len(text) - 1, text[np.minimum(ends + 1, len(text) - 1)], _NL)
    edge = (_COMMA, _NL, _QUOTE)
    outer_l, outer_r = np.isin(left, edge), np.isin(right, edge)
    if ((left == _NL) & (right == _NL)).any():
        return None                      # a line of blanks only
    opening = (right == _QUOTE) & np.isin(left, (_COMMA, _NL))
    if opening.any():
        tabs = np.add.reduceat(text[at] == _TAB, np.concatenate([[0], cut]))
        if (opening & (tabs > 0)).any():
            return None                  # a tab before an opening quote: kept as text
    drop = outer_l | outer_r
    if not drop.any():
        return text
    keep = np.ones(len(text), bool)
    run = np.repeat(drop, ends - starts + 1)
    keep[at[run]] = False
    return text[keep]


#: The empty cells a spreadsheet adds after a ``#`` line's one cell when it saves the
#: file again (``# time_label: end,,,,,,,``; also quoted or padded: ``,"",``).
_SHEET_PAD = re.compile(r'(?:[^\S\n]*,[^\S\n]*(?:""[^\S\n]*)?)+$')


def meta_line(line: str) -> str:
    """A ``#`` line as written, stripped of blanks and of the empty cells a spreadsheet
    pads it with (every line of a sheet saved as CSV holds as many cells as the widest).

    >>> meta_line("# time_label: end,,,,, ")
    '# time_label: end'
    >>> meta_line('# reference_state: 20 degC, 1013.25 hPa,"",,')
    '# reference_state: 20 degC, 1013.25 hPa'
    """
    return _SHEET_PAD.sub("", line.strip()).strip()


def read_head(stream):
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
            body = meta_line(s).lstrip("#").strip()
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


def header_cells(header):
    """The column names of the header line as the line reader's parser names them
    (quotes removed, spaces before a cell skipped, ``Unnamed: k`` for an empty one);
    None for a header with a quote left open."""
    if header.count('"') % 2:
        return None
    cols = pd.read_csv(io.StringIO(header + "\n"), dtype=str, keep_default_na=False,
                       skip_blank_lines=False, skipinitialspace=True, index_col=False).columns
    if len(next(csv.reader([header]))) != len(cols):
        return None                      # the line reader's two counts of fields differ
    return [str(c) for c in cols]


def parsed_cells(chunk, n_fields, used):
    """The plain text of a chunk that :func:`normalise` declines, by the line reader's own
    parser (pandas ``read_csv`` with its options, then ``str.strip``): for a file whose
    other columns hold quoted text with commas, doubled quotes or non-ASCII letters.

    Parameters
    ----------
    chunk : bytes
        Whole lines of UTF-8 text.
    n_fields : int
        Fields of the header.
    used : set of int
        Positions of the columns read; the others are written ``x`` (or empty when
        empty), which is all the rows need of them (blank or not).

    Returns
    -------
    bytes or None
        One line per line of the chunk (a blank row empty); None when a line holds a
        quote left open (a cell over several lines), more or fewer fields than the
        header (by the parser, or by ``csv.reader`` as the line reader counts them for
        its message), a line break of ``str.splitlines`` other than LF and CRLF, or a
        cell of a read column that is not plain ASCII without comma or quote.
    """
    try:
        text = chunk.decode("utf-8")
    except UnicodeDecodeError:
        return None
    text = text.replace("\r\n", "\n")
    lines = text.split("\n")
    if text.endswith("\n"):
        lines.pop()
    if len(text.splitlines()) != len(lines) or any(ln.count('"') % 2 for ln in lines):
        return None
    if any(r and len(r) != n_fields for r in csv.reader(lines)):
        return None                      # as the line reader counts fields (a line of blanks)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", pd.errors.ParserWarning)
            df = pd.read_csv(io.StringIO(text), header=None, names=list(range(n_fields)),
                             dtype=str, keep_default_na=False, skip_blank_lines=False,
                             skipinitialspace=True, index_col=False)
    except (ValueError, pd.errors.ParserError, pd.errors.ParserWarning):
        return None
    if len(df) != len(lines) or df.isna().to_numpy().any():
        return None                      # a cell over lines; a line with fewer fields
    blank = np.ones(len(df), bool)
    cols = []
    for j in range(n_fields):
        c = df[j].str.strip()
        empty = (c == "").to_numpy()
        blank &= empty
        cols.append(c if j in used else pd.Series(np.where(empty, "", "x"), dtype=object))
    out = cols[0].str.cat(cols[1:], sep=",").to_numpy(dtype=object)
    out[blank] = ""
    text = "\n".join(out.tolist()) + "\n"
    if '"' in text or text.count(",") != (n_fields - 1) * int((~blank).sum()):
        return None                      # a comma or quote in a cell of a column read
    try:
        return text.encode("ascii")
    except UnicodeEncodeError:
        return None                      # letters beyond ASCII in a column read


def plain_rows(chunk, n_fields):
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
        return chunk, _NO_ROWS, n, None                     # most chunks
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
