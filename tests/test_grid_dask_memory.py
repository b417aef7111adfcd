"""Flat memory of the dask workers of `workbench grid` against the grid's size: what a
task carries and what a worker keeps beside the tasks.  Mechanisms, not a threshold
(peak memory is measured by ``benchmarks/grid_memory.py --what dask``,
docs/performance.md "Flat worker memory").  Inputs: the invented demo grid
(`workbench.grid_demo.make_demo_grid`, a month) at 4 x 4 and 12 x 12 cells.
"""
from __future__ import annotations

import pickle

import numpy as np
import pytest

import workbench.grid as G
from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import block_catalogue, cut, open_grid, read_block

BLOCK = 4
FIELDS = ("classes", "latitude", "longitude", "canopy_height", "elevation")


@pytest.fixture(scope="module")
def grids(tmp_path_factory):
    """n -> the demo grid of n x n cells (the same 4 x 4 corner at every size)."""
    out = {}
    for n in (4, 12):
        folder = tmp_path_factory.mktemp(f"dask{n}") / "in"
        make_demo_grid(folder, n=n)
        out[n] = open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")
    return out


def _block_tasks(grid):
    """(ys, xs) -> (grid argument, pickled bytes of the task's arguments) of every
    block task of the lazy maps."""
    pytest.importorskip("dask")
    _, arr = G.compute_grid(grid, DryOptions(), BudgetOptions(), G.make_periods(grid),
                            block=BLOCK, use_dask=True)
    out = {}
    for task in dict(arr.__dask_graph__()).values():
        if getattr(task, "func", None) is G.block_result:
            g, ys, xs = task.args[:3]
            out[(ys.start, ys.stop, xs.start, xs.stop)] = (g, len(pickle.dumps(task.args)))
    return out


def test_a_block_task_carries_its_block_not_the_whole_grid(grids):
    """Every dask task of a block carried the whole `Grid` (its 2-D fields, the maps'
    template): a worker deserialises each task's arguments apart and keeps them while
    the task's result waits for the other blocks, so it held the whole grid once per
    block it ran (0.5 MB pickled at 100 x 100 cells; some 50 MB at 1,000 x 1,000 by
    extrapolation).  Now a task carries its block's part (`grid_io.cut`): the same
    bytes for the same block whatever the size of the grid."""
    small, large = _block_tasks(grids[4]), _block_tasks(grids[12])
    assert len(small) == 1 and len(large) == 9                 # one task per block
    for (y0, y1, x0, x1), (g, _) in large.items():
        for name in FIELDS:
            assert getattr(g, name).shape == (y1 - y0, x1 - x0), name
        assert g.template is None and g.origin == (y0, x0)
    corner = (0, BLOCK, 0, BLOCK)
    size_small, size_large = small[corner][1], large[corner][1]
    # the same fields of the same cells; only the folder names in the paths differ
    assert abs(size_large - size_small) < 64, (size_small, size_large)
    sizes = [s for _, s in large.values()]
    assert max(sizes) - min(sizes) < 256, sizes            # no block carries more


def test_a_cut_grid_reads_its_block_as_the_whole_grid(grids):
    """The block's catalogue and its met and air read from the cut grid are those of
    the whole grid, bit for bit; a block outside the cut is refused."""
    grid = grids[12]
    ys, xs = slice(4, 8), slice(8, 12)
    part = cut(grid, ys, xs)
    cat_whole, cat_part = block_catalogue(grid, ys, xs), block_catalogue(part, ys, xs)
    assert cat_whole.ids == cat_part.ids and len(cat_whole)
    assert [s.land_use for s in cat_whole] == [s.land_use for s in cat_part]
    assert [s.latitude for s in cat_whole] == [s.latitude for s in cat_part]
    met_w, air_w, fl_w = read_block(grid, ys, xs, cat_whole)
    met_p, air_p, fl_p = read_block(part, ys, xs, cat_part)
    for name in met_w.data_vars:
        assert met_w[name].values.tobytes() == met_p[name].values.tobytes(), name
    assert air_w.identical(air_p) and np.array_equal(fl_w, fl_p)
    with pytest.raises(ValueError, match="not in the grid's fields"):
        block_catalogue(part, slice(0, 4), xs)


def test_dask_maps_of_cut_blocks_equal_the_blocks_in_process(grids):
    """The maps from the tasks of cut grids are the bits of the same blocks in process."""
    pytest.importorskip("dask")
    grid = grids[12]
    periods = G.make_periods(grid)
    _, lazy = G.compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=BLOCK,
                             use_dask=True)
    _, whole = G.compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=BLOCK)
    got = lazy.compute(scheduler="synchronous")
    assert got.tobytes() == whole.tobytes()
    assert np.isfinite(got).any()


def test_local_cluster_workers_run_no_statistical_profiler():
    """distributed's statistical profiler (for the dashboard, which a local cluster of
    `blocks.start_client` does not start) kept a profile a second and the source lines
    of every sampled frame: traced on the workers of a 100 x 100 grid, 31 MB more than
    at 20 x 20, growing with the run's length.  The workers of a local cluster now run
    without it."""
    pytest.importorskip("distributed")
    from workbench.blocks import close_client, start_client

    def state(dask_worker=None):
        import dask
        return (dask.config.get("distributed.worker.profile.enabled"),
                sorted(k for k in dask_worker.periodic_callbacks if "profile" in k))
    client = start_client(1)
    try:
        client.wait_for_workers(1)
        got = list(client.run(state).values())
    finally:
        close_client(client)
    assert got == [(False, [])]
