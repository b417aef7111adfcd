"""Waiting for the tasks of `workbench run` and `workbench grid` on a dask cluster, with
one message when the workers have too little memory for them.

A dask worker has a memory limit (``dask worker --memory-limit``; a local cluster of
``--workers N`` shares the machine's memory among its N workers).  distributed pauses a
worker above 80 % of it (the worker runs no task until its memory falls) and its nanny
restarts it above 95 %; a task whose workers died `allowed-failures` + 1 times (4 by
default) fails with distributed's ``KilledWorker``, and a task whose inputs were sent
to the dead worker (``Client.scatter``: a block of sites of `workbench run`) is
cancelled at the first death, those inputs being lost.  A task that needs more than a
worker has (a block of sites' hourly inputs and the engine's work on them; the scratch
copy of a time chunk of a grid's whole plane, decompressed whole; a block of cells) so
ended in a traceback of ``KilledWorker`` or ``FutureCancelledError``, and a worker
paused by its own idle memory (a limit under about 150 MB) ran nothing and the command
waited for ever.  :func:`result` and :func:`completed` give instead one
:class:`WorkerMemoryError` naming the limit, what the task needed and what to change
(docs/scale.md, "Too little memory on a worker").  The words of the task come from the
command (:func:`watch`: `describe` and `job`): site blocks and site-hours for `run`
(:mod:`workbench.blocks`), cells and time steps for `grid` (:mod:`workbench.grid`,
:mod:`workbench.grid_scratch`).
"""
from __future__ import annotations

import time

from .errors import WorkbenchError

#: Seconds that every worker of the cluster may stay paused, with tasks of the command
#: waiting, before the run stops [s] (our choice: a pause of a few seconds while a
#: worker frees memory is ordinary; our tasks keep no results on a worker to spill, so
#: a pause this long does not end).
PAUSED_GIVE_UP_S = 60.0
#: How often the workers' states are looked at while a task runs [s].
POLL_S = 1.0
#: Longest wait for a worker to be back (a nanny's restart takes a few seconds) when
#: the message is made and no worker's limit has been seen yet [s] (our choice).
LIMIT_WAIT_S = 10.0
#: The words of :func:`_limits` when no worker is there to tell its limit.
UNKNOWN_LIMIT = "an unknown memory limit"


class WorkerMemoryError(WorkbenchError):
    """The dask workers have too little memory for a task of the command."""


def _mib(nbytes) -> str:
    return f"{nbytes / 2**20:,.0f} MiB"


def _workers(client) -> dict:
    """address -> the scheduler's record of each worker (empty when the scheduler does
    not answer)."""
    try:
        return dict(client.scheduler_info(n_workers=-1)["workers"])
    except Exception:  # noqa: BLE001  (the cluster may be going down: the words only)
        return {}


def _limits(client, workers=None) -> str:
    """The workers' memory limits, in words (`workers`: of ``scheduler_info``, a list
    of records or a dict of them by address)."""
    if workers is None:
        workers = _workers(client)
    if isinstance(workers, dict):
        workers = list(workers.values())
    limits = sorted({int(w.get("memory_limit") or 0) for w in workers})
    if not limits:
        return UNKNOWN_LIMIT
    if limits == [0]:
        return "no memory limit of their own (the machine's memory)"
    if len(limits) == 1:
        return f"a memory limit of {_mib(limits[0])}"
    return f"memory limits of {_mib(limits[0])} to {_mib(limits[-1])}"


def _busy(worker) -> bool:
    """A worker (a record of ``scheduler_info``) that runs, or is paused but still runs
    the task it had when it was paused (distributed lets it end: a block whose peak
    holds the worker above 80 % for a while is no reason to stop)."""
    counts = (worker.get("metrics") or {}).get("task_counts") or {}
    return worker.get("status") == "running" or counts.get("executing", 0) > 0


def _change(client) -> str:
    """Where the workers' memory is set: by this command's local cluster or by whoever
    started the workers."""
    cluster = getattr(client, "cluster", None)
    if cluster is not None:
        if len(getattr(cluster, "workers", None) or {}) == 1:
            return ("a machine with more memory: the one worker of --workers 1 has this "
                    "machine's")
        return "fewer --workers (they share the machine's memory)"
    return "start them with a larger `dask worker --memory-limit`"


def memory_error(client, limits: str, what: str, needs: str, smaller: str,
                 how: str, job: str = "the grid") -> WorkerMemoryError:
    """The one message: what the workers did (`how`, with ``{what}`` for the task),
    their limit (`limits`, :func:`_limits`), what the task needs, what to change
    (`smaller`: how to make the task smaller); `job` names the command's work
    (``the grid``, ``the run``)."""
    return WorkerMemoryError(
        f"the dask workers have too little memory for {job}: {how.format(what=what)} "
        f"({needs}; the workers have {limits}); give each worker more memory "
        f"({_change(client)}) or {smaller}")


def _limits_when_back(client, wait_s=None) -> str:
    """:func:`_limits` of the workers once one is connected, waiting up to `wait_s`
    seconds (default :data:`LIMIT_WAIT_S`) for a restarted worker to come back."""
    end = time.monotonic() + (LIMIT_WAIT_S if wait_s is None else wait_s)
    while True:
        workers = _workers(client)
        if workers or time.monotonic() >= end:
            return _limits(client, workers)
        time.sleep(0.2)


class _PauseWatch:
    """Raises when no worker of the cluster has been running (every one paused with no
    task running on it, or none there) for :data:`PAUSED_GIVE_UP_S` seconds on end."""

    def __init__(self, client, describe, job):
        self.client, self.describe, self.job = client, describe, job
        self.since, self.last = None, 0.0
        workers = _workers(client)
        # the limits now: after a worker died, it may not be back when the message is made
        self.limits = _limits(client, workers)
        # the workers now: one gone (a restart comes back at another address) tells a
        # cancelled task whose scattered inputs were lost with it
        self.seen = set(workers)

    def error(self, how) -> WorkerMemoryError:
        if self.limits == UNKNOWN_LIMIT:
            # no worker was there when the watch began (the nanny was restarting the
            # one a task before this had killed): its limit once it is back
            self.limits = _limits_when_back(self.client)
        what, needs, smaller = self.describe()
        return memory_error(self.client, self.limits, what, needs, smaller, how, self.job)

    def lost_workers(self) -> bool:
        """True when a worker seen by this watch has left the cluster (died, or was
        restarted by its nanny, under a new address)."""
        return bool(self.seen - set(_workers(self.client)))

    def check(self):
        now = time.monotonic()
        if now - self.last < POLL_S:
            return
        self.last = now
        try:
            by_address = dict(self.client.scheduler_info(n_workers=-1)["workers"])
        except Exception:  # noqa: BLE001  (a scheduler going down: its error comes anyway)
            return
        self.seen |= set(by_address)
        workers = list(by_address.values())
        if workers:
            self.limits = _limits(self.client, workers)
        if any(_busy(w) for w in workers):
            self.since = None
            return
        self.since = now if self.since is None else self.since
        if now - self.since < PAUSED_GIVE_UP_S:
            return
        if workers:
            raise self.error(f"every worker has been paused, running nothing, for "
                             f"{now - self.since:.0f} s (distributed pauses a worker above "
                             "80 % of its memory limit and starts nothing on it), with "
                             "{what} waiting")
        raise self.error(f"no worker has been running for {now - self.since:.0f} s (a "
                         "worker above 95 % of its memory limit as it starts is restarted "
                         "at once by its nanny; or none is connected), with {what} waiting")


def watch(client, describe, job: str = "the grid") -> _PauseWatch:
    """The watch of the workers for :func:`result` and :func:`completed`.

    Parameters
    ----------
    client : distributed.Client
    describe : callable
        ``describe() -> (what, needs, smaller)``: what the task was doing, what it
        needs, and how to make it smaller (words of the message).
    job : str
        The command's work, after "too little memory for" (``the grid``, ``the run``).
    """
    return _PauseWatch(client, describe, job)


def result(fut, watcher: _PauseWatch):
    """``fut.result()`` of a task, or the :class:`WorkerMemoryError` of
    :func:`memory_error` when its workers died (``KilledWorker``; or the task was
    cancelled, its scattered inputs lost with a worker that left) or every worker
    stayed paused (`watcher`, :func:`watch`); other errors of the task are raised as
    they are."""
    from concurrent.futures import CancelledError
    # distributed's TimeoutError: asyncio's on Python 3.10; waited for apart from the
    # result, so that a task's own TimeoutError is raised as its error
    from distributed import KilledWorker, TimeoutError as WaitedOut, wait
    while not fut.done():
        try:
            wait([fut], timeout=POLL_S)
        except WaitedOut:
            watcher.check()
        except CancelledError:       # said by fut.result() below
            break
    try:
        return fut.result()
    except KilledWorker:
        raise watcher.error(DIED) from None
    except CancelledError:
        # not cancelled here: distributed cancels a task whose scattered inputs were
        # lost with the worker that held them (at its first death, whatever
        # `allowed-failures` says)
        if watcher.lost_workers():
            raise watcher.error(HELD) from None
        raise


#: How the workers failed a task that they died running (:func:`result`).
DIED = ("the workers that ran {what} died (a worker's nanny restarts it above 95 % of "
        "its memory limit)")
#: How the workers failed a task cancelled with the worker that held its inputs.
HELD = ("a worker that held {what} died (a worker's nanny restarts it above 95 % of its "
        "memory limit; the inputs sent to it were lost with it)")


def completed(queue, watcher: _PauseWatch):
    """The futures of `queue` (``distributed.as_completed``) as they finish, with the
    check of `watcher` while none is ready; take each with :func:`result`."""
    from concurrent.futures import CancelledError
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
                except CancelledError:
                    # a task cancelled by distributed (its scattered inputs lost with
                    # a worker): it comes out of the queue, and result() says why
                    pass
            else:
                time.sleep(0.01)             # done, not yet in the queue's ready list
            continue
        yield next(queue)
