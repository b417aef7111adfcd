"""Maps of `workbench grid` streamed into grid.nc block by block: a block's result leaves
its dask worker as the block ends (a few at once on a worker, whatever the grid's size),
and this process writes it at its place in grid.nc, never holding the maps of the whole
grid.  Mechanisms and bytes, not a threshold (peak memory is measured by
``benchmarks/grid_memory.py --what dask``, docs/performance.md "Grid maps streamed").
Inputs: the invented demo grid (`workbench.grid_demo.make_demo_grid`, a month).
"""
from __future__ import annotations

import numpy as np
import pytest

import workbench.grid as G
from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import open_grid
from workbench.grid_output import create_grid_netcdf, grid_dataset, write_grid_netcdf

HISTORY = "a fixed history line for the comparison"


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("stream") / "in"
    make_demo_grid(folder, n=8)
    return folder


def _grid(folder):
    return open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")


def _streamed(grid, path, periods, **kw):
    names = G.output_names(grid.species)
    holder = np.broadcast_to(np.float64(np.nan), (len(names), len(periods)) + grid.shape)
    maps = create_grid_netcdf(grid_dataset(names, holder, grid, periods, HISTORY), path, names)
    G.store_grid(grid, maps, DryOptions(), BudgetOptions(), periods, **kw)
    return path.read_bytes()


@pytest.mark.parametrize("use_dask", [False, True])
def test_streamed_grid_nc_is_xarrays_whole_write_byte_for_byte(demo, tmp_path, use_dask):
    """grid.nc written block by block (header by xarray's own store without the maps,
    each block encoded by xarray and written at its place) holds the bytes of xarray's
    writing of the whole maps at once (the code before), in process and through
    dask.array.store; blocks of 3 cells cut the 8 x 8 grid unevenly."""
    if use_dask:
        pytest.importorskip("dask")
    grid = _grid(demo)
    periods = G.make_periods(grid)
    names, whole = G.compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=3)
    write_grid_netcdf(grid_dataset(names, whole, grid, periods, HISTORY), tmp_path / "whole.nc")
    got = _streamed(grid, tmp_path / "streamed.nc", periods, block=3, use_dask=use_dask)
    assert np.isfinite(whole).any()
    assert got == (tmp_path / "whole.nc").read_bytes()


def test_a_block_written_twice_lands_in_place_only(demo, tmp_path):
    """A block's values go to its cells of every map and period, nothing else: the file
    after one block is the whole write's bytes there and the placeholder elsewhere."""
    grid = _grid(demo)
    periods = G.make_periods(grid)
    names = G.output_names(grid.species)
    holder = np.broadcast_to(np.float64(np.nan), (len(names), len(periods)) + grid.shape)
    maps = create_grid_netcdf(grid_dataset(names, holder, grid, periods, HISTORY),
                              tmp_path / "one.nc", names)
    values = np.arange(len(names) * len(periods) * 6, dtype=float).reshape(
        len(names), len(periods), 2, 3)
    values[0, 0, 1, 2] = np.nan                        # the maps' _FillValue
    maps[:, :, slice(5, 7), slice(1, 4)] = values
    from scipy.io import netcdf_file
    with netcdf_file(tmp_path / "one.nc", "r", mmap=False) as f:
        for k, name in enumerate(names):
            data = f.variables[name].data
            np.testing.assert_array_equal(data[:, 5:7, 1:4], values[k])   # NaN = NaN
            outside = np.ones(data.shape, bool)
            outside[:, 5:7, 1:4] = False
            assert not np.isin(data[outside], values[k]).any(), name


class HeldResults:
    """Scheduler plugin (the scheduler of a local cluster runs in this process): the most
    results of tasks (any key: the blocks' and, before, their concatenation's) in memory
    on the workers at once."""

    name = "test-held-block-results"
    now: set = set()
    most = 0
    seen: set = set()

    def transition(self, key, start, finish, *args, **kwargs):
        # the class's own attributes: the plugin reaches the scheduler pickled, this
        # class by reference
        if finish == "memory":
            HeldResults.now.add(key)
            HeldResults.seen.add(key)
            HeldResults.most = max(HeldResults.most, len(HeldResults.now))
        elif start == "memory":
            HeldResults.now.discard(key)


def test_workers_hold_a_few_block_results_not_every_block(demo, tmp_path, monkeypatch):
    """`workbench grid --workers 2` on 16 blocks: the maps were one dask array
    concatenated at the end, so every block's result waited on its worker until the last
    block ended (16 held at once here; some 2.4 GB for a year of monthly maps at
    1,000 x 1,000 cells by extrapolation).  Now each result comes back as its block
    ends and is released: at most two blocks in flight a worker."""
    pytest.importorskip("distributed")
    from distributed.diagnostics.plugin import SchedulerPlugin

    import workbench.blocks as B
    from workbench.cli import main
    plugin = type("Held", (HeldResults, SchedulerPlugin), {})
    HeldResults.now, HeldResults.seen, HeldResults.most = set(), set(), 0
    real = B.start_client

    def start_and_watch(*args, **kw):
        client = real(*args, **kw)
        client.register_plugin(plugin())
        return client
    monkeypatch.setattr(B, "start_client", start_and_watch)
    assert main(["grid", str(demo / "scenario.toml"), "--out", str(tmp_path / "out"),
                 "--quiet", "--block", "2", "--workers", "2"]) == 0
    assert len(HeldResults.seen) >= 16                            # every block ran there
    assert 1 <= HeldResults.most <= G.BLOCKS_IN_FLIGHT_PER_WORKER * 2, HeldResults.most
