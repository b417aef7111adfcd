"""Gridded inputs chunked along time only (workbench.grid_scratch): each chunk read once.

The reference is the direct read of the NetCDF3 demo grid (no chunks: every block reads
its cells in place), whose maps are those of the site engine (tests/test_grid.py).  The
same grid written chunked along time (a zarr store with a chunk a day, NetCDF4 with a
chunk a day) and cut into several blocks must give identical maps, bit for bit, while
each chunk is decompressed once: counted for zarr by the chunk keys read from the store
(as tests/io/test_metzarr.py does) and for NetCDF4 by the chunks that the reads of the
variables touch.  Flat memory is shown by the peak of traced allocations, which grows
with the grid by much less than the added input values (as the met zarr tests do).
"""
from __future__ import annotations

import errno
import json
import importlib.util
import re
import tracemalloc
import warnings
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import workbench.grid_scratch as grid_scratch
import workbench.io.zarrstore as zarrstore
from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.grid import compute_grid, make_periods, staged
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import GridError, open_grid
from workbench.grid_output import run_grid
from workbench.runfolder import OutputError

zarr = pytest.importorskip("zarr", reason="zarr stores need the zarr extra: "
                           'python -m pip install "deposition-workbench[zarr]"')

ROLES = ("met", "air", "land_use")
#: Hours of a met chunk and sampling intervals of an air chunk ("a day" of model output).
MET_CHUNK, AIR_CHUNK = 24, 2


def _copy(folder: Path, target: Path, kind: str) -> Path:
    """The grid of `folder` (NetCDF3) chunked along time only, as zarr or NetCDF4;
    returns the new scenario."""
    target.mkdir(parents=True, exist_ok=True)
    text = (folder / "scenario.toml").read_text()
    for role in ROLES:
        with xr.open_dataset(folder / f"{role}.nc") as ds:
            ds = ds.load()
        step = MET_CHUNK if role == "met" else AIR_CHUNK
        if kind == "zarr":
            name = f"{role}.zarr"
            if "time" in ds.dims:
                ds = ds.chunk({"time": step})
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")          # zarr's note on text attributes
                ds.to_zarr(target / name, mode="w")
        else:
            name = f"{role}4.nc"
            enc = {v: {"zlib": True, "complevel": 1,
                       "chunksizes": (step,) + ds[v].shape[1:]}
                   for v in ds.data_vars if ds[v].ndim == 3 and ds[v].dims[0] == "time"}
            ds.to_netcdf(target / name, engine="netcdf4", format="NETCDF4", encoding=enc)
        text = text.replace(f'"{role}.nc"', f'"{name}"')
    (target / "scenario.toml").write_text(text)
    return target / "scenario.toml"


@pytest.fixture(scope="module")
def grids(tmp_path_factory):
    """The demo grid (6 x 6 cells, a month) as NetCDF3, zarr and NetCDF4."""
    base = tmp_path_factory.mktemp("grid_chunks")
    sc = make_demo_grid(base / "nc3", n=6)
    out = {"nc3": sc, "zarr": _copy(base / "nc3", base / "zarr", "zarr")}
    if importlib.util.find_spec("netCDF4") is not None:     # the netcdf4 extra
        out["nc4"] = _copy(base / "nc3", base / "nc4", "nc4")
    return out


def _open(sc: Path):
    """The checked grid of a scenario folder made here (NetCDF3, zarr or NetCDF4)."""
    d = sc.parent
    form = "{}.zarr" if (d / "met.zarr").exists() else \
        "{}4.nc" if (d / "met4.nc").exists() else "{}.nc"
    return open_grid(*(d / form.format(r) for r in ROLES))


def _compute(grid, block, use_dask=False):
    periods = make_periods(grid)
    names, arr = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=block,
                              use_dask=use_dask)
    return names, np.asarray(arr)


class _ZarrKeys:
    """Wraps the store of a folder and records every key read (tests/io/test_metzarr.py)."""

    def __init__(self, monkeypatch):
        self.keys = []
        keys = self.keys

        def store(path, files):
            from zarr.storage import LocalStore

            class Store(LocalStore):
                async def get(self, key, prototype=None, byte_range=None):
                    keys.append(key)
                    return await super().get(key, prototype, byte_range)
            return Store(str(path), read_only=True)
        monkeypatch.setattr(zarrstore, "_zarr_store", store)

    def data(self, names):
        """Chunk keys of the variables `names`."""
        return [k for k in self.keys if k.split("/")[0] in names and "/c/" in k]


def _n_chunks(n, step):
    return -(-n // step)


def test_time_chunked_zarr_read_once_and_same_maps(grids, monkeypatch):
    ref_names, ref = _compute(_open(grids["nc3"]), block=2)
    counter = _ZarrKeys(monkeypatch)
    grid = _open(grids["zarr"])
    names = list(grid.met_units) + list(grid.air_units)
    expected = len(grid.met_units) * _n_chunks(len(grid.times), MET_CHUNK) + \
        len(grid.air_units) * _n_chunks(len(grid.air_start), AIR_CHUNK)
    # read directly (dask tasks of an unstaged grid): every chunk once per block (9)
    del counter.keys[:]
    _, direct = _compute(grid, block=2, use_dask=True)
    assert len(counter.data(names)) == 9 * expected
    # the staged copy: every chunk once, and the same maps bit for bit
    del counter.keys[:]
    got_names, got = _compute(grid, block=2)
    data = counter.data(names)
    assert len(data) == len(set(data)) == expected, "a chunk was read twice or not at all"
    assert got_names == ref_names
    np.testing.assert_array_equal(got, ref)
    np.testing.assert_array_equal(direct, ref)
    assert np.isfinite(ref).sum() > 0.5 * ref.size


def test_time_chunked_netcdf4_read_once_and_same_maps(grids, monkeypatch):
    pytest.importorskip("netCDF4", reason='NetCDF4 files need the netcdf4 extra: '
                        'python -m pip install "deposition-workbench[netcdf4]"')
    from xarray.backends import netCDF4_ as nc4
    touched = []
    real = nc4.NetCDF4ArrayWrapper._getitem

    def spy(wrapper, key):                   # the chunks that one read touches
        var = wrapper.get_array()
        if var.ndim == 3 and isinstance(var.chunking(), list):   # not NetCDF3, contiguous
            idx = [np.arange(n)[k] for k, n in zip(key, var.shape)]
            for t in np.unique(np.atleast_1d(idx[0]) // var.chunking()[0]):
                touched.append((var.name, int(t)))
        return real(wrapper, key)
    monkeypatch.setattr(nc4.NetCDF4ArrayWrapper, "_getitem", spy)
    _, ref = _compute(_open(grids["nc3"]), block=(2, 3))
    grid = _open(grids["nc4"])
    assert grid.paths["met"].suffix == ".nc" and "4" in grid.paths["met"].name
    del touched[:]
    _, got = _compute(grid, block=(2, 3))
    expected = len(grid.met_units) * _n_chunks(len(grid.times), MET_CHUNK) + \
        len(grid.air_units) * _n_chunks(len(grid.air_start), AIR_CHUNK)
    assert len(touched) == len(set(touched)) == expected
    np.testing.assert_array_equal(got, ref)


def test_cli_maps_identical_and_scratch_removed(grids, tmp_path):
    for kind in grids:
        run_grid(grids[kind], tmp_path / kind, quiet=True, block=4, use_dask=False)
    maps = {}
    for kind in grids:
        assert sorted(p.name for p in (tmp_path / kind).iterdir()) == \
            ["grid.nc", "provenance.json"]
        with xr.open_dataset(tmp_path / kind / "grid.nc", decode_times=False) as ds:
            maps[kind] = ds.load()
        for key in ("history", "workbench_options"):
            maps[kind].attrs.pop(key)
    for kind in grids:
        xr.testing.assert_identical(maps[kind], maps["nc3"])
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(grids)
    notes = (tmp_path / "zarr" / "provenance.json").read_text()
    assert "copied chunk by chunk (each read once) to a block-major scratch file" in notes


def test_whole_run_reads_each_chunk_once_flag_note_included(grids, tmp_path, monkeypatch):
    # `workbench grid` reads one cell again for the note on the met's plausibility
    # flags (grid_output.flag_notes); that cell, inside a block, comes from the scratch
    # copy: read from the store, all its hours decompressed every time chunk of every
    # met and air variable a second time (2026-12-05: 730 chunk reads of 365 a
    # variable on a 60 x 60 grid of a year)
    grid = _open(grids["zarr"])
    names = list(grid.met_units) + list(grid.air_units)
    expected = len(grid.met_units) * _n_chunks(len(grid.times), MET_CHUNK) + \
        len(grid.air_units) * _n_chunks(len(grid.air_start), AIR_CHUNK)
    counter = _ZarrKeys(monkeypatch)
    run_grid(grids["zarr"], tmp_path / "out", quiet=True, block=2, use_dask=False)
    data = counter.data(names)
    notes = json.loads((tmp_path / "out" / "provenance.json").read_text())
    assert "failed a plausibility check" in json.dumps(notes)     # the note was made
    assert len(data) == len(set(data)) == expected, "a chunk was read twice or not at all"


def test_cells_inside_a_block_read_from_the_copy(grids):
    # a cell inside a block of the copy (the flag note's cell) reads the same values
    # and reasons as the direct read, and a rectangle across two blocks is not served
    from workbench.grid_output import flag_reasons
    grid = _open(grids["zarr"])
    with staged(grid, 2) as g:
        copy = g.scratch["met"]
        assert copy.has("temperature", slice(1, 2), slice(4, 5))
        assert not copy.has("temperature", slice(1, 3), slice(4, 5))     # two blocks
        for j, i in ((0, 4), (1, 5), (2, 4), (3, 0)):
            assert flag_reasons(g, j, i) == flag_reasons(grid, j, i)
        got = flag_reasons(g, 1, 5)
        with xr.open_zarr(grid.paths["met"]) as raw:
            direct = raw["temperature"].isel(y=slice(0, 2), x=slice(4, 6)).values
        whole = copy.values("temperature", slice(0, 2), slice(4, 6))
        np.testing.assert_array_equal(whole, direct.reshape(direct.shape[0], -1))
        np.testing.assert_array_equal(copy.values("temperature", slice(1, 2), slice(5, 6)),
                                      direct[:, 1:2, 1:2].reshape(direct.shape[0], -1))
    assert got                                   # the demo grid's flagged cells


def test_dask_tasks_read_the_staged_copy(grids, monkeypatch):
    pytest.importorskip("dask")
    counter = _ZarrKeys(monkeypatch)
    _, ref = _compute(_open(grids["nc3"]), block=2)
    grid = _open(grids["zarr"])
    names = list(grid.met_units) + list(grid.air_units)
    del counter.keys[:]
    with staged(grid, 2) as g:
        _, lazy = compute_grid(g, DryOptions(), BudgetOptions(), make_periods(g), block=2,
                               use_dask=True)
        got = lazy.compute()
        folder = Path(next(iter(g.scratch.values())).folder)
        assert folder.is_dir()
    assert not folder.exists()
    data = counter.data(names)
    assert len(data) == len(set(data))
    np.testing.assert_array_equal(got, ref)


# ------------------------------------------------------------------ flat memory
def _traced_peaks(base: Path, n: int, block=8):
    """Peaks of traced allocations [byte] while an n x n demo grid chunked a day along
    time is copied (the scratch copy alone), and while it is copied and read block by
    block (the reading of a run); and the bytes of its largest hourly variable."""
    from workbench.grid import blocks
    from workbench.grid_io import block_catalogue, read_block
    sc = _copy(make_demo_grid(base / f"nc{n}", n=n).parent, base / f"z{n}", "zarr")
    grid = _open(sc)
    with xr.open_dataset(base / f"nc{n}" / "met.nc") as m, \
            xr.open_dataset(base / f"nc{n}" / "air.nc") as a:
        largest = max([m[v].nbytes for v in grid.met_units]
                      + [a[v].nbytes for v in grid.air_units])
    tracemalloc.start()
    try:
        with staged(grid, block) as g:
            assert set(g.scratch) == {"met", "air"}
            _, copying = tracemalloc.get_traced_memory()
            for row in blocks(g.shape, block):
                for ys, xs in row:
                    read_block(g, ys, xs, block_catalogue(g, ys, xs))
        _, reading = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    return copying, reading, largest


def test_peak_memory_follows_the_chunk_and_the_block_not_the_grid(tmp_path):
    """The copy holds one time chunk (a day of the plane), so its peak stays under half
    of ONE variable (a month of a 48 x 48 grid: 6.9 MB, float32; loading any variable
    whole would exceed it).  Reading blocks of 8 x 8 cells afterwards, a 48 x 48 grid
    peaks no higher than a 24 x 24 one but by half of what one variable adds."""
    copy_small, small, v_small = _traced_peaks(tmp_path, 24)
    copy_big, big, v_big = _traced_peaks(tmp_path, 48)
    assert copy_big < v_big / 2, (copy_big / 2**20, v_big / 2**20)
    assert big - small < (v_big - v_small) / 2, ((big - small) / 2**20,
                                                 (v_big - v_small) / 2**20)


# ------------------------------------------------------------------ mistakes, located
def _temp(monkeypatch, tmp_path) -> Path:
    """The system's temporary folder, moved to an empty folder to see what is left."""
    import tempfile
    tmp = tmp_path / "tmp"
    tmp.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(tmp))
    return tmp


def test_damaged_chunk_is_located_and_nothing_left(grids, tmp_path, monkeypatch):
    import shutil
    tmp = _temp(monkeypatch, tmp_path)
    src = grids["zarr"].parent
    shutil.copytree(src, tmp_path / "in")
    (tmp_path / "in" / "met.zarr" / "wind_speed" / "c" / "3" / "0" / "0").write_bytes(b"junk")
    with pytest.raises(GridError) as exc:
        run_grid(tmp_path / "in" / "scenario.toml", tmp_path / "out", quiet=True, block=2,
                 use_dask=False)
    store = tmp_path / "in" / "met.zarr"
    assert re.fullmatch(re.escape(f"{store}, column 'wind_speed': cannot read the values of "
                                  f"time steps 72-95 (") + r".+" +
                        re.escape("), expected values the format can decode (the file or "
                                  "store may be damaged or half-copied)"), str(exc.value))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["in", "tmp"]   # no run folder
    grid = _open(tmp_path / "in" / "scenario.toml")
    with pytest.raises(GridError, match="time steps 72-95"):
        _compute(grid, block=2)                          # scratch in the temporary folder
    assert list(tmp.iterdir()) == []
    with pytest.raises(GridError, match=re.escape("column 'wind_speed': cannot read the "
                                                  "values (")):
        _compute(grid, block=6)                          # one block: read directly


@pytest.mark.parametrize("where", ["reserve", "write"])
def test_full_disk_is_located_and_scratch_removed(grids, tmp_path, monkeypatch, where):
    tmp = _temp(monkeypatch, tmp_path)
    full = OSError(errno.ENOSPC, "No space left on device")
    calls = []

    def fail(*args):
        calls.append(args)
        if where == "reserve" or len(calls) > 3:
            raise full
        return real(*args)
    real = getattr(grid_scratch, f"_{'reserve' if where == 'reserve' else 'pwrite'}")
    monkeypatch.setattr(grid_scratch, f"_{'reserve' if where == 'reserve' else 'pwrite'}",
                        fail)
    grid = _open(grids["zarr"])
    with pytest.raises(OutputError) as exc:
        _compute(grid, block=2)
    text = str(exc.value)
    assert re.fullmatch(r"could not write the scratch copy " + re.escape(str(tmp)) +
                        r"/workbench-gridcopy-\w+/met\.\w+\.bin: No space left on device "
                        r"\[ENOSPC\]; the disk is full: free some space or choose --out on "
                        r"another disk \(the block-major copy of a time-chunked input, "
                        r"\d+ MB a variable; it is removed at the end\)", text), text
    assert list(tmp.iterdir()) == []


# ------------------------------------------------------------------ the plan
def _lazy(chunks, shape=(48, 8, 8)):
    ds = xr.Dataset({"v": (("time", "y", "x"), np.zeros(shape, "float32"))})
    if chunks is not None:
        ds["v"].encoding["preferred_chunks"] = dict(zip(("time", "y", "x"), chunks))
    return ds


@pytest.mark.parametrize("chunks, block, copy, note", [
    ((24, 8, 8), (4, 4), True, "copied chunk by chunk"),        # along time only
    ((48, 8, 8), (4, 4), True, "copied chunk by chunk"),        # one chunk
    ((48, 4, 4), (4, 4), False, None),                          # the blocks follow them
    ((48, 4, 4), (8, 8), False, None),                          # a block holds four
    ((48, 3, 3), (4, 4), False, "(--block 6 follows them)"),    # all hours, across edges
    ((48, 2, 3), (4, 4), False, "(--block 6 follows them)"),
    ((48, 8, 3), (4, 4), False, "(--block 6 follows them)"),    # all of y: x alone
    ((24, 8, 8), (8, 8), False, None),                          # one block
    (None, (4, 4), False, None),                                # no chunks (NetCDF3)
])
def test_plan(chunks, block, copy, note):
    got, notes = grid_scratch.plan(_lazy(chunks), ["v"], ("y", "x"), (8, 8), block)
    assert got == (["v"] if copy else [])
    assert (note is None) == (not notes)
    if note:
        assert note in notes[0]


def test_worker_processes_read_the_copy(grids, tmp_path):
    """`workbench grid --workers 2`: the worker processes read the scratch copy made in
    the run folder; the maps are those of the NetCDF3 grid, and nothing is left."""
    pytest.importorskip("distributed")
    from workbench.cli import main
    for kind, extra in (("nc3", []), ("zarr", ["--workers", "2"])):
        assert main(["grid", str(grids[kind]), "--out", str(tmp_path / kind), "--quiet",
                     "--block", "2", *extra]) == 0
    maps = {}
    for kind in ("nc3", "zarr"):
        with xr.open_dataset(tmp_path / kind / "grid.nc", decode_times=False) as ds:
            maps[kind] = ds.load().drop_attrs()
    xr.testing.assert_identical(maps["zarr"], maps["nc3"])
    assert sorted(p.name for p in tmp_path.iterdir()) == ["nc3", "zarr"]
    assert sorted(p.name for p in (tmp_path / "zarr").iterdir()) == \
        ["grid.nc", "provenance.json"]


def _one_chunk_nc4(base: Path, n: int) -> tuple[Path, Path, int]:
    """The demo grid of n x n cells (a month) as NetCDF3 and with its met as NetCDF4 in
    one zlib chunk a variable: the two scenarios and the bytes of a chunk."""
    sc = make_demo_grid(base / "nc3", n=n)
    (base / "nc4").mkdir()
    text = sc.read_text()
    with xr.open_dataset(base / "nc3" / "met.nc") as ds:
        ds = ds.load()
    enc = {v: {"zlib": True, "complevel": 1, "chunksizes": ds[v].shape}     # one chunk
           for v in ds.data_vars if ds[v].ndim == 3 and ds[v].dims[0] == "time"}
    ds.to_netcdf(base / "nc4" / "met4.nc", engine="netcdf4", format="NETCDF4", encoding=enc)
    for role in ("air", "land_use"):
        (base / "nc4" / f"{role}4.nc").write_bytes((base / "nc3" / f"{role}.nc").read_bytes())
        text = text.replace(f'"{role}.nc"', f'"{role}4.nc"')
    (base / "nc4" / "scenario.toml").write_text(text.replace('"met.nc"', '"met4.nc"'))
    return sc, base / "nc4" / "scenario.toml", max(ds[v].nbytes for v in enc)


def test_on_workers_the_main_process_decompresses_no_chunk(tmp_path):
    """`workbench grid` on a dask cluster with met in NetCDF4 chunked along time over the
    whole plane (here a month of 48 x 48 cells in one chunk: 6.9 MB a variable, float32).
    The block-major copy ran in the main process, which so decompressed and decoded
    every chunk: its peak of traced allocations was at least one chunk (the values
    read) and grew with the plane (docs/performance.md: 8, 96 and 231 MB above base at
    20 x 20, 100 x 100 and 200 x 200 cells).  Now each variable's copy is a task on the
    cluster: the main process's traced peak during a whole run stays under one chunk
    (about 3 MB here, at any grid size: the hashing of the inputs in 1 MiB reads and
    the cluster's messages), and the maps are those of the NetCDF3 grid, bit for bit."""
    pytest.importorskip("distributed")
    pytest.importorskip("netCDF4")
    from workbench.blocks import close_client, start_client
    ref, sc, chunk = _one_chunk_nc4(tmp_path / "big", 48)
    assert chunk > 6e6
    _, warm, _ = _one_chunk_nc4(tmp_path / "small", 8)
    client = start_client(2)
    try:
        address = client.scheduler.address
        run_grid(ref, tmp_path / "ref", quiet=True, block=24, use_dask=False)
        # a small run on the cluster first: the imports of a run are done before the count
        run_grid(warm, tmp_path / "warm", quiet=True, block=4, scheduler=address)
        tracemalloc.start()
        try:
            run_grid(sc, tmp_path / "out", quiet=True, block=24, scheduler=address)
            _, peak = tracemalloc.get_traced_memory()
        finally:
            tracemalloc.stop()
    finally:
        close_client(client)
    assert peak < chunk, (peak / 2**20, chunk / 2**20)
    notes = json.loads((tmp_path / "out" / "provenance.json").read_text())["notes"]
    assert any("met4.nc: chunks of 744 time steps x 48 x 48 cells span several blocks"
               in note and "copied chunk by chunk" in note for note in notes), notes
    maps = {}
    for kind in ("ref", "out"):
        with xr.open_dataset(tmp_path / kind / "grid.nc", decode_times=False) as ds:
            maps[kind] = ds.load().drop_attrs()
    xr.testing.assert_identical(maps["out"], maps["ref"])
