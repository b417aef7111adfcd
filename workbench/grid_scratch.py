"""A block-major scratch copy of gridded inputs whose chunks span several blocks.

A block of cells (:func:`workbench.grid_io.read_block`) reads its cells over all time
steps.  From a store chunked along time only (the usual layout of model output: a day
or a month of the whole y/x plane per chunk, in zarr or NetCDF4), that decompresses
every chunk once per block.  :func:`block_major` instead reads each chunk once, one
time chunk of the whole plane at a time, and appends each block's part of it to a
scratch file laid out block by block, (time, cell) within a block; the blocks then read
their values from there with one contiguous read.  So each chunk is decompressed once
and memory holds one time chunk of one variable (plus a block), never the field.
With a dask client the copy of each variable is a task on the cluster (one variable
after the other), so the process that runs the grid decompresses no chunk itself.

When a variable's chunks already fall inside the blocks (chunks along y and x that the
blocks' edges follow, e.g. ``{"y": 10, "x": 10}`` with ``--block 10`` or 20), or when
the file has no chunks (NetCDF3: read in place, nothing to decompress), or when the grid
is one block, the variable is read directly as before.  Chunks of all time steps and
part of the plane that cross the blocks' edges are read directly too (copying them
would hold the whole field); a note names a ``--block`` that follows them.  A variable
in one chunk is copied (each direct read of a block decompresses it whole anyway).

Why a copy rather than blocks that follow the chunks: a block must hold all time steps
of its cells (the gap filling of Vd and the period sums run along time), so blocks
cannot follow chunks along time.

The scratch folder is removed when the ``with`` ends, also on an error.  A chunk that
cannot be decoded is a :class:`~workbench.grid_io.GridError` naming the file, the
variable and the time steps; a full disk (or any OS error of the copy) an
:class:`~workbench.runfolder.OutputError` naming the scratch file and its size.
"""
from __future__ import annotations

import contextlib
import dataclasses
import math
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np

from .worker_memory import result, watch
from .grid_io import GridError, _open, read_values
from .io.zarrstore import LARGE_CHUNK_BYTES, chunk_sizes
from .runfolder import OutputError, os_error_message

ROLES = ("met", "air")


@dataclasses.dataclass(frozen=True)
class Scratch:
    """The block-major copy of some variables of one gridded input.

    Attributes
    ----------
    folder : str
    n_t : int
        Time steps (hours of the met, sampling intervals of the air).
    blocks : dict
        ``(y0, y1, x0, x1)`` -> first cell of the block in the files (blocks in order).
    files : dict
        Variable -> (path, dtype string) of its file: per block, (time, cell) values in
        the dtype xarray decodes the variable to.
    """

    folder: str
    n_t: int
    blocks: dict
    files: dict

    def _block(self, ys: slice, xs: slice):
        """The block ``(y0, y1, x0, x1)`` that holds the cells `ys` x `xs` (the block
        itself, or cells inside one block, as the cell read again for the met's flag
        note), or None."""
        key = (ys.start, ys.stop, xs.start, xs.stop)
        if key in self.blocks:
            return key
        return next((b for b in self.blocks if b[0] <= ys.start and ys.stop <= b[1]
                     and b[2] <= xs.start and xs.stop <= b[3]), None)

    def has(self, name, ys: slice, xs: slice) -> bool:
        """True when the copy holds variable `name` for these cells: a block, or cells
        inside one block."""
        return name in self.files and self._block(ys, xs) is not None

    def values(self, name, ys: slice, xs: slice) -> np.ndarray:
        """(time, cell) values of a block (or of cells inside one), cells in (y, x)
        order as the direct read."""
        y0, y1, x0, x1 = block = self._block(ys, xs)
        if block != (ys.start, ys.stop, xs.start, xs.stop):
            whole = self.values(name, slice(y0, y1), slice(x0, x1))
            part = whole.reshape(self.n_t, y1 - y0, x1 - x0)[
                :, ys.start - y0:ys.stop - y0, xs.start - x0:xs.stop - x0]
            return part.reshape(self.n_t, -1)
        path, dtype = self.files[name]
        dt = np.dtype(dtype)
        n_c = (ys.stop - ys.start) * (xs.stop - xs.start)
        first = self.blocks[block]
        try:
            v = np.fromfile(path, dtype=dt, count=self.n_t * n_c,
                            offset=first * self.n_t * dt.itemsize)
        except OSError as exc:
            raise OutputError(os_error_message(exc, path, "read the scratch copy")) from exc
        if v.size != self.n_t * n_c:
            raise OutputError(f"could not read the scratch copy {path}: {v.size} values "
                              f"where {self.n_t * n_c} were written (was the file removed "
                              "or truncated during the run?)")
        return v.reshape(self.n_t, n_c)


def chunk_shape(var, dims) -> tuple | None:
    """(time, y, x) size of a chunk of a lazily opened variable, None for a file
    without chunks (NetCDF3, contiguous NetCDF4)."""
    pref = chunk_sizes(var)
    if not pref:
        return None
    return tuple(int(pref.get(d) or var.sizes[d]) for d in ("time",) + tuple(dims))


def _crosses(size, block, chunk) -> bool:
    """True when a chunk of `chunk` cells along a dim of `size` cells spans an edge of
    blocks of `block` cells."""
    return any(edge % chunk for edge in range(block, size, block))


def plan(raw, names, dims, shape, block) -> tuple[list, list]:
    """Which variables of an input go through the copy, and the notes.

    Parameters
    ----------
    raw : xarray.Dataset
        The input, opened lazily.
    names : list of str
    dims : (str, str)
    shape : (int, int)
        Cells along y and x.
    block : (int, int)
        Cells of a block along y and x.

    Returns
    -------
    copy : list of str
    notes : list of str
    """
    if all(b >= n for b, n in zip(block, shape)):
        return [], []                                    # one block: read once anyway
    copy, notes, direct = [], [], []
    n_t = raw.sizes["time"]
    for name in names:
        c = chunk_shape(raw[name], dims)
        if c is None:
            continue
        cross = [_crosses(n, b, k) for n, b, k in zip(shape, block, c[1:])]
        if not any(cross):
            continue
        if c[0] >= n_t and not all(k >= n for k, n in zip(c[1:], shape)):
            direct.append((name, c))     # copying them would hold the whole field
            continue
        copy.append(name)
        nbytes = int(np.prod(c[:1] + tuple(shape))) * raw[name].dtype.itemsize
        if nbytes > LARGE_CHUNK_BYTES:
            notes.append(f"{name}: {c[0]} time steps of the whole grid ({nbytes / 2**20:.0f} "
                         "MB) held at once by the scratch copy (write chunks of fewer time "
                         "steps to copy with less memory)")
    if copy:
        c = chunk_shape(raw[copy[0]], dims)
        notes.insert(0, f"chunks of {c[0]} time steps x {c[1]} x {c[2]} cells span several "
                     f"blocks of {block[0]} x {block[1]} cells ({', '.join(copy)}): copied "
                     "chunk by chunk (each read once) to a block-major scratch file before "
                     "the blocks")
    for name, c in direct:
        step = math.lcm(*[k for k, n in zip(c[1:], shape) if k < n])
        fit = step * -(-max(block) // step)
        notes.append(f"{name}: chunks of {c[1]} x {c[2]} cells and all time steps cross "
                     f"the edges of blocks of {block[0]} x {block[1]} cells: each is read "
                     f"by every block it touches (--block {fit} follows them)")
    return copy, notes


def _reserve(fd, nbytes):
    """Reserve the file's space on disk, so that a full disk fails here, located."""
    if hasattr(os, "posix_fallocate") and nbytes:
        os.posix_fallocate(fd, 0, nbytes)


def _pwrite(fd, data: bytes, offset: int):
    """Write all of `data` at `offset` (the file's position moves on Windows)."""
    view = memoryview(data)
    while len(view):
        if hasattr(os, "pwrite"):
            n = os.pwrite(fd, view, offset)
        else:                                           # Windows
            os.lseek(fd, offset, os.SEEK_SET)
            n = os.write(fd, view)
        view, offset = view[n:], offset + n


def _copy_variable(raw, name, dims, layout, n_t, step, path, file):
    """Copy one variable, `step` time steps at a time, into `file` (block-major)."""
    var = raw[name]
    extra = [d for d in var.dims if d != "time" and d not in dims]
    var = var.squeeze(extra, drop=True).transpose("time", *dims)
    dt = var.dtype
    n_cells = sum((ys.stop - ys.start) * (xs.stop - xs.start) for ys, xs, _ in layout)
    fd = os.open(file, os.O_WRONLY | os.O_CREAT | os.O_TRUNC | getattr(os, "O_BINARY", 0),
                 0o600)
    try:
        try:
            _reserve(fd, n_cells * n_t * dt.itemsize)
        except OSError as exc:
            raise _disk_error(exc, file, n_cells * n_t * dt.itemsize) from exc
        for t0 in range(0, n_t, step):
            t1 = min(t0 + step, n_t)
            piece = read_values(var.isel(time=slice(t0, t1)), path, name,
                                f" of time steps {t0}-{t1 - 1}")
            for ys, xs, first in layout:
                part = np.ascontiguousarray(piece[:, ys, xs], dtype=dt).reshape(t1 - t0, -1)
                offset = (first * n_t + t0 * part.shape[1]) * dt.itemsize
                try:
                    _pwrite(fd, part.tobytes(), offset)
                except OSError as exc:
                    raise _disk_error(exc, file, n_cells * n_t * dt.itemsize) from exc
            del piece
    finally:
        os.close(fd)
    return str(file), dt.str


def _copy_one(path, role, name, dims, layout, n_t, file, metadata=None):
    """Copy variable `name` of the input at `path` into `file`, its time chunks one at a
    time (in this process or as a task on a dask worker: it opens the input itself;
    `metadata`: a zarr store's, as read when the grid was opened)."""
    # the file opened anew for each variable: the HDF5 chunk cache of a variable (up to
    # 64 MB by default, useless here: each chunk is read once) is freed with it, so the
    # copy holds one variable's, not all
    with _no_chunk_cache(path), _open(path, role, only=name, metadata=metadata) as raw:
        step = chunk_shape(raw[name], dims)[0]
        return _copy_variable(raw, name, dims, layout, n_t, step, path, file)


@contextlib.contextmanager
def _no_chunk_cache(path):
    """``with _no_chunk_cache(path):`` NetCDF4 files opened inside keep no chunk cache
    (netCDF4's :func:`netCDF4.set_chunk_cache`, restored after).  The copy reads each
    chunk once and whole, so a cache only held one more decompressed chunk: with a
    chunk under the default cache (64 MiB) the copy of a 100 x 100 grid's month chunk
    (29 MB) peaked at 149 MB above base, about five chunks; without, HDF5 decompresses
    the chunk straight into the values read (docs/performance.md, "Grid maps
    streamed")."""
    from .io.zarrstore import is_zarr_path
    try:
        import netCDF4
    except ImportError:
        netCDF4 = None
    if netCDF4 is None or is_zarr_path(path):
        yield
        return
    before = netCDF4.get_chunk_cache()
    netCDF4.set_chunk_cache(0, *before[1:])
    try:
        yield
    finally:
        netCDF4.set_chunk_cache(*before)


def _describe_copy(path, name, chunk, itemsize, shape):
    """The words of :func:`workbench.worker_memory.memory_error` for the copy of one
    variable: its chunk of the whole plane, decompressed whole."""
    nbytes = int(np.prod((chunk[0],) + tuple(shape))) * itemsize

    def describe():
        return (f"the block-major scratch copy of {name} of {Path(path).name}",
                f"a time chunk of it, {chunk[0]} time steps x {shape[0]} x {shape[1]} cells, "
                f"is {nbytes / 2**20:,.0f} MiB decompressed, and it is decompressed whole: "
                "the copy holds about three such chunks at once",
                f"write {Path(path).name} with fewer time steps a chunk (the memory follows "
                "the chunk: half the time steps, half the memory)")
    return describe


def _disk_error(exc, file, nbytes) -> OutputError:
    return OutputError(os_error_message(exc, file, "write the scratch copy")
                       + f" (the block-major copy of a time-chunked input, "
                       f"{nbytes / 2**20:.0f} MB a variable; it is removed at the end)")


@contextlib.contextmanager
def block_major(grid, layout, folder=None, say=None, client=None):
    """The grid with a block-major scratch copy of its time-chunked inputs.

    Parameters
    ----------
    grid : Grid
        From :func:`workbench.grid_io.open_grid`.
    layout : list of list of (slice, slice)
        The blocks (:func:`workbench.grid.blocks`).
    folder : path, optional
        Where the scratch folder is made (default: the system's temporary folder).
    say : callable, optional
        Called with each note.
    client : distributed.Client, optional
        Copy each variable in a task on this cluster, one variable after the other
        (its workers must see `folder`, as the blocks' reads of the copy need anyway):
        the time chunks of the whole plane are then decompressed on a worker, and this
        process holds none of the input's values.  Without, the copy runs here.

    Yields
    ------
    Grid
        A copy of `grid` whose ``scratch`` holds the copies (`grid` itself if nothing
        is copied); the scratch folder is removed when the ``with`` ends.
    """
    flat, first = [], 0
    for row in layout:
        for ys, xs in row:
            flat.append((ys, xs, first))
            first += (ys.stop - ys.start) * (xs.stop - xs.start)
    ys0, xs0 = layout[0][0]
    block = (ys0.stop - ys0.start, xs0.stop - xs0.start)
    names = {"met": list(grid.met_units), "air": list(grid.air_units)}
    scratch, notes, made = {}, [], None
    try:
        for role in ROLES:
            path = grid.paths[role]
            meta = grid.zarr_metadata.get(role)
            with _open(path, role, metadata=meta) as raw:
                copy, more = plan(raw, names[role], grid.dims, grid.shape, block)
                notes.extend(f"{path.name}: {n}" for n in more)
                for n in more:
                    if say:
                        say(f"note: {path.name}: {n}")
                if not copy:
                    continue
                if made is None:
                    made = Path(tempfile.mkdtemp(prefix="workbench-gridcopy-", dir=folder))
                n_t = raw.sizes["time"]
                chunks = {name: (chunk_shape(raw[name], grid.dims), raw[name].dtype.itemsize)
                          for name in copy}
            files = {}
            jobs = [(name, made / f"{role}.{name}.bin") for name in copy]
            if client is None:
                for name, file in jobs:
                    files[name] = _copy_one(path, role, name, grid.dims, flat, n_t, file,
                                            meta)
            else:
                # each variable's copy a task on the cluster, one at a time: a time chunk
                # of the whole plane is decompressed on a worker, never in this process,
                # and by one process at a time, as before (HDF5's buffer and the values
                # read: about two chunks; a copy on every worker at once would hold that
                # on each)
                for name, file in jobs:
                    fut = client.submit(_copy_one, path, role, name, grid.dims, flat, n_t,
                                        file, meta, pure=False)
                    try:
                        # a failed copy raises its error here; workers with too little
                        # memory for a chunk, one message (workbench.worker_memory)
                        files[name] = result(fut, watch(client, _describe_copy(
                            path, name, *chunks[name], grid.shape), "the grid"))
                    finally:
                        fut.release()
                        del fut
            scratch[role] = Scratch(str(made), n_t, {(ys.start, ys.stop, xs.start,
                                                      xs.stop): f for ys, xs, f in flat},
                                    files)
        yield dataclasses.replace(grid, scratch={**grid.scratch, **scratch},
                                  notes=grid.notes + notes) if (scratch or notes) else grid
    finally:
        if made is not None:
            shutil.rmtree(made, ignore_errors=True)


__all__ = ["Scratch", "block_major", "chunk_shape", "plan", "GridError"]
