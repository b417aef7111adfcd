"""What keeps a block's memory flat in `workbench grid`: the mechanisms, not a threshold.

Peak memory is measured by benchmarks/grid_memory.py (docs/performance.md); these tests
lock how it is kept down, with the same numbers: the met row checks run on slices of
whole cells, a block's direct reads open the input anew for each variable, one engine
call's results are let go before the next, the engine computes only the species of the
air grid, and no block's inputs outlive their block.  Inputs: the invented demo grid
(`workbench.grid_demo.make_demo_grid`, 4 x 4 cells, a month) with planted flaws.
"""
from __future__ import annotations

import gc
import weakref

import numpy as np
import pytest
import xarray as xr

import workbench.grid as G
from workbench import grid_cells, grid_io  # grid_cells: where a block's read looks names up
from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.grid import compute_grid, make_periods
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import block_catalogue, open_grid, read_block
from workbench.io import metchecks


@pytest.fixture(scope="module")
def flawed(tmp_path_factory):
    """The 4 x 4 demo grid with flaws that the per-row and per-site checks catch."""
    folder = tmp_path_factory.mktemp("gridmem") / "in"
    make_demo_grid(folder, n=4)
    path = folder / "met.nc"
    with xr.open_dataset(path) as ds:
        ds = ds.load()
    w = ds["wind_speed"].values.copy()
    w[100, 0, 1] = 250.0                          # a hard range, one row
    w[:, 3, 3] *= 14.4                            # km/h-like median at one cell (per site)
    rh = ds["relative_humidity"].values.copy()
    rh[:, 2, 1] *= 100.0                          # % under a fraction header (per site-month)
    p = ds["pressure"].values.copy()
    p[:, 1, 2] *= 0.1                             # a unit slip at one cell (per site)
    p[50:60, 0, 0] = -999.0                       # missing-value codes
    ds = ds.assign(wind_speed=ds["wind_speed"].copy(data=w),
                   relative_humidity=ds["relative_humidity"].copy(data=rh),
                   pressure=ds["pressure"].copy(data=p))
    path.unlink()
    ds.to_netcdf(path, engine="scipy")
    return open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")


def _read(grid, ys=slice(0, 4), xs=slice(0, 4)):
    return read_block(grid, ys, xs, block_catalogue(grid, ys, xs), with_reasons=True)


def test_met_checks_run_on_slices_of_whole_cells_with_the_same_results(flawed, monkeypatch):
    """The site reader's row checks hold several per-record copies of what they check:
    on a whole block (0.88 M cell-hours) they set the block's peak (380 MB).  They now
    run check_cells(hours) cells at a time; every check looks at a row or at one site's
    rows, so the values, flags and reasons are the same bits as the block at once."""
    monkeypatch.setattr(grid_cells, "CHECK_CELL_HOURS", 10 ** 9)       # all cells at once
    met_1, air_1, flagged_1, reasons_1 = _read(flawed)
    n_t = len(flawed.times)
    sizes = []
    real = metchecks.run_row_checks

    def spy(values, sites, t, catalogue, units):
        sizes.append(len(sites))
        return real(values, sites, t, catalogue, units)
    monkeypatch.setattr(metchecks, "run_row_checks", spy)
    monkeypatch.setattr(grid_cells, "CHECK_CELL_HOURS", 3 * n_t)      # 3 cells a slice
    met_3, air_3, flagged_3, reasons_3 = _read(flawed)
    assert sizes == [3 * n_t] * 5 + [n_t]                          # 16 cells: 3+3+3+3+3+1
    for name in met_1.data_vars:
        assert met_1[name].values.tobytes() == met_3[name].values.tobytes(), name
    assert np.array_equal(flagged_1, flagged_3)
    assert reasons_1.tolist() == reasons_3.tolist()
    xr.testing.assert_identical(air_1, air_3)
    # the planted flaws are found (so the comparison compares something)
    text = " ".join(sorted(set(reasons_1.tolist())))
    for what in ("wind_speed outside", "km/h", "relative humidity looks like %",
                 "pressure median", "missing-value code"):
        assert what in text, what
    assert flagged_1.sum() > n_t


def test_check_cells_follows_the_record():
    """About CHECK_CELL_HOURS records a slice, at least one whole cell."""
    hours = grid_io.CHECK_CELL_HOURS
    assert grid_io.check_cells(hours // 4) == 4
    assert grid_io.check_cells(hours * 10) == 1
    assert grid_io.check_cells(0) == hours


def test_a_block_reads_its_own_slice_each_variable_through_its_own_open(flawed, monkeypatch):
    """A block reads its cells only (never a variable of the whole grid), and opens the
    input anew for each variable: one open NetCDF4 file kept the chunk cache of every
    variable read through it (a block of a 100 x 100 plane chunked along time peaked
    at 512 MB above the open grid, 155 MB with a file a variable)."""
    opened, shapes = [], []
    real_open, real_values = grid_io._open, grid_io.read_values

    def spy_open(path, role, notes=None, only=None, **kw):
        ds = real_open(path, role, notes, only=only, **kw)
        opened.append(role)
        assert only in ds                        # the variable the open was for
        return ds

    def spy_values(var, path, name, where=""):
        shapes.append((name, var.shape))
        return real_values(var, path, name, where)
    monkeypatch.setattr(grid_cells, "_open", spy_open)
    monkeypatch.setattr(grid_cells, "read_values", spy_values)
    ys, xs = slice(1, 3), slice(0, 3)
    read_block(flawed, ys, xs, block_catalogue(flawed, ys, xs))
    n_met, n_air = len(flawed.met_units), len(flawed.air_units)
    assert opened == ["met"] * n_met + ["air"] * n_air
    n_t, n_p = len(flawed.times), len(flawed.air_start)
    assert [s for _, s in shapes] == [(n_t, 2, 3)] * n_met + [(n_p, 2, 3)] * n_air


def test_one_engine_call_is_let_go_before_the_next(flawed, monkeypatch):
    """The hourly results of one call of the dry chain (every Vd, gap-filled Vd, dry
    rows of a slice of cells) were still bound in block_result's loop while the next
    call computed its own (traced: 100-165 MB of a 128-cell call still held when the
    next began).  Now nothing of a call is alive when the next one starts."""
    alive = []
    refs = []
    real = G.dry_for_sites

    def spy(*a, **k):
        gc.collect()
        alive.append(sum(r() is not None for r in refs))
        vd, vel, dry = real(*a, **k)
        refs.extend(weakref.ref(x) for x in (vd, dry) if x is not None)
        return vd, vel, dry
    monkeypatch.setattr(G, "dry_for_sites", spy)
    ys, xs = slice(0, 4), slice(0, 4)
    G.block_result(flawed, ys, xs, DryOptions(), BudgetOptions(), make_periods(flawed))
    assert len(alive) >= 2                                       # several classes
    assert refs and alive == [0] * len(alive)


def test_the_engine_computes_only_the_species_of_the_air_grid(flawed, monkeypatch):
    """Ozone, chloride and calcium (no concentrations in the air grid) were computed
    for every slice of cells and held until the slice was done; now the engine is asked
    for the air grid's species only, and their Vd are the same bits as with every
    species (each species' Vd is its own chain)."""
    from workbench import drydep
    asked = []
    real = drydep.velocities

    def spy(met, surf, options, *a, **k):
        asked.append((options.gases, options.particles))
        return real(met, surf, options, *a, **k)
    monkeypatch.setattr(drydep, "velocities", spy)
    ys, xs = slice(0, 2), slice(0, 2)
    cat = block_catalogue(flawed, ys, xs)
    met, air, _ = read_block(flawed, ys, xs, cat)
    sub = type(cat)([s for s in cat if s.land_use == cat[cat.ids[0]].land_use])
    periods = make_periods(flawed)
    vd, _, _ = G.dry_for_sites(met.sel(site=sub.ids), air, sub, DryOptions(),
                               BudgetOptions(), periods)
    species = set(flawed.species)
    gases, particles = asked[-1]
    assert set(gases) | set(particles) == species & set(G.DRY_SPECIES)
    assert "O3" not in gases and "pCl" not in particles
    full = real(met.sel(site=sub.ids), sub.surfaces(), DryOptions())
    for sp in species & set(G.DRY_SPECIES):
        assert vd[f"vd_{sp}"].values.tobytes() == full[f"vd_{sp}"].values.tobytes(), sp


def test_no_block_outlives_its_block(flawed, monkeypatch):
    """Memory does not grow with the number of blocks: when a block starts, the met and
    air of every block before it are gone (nothing keeps a block's inputs: no cache, no
    list of results but the maps)."""
    refs, alive = [], []
    real = grid_io.read_block

    def spy(*a, **k):
        gc.collect()
        alive.append(sum(r() is not None for r in refs))
        got = real(*a, **k)
        refs.extend(weakref.ref(x) for x in got[:2])
        return got
    monkeypatch.setattr(G, "read_block", spy)
    names, arr = compute_grid(flawed, DryOptions(), BudgetOptions(), make_periods(flawed),
                              block=2)
    assert len(alive) == 4 and alive == [0] * 4
    assert arr.shape == (len(names), len(make_periods(flawed)), 4, 4)


def _maps(grid):
    return compute_grid(grid, DryOptions(), BudgetOptions(), make_periods(grid), block=2)[1]


def test_the_engine_makes_only_the_vd_that_the_maps_read(flawed, monkeypatch):
    """A call of the engine on a slice of 128 cells made about 50 hourly variables
    (resistances, paths of Rc, the surface layer's and canopy's diagnostics, counts)
    and set a block's peak (traced 308 MB on a 19 x 19 block, docs/performance.md).
    The maps read the Vd of the air grid's species only: the engine now makes those
    alone, and the maps are the same bits as when it makes every variable."""
    from workbench import drydep
    made = []
    real = drydep.velocities

    def spy(*a, **k):
        got = real(*a, **k)
        made.append(set(got.data_vars))
        return got
    monkeypatch.setattr(drydep, "velocities", spy)
    lean = _maps(flawed)
    wanted = {f"vd_{sp}" for sp in flawed.species if sp in G.DRY_SPECIES}
    assert made and all(m == wanted for m in made)
    made.clear()
    monkeypatch.setattr(G, "grid_outputs", lambda species: None)     # every variable
    full = _maps(flawed)
    assert made and all(len(m) > 3 * len(wanted) and wanted < m for m in made)
    assert lean.tobytes() == full.tobytes()


@pytest.mark.parametrize("site_blocks", [False, True, "dask"])
def test_velocities_outputs_are_the_same_bits(flawed, monkeypatch, site_blocks):
    """``velocities(..., outputs=)`` gives the variables asked for (hourly, (site,
    time) and the counts alike) as the full call gives them, in one call, in the
    threaded blocks of whole sites (`drydep.siteblocks`) and on a dask-backed met."""
    from workbench import drydep, threads
    from workbench.drydep import siteblocks
    ys, xs = slice(0, 4), slice(0, 4)
    cat = block_catalogue(flawed, ys, xs)
    met, _, _ = read_block(flawed, ys, xs, cat)
    if site_blocks == "dask":
        pytest.importorskip("dask")
        met = met.chunk({"time": 200})
    elif site_blocks:
        monkeypatch.setattr(siteblocks, "SITE_BLOCK_MIN_ELEMENTS", 1)
        monkeypatch.setattr(siteblocks, "SITE_BLOCK_ELEMENTS", 3 * met.sizes["time"])
        threads.set_threads(2)
    try:
        full = drydep.velocities(met, cat.surfaces(), DryOptions())
        ask = {"vd_SO2", "vd_pNO3", "ra", "met_friction_velocity", "n_ra_cap", "active"}
        part = drydep.velocities(met, cat.surfaces(), DryOptions(), outputs=ask)
    finally:
        threads.set_threads(None)
    assert set(part.data_vars) == ask
    part, full = part.compute(), full.compute()
    for name in ask:
        xr.testing.assert_identical(part[name], full[name])
        assert part[name].values.tobytes() == full[name].values.tobytes(), name


def test_a_cells_intermediates_are_shown_on_demand(flawed):
    """What the gridded run leaves out is computed for one chosen cell: every variable
    of the engine, its Vd the bits of the cell in a block."""
    cell = G.cell_velocities(flawed, 1, 2)
    assert {"ra", "rb_SO2", "rc_SO2", "friction_velocity", "surface_wet",
            "n_ra_cap"} <= set(cell.data_vars)
    assert list(cell["site"].values) == ["j1i2"]
    ys, xs = slice(1, 2), slice(2, 3)
    cat = block_catalogue(flawed, ys, xs)
    met, air, _ = read_block(flawed, ys, xs, cat)
    vd, _, _ = G.dry_for_sites(met, air, cat, DryOptions(), BudgetOptions(),
                               make_periods(flawed))
    for name in vd.data_vars:
        assert cell[name].values.tobytes() == vd[name].values.tobytes(), name
    with pytest.raises(G.GridRunError, match="outside the grid"):
        G.cell_velocities(flawed, 9, 0)


def test_a_block_gives_its_freed_memory_back(flawed, monkeypatch):
    """A dask worker runs block after block: the freed heap of each block was kept
    (glibc), so a worker's peak rose with the blocks it had run.  Each block now
    returns it when its hourly inputs are gone, as a block of sites does."""
    calls, refs = [], []
    real = G.read_block

    def read(*a, **k):
        got = real(*a, **k)
        refs.extend(weakref.ref(x) for x in got[:2])
        return got

    def trim():
        calls.append(sum(r() is not None for r in refs))
        return True
    monkeypatch.setattr(G, "read_block", read)
    monkeypatch.setattr(G, "release_free_memory", trim)
    G.block_result(flawed, slice(0, 2), slice(0, 2), DryOptions(), BudgetOptions(),
                   make_periods(flawed))
    assert calls == [0]                 # once, with the block's met and air let go
