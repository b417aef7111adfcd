"""A network in blocks of sites: the same :meth:`Study.run` per block, reduced as it goes.

A run of many sites holds the hourly velocities of every (site, receptor) pair at once
(50 sites x 7 receptors x 17,543 h were 2.9 GB, half the peak of a 100-site-year run;
docs/performance.md).  :func:`run_blocks` splits the sites into blocks of
``block_sites``, builds a :class:`~workbench.pipeline.Study` of each block's inputs
(:meth:`Inputs.subset`), runs it exactly as a whole run does, and keeps only what a run
folder needs: the budget and yearly Datasets, the wet and screened Datasets and the
tables.  The hourly velocities of a block are dropped when the block is done (unless
``keep_velocities``), so the peak of the computation depends on the block size, not on
the number of sites.  The hourly met of a large network stays in its on-disk store
(:mod:`workbench.io.metstore`) and each block reads its own sites from it; the
precipitation and air samples (a few rows a week) are read whole.

With a ``dask.distributed`` client each block is one task: its inputs are sliced here
(a met store as its file names and the block's sites when the cluster is a local one
started here, so each worker reads its own block; the values themselves for a
cluster given by its scheduler address, whose workers may not see this machine's
files), submitted with the block function, and the reduced blocks are gathered as they
complete.  The blocks are then concatenated along ``site`` in the order of the
catalogue, so the result does not depend on the block size, the number of workers or
the order in which blocks finish.

Every site is computed on its own in the pipeline (screening, wet periods, velocities,
dry fluxes and the budget are per site), so a block run gives the numbers of a whole
run for every (site, receptor) pair a site asks for (tests/test_blocks.py).  Pairs no
site asks for (``active`` false) are computed in neither (``stages.wanted_pairs``): no
velocity there.  Each block lays its budget on the network's receptor axis
(``Study.run(layout=)``), so such a pair holds what a whole run gives it (the site's
wet deposition, dry components missing with Vd coverage 0, the total partial), not a
fill value: budget.nc is the whole run's, variable by variable
(tests/test_blocks_layout.py), as budget.csv and summary.csv are.
"""
from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pandas as pd

from .blockreduce import reduce_blocks
from .io.common import release_free_memory
from .pipeline import Result, Study
from .worker_memory import completed, result as task_result, watch

__all__ = ["ClusterStart", "close_client", "run_blocks", "run_network", "site_blocks",
           "start_client", "wanted_blocks", "wants_blocks"]


def _n_sites(n) -> str:
    """``1 site``, ``2 sites``."""
    return f"{n} site" + ("" if n == 1 else "s")


def blocks_with_met(wanted, inputs, receptors) -> list:
    """`wanted` (:func:`wanted_blocks`) with each block whose sites have no hour of met
    (a site listed in sites.toml before its first record) joined to the first block
    that has some, its surfaces added in the network's order: such a block alone has
    an empty met table, which the dry chain cannot take; in a whole run, and so here,
    those sites' dry budgets are missing.  Unchanged when every block has met or none
    has.

    >>> from types import SimpleNamespace as S
    >>> import xarray as xr
    >>> inp = S(met=xr.Dataset(coords={"site": ["a", "b"]}))
    >>> blocks_with_met([(["a"], ("grass",)), (["n"], ("crops",)), (["b"], ("grass",))],
    ...                 inp, ["grass", "crops"])
    [(['a', 'n'], ('grass', 'crops')), (['b'], ('grass',))]
    """
    met = getattr(inputs, "met", None)
    have = set(met["site"].values.astype(str)) if met is not None and "site" in met.coords \
        else set()
    has = [any(s in have for s in sites) for sites, _ in wanted]
    if all(has) or not any(has):
        return list(wanted)
    host = has.index(True)
    out = [(list(sites), tuple(recs)) for sites, recs in wanted]
    for i, (sites, recs) in enumerate(wanted):
        if not has[i]:
            hs, hr = out[host]
            joined = set(hr) | set(recs)
            out[host] = (hs + list(sites), tuple(r for r in receptors if r in joined))
    return [b for b, h in zip(out, has) if h]


def site_blocks(sites, block_sites=None) -> list:
    """The site ids in consecutive blocks of at most `block_sites` (None: one block).

    >>> site_blocks(["a", "b", "c"], 2)
    [['a', 'b'], ['c']]
    """
    sites = list(sites)
    if block_sites is None or block_sites >= len(sites):
        return [sites] if sites else []
    if int(block_sites) < 1:
        raise ValueError(f"block_sites must be at least 1, got {block_sites!r}")
    n = int(block_sites)
    return [sites[i:i + n] for i in range(0, len(sites), n)]


def wanted_blocks(catalogue, receptors, block_sites=None) -> list:
    """Blocks of sites that ask for the same receptor surfaces, and those surfaces.

    The sites are grouped by the set of surfaces they ask for (their own land use and
    their further receptors); each group, in catalogue order, is cut into blocks of at
    most `block_sites`.  A block run with ``Study.run(..., receptors=surfaces)``
    computes only (site, receptor) pairs that a site asks for.

    Parameters
    ----------
    catalogue : SiteCatalogue
        The network's catalogue, site overrides applied.
    receptors : list of str
        Every receptor surface of the network, in the order of a whole run.
    block_sites : int, optional
        Largest block [sites] (default: one block per group).

    Returns
    -------
    list of (list of str, tuple of str)
        (site ids, receptor surfaces in the network's order), groups in the order of
        their first site in the catalogue.

    >>> from types import SimpleNamespace as S
    >>> cat = [S(id="a", surfaces=("grass",)), S(id="b", surfaces=("forest", "grass")),
    ...        S(id="c", surfaces=("grass",))]
    >>> wanted_blocks(cat, ["grass", "forest"], 1)
    [(['a'], ('grass',)), (['c'], ('grass',)), (['b'], ('grass', 'forest'))]
    """
    groups = {}
    for s in catalogue:
        wanted = set(s.surfaces)
        key = tuple(r for r in receptors if r in wanted)
        groups.setdefault(key, []).append(s.id)
    return [(block, key) for key, ids in groups.items() for block in site_blocks(ids, block_sites)]


#: Memory of a block of sites at its peak in the worker, per site-hour and receptor
#: surface [bytes] (measured with tracemalloc on the demo network, 8 years of hours:
#: 122 MiB for one site x 70,128 hours x 2 receptors, 164 MiB for 3: 915 and 816 bytes;
#: docs/performance.md, "A block of sites on a worker").  The hourly met of the block
#: itself, (sites x hours x variables x 8 bytes), is about 1/30 of it.
BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR = 900
#: Memory of a worker process before its first block [MiB] (the same measure: 63 MiB
#: idle, 128 MiB with the package and the modules a block imports).
WORKER_BASE_MIB = 130


def block_need(n_sites, n_receptors, n_hours, n_vars) -> tuple:
    """(hourly met, peak of the block's engine) of a block of sites [bytes]: the met is
    ``n_sites x n_hours x n_vars x 8`` bytes (float64), the peak
    :data:`BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR` a site-hour and receptor surface.

    >>> block_need(1, 2, 8760, 9)
    (630720, 15768000)
    """
    site_hours = int(n_sites) * int(n_hours)
    return (site_hours * int(n_vars) * 8,
            site_hours * max(1, int(n_receptors)) * BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR)


def describe_block(blocks, wanted, now, met, block_sites):
    """The words of :func:`workbench.worker_memory.memory_error` for the block of sites
    ``blocks[now[0]]`` (its receptors in ``wanted[now[0]]``; `met` the network's hourly
    met, whose whole record every block holds)."""
    n_hours = int(met.sizes.get("time", 0)) if met is not None else 0
    n_vars = len(met.data_vars) if met is not None else 0

    def describe():
        sites, recs = blocks[now[0]], wanted[now[0]][1]
        met_b, peak = block_need(len(sites), len(recs), n_hours, n_vars)
        names = ", ".join(sites[:3]) + (", ..." if len(sites) > 3 else "")
        if len(sites) > 1:
            smaller = (f"a smaller --block-sites (now {block_sites}; the memory follows a "
                       "block's site-hours)")
        else:
            smaller = ("a shorter met record (a block is already one site; its memory "
                       "follows its hours)")
        return (f"a block of {_n_sites(len(sites))} ({names})",
                f"a block of {len(sites) * n_hours:,} site-hours ({_n_sites(len(sites))} x "
                f"{n_hours:,} hours) and {len(recs)} receptor surface"
                f"{'' if len(recs) == 1 else 's'}: its hourly met is "
                f"{met_b / 2**20:,.1f} MiB ({n_vars} variables x 8 bytes a site-hour) and "
                f"the engine's work on it about {peak / 2**20:,.0f} MiB at its peak "
                f"(measured: about {BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR} bytes a site-hour "
                f"and receptor), besides about {WORKER_BASE_MIB} MiB of the worker itself",
                smaller)
    return describe


def run_block(inputs, site_overrides, args: dict, keep_velocities=False) -> dict:
    """Run one block of sites and reduce it to what a run folder needs.

    Parameters
    ----------
    inputs : workbench.io.inputs.Inputs
        The block's inputs (already restricted to its sites).
    site_overrides : dict
        The scenario's ``[sites.<id>]`` tables.
    args : dict
        Keyword arguments of :meth:`Study.run` (options, resolution, start, end).
    keep_velocities : bool
        Keep the hourly velocities Dataset (large: hourly x sites x receptors).

    Returns
    -------
    dict
        ``budget``, ``years`` (the same object as ``budget`` at yearly resolution),
        ``screened``, ``wet``, ``velocities`` (or None), ``periods``, ``options``,
        ``notes`` and ``schemes`` (scheme -> (budget, years) of the other gas schemes
        when ``compare_schemes`` is set; else empty).
    """
    from .comparison import schemes_in_order
    study = Study(_loaded(inputs), site_overrides)
    res = study.run(**args)
    dry = res.options["dry"]
    schemes = {}
    if dry.compare_schemes:
        for scheme in schemes_in_order(dry)[1:]:
            other = study.run(**{**args, "dry_options": dataclasses.replace(dry, gas_scheme=scheme)})
            schemes[scheme] = (other.budget, None if other.years is other.budget else other.years)
    # the monthly budget the trends of the run folder read, made here while the block's
    # velocities are cached (else the whole network would be run again at months)
    monthly = None
    if args.get("resolution", "year") != "month":
        monthly = study.run(**{**args, "resolution": "month"}).budget
    out = {"budget": res.budget, "years": None if res.years is res.budget else res.years,
           "monthly": monthly, "screened": res.screened, "wet": res.wet,
           "velocities": res.velocities if keep_velocities else None,
           "periods": res.periods, "options": res.options, "notes": list(res.notes),
           "schemes": schemes}
    del study, res
    release_free_memory()      # the block's hourly arrays: back to the system
    return out


def block_inputs(inputs, sites, load=True):
    """The inputs of a block of sites, without the ledger of the files (the computation
    does not read it; for the hourly met of a network it is millions of rows, which
    would travel with every block sent to a worker).

    A met store (:mod:`workbench.io.metstore`) is read for the block's sites only: here
    when `load`, else by whoever loads the block (a dask worker of this machine reads
    its own block from the store's files; only their names travel).
    """
    from .io.ledger import Ledger
    out = dataclasses.replace(inputs.subset(sites=sites), ledger=Ledger(), gauge_check=None)
    return _loaded(out) if load else out


def _loaded(inputs):
    """`inputs` with a lazily read met (a store) read into memory."""
    from .io.metstore import is_lazy
    if not is_lazy(inputs.met):
        return inputs
    return dataclasses.replace(inputs, met=inputs.met.load())


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


def run_blocks(study_or_inputs, wet_options=None, dry_options=None, budget_options=None,
               fixed_velocity=None, resolution="year", start=None, end=None, *,
               block_sites=None, client=None, site_overrides=None, keep_velocities=False,
               progress=None, threads=None) -> Result:
    """The budget of a network computed in blocks of sites (see the module text).

    Parameters
    ----------
    study_or_inputs : Study or Inputs
        The whole network (a Study brings its site overrides).
    wet_options, dry_options, budget_options, fixed_velocity, resolution, start, end
        As for :meth:`workbench.pipeline.Study.run`; the periods are those of the whole
        network (without `start`/`end`, the span of all its inputs).
    block_sites : int, optional
        Sites per block (default: all in one block).
    client : distributed.Client, optional
        Run each block as a task on this cluster (default: in this process, up to
        `threads` blocks at once).
    site_overrides : dict, optional
        The scenario's ``[sites.<id>]`` tables (default: the study's).
    keep_velocities : bool
        Keep and concatenate the hourly velocities (memory grows with the sites again).
    progress : callable, optional
        Called with a short text after each block.
    threads : int, optional
        Without a client: blocks run at once on threads of this process (default
        :func:`block_threads`; 1 runs them in turn on this thread).  The numbers do
        not depend on it (each block is its own Study; the reduction is in the order
        of the blocks).

    Returns
    -------
    workbench.pipeline.Result
        As a whole run's (the budget on the network's receptors, every pair as a
        whole run gives it); ``velocities`` is None unless `keep_velocities` (the
        pairs no site asks for hold no velocity, as in a whole run).
    """
    if isinstance(study_or_inputs, Study):
        whole = study_or_inputs
        site_overrides = whole.site_overrides if site_overrides is None else site_overrides
    else:
        whole = Study(study_or_inputs, site_overrides)
    inputs = whole.inputs
    # the days of the record a default start or end leaves out, said as a run note
    span_notes = whole.span_notes(start, end)
    if start is None or end is None:
        s0, e0 = whole.span()
        start = s0 if start is None else start
        end = e0 if end is None else end
    args = {"wet_options": wet_options, "dry_options": dry_options,
            "budget_options": budget_options, "fixed_velocity": fixed_velocity,
            "resolution": resolution, "start": start, "end": end}
    receptors = whole.receptors()
    # blocks of sites asking for the same surfaces: only wanted pairs are computed
    wanted = blocks_with_met(wanted_blocks(whole.catalogue(), receptors, block_sites),
                             inputs, receptors)
    blocks = [sites for sites, _ in wanted]
    # each block computes its own receptors and lays its budget on the network's
    block_args = [{**args, "receptors": recs, "layout": tuple(receptors)} for _, recs in wanted]
    precip = inputs.precipitation
    psites = precip["site"].values.astype(str) if precip is not None else None
    positions = None
    if precip is not None:         # each block's rows of the precipitation file
        block_of = np.full(len(inputs.catalogue.ids) + 1, -1)
        where = pd.Index(list(inputs.catalogue.ids), dtype=object)
        for i, sites in enumerate(blocks):
            block_of[where.get_indexer(sites)] = i
        row_block = block_of[where.get_indexer(psites.astype(object))]
        positions = [np.flatnonzero(row_block == i) for i in range(len(blocks))]
    say = progress or (lambda text: None)
    done = [None] * len(blocks)
    if client is None:
        n_threads = block_threads(len(blocks)) if threads is None else max(1, int(threads))

        def one(i):
            return run_block(block_inputs(inputs, blocks[i]), site_overrides, block_args[i],
                             keep_velocities)
        finished = itertools.count(1)      # blocks end out of order on threads: count them
        if n_threads <= 1:
            for i, sites in enumerate(blocks):
                done[i] = one(i)
                say(f"block {next(finished)}/{len(blocks)} done ({_n_sites(len(sites))})")
        else:
            _run_on_threads(one, done, n_threads,
                            lambda i: say(f"block {next(finished)}/{len(blocks)} done "
                                          f"({_n_sites(len(blocks[i]))})"))
    else:
        from .optional import require
        distributed = require("distributed")
        # at most two blocks per worker in flight: the sliced inputs of the blocks
        # not yet submitted are not held here all at once
        window = 2 * max(1, len(client.scheduler_info().get("workers", {})))
        local = getattr(client, "cluster", None) is not None     # started here: same files
        futures, todo = {}, iter(enumerate(blocks))

        def submit():
            nxt = next(todo, None)
            if nxt is None:
                return None
            i, sites = nxt
            # sent to a worker as data, not inside the task graph; a met store is sent
            # as its file names and the block's sites when the workers share this
            # machine's files (a local cluster): the worker reads its own block
            data = client.scatter(block_inputs(inputs, sites, load=not local), hash=False)
            fut = client.submit(run_block, data, site_overrides, block_args[i],
                                keep_velocities, pure=False)
            futures[fut] = i
            return fut

        first = [f for f in (submit() for _ in range(window)) if f is not None]
        queue = distributed.as_completed(first)
        # workers with too little memory for a block: one message, no traceback and no
        # wait for ever (workbench.worker_memory); the words name the block waited for
        def size(i):                        # site-receptor pairs of block i
            return len(blocks[i]) * len(wanted[i][1])
        now = [max(futures.values(), key=size, default=0)]
        watcher = watch(client, describe_block(blocks, wanted, now, inputs.met, block_sites),
                        "the run")
        for n, fut in enumerate(completed(queue, watcher), 1):
            i = now[0] = futures.pop(fut)
            done[i] = task_result(fut, watcher)      # a failed block raises its error here
            # while waiting: the largest block in flight
            now[0] = max(futures.values(), key=size, default=i)
            fut.release()
            say(f"block {n}/{len(blocks)} done ({_n_sites(len(blocks[i]))})")
            nxt = submit()
            if nxt is not None:
                queue.add(nxt)
    result = reduce_blocks(done, receptors, positions, list(inputs.catalogue.ids))
    result.notes = list(result.notes) + span_notes
    return result


#: Blocks of sites run at once on threads of this process, at most [-] (each block's
#: engine then runs single-threaded, :func:`workbench.threads.threads_here`; numpy
#: releases the interpreter lock in its loops, so one block's array work overlaps the
#: other's Python-level work).  ``WORKBENCH_THREADS=1`` (or ``set_threads(1)``) runs
#: the blocks in turn.
MAX_BLOCK_THREADS = 2


def block_threads(n_blocks: int) -> int:
    """Blocks run at once in this process [-]: the engine's thread setting
    (:func:`workbench.threads.get_threads`) capped at :data:`MAX_BLOCK_THREADS` and at
    `n_blocks`; 1 off the main thread (a dask task, an outer pool).

    >>> block_threads(1)
    1
    """
    from .threads import threads_here
    return max(1, min(threads_here(), MAX_BLOCK_THREADS, int(n_blocks)))


def _run_on_threads(one, done, n_threads, say):
    """``done[i] = one(i)`` for every block on `n_threads` threads, at most `n_threads`
    blocks in flight (so at most that many blocks' hourly arrays at once); each result
    goes to its own place, so the order in which blocks finish does not matter.  The
    first error is raised here (blocks not started are cancelled)."""
    from concurrent.futures import FIRST_COMPLETED, ThreadPoolExecutor, wait
    todo = iter(range(len(done)))
    with ThreadPoolExecutor(max_workers=n_threads, thread_name_prefix="workbench-block") as pool:
        running = {pool.submit(one, i): i for i in itertools.islice(todo, n_threads)}
        try:
            while running:
                finished, _ = wait(running, return_when=FIRST_COMPLETED)
                for fut in sorted(finished, key=running.get):
                    i = running.pop(fut)
                    done[i] = fut.result()
                    say(i)
                    nxt = next(todo, None)
                    if nxt is not None:
                        running[pool.submit(one, nxt)] = nxt
        finally:
            for fut in running:
                fut.cancel()


#: Largest default block when no block size is given [sites].
DEFAULT_MAX_BLOCK = 4
#: ``workbench run`` computes a network of more sites than this in blocks without being
#: asked (the hourly velocities of every pair at once grow with the network: about 55 MB
#: a site-year, docs/performance.md); smaller runs are whole and write velocities.nc.
AUTO_BLOCK_SITES = 20
#: Note of a block run: the hourly velocities are not kept.
NO_VELOCITIES_NOTE = ("computed in blocks of sites: the hourly velocities were dropped after "
                      "each block, so velocities.nc is not written (a network of more than "
                      f"{AUTO_BLOCK_SITES} sites, or --workers, --scheduler or --block-sites; "
                      "run a scenario of fewer sites without these options to get it)")


def wants_blocks(n_sites, workers=None, scheduler=None, block_sites=None, draws=0) -> bool:
    """True when ``workbench run`` computes in blocks of sites: when asked
    (`workers`, `scheduler`, `block_sites`) or for more than :data:`AUTO_BLOCK_SITES`
    sites, unless the scenario asks for Monte Carlo `draws` (they need the whole run).

    >>> wants_blocks(4), wants_blocks(500), wants_blocks(4, block_sites=2)
    (False, True, True)
    >>> wants_blocks(500, draws=1000)
    False
    """
    if workers or scheduler or block_sites:
        return True
    return n_sites > AUTO_BLOCK_SITES and not draws


def run_network(study, wet_options, dry_options, budget_options, fixed_velocity, resolution,
                start, end, *, sc=None, workers=None, scheduler=None, block_sites=None,
                progress=None, cluster=None, max_block_sites=None) -> Result:
    """What ``workbench run --workers/--scheduler/--block-sites`` computes.

    Starts (and closes) a local cluster of `workers` processes, or connects to
    `scheduler`; without either the blocks run in this process.  A local cluster
    already starting (`cluster`, a :class:`ClusterStart`) is used and closed instead.
    The default block size with a cluster is the sites shared out as two blocks per
    worker, at most `max_block_sites`; in this process `max_block_sites`.
    `max_block_sites` defaults to :data:`DEFAULT_MAX_BLOCK`; ``workbench run`` passes
    :func:`workbench.cli.default_block_sites` of the record length, so that a worker's
    block holds no more site-years than a block in this process (the peak memory of a
    block grows with its site-years, docs/performance.md).
    """
    from .errors import WorkbenchError
    try:
        unc = sc.options.get("uncertainty") if sc is not None else None
        if unc is not None and getattr(unc, "draws", 0):
            raise WorkbenchError("[uncertainty] draws > 0 needs the whole run's cached stages: "
                                 "run without --workers, --scheduler and --block-sites")
        if cluster is not None:
            client = cluster.result()
        else:
            client = start_client(workers, scheduler) if (workers or scheduler) else None
            cluster = client
        limit = DEFAULT_MAX_BLOCK if max_block_sites is None else max(1, int(max_block_sites))
        if block_sites is None and client is not None:
            n_workers = max(1, len(client.scheduler_info().get("workers", {})) or (workers or 1))
            n_sites = len(study.inputs.catalogue.ids)
            block_sites = min(limit, max(1, -(-n_sites // (2 * n_workers))))
        elif block_sites is None:
            block_sites = limit
        result = run_blocks(study, wet_options, dry_options, budget_options, fixed_velocity,
                            resolution, start, end, block_sites=block_sites, client=client,
                            progress=progress)
    finally:
        if isinstance(cluster, ClusterStart):
            cluster.close()
        elif cluster is not None:
            close_client(cluster)
    result.notes = list(result.notes) + [NO_VELOCITIES_NOTE]
    return result
