"""Gridded deposition velocities and dry deposition: every cell of a grid is a site.

The cells of a block of the grid (a rectangle of y and x) are read in the site layout
(:mod:`workbench.grid_io`) and go through the engine functions of the site pipeline,
unchanged: :func:`workbench.drydep.velocities` on the surfaces of
:meth:`SiteCatalogue.surfaces() <workbench.io.sites.SiteCatalogue.surfaces>`, then
:func:`~workbench.drycomponents.prepare_velocities`,
:func:`~workbench.drycomponents.dry_rows` and
:func:`~workbench.drycomponents.dry_components` over the concentrations' sampling
intervals and the reporting periods.  Only the pair each cell asks for is computed:
the cells of a block are taken class by class, each with its own class as its one
receptor.  So a cell whose met, concentrations and land use equal a site's gives that
site's numbers.

Blocks are independent: :func:`store_grid` runs them one after the other in
process, or as dask tasks (one task per block), so that only one block's hourly inputs
are in memory per worker, and writes each block's maps into its target (grid.nc,
:class:`workbench.grid_output.MapFile`) as the block ends: on dask workers the result
comes back as its task ends and is released there, so no process holds the maps of the
whole grid.  :func:`compute_grid` gives the maps as one array (numpy, or a lazy dask
array of ``dask.delayed`` blocks assembled with ``dask.array.block``).
Inputs whose chunks span several blocks (chunked along time only) are first copied,
each chunk read once, into a block-major scratch file (:func:`staged`,
:mod:`workbench.grid_scratch`).
Output: CF maps on (time, y, x), one time step per reporting period
(:mod:`workbench.grid_output`).
"""
from __future__ import annotations

import contextlib

import numpy as np
import pandas as pd
import xarray as xr

from . import periods as _periods
from .budget import COMPONENTS, BudgetOptions
from .drycomponents import dry_components, dry_rows, prepare_velocities
from .errors import WorkbenchError
from .grid_io import Grid, block_catalogue, cell_ids, cut, read_block
from .worker_memory import completed, result, watch
from .grid_scratch import block_major
from .io.common import release_free_memory
from .io.sites import SiteCatalogue
from .units import element_deposition_in

#: Dry species of the budget with their element (every one holds one atom of it).
DRY_SPECIES = {c[2]: c[0] for c in COMPONENTS if c[1] == "dry"}
#: Cell-hours of hourly inputs a block holds when no block side is given [-]: 100
#: cell-years.  A block's reading and checks grow with its cell-hours: a 32 x 32 block
#: of a year of hours (9.0 M cell-hours, about 1,000 site-years at once) peaked at
#: 4.0 GB, a 10 x 10 one (0.88 M) kept a year-long 60 x 60 run under 1 GB
#: (2026-12-03, docs/performance.md).
BLOCK_CELL_HOURS = 876_000
#: Cells per side of a block when none is given, at most [-] (a month of hours).
DEFAULT_BLOCK = 32
#: ... and at least [-] (a decade of hours: 4 x 4 cells).
MIN_DEFAULT_BLOCK = 4
#: Cells of one land-use class that go through the dry engine in one call, at most [-]
#: (our choice, measured): a block's peak followed its largest class (400 sea cells
#: peaked at 1.29 GB against 0.98 GB for a mixed one, 2026-12-03), so a class is taken
#: in slices of this many cells; cells are independent, so only the order of sums in
#: the vectorized calls changes (equal to rounding, as for other blocks); 128 kept
#: the saving at no CPU cost, 64 cost 14 % CPU (docs/performance.md).
CELLS_PER_CALL = 128


def default_block(n_hours: int) -> int:
    """Cells per side of a block when none is given [-]: about
    :data:`BLOCK_CELL_HOURS` cell-hours a block, between :data:`MIN_DEFAULT_BLOCK` and
    :data:`DEFAULT_BLOCK` cells, so that a block's memory does not grow with the length
    of the record.

    Parameters
    ----------
    n_hours : int
        Hours of the met [-].

    >>> default_block(744), default_block(8760), default_block(87600)
    (32, 10, 4)
    """
    side = int(np.sqrt(BLOCK_CELL_HOURS / max(int(n_hours), 1)))
    return max(MIN_DEFAULT_BLOCK, min(DEFAULT_BLOCK, side))


class GridRunError(WorkbenchError):
    """Options that the gridded calculation does not support."""


def output_names(species) -> list:
    """Names of the output variables, in order, for the species of an air grid."""
    sp = [s for s in DRY_SPECIES if s in species]
    names = [f"vd_{s}" for s in sp] + [f"dry_{s}" for s in sp] + \
        [f"flux_coverage_{s}" for s in sp]
    names += [f"dry_{e}" for e in ("S", "N") if any(DRY_SPECIES[s] == e for s in sp)]
    return names + ["met_flagged_hours", "met_missing_hours"]


def record_span(grid: Grid) -> tuple:
    """(start, end) of the grid's record: the first start and the last end of the
    concentrations' sampling intervals (UTC, end exclusive), as
    :meth:`Study.record_span <workbench.pipeline.Study.record_span>` takes the sites'."""
    return grid.air_start.min(), grid.air_end.max()


def make_periods(grid: Grid, resolution="month", start=None, end=None) -> pd.DataFrame:
    """Reporting periods over the default span of the concentrations' record, as
    :meth:`Study.periods <workbench.pipeline.Study.periods>` makes them for the sites:
    without ``[period] start`` or ``end``, the calendar years of the record without a
    first or last year it reaches into by :data:`workbench.periods.EDGE_YEAR_DAYS` days
    or less (:func:`workbench.periods.default_span`; :func:`span_notes` says the days
    left out).  Before, the grid took the whole span of the air: a last weekly interval
    ending a few days into a new year made that year a period (map) of its own."""
    s0, e0 = _periods.default_span(*record_span(grid))
    t0 = np.datetime64(start) if start else s0
    t1 = np.datetime64(end) if end else e0
    return _periods.make_periods(t0, t1, resolution)


def span_notes(grid: Grid, start=None, end=None) -> list:
    """The run notes of the days of the grid's record that the default span leaves out
    (where `start` or `end`, ``[period]`` start and end, is None), in the words of the
    site run (:func:`workbench.periods.excluded_record_notes`); ``[]`` when the periods
    hold the whole record."""
    if start is not None and end is not None:
        return []
    return _periods.excluded_record_notes(*record_span(grid), use_start=start is None,
                                          use_end=end is None)


def dry_for_sites(met, air, catalogue: SiteCatalogue, dry_options, budget_options,
                  periods: pd.DataFrame, fixed_velocity=None):
    """The site pipeline's dry chain for some sites: Vd, gap-filled Vd, dry components.

    The steps of :meth:`Study.dry <workbench.pipeline.Study.dry>` (velocities, per
    species gap-filled Vd or a fixed value, deposition over sampling intervals, shares
    among periods), without its caches.

    Parameters
    ----------
    met : xarray.Dataset
        (site, time), SI units (docs/data_model.md).
    air : xarray.Dataset
        Dim ``period`` (as :func:`workbench.io.samples.read_air`).
    catalogue : SiteCatalogue
    dry_options : DryOptions
    budget_options : BudgetOptions
    periods : pandas.DataFrame
    fixed_velocity : dict, optional
        species -> Vd [cm s-1].

    Returns
    -------
    vd : xarray.Dataset or None
        Hourly output of :func:`workbench.drydep.velocities` [m s-1 and s m-1].
    vel : dict
        species -> (gap-filled Vd [m s-1] (site, receptor, time), filled mask, source).
    dry : xarray.Dataset or None
        Output of :func:`workbench.drycomponents.dry_components` (deposition [mol m-2]).
    """
    from .drydep import velocities
    fixed_velocity = dict(fixed_velocity or {})
    surf = catalogue.surfaces()
    need = [sp for sp in DRY_SPECIES if sp in air and sp not in fixed_velocity]
    # only the Vd of these species (every other output of the engine, a cell's
    # diagnostics, is for cell_velocities): the same bits, a fraction of the memory
    vd = velocities(met, surf, _only(dry_options, need),
                    outputs=grid_outputs(need)) if need else None
    receptors = [str(r) for r in surf["receptor"].values]
    template = xr.DataArray(np.full((len(catalogue), len(receptors), met.sizes["time"]), np.nan),
                            dims=("site", "receptor", "time"),
                            coords={"site": catalogue.ids, "receptor": receptors,
                                    "time": met["time"].values})
    vel = {}
    for sp in DRY_SPECIES:
        fixed = {sp: fixed_velocity[sp]} if sp in fixed_velocity else {}
        if not fixed and vd is None:
            continue
        got = prepare_velocities(vd if not fixed else None, [sp], fixed,
                                 budget_options.min_slot_hours, template)
        if sp in got:
            vel[sp] = got[sp]
    if not vel or air.sizes["period"] == 0:
        return vd, vel, None
    rows = dry_rows(air, vel, met, catalogue.ids, budget_options)
    return vd, vel, dry_components(rows, periods)


def grid_outputs(species) -> frozenset:
    """The variables of :func:`workbench.drydep.velocities` that the maps of `species`
    read: their Vd (:func:`workbench.drycomponents.prepare_velocities` fills them;
    nothing else of the engine's hourly output enters a map).

    >>> sorted(grid_outputs(["SO2", "pSO4"]))
    ['vd_SO2', 'vd_pSO4']
    """
    return frozenset(f"vd_{sp}" for sp in species)


def cell_velocities(grid: Grid, y: int, x: int, dry_options=None, outputs=None) -> xr.Dataset:
    """Every hourly output of the engine for one cell (row `y`, column `x`): the
    intermediates a gridded run does not keep (Ra, Rb, Rc and its paths, u*, L, the
    canopy state, the counts; docs/methods_dry.md), for inspecting a cell.  The cell's
    Vd are the bits of its maps' inputs (each cell is computed on its own).

    Parameters
    ----------
    grid : Grid
    y, x : int
        Row and column of the cell [-].
    dry_options : DryOptions, optional
    outputs : collection of str, optional
        As for :func:`workbench.drydep.velocities` (default: every variable).

    Returns
    -------
    xarray.Dataset
        (site, receptor, time): the one site ``j<y>i<x>`` on its class.
    """
    from .drydep import DryOptions, velocities
    ny, nx = grid.shape
    if not (0 <= int(y) < ny and 0 <= int(x) < nx):
        raise GridRunError(f"cell (y={y}, x={x}) is outside the grid of {ny} x {nx} cells")
    ys, xs = slice(int(y), int(y) + 1), slice(int(x), int(x) + 1)
    cat = block_catalogue(grid, ys, xs)
    if not len(cat):
        raise GridRunError(f"cell (y={y}, x={x}) has no land-use class: nothing is computed "
                           "there")
    met, air, _ = read_block(grid, ys, xs, cat)
    opt = _only(dry_options or DryOptions(), [sp for sp in DRY_SPECIES if sp in air])
    return velocities(met, cat.surfaces(), opt, outputs=outputs)


def _only(dry_options, species):
    """`dry_options` computing only the gases and particles of `species` that it
    computes: each species' Vd is its own chain (Ra, Rb and its own Rc or particle
    modes), so the others' hourly results (ozone, sea salt, dust: 11 of 64 hourly
    variables of a slice of cells) are not made and held for nothing; the Vd of the
    species kept are the same bits (tested)."""
    import dataclasses
    keep = set(species)
    return dataclasses.replace(
        dry_options, gases=tuple(g for g in dry_options.gases if g in keep),
        particles=tuple(p for p in dry_options.particles if p in keep))


def _period_sums(values: np.ndarray, which: np.ndarray, n_p: int) -> np.ndarray:
    """Sum over the hours of each period of (cell, time) values -> (cell, period).

    numpy's own sum along time, one period at a time (a loop over the few periods, not
    the hours): the same bits whatever the BLAS library and its threads, unlike a
    product with a (time, period) matrix, whose order of additions changes with them
    (maps that differed in the last bit between a run in process and on dask workers).
    """
    out = np.zeros((values.shape[0], n_p))
    for p in range(n_p):
        out[:, p] = values[:, which == p].sum(axis=1)
    return out


def _period_means(vd: np.ndarray, which: np.ndarray, n_p: int) -> np.ndarray:
    """Mean over the hours of each period of (cell, time) values, NaN skipped -> (cell, period)."""
    ok = np.isfinite(vd)
    total = _period_sums(np.where(ok, vd, 0.0), which, n_p)
    count = _period_sums(ok.astype(float), which, n_p)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(count > 0, total / count, np.nan)


def _check_options(dry_options):
    if getattr(dry_options, "nh3_treatment", "") == "bidirectional":
        raise GridRunError("[dry] nh3_treatment = 'bidirectional' is not mapped on grids "
                           "(the cells have no NH3 emission potentials): use the default "
                           "deposition-only NH3 for a grid")


def block_result(grid: Grid, ys: slice, xs: slice, dry_options, budget_options: BudgetOptions,
                 periods: pd.DataFrame, fixed_velocity=None) -> np.ndarray:
    """Every output of one block of cells.

    Returns
    -------
    numpy.ndarray
        (variable, period, y, x) in the order of :func:`output_names`: period-mean
        gap-filled Vd [m s-1], dry deposition of the species' element [kg ha-1],
        flux coverage [1], total dry S and N [kg ha-1], met hours with a plausibility
        flag [1], met hours without a Vd of the cell's own met [1].  NaN for cells
        without a class.
    """
    _check_options(dry_options)
    names = output_names(grid.species)
    n_p = len(periods)
    ny, nx = ys.stop - ys.start, xs.stop - xs.start
    out = np.full((len(names), n_p, ny * nx), np.nan)
    cat = block_catalogue(grid, ys, xs)
    if len(cat):
        met, air, flagged = read_block(grid, ys, xs, cat)
        pos = {s: k for k, s in enumerate(cell_ids(ys, xs).tolist())}
        which = _periods.assign_hours(met["time"].values, periods)
        cells = np.array([pos[s] for s in cat.ids])
        counts = _period_sums(flagged.astype(float), which, n_p)  # (cell, period)
        out[names.index("met_flagged_hours")][:, cells] = counts.T
        for cls in sorted({s.land_use for s in cat}):
            members = [s for s in cat if s.land_use == cls]
            for k in range(0, len(members), CELLS_PER_CALL):   # the peak of one slice
                _one_call(out, names, SiteCatalogue(members[k:k + CELLS_PER_CALL]), met, air,
                          pos, which, n_p, dry_options, budget_options, periods,
                          fixed_velocity)
        del met, air, flagged
        # the block's hourly arrays back to the system, as a block of sites does: a
        # worker running block after block kept the freed heap (docs/performance.md)
        release_free_memory()
    return out.reshape(len(names), n_p, ny, nx)


def _one_call(out, names, sub, met, air, pos, which, n_p, dry_options, budget_options,
              periods, fixed_velocity):
    """The dry chain of some cells of one class, put into `out`.  Its hourly results
    (Vd of every species and surface, gap-filled Vd, dry rows) are let go when it
    returns: bound in the loop of :func:`block_result`, one call's results were held
    while the next call computed its own (the peak of two calls)."""
    air_c = air.isel(period=np.flatnonzero(np.isin(air["site"].values, sub.ids)))
    _, vel, dry = dry_for_sites(met.sel(site=sub.ids), air_c, sub, dry_options,
                                budget_options, periods, fixed_velocity)
    idx = np.array([pos[s] for s in sub.ids])
    _fill(out, names, idx, vel, dry, which, n_p)


def _fill(out, names, idx, vel, dry, which, n_p):
    """Put one class's results of a block into `out` (variable, period, cell)."""
    totals = {}
    missing = None                             # (cell, time): no Vd from the hour's met
    for sp in vel:
        filled, was, _ = vel[sp]
        no_vd = (was | filled.isnull()).transpose("site", "receptor", "time").values[:, 0, :]
        missing = no_vd if missing is None else missing | no_vd
    if missing is not None:
        out[names.index("met_missing_hours")][:, idx] = \
            _period_sums(missing.astype(float), which, n_p).T
    for sp, element in DRY_SPECIES.items():
        if f"vd_{sp}" not in names:
            continue
        if sp in vel:
            v = vel[sp][0].transpose("site", "receptor", "time").values[:, 0, :]
            out[names.index(f"vd_{sp}")][:, idx] = _period_means(v, which, n_p).T
        dep = np.full((len(idx), n_p), np.nan)
        if dry is None and sp in vel:          # no concentration in these cells at all
            out[names.index(f"flux_coverage_{sp}")][:, idx] = 0.0
        if dry is not None and sp in vel:
            k = list(dry["species"].values).index(sp)
            dep = element_deposition_in(dry["deposition"].values[:, 0, :, k], element, "kg_ha")
            out[names.index(f"flux_coverage_{sp}")][:, idx] = \
                dry["flux_coverage"].values[:, 0, :, k].T
        out[names.index(f"dry_{sp}")][:, idx] = dep.T
        totals[element] = dep if element not in totals else totals[element] + dep
    for element, total in totals.items():      # NaN where any species of it is unknown
        out[names.index(f"dry_{element}")][:, idx] = total.T


def blocks(shape, block) -> list:
    """(y slice, x slice) of every block, row by row."""
    by, bx = (block, block) if np.isscalar(block) else block
    ny, nx = shape
    return [[(slice(j, min(j + by, ny)), slice(i, min(i + bx, nx)))
             for i in range(0, nx, bx)] for j in range(0, ny, by)]


def staged(grid: Grid, block=None, folder=None, say=None, client=None):
    """``with staged(grid, block) as g:`` the grid whose inputs chunked across the
    blocks are read from a block-major scratch copy (each chunk decompressed once;
    :func:`workbench.grid_scratch.block_major`), removed when the ``with`` ends.

    Parameters
    ----------
    grid : Grid
    block : int or (int, int), optional
        Cells per block side (y, x), as given to :func:`compute_grid` (default
        :func:`default_block` of the grid's hours).
    folder : path, optional
        Where the scratch folder is made (default: the system's temporary folder).
    say : callable, optional
        Called with each note on the chunks.
    client : distributed.Client, optional
        Make the copy in tasks on this cluster (a variable a task), so that this
        process never decompresses a chunk of the inputs (`folder` must be seen by the
        workers, as the blocks' reads of the copy need anyway).
    """
    block = default_block(len(grid.times)) if block is None else block
    return block_major(grid, blocks(grid.shape, block), folder, say, client=client)


def compute_grid(grid: Grid, dry_options, budget_options, periods, fixed_velocity=None,
                 block=None, use_dask=False, progress=None):
    """Every output of every cell, block by block, as one array (the maps of the whole
    grid in memory: for a run folder :func:`store_grid` writes each block into grid.nc
    as it ends instead).

    Parameters
    ----------
    grid : Grid
        From :func:`workbench.grid_io.open_grid`.
    dry_options, budget_options : DryOptions, BudgetOptions
    periods : pandas.DataFrame
    fixed_velocity : dict, optional
    block : int or (int, int), optional
        Cells per block side (y, x) (default :func:`default_block` of the grid's hours).
    use_dask : bool
        One dask task per block (lazy result; computed when written or ``.compute()``d:
        time-chunked inputs are read directly unless `grid` comes from :func:`staged`
        and the result is computed inside its ``with``); else the blocks run one after
        the other in process (on a scratch copy of time-chunked inputs made here, unless
        `grid` has one).
    progress : callable, optional
        Called with a short text after each block (in process only).

    Returns
    -------
    (names, array)
        Output names and a (variable, period, y, x) numpy or dask array.
    """
    _check_options(dry_options)
    names = output_names(grid.species)
    n_v, n_p = len(names), len(periods)
    block = default_block(len(grid.times)) if block is None else block
    layout = blocks(grid.shape, block)
    args = (dry_options, budget_options, periods, fixed_velocity)
    if use_dask:
        from .optional import require
        dask = require("dask")
        da = require("dask.array")
        task = dask.delayed(block_result, pure=True)
        # each task carries its block's part of the grid (grid_io.cut), not the whole
        arr = da.block([[da.from_delayed(task(cut(grid, ys, xs), ys, xs, *args),
                                         shape=(n_v, n_p, ys.stop - ys.start, xs.stop - xs.start),
                                         dtype=float) for ys, xs in row] for row in layout])
        return names, arr
    arr = np.full((n_v, n_p) + grid.shape, np.nan)
    store_grid(grid, arr, dry_options, budget_options, periods, fixed_velocity, block=block,
               progress=progress)
    return names, arr


#: Block tasks in flight per dask worker, at most [-] (one running, one queued): a
#: block's result leaves its worker as soon as it ends, so a worker holds at most this
#: many results, whatever the grid's size (as :func:`workbench.blocks.run_blocks`).
BLOCKS_IN_FLIGHT_PER_WORKER = 2


def _describe_block(block, n_hours, layout):
    """The words of :func:`workbench.worker_memory.memory_error` for a block task."""
    ys, xs = layout[0][0]
    by, bx = ys.stop - ys.start, xs.stop - xs.start

    def describe():
        return (f"a block of {by} x {bx} cells",
                f"a block of {by * bx * n_hours:,} cell-hours ({by} x {bx} cells x "
                f"{n_hours} hours) holds its hourly inputs and the engine's work on them "
                "(measured: a worker about 300 MB at 16 x 16 cells x 744 hours, "
                "docs/performance.md)",
                f"a smaller --block (now {block}; the memory follows the cells of a block)")
    return describe


def store_grid(grid: Grid, target, dry_options, budget_options, periods, fixed_velocity=None,
               block=None, use_dask=False, client=None, progress=None) -> list:
    """Every output of every cell, each block written into `target` as it ends and let go.

    Parameters
    ----------
    grid : Grid
    target : array-like
        Takes ``target[:, :, ys, xs] = values`` of a block, (variable, period, y, x) in
        the order of :func:`output_names` (a numpy array, or
        :class:`workbench.grid_output.MapFile`: grid.nc written in place, the contract of
        :func:`dask.array.store`).
    dry_options, budget_options, periods, fixed_velocity, block
        As for :func:`compute_grid`.
    use_dask : bool
        Without `client`: the blocks as dask tasks on the threaded scheduler, stored by
        :func:`dask.array.store` (each block's result written as it ends).
    client : distributed.Client, optional
        Each block a task on this cluster, at most
        :data:`BLOCKS_IN_FLIGHT_PER_WORKER` a worker at once; each result comes back to
        this process as its task ends (``distributed.as_completed``), is written into
        `target` and released on the worker.  So a worker holds a few blocks' results,
        not every block's until the last ends, and this process one block's.
    progress : callable, optional
        Called with a short text after each block (in process and with `client`).

    Returns
    -------
    list of str
        The output names, in the order of the first axis of `target`.
    """
    _check_options(dry_options)
    names = output_names(grid.species)
    block = default_block(len(grid.times)) if block is None else block
    layout = blocks(grid.shape, block)
    flat = [b for row in layout for b in row]
    args = (dry_options, budget_options, periods, fixed_velocity)
    say = progress or (lambda text: None)
    if client is not None:
        from .optional import require
        distributed = require("distributed")
        n_workers = max(1, len(client.scheduler_info().get("workers", {})))
        todo, futures = iter(flat), {}

        def submit():
            nxt = next(todo, None)
            if nxt is None:
                return None
            ys, xs = nxt
            # each task carries its block's part of the grid (grid_io.cut)
            fut = client.submit(block_result, cut(grid, ys, xs), ys, xs, *args, pure=False)
            futures[fut] = nxt
            return fut

        first = [f for f in (submit() for _ in range(BLOCKS_IN_FLIGHT_PER_WORKER * n_workers))
                 if f is not None]
        queue = distributed.as_completed(first)
        # as they end; workers with too little memory for a block: one message, no hang
        # (workbench.worker_memory)
        watcher = watch(client, _describe_block(block, len(grid.times), layout), "the grid")
        for n, fut in enumerate(completed(queue, watcher), 1):
            ys, xs = futures.pop(fut)
            # a failed block raises its error here
            target[:, :, ys, xs] = result(fut, watcher)
            fut.release()                          # its result leaves the worker
            del fut
            say(f"block {n}/{len(flat)}")
            nxt = submit()
            if nxt is not None:
                queue.add(nxt)
        return names
    if use_dask:
        from .optional import require
        da = require("dask.array")
        _, arr = compute_grid(grid, *args, block=block, use_dask=True)
        # dask's own region writes: each block's store task follows its block
        da.store(arr, target, lock=True, scheduler="threads")
        return names
    with (staged(grid, block) if not grid.scratch else contextlib.nullcontext(grid)) as g:
        for done, (ys, xs) in enumerate(flat, 1):
            target[:, :, ys, xs] = block_result(g, ys, xs, *args)
            say(f"block {done}/{len(flat)}")
    return names
