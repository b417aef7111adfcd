"""Grid inputs chunked along y and x (all time steps of a tile of cells a chunk) are read
lazily, block by block: each block reads the chunks of its own cells, never the whole
plane, and nothing is copied (workbench.grid_scratch.plan).

The invented demo grid of 8 x 8 cells (a month) written with chunks of all hours x
4 x 4 cells, as a zarr store and as NetCDF4 (zlib): with blocks of 4 x 4 cells (the
blocks follow the chunks) every chunk of every hourly variable is read once, by the
block that holds it (counted as tests/test_grid_chunks.py counts: the zarr chunk keys
read from the store, the NetCDF4 chunks that each read touches, and the cells of each
read); the maps are those of the NetCDF3 grid, bit for bit.
"""
from __future__ import annotations

import importlib.util
import warnings
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import workbench.io.zarrstore as zarrstore
from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.grid import compute_grid, make_periods, staged
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import open_grid

ROLES = ("met", "air", "land_use")
N, TILE = 8, 4


def _write(src: Path, target: Path, kind: str) -> Path:
    target.mkdir(parents=True, exist_ok=True)
    for role in ROLES:
        with xr.open_dataset(src / f"{role}.nc") as ds:
            ds = ds.load()
        if kind == "zarr":
            if "time" in ds.dims:
                ds = ds.chunk({"time": -1, "y": TILE, "x": TILE})
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                ds.to_zarr(target / f"{role}.zarr", mode="w")
        else:
            enc = {v: {"zlib": True, "complevel": 1,
                       "chunksizes": (ds[v].shape[0], TILE, TILE)}
                   for v in ds.data_vars if ds[v].ndim == 3 and ds[v].dims[0] == "time"}
            ds.to_netcdf(target / f"{role}.nc", engine="netcdf4", format="NETCDF4",
                         encoding=enc)
    return target


@pytest.fixture(scope="module")
def folders(tmp_path_factory):
    base = tmp_path_factory.mktemp("yx")
    make_demo_grid(base / "nc3", n=N)
    # the maps of the NetCDF3 grid (no chunks: every block reads its cells in place)
    out = {"nc3": base / "nc3", "ref": _maps(_open(base / "nc3"), TILE)}
    if importlib.util.find_spec("zarr") is not None:
        out["zarr"] = _write(base / "nc3", base / "zarr", "zarr")
    if importlib.util.find_spec("netCDF4") is not None:
        out["nc4"] = _write(base / "nc3", base / "nc4", "nc4")
    return out


def _open(folder: Path):
    ext = "zarr" if (folder / "met.zarr").exists() else "nc"
    return open_grid(*(folder / f"{r}.{ext}" for r in ROLES))


def _maps(grid, block):
    _, arr = compute_grid(grid, DryOptions(), BudgetOptions(), make_periods(grid), block=block)
    return arr


def test_zarr_tiles_read_once_each_by_its_block(folders, monkeypatch, block=TILE):
    if "zarr" not in folders:
        pytest.skip("zarr stores need the zarr extra")
    keys = []

    def store(path, files):
        from zarr.storage import LocalStore

        class Store(LocalStore):
            async def get(self, key, prototype=None, byte_range=None):
                keys.append(key)
                return await super().get(key, prototype, byte_range)
        return Store(str(path), read_only=True)
    monkeypatch.setattr(zarrstore, "_zarr_store", store)
    ref = folders["ref"]
    grid = _open(folders["zarr"])
    with staged(grid, block) as g:
        assert g.scratch == {}                          # nothing copied
    names = set(grid.met_units) | set(grid.air_units)
    del keys[:]
    got = _maps(grid, block)
    data = [k for k in keys if k.split("/")[0] in names and "/c/" in k]
    # every tile of every variable, once: (N / TILE)^2 tiles a variable
    assert len(data) == len(set(data)) == len(names) * (N // TILE) ** 2
    np.testing.assert_array_equal(got, ref)


def test_zarr_coordinates_not_read_again_for_each_block(folders, monkeypatch):
    # each block opened the store once for each variable and read its 1-D time,
    # time_bnds, y and x chunks every time (2026-12-05: 434 coordinate chunk reads
    # against 60 data chunk reads for the 4 blocks of this grid); now a block opens
    # the variable alone and cuts it by position: the coordinate reads of a run do
    # not grow with its blocks, and the maps are those of the NetCDF3 grid (blocks of
    # TILE; other blocks sum some cells in another order: the last bits differ)
    if "zarr" not in folders:
        pytest.skip("zarr stores need the zarr extra")
    keys = []

    def store(path, files):
        from zarr.storage import LocalStore

        class Store(LocalStore):
            async def get(self, key, prototype=None, byte_range=None):
                keys.append(key)
                return await super().get(key, prototype, byte_range)
        return Store(str(path), read_only=True)
    monkeypatch.setattr(zarrstore, "_zarr_store", store)
    grid = _open(folders["zarr"])
    names = set(grid.met_units) | set(grid.air_units)
    coords = {}
    for block in (TILE, TILE // 2):                        # 4 blocks, then 16
        del keys[:]
        got = _maps(grid, block)
        coords[block] = [k for k in keys if "/c/" in k and k.split("/")[0] not in names]
        if block == TILE:
            np.testing.assert_array_equal(got, folders["ref"])
    assert coords[TILE] and len(coords[TILE // 2]) == len(coords[TILE]), coords


#: Names of a zarr store's metadata documents (formats 3 and 2).
METADATA = ("zarr.json", ".zarray", ".zattrs", ".zgroup", ".zmetadata")


def test_zarr_metadata_read_once_in_a_run(folders, monkeypatch):
    # every open of a store (a block's variable, as above) read the metadata document
    # of each array of the store again (2026-12-05: 1,273 metadata reads for the 4
    # blocks of this grid, 4,969 for its 16 blocks), and opening the grid read each
    # document twice (xarray's open and the check of the consolidated metadata); now
    # each document is read once when the grid is opened and carried with the grid:
    # the blocks read chunks only, at any block size, and the maps are the same bits
    if "zarr" not in folders:
        pytest.skip("zarr stores need the zarr extra")
    read = []
    real = Path.read_bytes

    def spy(path):          # every whole-file read: zarr's own store and the checks
        if path.name in METADATA:
            read.append(str(path))
        return real(path)
    monkeypatch.setattr(Path, "read_bytes", spy)
    grid = _open(folders["zarr"])
    assert read, "no metadata document read: the count does not see the reads"
    twice = sorted({p for p in read if read.count(p) > 1})
    assert not twice, (f"{len(twice)} documents read more than once when the grid was "
                       f"opened, e.g. {twice[:2]}")
    for block in (TILE, TILE // 2):                        # 4 blocks, then 16
        del read[:]
        got = _maps(grid, block)
        assert read == [], (block, len(read), sorted(set(read))[:5])
        if block == TILE:
            np.testing.assert_array_equal(got, folders["ref"])


def test_netcdf4_tiles_read_by_their_block_only(folders, monkeypatch, block=TILE):
    if "nc4" not in folders:
        pytest.skip("NetCDF4 files need the netcdf4 extra")
    from xarray.backends import netCDF4_ as nc4
    touched, cells = [], []
    real = nc4.NetCDF4ArrayWrapper._getitem

    def spy(wrapper, key):
        var = wrapper.get_array()
        if var.ndim == 3 and isinstance(var.chunking(), list):
            idx = [np.atleast_1d(np.arange(n)[k]) for k, n in zip(key, var.shape)]
            cells.append(len(idx[1]) * len(idx[2]))
            for j in np.unique(idx[1] // TILE):
                for i in np.unique(idx[2] // TILE):
                    touched.append((var.name, int(j), int(i)))
        return real(wrapper, key)
    monkeypatch.setattr(nc4.NetCDF4ArrayWrapper, "_getitem", spy)
    ref = folders["ref"]
    grid = _open(folders["nc4"])
    del touched[:], cells[:]
    got = _maps(grid, block)
    n_vars = len(grid.met_units) + len(grid.air_units)
    assert len(touched) == len(set(touched)) == n_vars * (N // TILE) ** 2
    assert max(cells) == block * block < N * N          # a block's cells, never the plane
    np.testing.assert_array_equal(got, ref)
