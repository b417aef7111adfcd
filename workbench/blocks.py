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
site asks for (``active`` false) hold no values in block mode (a whole run fills them
with values of surfaces nobody reported); budget.csv and summary.csv carry the active
pairs only and are the same.
"""
from __future__ import annotations

import dataclasses
import json

import numpy as np
import pandas as pd
import xarray as xr

from .io.common import release_free_memory
from .pipeline import Result, Study
from .tables import budget_table, span_table

__all__ = ["run_blocks", "run_network", "site_blocks", "start_client", "wanted_blocks",
           "wants_blocks"]


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


# ---------------------------------------------------------------- reduction
def _fill_value(dtype):
    """The value of a (site, receptor) pair a block has no receptor for."""
    kind = np.dtype(dtype).kind
    return {"f": np.nan, "c": np.nan, "b": False, "i": 0, "u": 0, "M": np.datetime64("NaT"),
            "m": np.timedelta64("NaT")}.get(kind, "")


def _on_receptors(ds, receptors):
    """`ds` on the network's receptor axis (a block has its own sites' receptors only).

    The variables on ``receptor`` are placed into arrays of the network's receptors
    (filled by :func:`_fill_value`, dtypes kept) with numpy: ``Dataset.reindex`` of
    every block cost about a second per 100 site-years."""
    if ds is None or "receptor" not in ds.dims:
        return ds
    have = ds["receptor"].values.astype(str)
    if list(have) == list(receptors):
        return ds
    pos = pd.Index(list(receptors)).get_indexer(have)
    on_axis = [n for n, v in ds.variables.items() if "receptor" in v.dims and n != "receptor"]
    if (pos < 0).any() or any(n not in ds.data_vars for n in on_axis):
        return _reindexed(ds, receptors)        # a coordinate on receptor: xarray's way
    out = {}
    for name in on_axis:
        v = ds.variables[name]
        ax = v.dims.index("receptor")
        shape = list(v.shape)
        shape[ax] = len(receptors)
        full = np.full(shape, _fill_value(v.dtype), dtype=v.dtype)
        where = [slice(None)] * v.ndim
        where[ax] = pos
        full[tuple(where)] = v.values
        out[name] = xr.Variable(v.dims, full, v.attrs, encoding=v.encoding)
    res = ds.drop_vars(on_axis).drop_indexes("receptor").drop_vars("receptor")
    res = res.assign_coords(receptor=xr.Variable("receptor", np.asarray(list(receptors)),
                                                 ds["receptor"].attrs))
    res = res.assign(out)
    return res[list(ds.data_vars)].assign_attrs(ds.attrs) if list(res.data_vars) != \
        list(ds.data_vars) else res


def _reindexed(ds, receptors):
    fill = {v: _fill_value(ds[v].dtype) for v in ds.data_vars if "receptor" in ds[v].dims}
    out = ds.reindex(receptor=list(receptors), fill_value=fill)
    for v in fill:                      # reindex widens bool and int; keep the dtypes
        if out[v].dtype != ds[v].dtype and ds[v].dtype.kind in "biu":
            out[v] = out[v].astype(ds[v].dtype)
    return out


def _combine_attrs(attrs_list, context=None):
    """One attribute set for the concatenated blocks.

    Options (a name with "option") are the first block's; counts (integers, or JSON
    objects of numbers) are summed; JSON lists are joined without repeats; anything
    else is the first block's.
    """
    out = {}
    for key in dict.fromkeys(k for a in attrs_list for k in a):
        vals = [a[key] for a in attrs_list if key in a]
        first = vals[0]
        if "option" in key:             # the options of the run: the same in every block
            out[key] = first
            continue
        if all(isinstance(v, (int, np.integer)) and not isinstance(v, bool) for v in vals):
            out[key] = int(sum(vals))
            continue
        if not all(isinstance(v, str) for v in vals):
            out[key] = first
            continue
        try:
            parsed = [json.loads(v) for v in vals]
        except ValueError:
            out[key] = first
            continue
        if all(isinstance(p, list) for p in parsed):
            seen = []
            for p in parsed:
                seen += [x for x in p if x not in seen]
            out[key] = json.dumps(seen)
        elif all(isinstance(p, dict) and all(isinstance(x, (int, float)) for x in p.values())
                 for p in parsed):
            total = {}
            for p in parsed:
                for k, x in p.items():
                    total[k] = total.get(k, 0) + x
            out[key] = json.dumps(total)
        else:
            out[key] = first
    return out


def _concat(parts, dim, receptors=None):
    parts = [p if receptors is None else _on_receptors(p, receptors) for p in parts
             if p is not None]
    if not parts:
        return None
    if len(parts) == 1:
        return parts[0]
    if dim == "site":
        stacked = _stacked(parts, dim)
        if stacked is not None:
            return stacked
    return xr.concat(parts, dim=dim, data_vars="minimal", coords="minimal", compat="override",
                     join="outer" if dim == "sample" else "exact",
                     combine_attrs=_combine_attrs)


def _stacked(parts, dim):
    """What the ``xr.concat`` of :func:`_concat` gives, for blocks of one layout, by one
    ``numpy.concatenate`` per variable (xarray's concat aligned every variable of every
    block: seconds at 1,000 site-years); None for any other layout."""
    first = parts[0]
    names = list(first.variables)
    for p in parts[1:]:
        if list(p.variables) != names or list(p.data_vars) != list(first.data_vars):
            return None
        for n in names:
            a, b = first.variables[n], p.variables[n]
            if a.dims != b.dims:
                return None
            if dim not in a.dims and n in first.indexes and not np.array_equal(a.values,
                                                                              b.values):
                return None               # another axis differs: xarray's exact join says so
    made = {}
    for n in names:
        v = first.variables[n]
        if dim not in v.dims:
            made[n] = v                   # compat="override": the first block's
            continue
        vs = [p.variables[n] for p in parts]
        made[n] = xr.Variable(v.dims, np.concatenate([x.values for x in vs],
                                                     axis=v.dims.index(dim)),
                              _combine_attrs([x.attrs for x in vs]), encoding=v.encoding)
    out = xr.Dataset({n: made[n] for n in first.data_vars},
                     coords={n: made[n] for n in first.coords})
    out.attrs = _combine_attrs([p.attrs for p in parts])
    return out


def _assembled(parts, receptors, sites):
    """The blocks' Datasets on (site[, receptor]) as one, each block placed straight at
    its sites' positions (the catalogue order `sites`) and on the network's
    `receptors`: what :func:`_on_receptors`, ``xr.concat`` and a reordering give, with
    one array per variable and no copy in between (at 1,000 site-years the monthly
    budget alone is about 100 MB).  None for a layout it does not know (the caller
    then takes xarray's way)."""
    if not parts:
        return None
    first = parts[0]
    names, data_vars = list(first.variables), list(first.data_vars)
    for p in parts:
        if list(p.variables) != names or list(p.data_vars) != data_vars or \
                any(p.variables[n].dims != first.variables[n].dims for n in names):
            return None
    ids = [p["site"].values for p in parts]
    every = np.concatenate(ids).astype(str)
    if sites is not None:
        have = set(every.tolist())
        order = np.asarray([s for s in sites if s in have])
    else:
        order = every
    index = pd.Index(order)
    if len(order) != len(every) or (index.get_indexer(every) < 0).any():
        return None
    rec = list(receptors) if receptors is not None and "receptor" in first.dims else None
    rec_pos = []
    for p in parts:
        if rec is None:
            rec_pos.append(None)
            continue
        pos = pd.Index(rec).get_indexer(p["receptor"].values.astype(str))
        if (pos < 0).any():
            return None
        rec_pos.append(pos)
    made = {}
    for n in names:
        v = first.variables[n]
        if n in ("site", "receptor"):
            continue
        if "site" not in v.dims:
            if "receptor" in v.dims and rec is not None:
                return None
            if n in first.indexes and any(not np.array_equal(v.values, p.variables[n].values)
                                          for p in parts[1:]):
                return None          # another axis differs: xarray's exact join says so
            made[n] = v
            continue
        if rec is None and "receptor" in v.dims and any(
                p.sizes["receptor"] != first.sizes["receptor"] for p in parts):
            return None
        vs = [p.variables[n] for p in parts]
        dtype = np.result_type(*[x.dtype for x in vs])
        shape = [len(order) if d == "site" else (len(rec) if d == "receptor" and rec else s)
                 for d, s in zip(v.dims, v.shape)]
        out = np.full(shape, _fill_value(dtype), dtype=dtype)
        for p, x, rp, sid in zip(parts, vs, rec_pos, ids):
            axes = [index.get_indexer(sid.astype(str)) if d == "site" else
                    (rp if d == "receptor" and rp is not None else np.arange(s))
                    for d, s in zip(x.dims, x.shape)]
            out[np.ix_(*axes)] = x.values
        made[n] = xr.Variable(v.dims, out, _combine_attrs([x.attrs for x in vs]),
                              encoding=v.encoding)
    site_attrs = _combine_attrs([p.variables["site"].attrs for p in parts])
    coords = {"site": xr.Variable("site", order.astype(object) if first["site"].dtype == object
                                  else order, site_attrs)}
    if "receptor" in first.variables:
        coords["receptor"] = (xr.Variable("receptor", np.asarray(rec),
                                          first.variables["receptor"].attrs) if rec is not None
                              else first.variables["receptor"])
    for n in first.coords:
        if n not in coords:
            coords[n] = made[n]
    coords = {n: coords[n] for n in first.coords}
    out = xr.Dataset({n: made[n] for n in data_vars}, coords=coords)
    out.attrs = _combine_attrs([p.attrs for p in parts])
    return out


def _ordered_samples(screened, positions):
    """The screened samples in the order of the input file."""
    if screened is None or positions is None or len(positions) != screened.sizes["sample"]:
        return screened
    return screened.isel(sample=np.argsort(positions, kind="stable"))


def reduce_blocks(blocks, receptors, sample_positions=None, sites=None) -> Result:
    """Concatenate reduced blocks (in catalogue order) into one :class:`Result`.

    Parameters
    ----------
    blocks : list of dict
        :func:`run_block` outputs, in the order of the sites.
    receptors : list of str
        The network's receptor surfaces, in the order of a whole run.
    sample_positions : list of numpy.ndarray, optional
        Each block's rows of the precipitation input (to keep the file order).
    sites : list of str, optional
        The network's sites in catalogue order (blocks of sites asking for the same
        surfaces are not consecutive in the catalogue); default: the blocks' order.
    """
    first = blocks[0]

    def cat(parts, dim, receptors=None):
        if dim == "site":
            out = _assembled([q for q in parts if q is not None], receptors, sites)
            if out is not None:
                return out
        out = _concat(parts, dim, receptors)
        if sites is None or out is None or dim != "site" or \
                list(out["site"].values.astype(str)) == list(sites):
            return out
        return out.sel(site=[s for s in sites if s in set(out["site"].values.astype(str))])

    def taken(key):
        """Each block's `key`, dropped from the blocks (freed once assembled)."""
        return [b.pop(key, None) for b in blocks]

    budget = cat(taken("budget"), "site", receptors)
    years = (budget if first["years"] is None else cat(taken("years"), "site", receptors))
    screened = _concat(taken("screened"), "sample")
    if sample_positions is not None:
        screened = _ordered_samples(screened, np.concatenate(sample_positions))
    notes = list(dict.fromkeys(n for b in blocks for n in b["notes"]))
    result = Result(budget=budget, years=years, screened=screened,
                    wet=cat(taken("wet"), "site"),
                    velocities=cat(taken("velocities"), "site", receptors),
                    periods=first["periods"], options={**first["options"], "receptors": None},
                    notes=notes)
    if first.get("monthly") is not None:
        result.monthly_budget = cat(taken("monthly"), "site", receptors)
    if first["schemes"]:
        tables = [result.table.assign(scheme=first["options"]["dry"].gas_scheme)]
        for scheme in first["schemes"]:
            b = cat([blk["schemes"][scheme][0] for blk in blocks], "site", receptors)
            y = b if first["schemes"][scheme][1] is None else cat(
                [blk["schemes"][scheme][1] for blk in blocks], "site", receptors)
            span = span_table(budget_table(y))
            tables.append(pd.concat([budget_table(b), span], ignore_index=True)
                          .assign(scheme=scheme))
        result.__dict__["table"] = pd.concat(tables, ignore_index=True)
    return result


# ---------------------------------------------------------------- the runner
def start_client(workers=None, scheduler=None):
    """A ``dask.distributed`` client: on `scheduler` (an address) or on a local cluster
    of `workers` single-threaded processes.  The caller closes it (and its cluster)."""
    from .optional import require
    distributed = require("distributed")
    if scheduler:
        return distributed.Client(scheduler)
    cluster = distributed.LocalCluster(n_workers=int(workers), threads_per_worker=1,
                                       dashboard_address=None)
    return distributed.Client(cluster)


def run_blocks(study_or_inputs, wet_options=None, dry_options=None, budget_options=None,
               fixed_velocity=None, resolution="year", start=None, end=None, *,
               block_sites=None, client=None, site_overrides=None, keep_velocities=False,
               progress=None) -> Result:
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
        Run each block as a task on this cluster (default: in this process, in turn).
    site_overrides : dict, optional
        The scenario's ``[sites.<id>]`` tables (default: the study's).
    keep_velocities : bool
        Keep and concatenate the hourly velocities (memory grows with the sites again).
    progress : callable, optional
        Called with a short text after each block.

    Returns
    -------
    workbench.pipeline.Result
        As a whole run's; ``velocities`` is None unless `keep_velocities`, and the
        pairs no site asks for hold no values.
    """
    if isinstance(study_or_inputs, Study):
        whole = study_or_inputs
        site_overrides = whole.site_overrides if site_overrides is None else site_overrides
    else:
        whole = Study(study_or_inputs, site_overrides)
    inputs = whole.inputs
    if start is None or end is None:
        s0, e0 = whole.span()
        start = s0 if start is None else start
        end = e0 if end is None else end
    args = {"wet_options": wet_options, "dry_options": dry_options,
            "budget_options": budget_options, "fixed_velocity": fixed_velocity,
            "resolution": resolution, "start": start, "end": end}
    receptors = whole.receptors()
    # blocks of sites asking for the same surfaces: only wanted pairs are computed
    wanted = wanted_blocks(whole.catalogue(), receptors, block_sites)
    blocks = [sites for sites, _ in wanted]
    block_args = [{**args, "receptors": recs} for _, recs in wanted]
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
        for i, sites in enumerate(blocks):
            done[i] = run_block(block_inputs(inputs, sites), site_overrides, block_args[i],
                                keep_velocities)
            say(f"block {i + 1}/{len(blocks)} ({len(sites)} sites)")
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
        for n, fut in enumerate(queue, 1):
            i = futures.pop(fut)
            done[i] = fut.result()      # a failed block raises its error here
            fut.release()
            say(f"block {n}/{len(blocks)} done ({len(blocks[i])} sites)")
            nxt = submit()
            if nxt is not None:
                queue.add(nxt)
    return reduce_blocks(done, receptors, positions, list(inputs.catalogue.ids))


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
                progress=None) -> Result:
    """What ``workbench run --workers/--scheduler/--block-sites`` computes.

    Starts (and closes) a local cluster of `workers` processes, or connects to
    `scheduler`; without either the blocks run in this process.  The default block size
    with a cluster is the sites shared out as two blocks per worker, at most
    :data:`DEFAULT_MAX_BLOCK` sites; in this process :data:`DEFAULT_MAX_BLOCK`.
    """
    from .errors import WorkbenchError
    unc = sc.options.get("uncertainty") if sc is not None else None
    if unc is not None and getattr(unc, "draws", 0):
        raise WorkbenchError("[uncertainty] draws > 0 needs the whole run's cached stages: "
                             "run without --workers, --scheduler and --block-sites")
    client = start_client(workers, scheduler) if (workers or scheduler) else None
    try:
        if block_sites is None and client is not None:
            n_workers = max(1, len(client.scheduler_info().get("workers", {})) or (workers or 1))
            n_sites = len(study.inputs.catalogue.ids)
            block_sites = min(DEFAULT_MAX_BLOCK, max(1, -(-n_sites // (2 * n_workers))))
        elif block_sites is None:
            block_sites = DEFAULT_MAX_BLOCK
        result = run_blocks(study, wet_options, dry_options, budget_options, fixed_velocity,
                            resolution, start, end, block_sites=block_sites, client=client,
                            progress=progress)
    finally:
        if client is not None:
            cluster = client.cluster if not scheduler else None
            client.close()
            if cluster is not None:
                cluster.close()
    result.notes = list(result.notes) + [NO_VELOCITIES_NOTE]
    return result
