"""One block of cells of a checked grid in the site layout: the cells' ids and
catalogue, the cut of the grid a block needs, its met (with the site reader's row
checks, :func:`check_cells` cells at a time) and air (split from
:mod:`workbench.grid_io`, which re-exports every name).
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from . import species as _species
from .constants import GAS_CONSTANT
from .grid_check import Grid
from .grid_read import _UNIT_TEXT, _convert_met, _open, read_values
from .io import metchecks
from .io.met import MET_VARIABLES
from .io.samples import parse_reference_state
from .io.sites import Site, SiteCatalogue
from .units import to_amount


#: Met records of a block checked at once, about [-] (whole cells: :func:`check_cells`).
#: The row checks of the site reader hold several per-record copies, groupings and
#: texts of what they check (about 0.4 kB a record): a block of 0.8 M cell-hours
#: checked at once made its read peak 375 MB above the open grid, in slices of this
#: many records 106 MB (the block's met itself 45 MB), the same values and reasons and
#: no more CPU (2026-12-03, docs/performance.md; our choice, measured).
CHECK_CELL_HOURS = 131_072


def cell_ids(ys: slice, xs: slice) -> np.ndarray:
    """Site ids of the cells of a block, (y, x) order flattened: ``"j<row>i<col>"``."""
    j, i = np.meshgrid(np.arange(ys.start, ys.stop), np.arange(xs.start, xs.stop), indexing="ij")
    return np.char.add(np.char.add("j", j.reshape(-1).astype(str)),
                       np.char.add("i", i.reshape(-1).astype(str)))


def _window(grid: Grid, ys: slice, xs: slice) -> tuple:
    """The (y, x) slices of the 2-D fields of `grid` that hold the cells `ys`, `xs` of
    the whole grid (the same slices but for a grid :func:`cut` to a block)."""
    (oy, ox), (ny, nx) = grid.origin, grid.shape
    if not (oy <= ys.start <= ys.stop <= oy + ny and ox <= xs.start <= xs.stop <= ox + nx):
        raise ValueError(f"cells y {ys.start}:{ys.stop}, x {xs.start}:{xs.stop} are not in "
                         f"the grid's fields (y {oy}:{oy + ny}, x {ox}:{ox + nx})")
    return slice(ys.start - oy, ys.stop - oy), slice(xs.start - ox, xs.stop - ox)


def cut(grid: Grid, ys: slice, xs: slice) -> Grid:
    """The grid as one block of it needs it (:func:`block_catalogue`,
    :func:`read_block`): the 2-D fields of the block's cells only, the scratch copy's
    index of that block only, the metadata of the met and air zarr stores (not the
    land use's), no template or notes (for the maps, made in the main process).  A dask task of a block carries this, not the whole grid: each task's
    own copy of the whole grid's fields (0.5 MB pickled at 100 x 100 cells, some
    50 MB at 1,000 x 1,000 by extrapolation) was kept by the worker while the block's
    result waited for the others, so a worker held the whole grid once per block it ran.

    Parameters
    ----------
    grid : Grid
    ys, xs : slice
        Rows and columns of the block in the whole grid [-].
    """
    import dataclasses
    wy, wx = _window(grid, ys, xs)
    scratch = {role: dataclasses.replace(s, blocks={k: v for k, v in s.blocks.items()
                                                    if k == (ys.start, ys.stop, xs.start,
                                                             xs.stop)})
               for role, s in grid.scratch.items()}
    return dataclasses.replace(
        grid, classes=grid.classes[wy, wx].copy(), latitude=grid.latitude[wy, wx].copy(),
        longitude=grid.longitude[wy, wx].copy(),
        canopy_height=grid.canopy_height[wy, wx].copy(),
        elevation=grid.elevation[wy, wx].copy(), template=None, notes=[], scratch=scratch,
        origin=(ys.start, xs.start),
        zarr_metadata={r: m for r, m in grid.zarr_metadata.items() if r in ("met", "air")})


def block_catalogue(grid: Grid, ys: slice, xs: slice) -> SiteCatalogue:
    """The cells of a block that have a class, each as a site of the catalogue."""
    ids = cell_ids(ys, xs)
    wy, wx = _window(grid, ys, xs)
    cls = grid.classes[wy, wx].reshape(-1)
    lat, lon = grid.latitude[wy, wx].reshape(-1), grid.longitude[wy, wx].reshape(-1)
    h, z = grid.canopy_height[wy, wx].reshape(-1), grid.elevation[wy, wx].reshape(-1)
    sites = [Site(id=str(ids[k]), name=str(ids[k]), latitude=float(lat[k]),
                  longitude=float(lon[k]), elevation_m=float(z[k]), land_use=cls[k],
                  canopy_height_m=float(h[k]), wind_height_m=grid.wind_height,
                  sampler_height_m=grid.sampler_height, utc_offset_h=0.0)
             for k in range(len(ids)) if cls[k] is not None]
    return SiteCatalogue(sites)


def read_block(grid: Grid, ys: slice, xs: slice, catalogue: SiteCatalogue,
               with_reasons=False):
    """Met and air of the cells of `catalogue` inside one block, in the site layout.

    Returns
    -------
    met : xarray.Dataset
        (site, time) in SI units, implausible values set to NaN by the checks of the site
        reader (:func:`workbench.io.metchecks.run_row_checks`).
    air : xarray.Dataset
        Dim ``period`` as :func:`workbench.io.samples.read_air` returns it; a cell's
        interval with no species value is left out (as an empty row of the site file).
    flagged : ndarray of bool, (site, time)
        Met records with a plausibility flag (their implausible values masked).
    reasons : ndarray of object
        With `with_reasons`: the "; "-joined reasons of each record (site-major).
    """
    ids = cell_ids(ys, xs)
    keep = np.isin(ids, catalogue.ids)
    kept = ids[keep]
    n_t, n_c = len(grid.times), len(kept)

    def convert(name, v):                                # (time, cell) -> (cell, time)
        v = v[:, keep].T.reshape(-1).astype(float)
        return _convert_met(v, grid.met_units[name], name, MET_VARIABLES[name][0],
                            grid.paths["met"])
    values = {n: np.asarray(v, float) for n, v in
              _block_values(grid, "met", grid.met_units, ys, xs, convert).items()}
    flagged, reasons = _check_cells(values, kept, n_t, grid, catalogue, with_reasons)
    dvars = {}
    for name, v in values.items():
        unit, _, long_name = MET_VARIABLES[name]
        dvars[name] = (("site", "time"), v.reshape(n_c, n_t),
                       {"units": _UNIT_TEXT.get(unit, unit), "long_name": long_name})
    met = xr.Dataset(dvars, coords={"site": kept.tolist(), "time": grid.times})
    met["time"].attrs["long_name"] = "end of the hour (UTC)"
    if with_reasons:
        return met, _air_block(grid, ys, xs, keep, kept), flagged, reasons
    return met, _air_block(grid, ys, xs, keep, kept), flagged


def _check_cells(values, kept, n_t, grid, catalogue, with_reasons):
    """The site reader's row checks on a block's met, :func:`check_cells` cells at a
    time; the checked values are written back into `values` (flat, cell-major).

    Every check looks at one row or at one site's rows, so whole cells checked apart
    give the same values and reasons as all at once; only one slice's temporaries (the
    checks' per-row copies, groupings and text) are held, not the block's.

    Returns
    -------
    flagged : ndarray of bool, (cell, time)
    reasons : ndarray of object or None
        With `with_reasons`: the "; "-joined reasons of each record (cell-major).
    """
    n_c = len(kept)
    flagged = np.zeros((n_c, n_t), bool)
    texts = []
    step = check_cells(n_t)
    for k in range(0, n_c, step):
        m = min(step, n_c - k)
        rows = slice(k * n_t, (k + m) * n_t)
        sites = np.repeat(kept[k:k + m].astype(object), n_t)
        t = np.tile(grid.times, m)
        got, checked = metchecks.run_row_checks({n: v[rows] for n, v in values.items()},
                                                sites, t, catalogue, grid.met_units)
        for name, v in checked.items():
            values[name][rows] = v
        got = np.asarray(got, object)
        flagged[k:k + m] = (got != "").reshape(m, n_t)        # no text array
        if with_reasons:
            texts.append(got)
    if not with_reasons:
        return flagged, None
    return flagged, (np.concatenate(texts) if texts else np.array([], object))


def check_cells(n_hours: int) -> int:
    """Cells whose met records are checked at once [-]: about :data:`CHECK_CELL_HOURS`
    records, at least one cell.

    >>> check_cells(2208), check_cells(8760), check_cells(87600)
    (59, 14, 1)
    """
    return max(1, CHECK_CELL_HOURS // max(int(n_hours), 1))


def _block_values(grid, role, names, ys, xs, then) -> dict:
    """name -> ``then(name, values (time, cell))`` for the variables of a block, one at
    a time: from the block-major scratch copy (:mod:`workbench.grid_scratch`) where it
    holds them, else read from the input."""
    copy = grid.scratch.get(role)
    direct = [n for n in names if copy is None or not copy.has(n, ys, xs)]
    # the met's steps repeated in every variable are dropped (workbench.grid_repeats)
    keep = grid.met_keep if role == "met" else None
    out = {n: then(n, copy.values(n, ys, xs) if keep is None else copy.values(n, ys, xs)[keep])
           for n in names if n not in direct}
    for name in direct:
        # the file opened anew for each variable (as the scratch copy does): one open
        # NetCDF4 file kept the HDF5 chunk cache of every variable read through it, so
        # a block read from chunks of the whole plane held one cache per variable; a
        # zarr store opened with that variable alone: its 1-D coordinates (time,
        # time_bnds, y, x) are not read again for each block and variable (the block is
        # cut by position), nor its metadata (those read when the grid was opened)
        with _open(grid.paths[role], role, only=name,
                   metadata=grid.zarr_metadata.get(role)) as raw:
            var = raw[name].isel({grid.dims[0]: ys, grid.dims[1]: xs})
            extra = [d for d in var.dims if d != "time" and d not in grid.dims]
            var = var.squeeze(extra, drop=True).transpose("time", *grid.dims)
            if keep is not None:
                var = var.isel(time=keep)
            v = read_values(var, grid.paths[role], name)
        out[name] = then(name, v.reshape(v.shape[0], -1))
        del v
    return {n: out[n] for n in names}


def _air_block(grid, ys, xs, keep, kept):
    n_p, n_c = len(grid.air_start), len(kept)
    ref = parse_reference_state(grid.reference_state) if grid.reference_state else None

    def convert(sp, v):                                  # (period, cell) -> (cell, period)
        amount, kind = to_amount(v[:, keep].T.reshape(-1).astype(float), grid.air_units[sp], sp)
        if kind == "amount_density" and ref is not None:
            amount, kind = amount * GAS_CONSTANT * ref[0] / ref[1], "mixing_ratio"
        return np.asarray(amount, float), kind
    conc = _block_values(grid, "air", grid.air_units, ys, xs, convert)
    has = np.zeros(n_c * n_p, bool)
    for v, _ in conc.values():
        has |= np.isfinite(v)
    site = np.repeat(kept.astype(str), n_p)[has]
    dvars = {"site": ("period", site),
             "start": ("period", np.tile(grid.air_start, n_c)[has]),
             "end": ("period", np.tile(grid.air_end, n_c)[has]),
             "line": ("period", (np.flatnonzero(has) % n_p) + 1),
             "sampler_id": ("period", np.full(int(has.sum()), "grid", object).astype(str))}
    for sp, (v, kind) in conc.items():
        unit = "mol m-3" if kind == "amount_density" else "mol mol-1"
        dvars[sp] = ("period", v[has], {
            "units": unit, "quantity": kind, "long_name": _species.get(sp).long_name,
            "reference_state": "ambient" if kind == "amount_density" else
            ("mixing ratio" if ref is None else f"converted from {grid.reference_state}")})
        dvars[f"{sp}_censored"] = ("period", np.zeros(int(has.sum()), bool))
        dvars[f"{sp}_detection_limit"] = ("period", np.full(int(has.sum()), np.nan),
                                          {"units": unit})
    return xr.Dataset(dvars, attrs={"source_file": str(grid.paths["air"]),
                                    "reference_state": str(grid.reference_state or "none needed")})
