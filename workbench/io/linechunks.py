"""The text of a (gzipped) CSV file as chunks of whole lines, for the chunked readers.

:func:`gunzip` inflates a gzip file (one or more members) in blocks of a few MB with
zlib, which releases the interpreter lock while it works (the parsing threads of
:mod:`workbench.io.metfast` run meanwhile); :class:`Source` gives the first lines one
by one (the head of the file) and then the rest in chunks of whole lines.
"""
from __future__ import annotations

import zlib

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


def line_cells(path, names, line, chunk_bytes=8 << 20):
    """The cells of file line `line` (1-based), read again from the file [-]."""
    with open(path, "rb") as f:
        gz = path.suffix == ".gz" or f.read(2) == b"\x1f\x8b"
        f.seek(0)
        seen = 0
        for chunk in Source(gunzip(f) if gz else plain(f)).chunks(chunk_bytes):
            k = chunk.count(b"\n") + (not chunk.endswith(b"\n"))
            if seen + k >= line:
                text = chunk.split(b"\n")[line - seen - 1].decode("utf-8")
                return dict(zip(names, text.split(",")))
            seen += k
    return {}
