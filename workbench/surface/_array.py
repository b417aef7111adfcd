"""Small array-agnostic helpers shared by the surface and dry-deposition modules.

Plain numpy ufuncs (``np.log``, ``np.minimum``) already keep the input's type
(float, ndarray, DataArray, dask array); only ``where`` needs help, because
``np.where`` turns a DataArray into a bare array.
"""
from __future__ import annotations

import threading

import numpy as np
import xarray as xr

from ..threads import run_each, sharing, threads_here


def is_xarray(*args) -> bool:
    """True when any argument is an xarray object."""
    return any(isinstance(a, (xr.DataArray, xr.Dataset)) for a in args)


def where(cond, x, y):
    """Element-wise ``x if cond else y`` that keeps the input's type.

    A DataArray in any argument gives a DataArray (``xr.where``); numpy and dask
    arrays go through ``np.where`` (dask dispatches it lazily); all-scalar input
    gives a numpy scalar.

    >>> float(where(1.0 > 0.0, 2.0, 3.0))
    2.0
    """
    if is_xarray(cond, x, y):
        return xr.where(cond, x, y)
    out = np.where(cond, x, y)
    return out[()] if getattr(out, "ndim", 1) == 0 else out


def asfloat(x):
    """``x`` as floats (DataArray and dask arrays pass through unchanged)."""
    if is_xarray(x) or hasattr(x, "dask"):
        return x
    out = np.asarray(x, dtype=float)
    return out[()] if out.ndim == 0 else out


#: Elements per block of :func:`blockwise` (256 kB per float array: the work arrays
#: of a block stay in the processor's cache).
BLOCK_ELEMENTS = 32768

#: Elements per block when the blocks run on several threads (1 MB per float array).
#: Larger than :data:`BLOCK_ELEMENTS`: with blocks of that size each numpy call lasts
#: some 10-30 us, and handing the interpreter lock from thread to thread at every call
#: took as long as the calls (two threads no faster than one, measured); four times
#: larger blocks cost one thread about 3 % and gave two threads 1.4-1.7x. [-]
THREAD_BLOCK_ELEMENTS = 4 * BLOCK_ELEMENTS

#: Steps on fewer elements run on the calling thread only (:func:`threads_for`):
#: two blocks of :data:`THREAD_BLOCK_ELEMENTS` (a site-year of 30 receptors). [-]
MIN_PARALLEL_ELEMENTS = 2 * THREAD_BLOCK_ELEMENTS

#: A thread that shares the cores (:func:`workbench.threads.sharing`) uses the larger
#: blocks of :data:`THREAD_BLOCK_ELEMENTS` too (for the same reason). [-]
SHARED_LARGE_BLOCKS = True


def plain_numpy(*args) -> bool:
    """True when no argument is an xarray object or a dask (chunked) array."""
    return not is_xarray(*args) and not any(hasattr(a, "chunks") for a in args)


def block_slices(shape, size=None):
    """Index tuples that cut an array of `shape` into blocks of about `size` elements.

    Blocks run along the first axis (sites) and the last (hours); the axes between
    are kept whole.

    Parameters
    ----------
    shape : tuple of int
    size : int, optional
        Target elements per block (default :data:`BLOCK_ELEMENTS`). [-]

    Returns
    -------
    iterator of tuple of slice
        One tuple per block (a single block, ``(...,)``, for small or 0-d shapes).

    >>> list(block_slices((2, 3, 4), size=12))
    [(slice(0, 1, None), Ellipsis, slice(0, 4, None)), (slice(1, 2, None), Ellipsis, slice(0, 4, None))]
    """
    size = size or BLOCK_ELEMENTS
    n = int(np.prod(shape)) if shape else 1
    if len(shape) == 0 or n <= size:
        yield (Ellipsis,)
        return
    if len(shape) == 1:
        for i in range(0, shape[0], size):
            yield (slice(i, i + size),)
        return
    inner = int(np.prod(shape[1:-1]))
    nt = min(shape[-1], max(1, size // max(inner, 1)))
    ns = max(1, size // max(inner * nt, 1))
    for i in range(0, shape[0], ns):
        for j in range(0, shape[-1], nt):
            yield (slice(i, i + ns), Ellipsis, slice(j, j + nt))


def aligned(a, ndim):
    """`a` with leading axes of length 1 up to `ndim` axes (a view)."""
    return a.reshape((1,) * (ndim - a.ndim) + a.shape)


def block_of(a, block):
    """The part of `a` (aligned, broadcastable to the blocked shape) that a block reads.

    Axes of length 1 (broadcast) are kept whole; 0-d input is returned as it is.
    """
    if a.ndim == 0 or block == (Ellipsis,):
        return a
    first, last = block[0], (block[-1] if len(block) == 3 else None)
    index = [first if a.shape[0] > 1 else slice(None)] + [slice(None)] * (a.ndim - 1)
    if last is not None and a.ndim > 1:
        index[-1] = last if a.shape[-1] > 1 else slice(None)
    return a[tuple(index)]


def threads_for(n):
    """Threads for an element-wise step on `n` elements [-].

    :func:`workbench.threads.threads_here`, but 1 below
    :data:`MIN_PARALLEL_ELEMENTS`: a site-year of the apps stays on the calling
    thread, where handing its few blocks to other threads would gain little and, on a
    busy machine, could wait for a thread that has no core.
    """
    return 1 if n < MIN_PARALLEL_ELEMENTS else threads_here()


def block_size(n_threads, size=None):
    """Elements per block on `n_threads` threads [-].

    `size` (default :data:`BLOCK_ELEMENTS`, sized for the processor's cache) on one
    thread, :data:`THREAD_BLOCK_ELEMENTS` on several, and on one thread that shares
    the cores with others (a block of whole sites of the engine on the pool,
    :func:`workbench.threads.sharing`).
    """
    if n_threads > 1 or (SHARED_LARGE_BLOCKS and sharing()):
        return THREAD_BLOCK_ELEMENTS
    return size or BLOCK_ELEMENTS


def blockwise(func, *args, size=None):
    """``func(*args)`` of an element-wise function, evaluated in cache-sized blocks.

    The same numbers as one call on the whole arrays (each element sees the same
    operations); faster on large arrays, whose temporaries then stay in the
    processor's cache.  The blocks run on the threads of :mod:`workbench.threads`
    (numpy releases the interpreter lock in its loops); the numbers do not depend
    on the number of threads.  Numpy input only.

    Parameters
    ----------
    func : callable
        Element-wise: numpy arrays in, one numpy array (or a tuple of them) out.
        Called from several threads at once: it must not change shared state.
    *args : array_like
        Broadcastable against each other.
    size : int, optional
        Elements per block on one thread (default :data:`BLOCK_ELEMENTS`; on
        several, :data:`THREAD_BLOCK_ELEMENTS`: :func:`block_size`).

    Returns
    -------
    numpy.ndarray or tuple of numpy.ndarray
        Shape of the broadcast arguments.

    >>> x = np.arange(6.0).reshape(2, 1, 3)
    >>> bool((blockwise(np.add, x, np.ones((1, 2, 1)), size=2) == x + 1.0).all())
    True
    """
    arrays = [np.asarray(a) for a in args]
    shape = np.broadcast_shapes(*(a.shape for a in arrays))
    n = int(np.prod(shape)) if shape else 1
    n_threads = threads_for(n)
    blocks = list(block_slices(shape, block_size(n_threads, size)))
    if len(blocks) == 1:
        return func(*args)
    arrays = [aligned(a, len(shape)) for a in arrays]
    out = []  # [tuple of output arrays], made by the first block to finish
    single = []
    lock = threading.Lock()

    def task(i):
        block = blocks[i]
        part = func(*(block_of(a, block) for a in arrays))
        parts = part if isinstance(part, tuple) else (part,)
        with lock:
            if not out:
                single.append(not isinstance(part, tuple))
                out.append(tuple(np.empty(shape, dtype=np.asarray(p).dtype) for p in parts))
        for o, p in zip(out[0], parts):
            o[block] = p

    run_each(task, len(blocks), n_threads)
    return out[0][0] if single[0] else out[0]
