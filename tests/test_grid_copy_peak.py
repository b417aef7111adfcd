"""The block-major scratch copy in the main process (`workbench grid` without
`--workers`/`--scheduler`) holds what reading one time chunk through the file's library
holds, and nothing more (docs/performance.md, "The scratch copy in process: the
library's two buffers").

Reading a time chunk of the whole plane through the public reading paths allocates two
chunk-sized arrays, traced by tracemalloc: netCDF4-python's ``Variable.__getitem__``
makes an empty array of the read's shape and then replaces it by the array its ``_get``
fills (netCDF4 1.7, ``_netCDF4.pyx``), and zarr decodes a chunk into a buffer of its own
and copies it into the output (measured: 56 MiB for a 28 MiB chunk either way, the bare
library read alone).  So the copy's traced peak is two chunks at the least; this test
holds it under two and a half, so that a further whole-chunk copy in the copy itself (a
conversion, a transposed or contiguous copy of the piece read) fails here.  Input: the
invented demo grid of 48 x 48 cells (a month), its met NetCDF4 in one zlib chunk a
variable (6.9 MB, float32).
"""
from __future__ import annotations

import tracemalloc

import pytest
import xarray as xr

from workbench.grid import staged
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import open_grid

pytest.importorskip("netCDF4", reason="NetCDF4 files need the netcdf4 extra")


def test_copy_in_process_holds_the_librarys_read_only(tmp_path):
    make_demo_grid(tmp_path, n=48)
    with xr.open_dataset(tmp_path / "met.nc") as ds:
        ds = ds.load()
    enc = {v: {"zlib": True, "complevel": 1, "chunksizes": ds[v].shape}
           for v in ds.data_vars if ds[v].ndim == 3 and ds[v].dims[0] == "time"}
    ds.to_netcdf(tmp_path / "met4.nc", engine="netcdf4", format="NETCDF4", encoding=enc)
    chunk = max(ds[v].nbytes for v in enc)
    assert chunk > 6e6
    grid = open_grid(tmp_path / "met4.nc", tmp_path / "air.nc", tmp_path / "land_use.nc")
    with staged(grid, 12):                    # warm: the imports of the reading paths
        pass
    tracemalloc.start()
    try:
        with staged(grid, 12) as g:
            assert set(g.scratch) == {"met"}
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 2.5 * chunk, (peak / 2**20, chunk / 2**20)
