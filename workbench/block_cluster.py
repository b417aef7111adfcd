"""The local dask cluster of the blocks: :func:`start_client` (single-threaded worker
processes, their environment, settings, preloaded modules and launcher),
:func:`close_client` and :class:`ClusterStart`, a cluster starting on a thread of its
own (split from :mod:`workbench.blocks`, which re-exports every name).
"""
from __future__ import annotations


# ---------------------------------------------------------------- the runner
#: Environment variables that ``distributed`` sets on the worker processes it starts
#: by default and that a local cluster of :func:`start_client` leaves unset.
#: ``MALLOC_TRIM_THRESHOLD_`` (65,536 bytes by default) turns off glibc's adaptive
#: threshold for memory mapped allocations: each large numpy temporary of a block was
#: then mapped and unmapped anew, with five times the page faults, and a block took
#: 30-45 % more CPU in a worker than in this process (docs/performance.md).  A block
#: returns its free memory to the system when it ends (``release_free_memory``).
UNSET_WORKER_ENVIRON = ("MALLOC_TRIM_THRESHOLD_",)


#: dask settings of the worker processes of a local cluster of :func:`start_client`
#: (read by each nanny as it is made, so they reach the workers it spawns).
#: distributed's statistical profiler samples every worker's stack each 10 ms and keeps
#: one profile a second (up to ``distributed.admin.low-level-log-length``, 1,000) with
#: the source lines of every sampled frame (``linecache``): for the dashboard, which a
#: local cluster here does not start.  It grew each worker by its run's length: traced
#: on 2 workers of a 100 x 100 grid, 31 MB more of profiles and source lines than at
#: 20 x 20, about half of the worker's growth in peak with the grid's size
#: (docs/performance.md, "Flat worker memory").  Off here; a cluster given by
#: ``--scheduler`` keeps its own settings.
WORKER_CONFIG = {"distributed.worker.profile.enabled": False}


#: Modules the worker processes of a local cluster of :func:`start_client` import as
#: they start (distributed's worker ``preload``), before they take a task: the package
#: and the modules a block imports when it first runs.  Started by
#: :class:`ClusterStart`, these imports overlap the main process's reading of the
#: inputs instead of delaying each worker's first block (2.4-3.5 s on a loaded
#: machine, docs/performance.md).
WORKER_PRELOAD = ("workbench.blocks", "workbench.comparison", "workbench.drydep.codeposition",
                  "workbench.drydep.wesely1989", "workbench.dasklog")


#: Launcher of the worker processes of a local cluster (:func:`start_client`), a shell
#: script in place of the Python executable that ``multiprocessing`` starts them with.
#: Ctrl-C in a terminal reaches every process of its group, and each worker, still
#: importing, printed its own KeyboardInterrupt traceback; the main process takes
#: Ctrl-C and shuts the cluster down, so a worker ignores SIGINT from its start: the
#: shell sets SIGINT to ignored before it execs Python, and an ignored signal stays
#: ignored across exec and in Python (it installs its KeyboardInterrupt handler only
#: where SIGINT has its default action).
WORKER_LAUNCHER = """#!/bin/sh
trap '' INT
exec {python} "$@"
"""


def _worker_launcher(python):
    """A temporary :data:`WORKER_LAUNCHER` for `python` (removed at exit), or None where
    there is no POSIX shell or the temporary folder may not run programs (the workers
    then start as before, and print their tracebacks on a Ctrl-C)."""
    import atexit
    import os
    import shlex
    import stat
    import tempfile
    if os.name != "posix" or not os.path.exists("/bin/sh"):
        return None
    fd, path = tempfile.mkstemp(prefix="workbench-worker-", suffix=".sh")
    with os.fdopen(fd, "w") as f:
        f.write(WORKER_LAUNCHER.format(python=shlex.quote(os.fsdecode(python))))
    os.chmod(path, stat.S_IRWXU)
    if not os.access(path, os.X_OK):      # a temporary folder mounted noexec
        os.remove(path)
        return None
    atexit.register(lambda: os.path.exists(path) and os.remove(path))
    return path


def start_client(workers=None, scheduler=None, log=None):
    """A ``dask.distributed`` client: on `scheduler` (an address) or on a local cluster
    of `workers` single-threaded processes (without the variables of
    :data:`UNSET_WORKER_ENVIRON`; each ignores Ctrl-C, :data:`WORKER_LAUNCHER`, and
    imports :data:`WORKER_PRELOAD` as it starts; with `log`, a path, each worker's
    log records go to that file, :func:`workbench.dasklog.dask_setup`).
    The caller closes it (:func:`close_client`)."""
    from .optional import require
    distributed = require("distributed")
    if scheduler:
        try:
            return distributed.Client(scheduler)
        except (OSError, ValueError, TypeError) as exc:
            # a scheduler that is not running, a wrong host or port, or an address dask
            # cannot parse: one line naming the address (it read "could not read or
            # write None: Timed out ...")
            from .errors import WorkbenchError
            raise WorkbenchError(
                f"could not reach the dask scheduler at {scheduler}: {exc}; expected the "
                "address of a running scheduler (`dask scheduler` prints it, e.g. "
                "tcp://host:8786), reachable from this machine") from None
    import os

    import dask
    unset = {f"distributed.nanny.pre-spawn-environ.{name}": None
             for name in UNSET_WORKER_ENVIRON}
    # the workers started with the cluster ignore Ctrl-C (a worker that its nanny
    # restarts later is started by Python itself, as before)
    from multiprocessing import spawn
    python = spawn.get_executable()
    launcher = _worker_launcher(python)
    try:
        if launcher:
            spawn.set_executable(launcher)
        # None: not set (both read when the nannies are made)
        from .dasklog import CONFIG_KEY
        logged = {CONFIG_KEY: os.fspath(log)} if log is not None else {}
        with dask.config.set({**unset, **WORKER_CONFIG, **logged}):
            cluster = distributed.LocalCluster(n_workers=int(workers), threads_per_worker=1,
                                               dashboard_address=None,
                                               preload=list(WORKER_PRELOAD))
    finally:
        spawn.set_executable(python)
    # the scheduler, in this process, hooks a callback into the garbage collector; a
    # Ctrl-C that came while it ran was "ignored in" it, and the run went on to the end
    from distributed.gc import disable_gc_diagnosis
    disable_gc_diagnosis(force=True)
    return distributed.Client(cluster)


def close_client(client):
    """Close `client` and, for a local cluster started here, the cluster."""
    cluster = getattr(client, "cluster", None)
    client.close()
    if cluster is not None:
        cluster.close()


class ClusterStart:
    """A local cluster of :func:`start_client` starting on a thread of its own.

    ``workbench run --workers N`` starts it before reading the inputs, so the start of
    the scheduler and the workers (with their imports, :data:`WORKER_PRELOAD`) overlaps
    the reading, which is serial in the main process.  Whoever starts it closes it
    (:meth:`close`, also after an error: it waits for the start to end, then shuts the
    cluster down, so no worker process outlives the command).

    Parameters
    ----------
    workers : int
        Worker processes [-].
    log : path, optional
        Where the workers' log records go (:func:`start_client`).
    """

    def __init__(self, workers, log=None):
        import threading
        from .optional import require
        require("distributed")       # imported here: a missing extra is named at once
        self.workers, self.log = int(workers), log
        self._client = self._error = None
        self._closed = False
        self._thread = threading.Thread(target=self._start, name="workbench-cluster-start",
                                        daemon=True)
        self._thread.start()

    def _start(self):
        try:
            self._client = start_client(self.workers, log=self.log)
        except BaseException as exc:          # raised by result(), in the caller's thread
            self._error = exc

    def result(self):
        """The client, once the cluster is up (its start's error is raised here)."""
        self._thread.join()
        if self._closed:
            raise RuntimeError("the local cluster was closed")
        if self._error is not None:
            raise self._error
        return self._client

    def close(self):
        """Wait for the start to end, then close the client and the cluster (again: no-op)."""
        self._thread.join()
        self._closed = True
        client, self._client = self._client, None
        if client is not None:
            close_client(client)
