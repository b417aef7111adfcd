"""How hourly met is read from a zarr store (:func:`workbench.io.met.read_met_zarr`),
held to the rules of the NetCDF met (docs/data_formats.md, section 4).

The layout, units and checks are those of :func:`workbench.io.met._read_met_netcdf`
(dims ``site`` and ``time``, a ``site`` coordinate of catalogue ids, a decoded CF time,
a ``units`` attribute on every variable); the values are read a group of whole sites at
a time into the on-disk store of :mod:`workbench.io.metstore`, so no step holds the met
of every site.

A zarr store is read by chunks, and the chunks are the user's: how the groups are read
depends on them (:func:`plan`).

- Chunks of at most a group's sites (``{"site": 10, "time": -1}``, or one site and a
  month): the groups are whole numbers of site chunks and each chunk is read once.
- Chunks of more sites than a group (chunked along time only, ``{"time": 720}``, or
  one chunk per variable): reading by groups of sites would decompress every chunk once
  per group.  The values are first copied chunk by chunk (each chunk read once, one
  chunk in memory) into a site-major scratch file, and the groups are read from there;
  a note says so and how to write the store for a direct read.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import xarray as xr
from xarray.core import indexing

from .metstore import StoreArray
from .zarrstore import LARGE_CHUNK_BYTES, chunk_sizes



def _chunks(var, n_s, n_t):
    """(sites, hours) of one chunk of a (site, time) variable of the store."""
    pref = chunk_sizes(var)
    return int(pref.get("site", n_s)) or n_s, int(pref.get("time", n_t)) or n_t


def plan(raw, names, n_s, n_t, group_records):
    """How to read the variables `names` of a store: sites per group and the notes.

    Parameters
    ----------
    raw : xarray.Dataset
        The store, opened lazily.
    names : list of str
    n_s, n_t : int
        Sites and hours of the store.
    group_records : int
        Records read at most per group (the NetCDF reader's group).

    Returns
    -------
    step : int or None
        Sites per group for a direct read (a multiple of the largest site chunk), or
        None when the values go through the scratch copy first.
    chunks : dict of str to (int, int)
        Each variable's chunk (sites, hours).
    notes : list of str
    """
    chunks = {name: _chunks(raw[name], n_s, n_t) for name in names}
    group = max(1, group_records // max(n_t, 1))
    biggest = max(c[0] for c in chunks.values())
    notes = []
    for name, (cs, ct) in chunks.items():
        nbytes = cs * ct * raw[name].dtype.itemsize
        if nbytes > LARGE_CHUNK_BYTES:
            notes.append(f"{name}: one chunk holds {cs} sites x {ct} hours "
                         f"({nbytes / 2**20:.0f} MB), read whole each time (write smaller "
                         "chunks, e.g. 10 sites x all hours, to read with less memory)")
    if biggest <= group:
        return (group // biggest) * biggest, chunks, notes
    odd = ", ".join(f"{k} {cs} sites x {ct} hours" for k, (cs, ct) in chunks.items()
                    if cs > group)
    notes.append(f"chunks of more sites than a group of {group} ({odd}): copied chunk by "
                 "chunk to a site-major scratch file before the checks (chunks of whole "
                 "sites, e.g. {'site': 10, 'time': -1}, are read without the copy)")
    return None, chunks, notes


def site_major_copy(raw, names, chunks, folder, read):
    """The variables `names` copied chunk by chunk into (site, time) ``.npy`` files in
    `folder`, as a lazily indexed Dataset with the store's coordinates and attributes;
    ``read(var, name)`` gives a piece's values (or the located error)."""
    n_s, n_t = raw.sizes["site"], raw.sizes["time"]
    dvars = {}
    for name in names:
        file = Path(folder) / f"{name}.npy"
        m = np.lib.format.open_memmap(file, mode="w+", dtype=np.float64, shape=(n_s, n_t))
        del m
        var = raw[name].transpose("site", "time")
        cs, ct = chunks[name]
        for s0 in range(0, n_s, cs):
            for t0 in range(0, n_t, ct):
                block = read(var.isel(site=slice(s0, s0 + cs), time=slice(t0, t0 + ct)),
                             name)
                m = np.load(file, mmap_mode="r+")
                m[s0:s0 + cs, t0:t0 + ct] = block
                del m, block                    # unmapped: written back by the kernel
        arr = indexing.LazilyIndexedArray(StoreArray(file, (n_s, n_t), np.float64))
        dvars[name] = xr.Variable(("site", "time"), arr, dict(raw[name].attrs))
    return xr.Dataset(dvars, coords={"site": raw["site"].variable, "time": raw["time"].variable},
                      attrs=dict(raw.attrs))
