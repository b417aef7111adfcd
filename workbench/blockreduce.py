"""The reduction of site blocks: each block's Datasets on the network's receptors and
sites, in catalogue order, as one :class:`~workbench.pipeline.Result`
(:func:`reduce_blocks`, used by :mod:`workbench.blocks`).

Blocks of sites asking for the same surfaces hold only their own receptors and are not
consecutive in the catalogue: :func:`_assembled` places every block straight at its
sites' positions and on the network's receptor axis, one numpy array per variable;
attributes are combined by :func:`_combine_attrs` (options the first block's, counts
summed, lists joined).  What it gives is held identical to xarray's reindex, concat
and reordering (:func:`_on_receptors`, :func:`_concat`; tests/test_blocks.py), which
remain the way for any other layout.
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import xarray as xr

from .pipeline import Result
from .pairfill import fill_value
from .tables import budget_table, span_table


def _on_receptors(ds, receptors):
    """`ds` on the network's receptor axis (a block has its own sites' receptors only).

    The variables on ``receptor`` are placed into arrays of the network's receptors
    (filled by :func:`workbench.pairfill.fill_value`, dtypes kept) with numpy: ``Dataset.reindex`` of
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
        full = np.full(shape, fill_value(v.dtype, v.attrs), dtype=v.dtype)
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
    fill = {v: fill_value(ds[v].dtype, ds[v].attrs) for v in ds.data_vars if "receptor" in ds[v].dims}
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
    stacked = _stacked(parts, dim)     # blocks of one layout: numpy (the same result)
    if stacked is not None:
        return stacked
    # an outer join fills by dtype and flags (int8 ``wetness_source`` -1, not a float NaN)
    fill = {n: fill_value(v.dtype, v.attrs) for n, v in parts[0].data_vars.items()
            if v.dtype.kind in "iu" and "flag_meanings" in v.attrs}
    return xr.concat(parts, dim=dim, data_vars="minimal", coords="minimal", compat="override",
                     join="outer" if dim == "sample" else "exact", fill_value=fill,
                     combine_attrs=_combine_attrs)


def _stacked(parts, dim):
    """What the ``xr.concat`` of :func:`_concat` gives, for blocks of one layout, by one
    ``numpy.concatenate`` per variable (xarray's concat aligned every variable of every
    block: seconds at 1,000 site-years); None for any other layout.  Along ``sample``
    (the screened samples, joined "outer" by :func:`_concat`) it is the same: the other
    axes are checked equal, so the outer join adds nothing."""
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


def _widened(ds, receptors, spare):
    """`ds` of a block on the network's `receptors`: each receptor it lacks takes the
    values of its `spare` receptor (one none of its sites asks for: every such receptor
    holds the same values, :func:`workbench.blocks.block_layout`).  `ds` itself
    without a spare or a receptor axis."""
    if not _has_spare(ds, spare):
        return ds
    return ds.isel(receptor=_spare_index(ds, receptors, spare)).assign_coords(
        receptor=xr.Variable("receptor", np.asarray(list(receptors)), ds["receptor"].attrs))


def _has_spare(ds, spare) -> bool:
    """`ds` is on a receptor axis holding `spare` (a block's hourly velocities are on its
    own receptors only: they keep the fill values of the others)."""
    return (ds is not None and spare is not None and "receptor" in ds.dims
            and str(spare) in set(ds["receptor"].values.astype(str)))


def _spare_index(ds, receptors, spare):
    """Positions on `ds`'s receptor axis of each of the network's `receptors` (those
    it lacks: its `spare`'s)."""
    have = pd.Index(ds["receptor"].values.astype(str))
    pos = have.get_indexer([str(r) for r in receptors])
    return np.where(pos < 0, have.get_loc(str(spare)), pos)


def _assembled(parts, receptors, sites, spares=None):
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
    site_pos = [index.get_indexer(sid.astype(str)) for sid in ids]   # once per block
    rec = list(receptors) if receptors is not None and "receptor" in first.dims else None
    rec_pos, takes = [], []          # takes: a widened block's positions (its spare's)
    for p, spare in zip(parts, spares or [None] * len(parts)):
        if rec is None or not _has_spare(p, spare):
            takes.append(None)
        else:
            takes.append(_spare_index(p, rec, spare))
            rec_pos.append(np.arange(len(rec)))
            continue
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
        out = np.full(shape, fill_value(dtype, v.attrs), dtype=dtype)
        for x, rp, sp, tk in zip(vs, rec_pos, site_pos, takes):
            values = x.values
            if tk is not None and "receptor" in x.dims:
                values = np.take(values, tk, axis=x.dims.index("receptor"))
            axes = [sp if d == "site" else
                    (rp if d == "receptor" and rp is not None else np.arange(s))
                    for d, s in zip(x.dims, values.shape)]
            out[np.ix_(*axes)] = values
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

    spares = [b.get("spare") for b in blocks]    # each block's receptor for the others

    def cat(parts, dim, receptors=None):
        if receptors is None:
            kept = [(q, None) for q in parts if q is not None]
        else:
            kept = [(q, s) for q, s in zip(parts, spares) if q is not None]
        if dim == "site":
            out = _assembled([q for q, _ in kept], receptors, sites, [s for _, s in kept])
            if out is not None:
                return out
        if receptors is not None:
            parts = [_widened(q, receptors, s) for q, s in kept]
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
