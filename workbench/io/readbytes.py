"""The bytes an input is read from, hashed as they are read.

A run records the SHA-256 of each input file in provenance.json.  The checksum is taken
from the very bytes the reader parses (:func:`read_hashed` reads a file once, hashes
those bytes and hands them to the parser; :class:`HashingFile` hashes each block a
streaming reader takes), so the recorded checksum is by construction that of the
content the numbers came from.  At the end of a run the files are hashed again
(:func:`file_sha256`): one that differs was edited after it was read, whatever its size
and modification time say (``changed_after_read``, docs/run_folder.md).

The readers record what they read with :func:`record` while a :func:`recording` is
open (:func:`workbench.io.inputs.load_inputs` opens one); outside it nothing is kept.
SHA-256 is FIPS 180-4 (hashlib).
"""
from __future__ import annotations

import contextlib
import contextvars
import hashlib
from pathlib import Path

#: path key -> SHA-256 (hex) of the bytes read, while a recording is open.
_SEEN: contextvars.ContextVar = contextvars.ContextVar("workbench_read_digests", default=None)
#: Bytes hashed at a time by :func:`file_sha256` [bytes].
BLOCK = 1 << 20


def path_key(path) -> str:
    """The key of a file in a recording: its absolute path (symlinks resolved)."""
    return str(Path(path).resolve())


@contextlib.contextmanager
def recording():
    """Collect the digests of the files read inside the block: yields a dict
    :func:`path_key` -> SHA-256 hex, filled by :func:`record`."""
    seen: dict = {}
    token = _SEEN.set(seen)
    try:
        yield seen
    finally:
        _SEEN.reset(token)


def record(path, digest: str) -> None:
    """Note that `path` was read from bytes of SHA-256 `digest` (a later read of the
    same file replaces it: the last parse is the one used)."""
    seen = _SEEN.get()
    if seen is not None:
        seen[path_key(path)] = digest


def read_hashed(path) -> bytes:
    """The bytes of `path`, read once; their SHA-256 is recorded (:func:`record`).
    Raises as :meth:`pathlib.Path.read_bytes`."""
    raw = Path(path).read_bytes()
    record(path, hashlib.sha256(raw).hexdigest())
    return raw


class HashingFile:
    """A binary file whose blocks are hashed as a streaming reader takes them.

    Only :meth:`read` is offered (the chunked readers need no more).  Call
    :meth:`finish` after a successful parse: it hashes what the reader left unread (none
    for a reader that reads to the end) and records the digest."""

    def __init__(self, f, path):
        self._f, self._path, self._h = f, path, hashlib.sha256()

    def read(self, n: int = -1) -> bytes:
        block = self._f.read(n)
        self._h.update(block)
        return block

    def finish(self) -> str:
        for block in iter(lambda: self._f.read(BLOCK), b""):
            self._h.update(block)
        digest = self._h.hexdigest()
        record(self._path, digest)
        return digest


def file_sha256(path) -> str:
    """SHA-256 (hex) of a file as it is now, read in blocks of :data:`BLOCK`; of a folder
    (a zarr store), of its files' relative paths and contents in name order (the rule of
    :func:`workbench.writers.sha256`)."""
    path = Path(path)
    h = hashlib.sha256()
    if path.is_dir():
        for f in sorted(p for p in path.rglob("*") if p.is_file()):
            h.update(f.relative_to(path).as_posix().encode() + b"\0" + file_sha256(f).encode())
        return h.hexdigest()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(BLOCK), b""):
            h.update(block)
    return h.hexdigest()


def gzip_content_sha256(path) -> str | None:
    """SHA-256 (hex) of the decompressed content of gzip file `path` (name ending in
    ``.gz``), read in blocks of :data:`BLOCK`; None for any other file or one that does
    not decompress.  The same content compressed again (another level, another tool,
    another time stamp in the gzip header) gives other bytes but the same digest: what
    ``workbench verify`` and ``compare`` go by for such inputs (docs/run_folder.md)."""
    import gzip
    import zlib
    path = Path(path)
    if not path.is_file() or not path.name.lower().endswith(".gz"):
        return None
    h = hashlib.sha256()
    try:
        with gzip.open(path, "rb") as f:
            for block in iter(lambda: f.read(BLOCK), b""):
                h.update(block)
    except (OSError, EOFError, zlib.error):
        return None
    return h.hexdigest()


def record_whole(path) -> str:
    """Record the SHA-256 of `path` as it is now, for a reader that opens the file
    itself (NetCDF, zarr: read lazily by xarray, not as one stream of bytes): hashed
    just before it is read, not from the bytes parsed.  The reader calls
    :func:`changed_while_read` with the digest after its last read: the same digest before
    the first read and after the last one is what makes the recorded checksum that of
    the content the numbers come from."""
    digest = file_sha256(path)
    record(path, digest)
    return digest


def changed_while_read(path, digest, error=None):
    """The error for `path` (hashed as `digest` before it was opened) when its content
    differs after the last read, else None.

    A file read lazily (NetCDF, zarr) is read in pieces, by xarray or zarr, between the
    two hashes; an edit saved meanwhile may have given some pieces from the old content
    and some from the new one, so no checksum names the content the numbers come from
    and the numbers cannot be kept.  (An edit undone before the last read is not seen:
    the numbers then may mix two contents whose end is the recorded one.)

    Parameters
    ----------
    path : Path
    digest : str or None
        SHA-256 (hex) before the first read (None: not hashed, nothing to compare).
    error : type, optional
        The exception class (default :class:`workbench.errors.InputError`).
    """
    from ..errors import InputError
    if digest is None:
        return None
    try:
        now = file_sha256(path)
    except OSError:
        now = "unreadable"
    if now == digest:
        return None
    return (error or InputError)(
        "changed while it was read", file=path,
        value=f"sha256 {digest[:12]}... before the first read, "
        + (f"{now[:12]}... after the last" if now != "unreadable" else "unreadable after the last"),
        expected="a file left as it is while the workbench reads it (it is read in pieces, "
        "so the numbers may mix the two contents); run again once it is saved")
