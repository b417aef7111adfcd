"""``workbench grid`` on gridded inputs chunked along time (the usual layout of model
output) or along y/x: wall time, CPU time, peak memory and the chunks decompressed.

    python benchmarks/grid_chunks.py --make DIR --n 60 --months 12   # inputs, once
    python benchmarks/grid_chunks.py --run DIR --layout zarr_day --block 32
    python benchmarks/grid_chunks.py --run DIR --layout nc4_month --read-only

``--make`` writes the invented demo grid (:func:`workbench.grid_demo.make_demo_grid`,
N x N cells, M months of hourly met, float32) as NetCDF3 in ``DIR/nc3`` and copies it
into layouts chunked along time only, each chunk covering the whole y/x plane:

- ``zarr_day`` / ``zarr_month``: zarr stores, chunks of 24 / 720 hours (``{"time": 24}``);
- ``nc4_day`` / ``nc4_month``: NetCDF4 (HDF5, zlib level 1), ``chunksizes`` (24 / 720, ny, nx);
- ``nc3``: the NetCDF3 files (no chunks; read in place);
- ``zarr_yx`` / ``nc4_yx``: the other way, chunked along ``y`` and ``x`` only, tiles of
  all hours x ``TILE`` x ``TILE`` cells (10: the default block of a year of hours, so
  each block reads its own tiles in place and nothing is copied).

``--layouts`` after ``--make`` writes only the layouts named (the NetCDF3 files always).

The air files get the same chunks along their sampling intervals (7 intervals a chunk
for "day", 5 for "month": weekly sampling).

``--run`` runs ``workbench grid`` on one layout in a fresh Python process (the code on
``PYTHONPATH``: run it once with the main branch and once with the new code for a
before/after pair), which prints its wall time (imports excluded), its CPU time (user +
system of the process), its own peak resident memory (``VmHWM`` of /proc, Linux) and the
chunks decompressed: for a zarr store the chunk keys read from the store (counted by
wrapping the store, as tests/test_grid_zarr.py does) and the metadata documents read
(``zarr_metadata_reads``: through the store and by the store's checks); for NetCDF4 the chunks that the
reads of the variables touch (counted by wrapping :func:`xarray.Variable` indexing of
the backend: one read of a time range touches every chunk of that range, and HDF5's
chunk cache of a few MB cannot hold a variable's chunks between two blocks).
``--read-only`` times the reading alone (:func:`workbench.grid_io.read_block` of every
block, after the scratch copy when the code makes one), without the engine.  One run per
call: timings of a loaded machine are only indicative; nothing is asserted.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
LAYOUTS = {"zarr_day": ("zarr", 24, 7), "zarr_month": ("zarr", 720, 5),
           "nc4_day": ("nc4", 24, 7), "nc4_month": ("nc4", 720, 5), "nc3": ("nc3", 0, 0),
           "zarr_yx": ("zarr", "yx", "yx"), "nc4_yx": ("nc4", "yx", "yx")}
TILE = 10       # cells a side of a y/x tile (the default block of a year of hours)
ROLES = ("met", "air", "land_use")


def make(folder: Path, n: int, months: int, layouts=None):
    """The NetCDF3 demo grid and its copies chunked along time or y/x (module text)."""
    import xarray as xr
    from workbench.grid_demo import make_demo_grid
    sc = make_demo_grid(folder / "nc3", n=n, months=months)
    for layout, (kind, ct, ca) in LAYOUTS.items():
        if kind == "nc3" or (layouts and layout not in layouts):
            continue
        out = folder / layout
        out.mkdir(parents=True, exist_ok=True)
        for role in ROLES:
            with xr.open_dataset(folder / "nc3" / f"{role}.nc") as ds:
                ds = ds.load()
            step = ct if role == "met" else ca
            if kind == "zarr":
                if step == "yx":
                    ds = ds.chunk({"y": TILE, "x": TILE})
                elif "time" in ds.dims:
                    ds = ds.chunk({"time": step})
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    ds.to_zarr(out / f"{role}.zarr", mode="w")
            else:
                enc = {}
                for v in ds.data_vars:
                    if ds[v].dims[:1] == ("time",) and ds[v].ndim == 3:
                        nt, ny, nx = ds[v].shape
                        enc[v] = {"zlib": True, "complevel": 1,
                                  "chunksizes": ((nt, min(TILE, ny), min(TILE, nx))
                                                 if step == "yx" else
                                                 (min(step, nt), ny, nx))}
                ds.to_netcdf(out / f"{role}.nc", engine="netcdf4", format="NETCDF4",
                             encoding=enc)
        ext = ".zarr" if kind == "zarr" else ".nc"
        text = sc.read_text()
        for role in ROLES:
            text = text.replace(f'"{role}.nc"', f'"{role}{ext}"')
        (out / "scenario.toml").write_text(text)
    (folder / "nc3" / "scenario.toml").write_text(sc.read_text())
    print(json.dumps({"made": str(folder), "n": n, "months": months}))


class _ChunkCount:
    """Counts the chunks decompressed: zarr keys read, or NetCDF4 chunks touched."""

    def __init__(self):
        self.zarr_keys = []
        self.nc_chunks = 0

    def install(self):
        import numpy as np
        import workbench.io.zarrstore as zarrstore
        keys = self.zarr_keys
        real = zarrstore._zarr_store

        def store(path, files):
            if files.zipped:
                return real(path, files)
            from zarr.storage import LocalStore

            class Store(LocalStore):
                async def get(self, key, prototype=None, byte_range=None):
                    keys.append(key)
                    return await super().get(key, prototype, byte_range)
            return Store(str(path), read_only=True)
        zarrstore._zarr_store = store
        # the metadata documents read by the store's own reader (workbench.io.zarrstore
        # ._Files: the store's checks and, since 2026-12-05, every document, once)
        docs = self.files_docs = []
        name = "read_bytes" if hasattr(zarrstore._Files, "read_bytes") else "read_json"
        read = getattr(zarrstore._Files, name)

        def spy_docs(files, doc):
            docs.append(doc)
            return read(files, doc)
        setattr(zarrstore._Files, name, spy_docs)
        from xarray.backends import netCDF4_ as nc4
        me = self
        getitem = nc4.NetCDF4ArrayWrapper._getitem

        def spy(wrapper, key):
            var = wrapper.get_array()
            chunking = var.chunking()
            if var.ndim == 3 and isinstance(chunking, list):    # not NetCDF3, contiguous
                n = 1
                for k, c, size in zip(key, chunking, var.shape):
                    idx = np.arange(size)[k]
                    n *= len(np.unique(np.asarray(idx) // c)) if np.size(idx) else 0
                me.nc_chunks += n
            return getitem(wrapper, key)
        nc4.NetCDF4ArrayWrapper._getitem = spy

    def data_keys(self):
        return [k for k in self.zarr_keys if "/c/" in k or "/c." in k]

    def metadata_reads(self) -> int:
        """Metadata documents read (zarr.json, .zarray, .zattrs, .zgroup, .zmetadata),
        through the store or by the store's checks."""
        names = ("zarr.json", ".zarray", ".zattrs", ".zgroup", ".zmetadata")
        return sum(k.rsplit("/", 1)[-1] in names for k in self.zarr_keys) + \
            len(self.files_docs)

    def by_array(self):
        """Chunk keys read per array of the stores: [reads, distinct chunks]."""
        out = {}
        for k in self.data_keys():
            name = k.split("/c")[0]
            got = out.setdefault(name, [0, set()])
            got[0] += 1
            got[1].add(k)
        return {n: [r, len(d)] for n, (r, d) in sorted(out.items())}


def _hwm_mb() -> float:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024
    return float("nan")


def child(folder: Path, layout: str, block: int, read_only: bool, out: Path):
    """One measured run (in this fresh process); `block` 0: the command's default."""
    block = block or None           # workbench.grid.default_block of the record
    import workbench
    counter = _ChunkCount()
    counter.install()
    sc = folder / layout / "scenario.toml"
    t0, c0 = time.perf_counter(), time.process_time()
    if read_only:
        from workbench import grid as g
        from workbench.grid_io import block_catalogue, open_grid, read_block
        paths = {r: next((folder / layout).glob(f"{r}.*")) for r in ROLES}
        grid = open_grid(paths["met"], paths["air"], paths["land_use"])
        block = block or g.default_block(len(grid.times))
        stage = getattr(g, "staged", None)
        import contextlib
        ctx = stage(grid, block) if stage else contextlib.nullcontext(grid)
        with ctx as grid:
            for row in g.blocks(grid.shape, block):
                for ys, xs in row:
                    read_block(grid, ys, xs, block_catalogue(grid, ys, xs))
    else:
        from workbench.grid_output import run_grid
        run_grid(sc, out, overwrite=True, quiet=True, block=block, use_dask=False)
    wall, cpu = time.perf_counter() - t0, time.process_time() - c0
    print(json.dumps({"layout": layout, "block": block, "read_only": read_only,
                      "wall_s": round(wall, 2), "cpu_s": round(cpu, 2),
                      "peak_mb": round(_hwm_mb(), 1),
                      "zarr_chunks_read": len(counter.data_keys()),
                      "zarr_chunks_distinct": len(set(counter.data_keys())),
                      "zarr_chunks_by_array": counter.by_array(),
                      "zarr_metadata_reads": counter.metadata_reads(),
                      "nc4_chunks_read": counter.nc_chunks,
                      "code": str(Path(workbench.__file__).parents[1]),
                      "load": os.getloadavg()[0]}))


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--make", type=Path)
    p.add_argument("--n", type=int, default=60)
    p.add_argument("--months", type=int, default=12)
    p.add_argument("--run", type=Path)
    p.add_argument("--layout", choices=list(LAYOUTS), default="zarr_day")
    p.add_argument("--layouts", nargs="+", choices=list(LAYOUTS),
                   help="with --make: write only these layouts (and the NetCDF3 files)")
    p.add_argument("--block", type=int, default=0,
                   help="cells per block side (0: the command's default, sized by the hours)")
    p.add_argument("--read-only", action="store_true")
    p.add_argument("--tag", default="run", help="the run folder is DIR/out_LAYOUT_TAG")
    p.add_argument("--child", action="store_true", help=argparse.SUPPRESS)
    a = p.parse_args(argv)
    if a.make:
        make(a.make, a.n, a.months, a.layouts)
    if a.run and a.child:
        child(a.run, a.layout, a.block, a.read_only, a.run / f"out_{a.layout}_{a.tag}")
    elif a.run:
        cmd = [sys.executable, __file__, "--run", str(a.run), "--layout", a.layout,
               "--block", str(a.block), "--tag", a.tag, "--child"] + (["--read-only"] if a.read_only else [])
        r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
        subprocess.run(cmd, check=True)
        r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
        print(json.dumps({"child_cpu_s": round(r1.ru_utime + r1.ru_stime - r0.ru_utime
                                               - r0.ru_stime, 2)}))
    return 0


if __name__ == "__main__":
    sys.exit(main())
