"""distributed's own log of `workbench run` and `workbench grid` on dask workers, in a
file instead of on the console.

distributed logs through the :mod:`logging` module: at import it puts a handler that
writes to the console on its loggers (``distributed``, ``distributed.client``, ...,
which then do not pass their records on to the root logger; where the root logger has
a handler already, none, and the records go up to it).  A worker with too little
memory filled the console with its warnings ("Unmanaged memory use is high", "Worker
is at 85% memory usage. Pausing worker", "exceeded 95% memory budget. Restarting",
"Removing worker ... caused the cluster to lose scattered data") before the command's
own one line (:mod:`workbench.worker_memory`).  While a run computes on workers, the
handlers of those loggers are swapped for one that appends to ``dask.log`` in the run
folder (:func:`routed`, in the command's process: the local cluster's scheduler and
nannies, the client), and the worker processes of a local cluster started by the
command do the same as they start (:func:`dask_setup`, a preload of
:data:`workbench.blocks.WORKER_PRELOAD`; the path reaches them in the dask setting
:data:`CONFIG_KEY`).  Workers started by someone else (``--scheduler``) keep their own
logs where they were started.  An empty log is removed at the end; the log of a run
stopped by :class:`~workbench.worker_memory.WorkerMemoryError` is kept beside the
output folder (``DIR.dask.log``; the run folder itself is not written) and the message
names it (:func:`run_log`).
"""
from __future__ import annotations

import contextlib
import logging
import os
import shutil
from pathlib import Path

#: The log file's name in the run folder.
LOG_NAME = "dask.log"
#: dask setting that carries the log's path to the worker processes of a local cluster.
CONFIG_KEY = "workbench.dask-log"
#: Records kept [logging level]: what distributed showed on the console of a worker
#: (its console handler's level there), so that a run without trouble leaves no log.
LEVEL = logging.WARNING
#: Format of a record: time, process, logger, level, message.
FORMAT = "%(asctime)s %(process)d %(name)s %(levelname)s: %(message)s"


def _console(h) -> bool:
    """True for a handler that writes on the console (distributed's own: other handlers,
    such as a worker's in-memory log that ``Client.get_worker_logs`` reads, stay)."""
    return type(h) is logging.StreamHandler      # a FileHandler is a subclass: not these


def _loggers():
    """``distributed`` and those of its loggers that write on the console (distributed
    puts its handler on them at its import, unless the root logger already has one:
    then their records go up to the root's handlers)."""
    names = [n for n in list(logging.Logger.manager.loggerDict) if n.startswith("distributed.")]
    loggers = [logging.getLogger(n) for n in sorted(names)]
    return [logging.getLogger("distributed")] + \
        [lg for lg in loggers if any(_console(h) for h in lg.handlers)]


def _swap(path):
    """Swap the console handlers of distributed's loggers for one appending to `path`
    (opened now: the file follows its folder's rename); ``distributed`` itself passes
    no record on to the root logger meanwhile.  Returns (handler, what to restore)."""
    handler = logging.FileHandler(path, mode="a", encoding="utf-8")
    handler.setFormatter(logging.Formatter(FORMAT))
    handler.setLevel(LEVEL)
    before = []
    for lg in _loggers():
        console = [h for h in lg.handlers if _console(h)]
        before.append((lg, console, lg.propagate))
        for h in console:
            lg.removeHandler(h)
        lg.addHandler(handler)
        lg.propagate = False
    return handler, before


@contextlib.contextmanager
def routed(path):
    """distributed's log records of this process go to `path` (appended) while the
    ``with`` block runs, not to the console; the handlers are put back after.

    Yields
    ------
    logging.FileHandler
    """
    handler, before = _swap(path)
    try:
        yield handler
    finally:
        for lg, handlers, propagate in reversed(before):
            lg.removeHandler(handler)
            for h in handlers:
                lg.addHandler(h)
            lg.propagate = propagate
        handler.close()


def dask_setup(worker):  # noqa: ARG001  (distributed's preload interface)
    """In a worker process of a local cluster started by ``--workers`` (run, grid):
    its log records go to the file named by the dask setting :data:`CONFIG_KEY` (kept
    on the console when it is not set or cannot be opened)."""
    import dask
    path = dask.config.get(CONFIG_KEY, None)
    if not path:
        return
    try:
        _swap(path)
    except OSError:         # the run folder gone (a worker restarted at the very end)
        pass


@contextlib.contextmanager
def run_log(folder, active=True):
    """distributed's log of a run into ``dask.log`` of the run folder `folder`
    (:class:`workbench.runfolder.RunFolder`) while the ``with`` block runs.

    Yields the log's path (None when not `active`: nothing changes).  An empty log is
    removed at the end.  A :class:`~workbench.worker_memory.WorkerMemoryError` raised
    inside is raised again with the path of the log, copied beside the output folder
    (``<DIR>.dask.log``), since the run folder is not written.
    """
    from .worker_memory import WorkerMemoryError
    if not active:
        yield None
        return
    path = Path(folder.path) / LOG_NAME
    with routed(path) as handler:
        try:
            yield path
        except WorkerMemoryError as exc:
            handler.flush()
            if path.exists() and path.stat().st_size:
                kept = folder.out.parent / f"{folder.out.name}.{LOG_NAME}"
                shutil.copyfile(path, kept)
                raise WorkerMemoryError(f"{exc} (distributed's own messages: {kept})") \
                    from None
            raise
        finally:
            handler.flush()
    # the folder may have been renamed into place meanwhile
    where = Path(folder.out) / LOG_NAME if getattr(folder, "committed", False) else path
    with contextlib.suppress(OSError):
        if where.stat().st_size == 0:
            os.remove(where)
