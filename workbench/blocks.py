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
velocity there.  Each block lays its budget on its own receptors and one receptor
none of its sites asks for (``Study.run(layout=)``, :func:`block_layout`), which the
reduction copies to the network's others, so such a pair holds what a whole run gives
it (the site's wet deposition, dry components missing with Vd coverage 0, the total
partial), not a fill value: budget.nc is the whole run's, variable by variable
(tests/test_blocks_layout.py), as budget.csv and summary.csv are; a block's held
result is not the network's receptors wide (tests/test_blocks_held_memory.py).

Where the parts are: the sites in blocks and a block's memory in
:mod:`workbench.block_sites`; the local dask cluster (:func:`start_client`,
:class:`ClusterStart`) in :mod:`workbench.block_cluster`.  This module re-exports them
all, so that ``workbench.blocks.<name>`` keeps working.
"""
from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pandas as pd

from .blockreduce import reduce_blocks
from .io.common import release_free_memory
from .pipeline import Result, Study
from .tables_budget import lean_budget
from .worker_memory import completed, result as task_result, watch

# the local cluster (defined here before)
from .block_cluster import (UNSET_WORKER_ENVIRON, WORKER_CONFIG,  # noqa: F401
                            WORKER_LAUNCHER, WORKER_PRELOAD, ClusterStart, _worker_launcher,
                            close_client, start_client)
# the sites in blocks and a block's memory (defined here before)
from .block_sites import (BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR, WORKER_BASE_MIB,  # noqa: F401
                          _n_sites, block_need, blocks_with_met, describe_block,
                          shared_texts, site_blocks, wanted_blocks)

__all__ = ["ClusterStart", "close_client", "run_blocks", "run_network", "site_blocks",
           "start_client", "wanted_blocks", "wants_blocks"]


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
        ``budget``, ``years`` (None at yearly resolution: the budget is the years),
        ``monthly`` (the monthly budget's variables that the trends read,
        :func:`workbench.tables_budget.lean_budget`; None in a monthly run),
        ``screened``, ``wet``, ``velocities`` (or None), ``periods``, ``options``,
        ``notes`` and ``schemes`` (scheme -> (budget, years) of the other gas schemes
        when ``compare_schemes`` is set; else empty); their texts each held once
        (:func:`shared_texts`).
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
    # (only what the trends read of it: every block's is held until the reduction)
    monthly = None
    if args.get("resolution", "year") != "month":
        monthly = lean_budget(study.run(**{**args, "resolution": "month"}).budget)
    # held until the reduction too: each distinct text once, not once per cell
    out = {"budget": shared_texts(res.budget),
           "years": None if res.years is res.budget else shared_texts(res.years),
           "monthly": shared_texts(monthly), "screened": shared_texts(res.screened),
           "wet": shared_texts(res.wet),
           "velocities": res.velocities if keep_velocities else None,
           "periods": res.periods, "options": res.options, "notes": list(res.notes),
           "schemes": {k: tuple(shared_texts(x) for x in v) for k, v in schemes.items()},
           "spare": _spare(args)}
    del study, res
    release_free_memory()      # the block's hourly arrays: back to the system
    return out


def _spare(args) -> str | None:
    """The receptor of a block's `layout` that none of its sites asks for (None: none).

    A block computes its own receptors and lays its results on them and on one receptor
    of the network that none of its sites asks for (:func:`block_layout`); every such
    receptor holds the same values (no velocity there: wet deposition, dry components
    missing), so :func:`workbench.blockreduce.reduce_blocks` copies this one to the
    network's others."""
    asked = set(args.get("receptors") or ())
    return next((r for r in args.get("layout") or () if r not in asked), None)


def block_layout(receptors, asked) -> tuple:
    """The receptor axis of a block's results: the network's `receptors` that the block
    asks for (`asked`) and the first one it does not ask for, in the network's order.

    Holding every receptor of the network instead made each block's budget and monthly
    budget several times its own receptors' (7 to 2-3 on the demo network), and every
    block's result is held until the reduction: the run's peak grew with the network
    (docs/performance.md, "The memory claims re-measured").

    >>> block_layout(("a", "b", "c", "d"), ("c",))
    ('a', 'c')
    >>> block_layout(("a", "b"), ("a", "b"))
    ('a', 'b')
    """
    asked = set(asked)
    spare = next((r for r in receptors if r not in asked), None)
    return tuple(r for r in receptors if r in asked or r == spare)


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
    # and one receptor none of its sites asks for (the reduction copies it to the others)
    block_args = [{**args, "receptors": recs, "layout": block_layout(receptors, recs)}
                  for _, recs in wanted]
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
