"""Waiting for the tasks of `workbench grid` on a dask cluster, with one message when the
workers have too little memory for them.

A dask worker has a memory limit (``dask worker --memory-limit``; a local cluster of
``--workers N`` shares the machine's memory among its N workers).  distributed pauses a
worker above 80 % of it (the worker runs no task until its memory falls) and its nanny
restarts it above 95 %; a task whose workers died `allowed-failures` + 1 times (4 by
default) fails with distributed's ``KilledWorker``.  A task of the grid that needs more
than a worker has (the scratch copy of a time chunk of the whole plane, decompressed
whole; a block's hourly inputs and the engine's work on them) so ended in a traceback
of ``KilledWorker``, and a worker paused by its own idle memory (a limit under about
150 MB) ran nothing and the command waited for ever.  :func:`result` and
:func:`completed` give instead one :class:`WorkerMemoryError` naming the limit, what the
task needed and what to change (docs/scale.md, "Too little memory on a worker").
"""
from __future__ import annotations

import time

from .errors import WorkbenchError

#: Seconds that every worker of the cluster may stay paused, with tasks of the grid
#: waiting, before the run stops [s] (our choice: a pause of a few seconds while a
#: worker frees memory is ordinary; our tasks keep no results on a worker to spill, so
#: a pause this long does not end).
PAUSED_GIVE_UP_S = 60.0
#: How often the workers' states are looked at while a task runs [s].
POLL_S = 1.0


class WorkerMemoryError(WorkbenchError):
    """The dask workers have too little memory for a task of the grid."""


def _mib(nbytes) -> str:
    return f"{nbytes / 2**20:,.0f} MiB"


def _limits(client, workers=None) -> str:
    """The workers' memory limits, in words (`workers`: of ``scheduler_info``)."""
    if workers is None:
        try:
            workers = list(client.scheduler_info(n_workers=-1)["workers"].values())
        except Exception:  # noqa: BLE001  (the cluster may be going down: the words only)
            workers = []
    limits = sorted({int(w.get("memory_limit") or 0) for w in workers})
    if not limits:
        return "an unknown memory limit"
    if limits == [0]:
        return "no memory limit of their own (the machine's memory)"
    if len(limits) == 1:
        return f"a memory limit of {_mib(limits[0])}"
    return f"memory limits of {_mib(limits[0])} to {_mib(limits[-1])}"


def _change(client) -> str:
    """Where the workers' memory is set: by this command's local cluster or by whoever
    started the workers."""
    if getattr(client, "cluster", None) is not None:
        return "fewer --workers (they share the machine's memory)"
    return "start them with a larger `dask worker --memory-limit`"


def memory_error(client, limits: str, what: str, needs: str, smaller: str,
                 how: str) -> WorkerMemoryError:
    """The one message: what the workers did (`how`, with ``{what}`` for the task),
    their limit (`limits`, :func:`_limits`), what the task needs, what to change
    (`smaller`: how to make the task smaller)."""
    return WorkerMemoryError(
        f"the dask workers have too little memory for the grid: {how.format(what=what)} "
        f"({needs}; the workers have {limits}); give each worker more memory "
        f"({_change(client)}) or {smaller}")


class _PauseWatch:
    """Raises when no worker of the cluster has been running (every one paused, or
    none there) for :data:`PAUSED_GIVE_UP_S` seconds on end."""

    def __init__(self, client, describe):
        self.client, self.describe, self.since, self.last = client, describe, None, 0.0
        # the limits now: after a worker died, it may not be back when the message is made
        self.limits = _limits(client)

    def error(self, how) -> WorkerMemoryError:
        what, needs, smaller = self.describe()
        return memory_error(self.client, self.limits, what, needs, smaller, how)

    def check(self):
        now = time.monotonic()
        if now - self.last < POLL_S:
            return
        self.last = now
        try:
            workers = list(self.client.scheduler_info(n_workers=-1)["workers"].values())
        except Exception:  # noqa: BLE001  (a scheduler going down: its error comes anyway)
            return
        if workers:
            self.limits = _limits(self.client, workers)
        if any(w.get("status") == "running" for w in workers):
            self.since = None
            return
        self.since = now if self.since is None else self.since
        if now - self.since < PAUSED_GIVE_UP_S:
            return
        if workers:
            raise self.error(f"every worker has been paused for {now - self.since:.0f} s "
                             "(distributed pauses a worker above 80 % of its memory limit "
                             "and runs nothing on it), with {what} waiting")
        raise self.error(f"no worker has been running for {now - self.since:.0f} s (a "
                         "worker above 95 % of its memory limit as it starts is restarted "
                         "at once by its nanny; or none is connected), with {what} waiting")


def watch(client, describe) -> _PauseWatch:
    """The watch of the workers for :func:`result` and :func:`completed`.

    Parameters
    ----------
    client : distributed.Client
    describe : callable
        ``describe() -> (what, needs, smaller)``: what the task was doing, what it
        needs, and how to make it smaller (words of the message).
    """
    return _PauseWatch(client, describe)


def result(fut, watcher: _PauseWatch):
    """``fut.result()`` of a task, or the :class:`WorkerMemoryError` of
    :func:`memory_error` when its workers died (``KilledWorker``) or every worker stayed
    paused (`watcher`, :func:`watch`); other errors of the task are raised as they are."""
    # distributed's TimeoutError: asyncio's on Python 3.10; waited for apart from the
    # result, so that a task's own TimeoutError is raised as its error
    from distributed import KilledWorker, TimeoutError as WaitedOut, wait
    while not fut.done():
        try:
            wait([fut], timeout=POLL_S)
        except WaitedOut:
            watcher.check()
    try:
        return fut.result()
    except KilledWorker:
        raise watcher.error("the workers that ran {what} died (a worker's nanny "
                            "restarts it above 95 % of its memory limit)") from None


def completed(queue, watcher: _PauseWatch):
    """The futures of `queue` (``distributed.as_completed``) as they finish, with the
    check of `watcher` while none is ready; take each with :func:`result`."""
    from distributed import TimeoutError as WaitedOut, wait
    while not queue.is_empty():
        if not queue.has_ready():
            watcher.check()
            with queue.lock:                 # its own thread adds and drops futures
                pending = [f for f in queue.futures if not f.done()]
            if pending:
                try:
                    wait(pending, timeout=POLL_S, return_when="FIRST_COMPLETED")
                except WaitedOut:
                    pass
            continue
        yield next(queue)
