"""The number of threads of the engine's cache-sized blocks (one engine setting).

The large element-wise steps of the dry-deposition engine (the aerodynamic
resistance, Wesely's Rc on numpy arrays, the particle modes) run in blocks of about
32,768 elements (:func:`workbench.surface._array.blockwise`).  numpy releases the
interpreter lock inside its loops, so these blocks can run on several threads at
once.  Each element sees the same operations whatever the block or the thread, so
the numbers are the same bit for bit for any number of threads; only the wall-clock
time changes.  That is why the setting is here and not an option of
:class:`workbench.drydep.DryOptions` (options change numbers).

The setting:

* :func:`set_threads` (``n`` threads; ``None`` goes back to the default);
* else the environment variable ``WORKBENCH_THREADS`` (a positive integer);
* else the usable cores of this process (``os.sched_getaffinity``), at most
  :data:`DEFAULT_MAX_THREADS`.

Only the main thread of a process runs blocks on threads: a call from any other
thread (a dask worker's task, a thread of the dask threaded scheduler, a block
already running on this module's pool) runs its blocks one after the other, so
that an outer pool of workers is not multiplied by this one.

>>> set_threads(3); get_threads()
3
>>> set_threads(None)
"""
from __future__ import annotations

import contextvars
import itertools
import os
import threading
from concurrent.futures import ThreadPoolExecutor

#: Default at most this many threads (more cores rarely help: the blocks are
#: memory-bound once the cores share the memory bus).
DEFAULT_MAX_THREADS = 4

#: Environment variable read when :func:`set_threads` was not called.
ENV_VAR = "WORKBENCH_THREADS"

_lock = threading.Lock()
_setting: int | None = None     # set_threads(n)
_pool: ThreadPoolExecutor | None = None
_pool_size = 0
_here = threading.local()       # .sharing: running a task of run_each beside other threads


def usable_cores() -> int:
    """Cores this process may run on [-] (its CPU affinity where the system tells)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not on Linux
        return max(1, os.cpu_count() or 1)


def set_threads(n: int | None) -> None:
    """Set the number of threads of the engine's blocks (``None``: the default).

    Parameters
    ----------
    n : int or None
        Threads [-], at least 1; ``None`` goes back to ``WORKBENCH_THREADS`` or the
        usable cores (at most :data:`DEFAULT_MAX_THREADS`).

    Raises
    ------
    ValueError
        `n` is not a positive integer.
    """
    global _setting
    if n is not None:
        if isinstance(n, bool) or int(n) != n or n < 1:
            raise ValueError(f"set_threads: {n!r} is not a positive integer number of threads")
        n = int(n)
    _setting = n


def _from_env() -> int | None:
    text = os.environ.get(ENV_VAR, "").strip()
    if not text:
        return None
    try:
        n = int(text)
    except ValueError:
        n = 0
    if n < 1:           # an InputError (a ValueError): one line on the command line
        from .errors import InputError
        raise InputError(f"environment variable {ENV_VAR}={text!r}",
                         expected="a positive integer number of threads (unset: the "
                         "usable cores, at most 4)")
    return n


def get_threads() -> int:
    """The number of threads set for the engine's blocks [-] (see the module notes)."""
    if _setting is not None:
        return _setting
    env = _from_env()
    if env is not None:
        return env
    return min(usable_cores(), DEFAULT_MAX_THREADS)


def threads_here() -> int:
    """Threads a call from the current thread may use [-]: :func:`get_threads` on the
    main thread, 1 on any other (dask workers, outer pools, this module's pool)."""
    if threading.current_thread() is not threading.main_thread():
        return 1
    return get_threads()


def sharing() -> bool:
    """True on a thread that runs a task of :func:`run_each` beside other threads
    (the pool's threads and the calling thread, while the tasks run) [-]."""
    return getattr(_here, "sharing", False)


def _get_pool(workers: int) -> ThreadPoolExecutor:
    global _pool, _pool_size
    with _lock:
        if _pool is None or _pool_size < workers:
            if _pool is not None:
                _pool.shutdown(wait=True)
            _pool = ThreadPoolExecutor(max_workers=workers, thread_name_prefix="workbench")
            _pool_size = workers
        return _pool


def run_each(task, n_items: int, max_threads: int | None = None) -> None:
    """``task(i)`` for ``i`` in ``range(n_items)``, on up to :func:`threads_here` threads.

    The calling thread takes part; the items are handed out one at a time, in order,
    to whichever thread is free.  `task` must write its results itself (each item
    to its own place) and must not depend on the order in which items finish.  The
    caller's context (e.g. ``numpy.errstate``) is that of every task.  The first
    exception raised by a task is raised here after all threads have stopped.

    Parameters
    ----------
    task : callable
        ``task(i)`` for one item ``i`` (an int).
    n_items : int
        Number of items.
    max_threads : int, optional
        At most this many threads (default :func:`threads_here`).
    """
    n = min(threads_here(), n_items, max_threads or n_items)
    if n <= 1:
        for i in range(n_items):
            task(i)
        return
    items = itertools.count()  # next() on it is atomic under the interpreter lock
    failed = []
    context = contextvars.copy_context()

    def loop():
        before = sharing()
        _here.sharing = True
        try:
            for i in items:
                if i >= n_items or failed:
                    return
                try:
                    task(i)
                except BaseException as exc:  # noqa: BLE001 - raised in the caller below
                    failed.append(exc)
                    return
        finally:
            _here.sharing = before

    pool = _get_pool(n - 1)
    futures = [pool.submit(context.copy().run, loop) for _ in range(n - 1)]
    context.copy().run(loop)
    for f in futures:
        f.result()
    if failed:
        raise failed[0]


def map_ordered(fn, items, max_threads: int | None = None):
    """``fn(item)`` for each of `items`, yielded in the order of `items`, computed on up
    to :func:`threads_here` threads of this module's pool.

    The calling thread takes the items from the iterable (e.g. reads and decompresses a
    file) and receives the results while the pool computes the next ones: at most as
    many items as threads are in flight (one each; more held the memory of a chunk of
    the met reader per item for little gain), so memory is bounded by the items, not
    their number.  With one thread (the setting, or a call from a thread other than the
    main thread) everything runs in the calling thread, one item after the other.  The
    caller's context (e.g. ``numpy.errstate``) is that of every call.  An exception of
    ``fn`` is raised when its result is due; when the caller stops early (``break``, an
    exception, closing the generator) the items not started are dropped and the running
    ones finish before the generator returns.

    Parameters
    ----------
    fn : callable
        ``fn(item)``; must not depend on the order in which items finish.
    items : iterable
    max_threads : int, optional
        At most this many threads (default :func:`threads_here`).

    Yields
    ------
    object
        ``fn(item)`` for each item, in order.
    """
    n = min(threads_here(), max_threads or threads_here())
    if n <= 1:
        for item in items:
            yield fn(item)
        return
    import collections
    context = contextvars.copy_context()
    pool = _get_pool(n)
    pending = collections.deque()
    try:
        for item in items:
            pending.append(pool.submit(context.copy().run, fn, item))
            if len(pending) >= n:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()
    finally:
        for f in pending:
            f.cancel()
        for f in pending:
            if not f.cancelled():
                f.exception()          # wait for it; its error is not the caller's
