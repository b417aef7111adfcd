"""The engine's hourly part in blocks of whole sites on threads, and what they share.

Helpers of :mod:`workbench.drydep.core`: the particle modes' weights and attributes of
every site of a call, the coordinates of the result, the cut of the sites into blocks
and the run of the blocks on the thread pool (:func:`workbench.threads.run_each`).  The
hourly function itself (``workbench.drydep.core._hourly``, defined in
:mod:`workbench.drydep.core_hourly`) is passed in, so that this
module does not import the core.
"""
from __future__ import annotations

import threading

import numpy as np
import xarray as xr

from ..threads import run_each
from . import particle_fractions as _fractions

#: Site-receptor-hours per block of whole sites on threads (:func:`hourly_site_blocks`;
#: about 10 site-years of 3 receptors: the fixed cost of a block, some 5 ms, stays small). [-]
SITE_BLOCK_ELEMENTS = 262144
#: Calls on fewer site-receptor-hours (a site-year of the apps) run on the calling thread. [-]
SITE_BLOCK_MIN_ELEMENTS = 262144


def particle_parts(block, surf, opt) -> dict:
    """Mode weights of each particle species of `opt` at the sites of `block`
    (:func:`workbench.drydep.particle_fractions.mode_weights`; weights [1] by site or
    by site and hour, coarse fraction [1] and its source code by site)."""
    def hourly(sp):  # (site, time) coarse fraction of the sampler [1], if given
        name = f"coarse_fraction_{sp}"
        return np.asarray(block[name].values, dtype=float) if name in block else None
    return {sp: _fractions.mode_weights(surf, sp, opt, hourly(sp)) for sp in opt.particles}


def particle_attrs(part) -> dict:
    """The attributes of ``vd_<species>`` from its mode weights (every site of the call)."""
    weights, coarse, source = part
    return {"coarse_fraction": coarse.tolist(),
            "coarse_fraction_source": ", ".join(_fractions.SOURCE[int(k)] for k in source),
            "modes": repr([(m, float(np.max(w))) for m, w in weights])}


def coordinates(block, receptors):
    """Coordinates (site, receptor, time) of the result, reusing the block's indexes.

    Building the pandas index of the hours again costs more than the rest of the
    Dataset construction of a site-year; the block's own index is the same.
    """
    if not {"site", "time"} <= set(block.xindexes):
        return {"site": block["site"].values, "receptor": receptors, "time": block["time"].values}
    rec = xr.Coordinates({"receptor": receptors})
    return xr.Coordinates(
        {"site": block.variables["site"], "receptor": rec.variables["receptor"],
         "time": block.variables["time"]},
        indexes={"site": block.xindexes["site"], "receptor": rec.xindexes["receptor"],
                 "time": block.xindexes["time"]})


def site_cuts(n_sites: int, per_site: int, n_threads: int) -> list:
    """Slices of the sites for :func:`hourly_site_blocks`: about
    :data:`SITE_BLOCK_ELEMENTS` site-receptor-hours each, at least one per thread."""
    size = max(1, SITE_BLOCK_ELEMENTS // max(per_site, 1))
    size = min(size, -(-n_sites // n_threads))
    return [slice(i, min(i + size, n_sites)) for i in range(0, n_sites, size)]


def hourly_site_blocks(hourly, aug, surf, opt, receptors, met_surf, n_threads) -> xr.Dataset:
    """`hourly` (``workbench.drydep.core._hourly``, with the summaries) of the whole
    in-memory record, run in blocks of whole sites on `n_threads` threads
    (:func:`workbench.threads.run_each`).

    Every step of `hourly` works site by site (nothing looks across sites but
    the particle modes' weights and attributes, found here on every site first), so
    each element gets the same operations as in one call on all the sites: the same
    numbers bit for bit, and the same attributes, for any number of threads.  Each
    block copies its variables into the result (allocated by the first block to
    finish) in site order; blocks run on the pool's threads, where the blockwise
    steps of `hourly` stay on their thread.
    """
    n_s = aug.sizes["site"]
    cuts = site_cuts(n_s, len(receptors) * aug.sizes["time"], n_threads)
    parts = particle_parts(aug, surf, opt)
    result = {}   # name -> xarray.Variable of every site, made by the first block to finish
    lock = threading.Lock()

    def task(i):
        rows = cuts[i]
        ds = hourly(aug.isel(site=rows), surf.isel(site=rows), opt, receptors, None,
                     met_surf.isel(site=rows), summaries=True, particle_parts=parts, rows=rows)
        with lock:
            if not result:
                for name, v in ds.data_vars.items():
                    result[name] = xr.Variable(
                        v.dims, np.empty((n_s,) + v.shape[1:], dtype=v.dtype), v.attrs)
        if list(ds.data_vars) != list(result):
            raise RuntimeError("site blocks of the engine gave different variables")
        for name, v in ds.data_vars.items():
            if v.dims[0] != "site" or v.attrs != result[name].attrs:
                raise RuntimeError(f"site blocks of the engine differ in {name!r}")
            result[name].values[rows] = v.values

    run_each(task, len(cuts), n_threads)
    return xr.Dataset(result, coords=coordinates(aug, receptors))
