"""What a user trial of `workbench grid` found: every input cell accounted for.

Small invented grids (`workbench.grid_demo.make_demo_grid`, 4 x 4 cells, a month),
changed the way real inputs are flawed: a met model that writes NaN over the sea, a
cell with a few hours of missing met.  Counts are checked against what was planted.
"""
from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr

from workbench.cli import main
from workbench.grid import make_periods
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import open_grid
from workbench.periods import assign_hours


def _demo(tmp_path, n=4):
    folder = tmp_path / "in"
    make_demo_grid(folder, n=n)
    return folder


def _rewrite(path, change):
    with xr.open_dataset(path) as ds:
        ds = change(ds.load())
    path.unlink()
    ds.to_netcdf(path, engine="scipy")


def _run(scenario, out, *extra):
    assert main(["grid", str(scenario), "--out", str(out), "--quiet", "--in-process",
                 *extra]) == 0
    with xr.open_dataset(out / "grid.nc") as ds:
        return ds.load(), json.loads((out / "provenance.json").read_text())


def test_cells_without_met_are_counted_and_named(tmp_path):
    """Temperature NaN at every hour of cell (0, 0) (a land-only met model over the sea)
    and at 10 hours of cell (1, 1): met_missing_hours counts them per cell and period
    (all the period's hours, and 10), the maps of (0, 0) are NaN, and a note names the
    cell that has no Vd at all.  Before, the cell was NaN with no word anywhere."""
    folder = _demo(tmp_path)

    def gaps(ds):
        v = ds["temperature"].values.copy()
        v[:, 0, 0] = np.nan
        v[100:110, 1, 1] = np.nan
        return ds.assign(temperature=ds["temperature"].copy(data=v))
    _rewrite(folder / "met.nc", gaps)
    ds, prov = _run(folder / "scenario.toml", tmp_path / "out")
    miss = ds["met_missing_hours"].values
    assert ds["met_missing_hours"].attrs["cell_methods"] == "time: sum"
    grid = open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")
    which = assign_hours(grid.times, make_periods(grid, "month"))
    assert miss[:, 0, 0].sum() == np.count_nonzero(which >= 0) > 700
    assert miss[:, 1, 1].sum() == 10
    rest = np.ones(miss.shape[1:], bool)
    rest[0, 0] = rest[1, 1] = False
    assert np.all(miss[:, rest] == 0)
    assert np.all(np.isnan(ds["vd_SO2"].values[:, 0, 0]))
    assert np.all(np.isfinite(ds["vd_SO2"].values[:, 1, 1]))
    notes = " | ".join(prov["notes"])
    assert "1 of 16 cells with a class" in notes and "met_missing_hours" in notes
    assert "1 cell has hours without usable met" in notes


def test_notebook_opens_a_finished_run_without_running(tmp_path, monkeypatch):
    """grid_maps.ipynb on a user's finished run: `open_run(run folder)` (or its grid.nc)
    opens the maps as written; before, every open ran the whole grid again (a
    60 x 60 grid of a year: minutes).  The maps draw (headless)."""
    from workbench import grid_demo, grid_output
    from workbench.ui.figures_grid import grid_map_spec
    folder = _demo(tmp_path)
    written, _ = _run(folder / "scenario.toml", tmp_path / "out")

    def no_run(*a, **k):
        raise AssertionError("ran the grid again")
    monkeypatch.setattr(grid_output, "run_grid", no_run)
    for target in (tmp_path / "out", tmp_path / "out" / "grid.nc"):
        maps = grid_demo.open_run(target)
        xr.testing.assert_identical(maps, written)
        spec = grid_map_spec(maps, "met_missing_hours", 0)
        assert len(spec["data"][0]["z"]) == 4
    with pytest.raises(FileNotFoundError, match="grid.nc of a finished"):
        grid_demo.open_run(tmp_path / "in")


def test_scratch_copy_frees_each_variables_chunk_cache(tmp_path, monkeypatch):
    """The block-major copy of a NetCDF4 grid chunked along time reads each variable
    from a file opened for it alone, so that the HDF5 chunk cache of a variable
    (decoded chunks kept by the library, up to 64 MB each, invisible to tracemalloc)
    is freed before the next: a 60 x 60 grid of 3 months with a chunk of 730 hours
    peaked 256 MB above the open grid while copying, 71 MB after this change
    (docs/performance.md).  Before, one open file served every variable."""
    pytest.importorskip("netCDF4")
    from xarray.backends import netCDF4_ as nc4
    from workbench.grid import staged
    folder = _demo(tmp_path)
    with xr.open_dataset(folder / "met.nc") as ds:
        ds = ds.load()
    enc = {v: {"zlib": True, "chunksizes": (24,) + ds[v].shape[1:]}
           for v in ds.data_vars if ds[v].dims[:1] == ("time",) and ds[v].ndim == 3}
    ds.to_netcdf(tmp_path / "met4.nc", engine="netcdf4", encoding=enc)
    reads = []
    real = nc4.NetCDF4ArrayWrapper._getitem

    def spy(wrapper, key):
        var = wrapper.get_array()
        if var.ndim == 3:
            reads.append((var.group(), var.name))
        return real(wrapper, key)
    monkeypatch.setattr(nc4.NetCDF4ArrayWrapper, "_getitem", spy)
    grid = open_grid(tmp_path / "met4.nc", folder / "air.nc", folder / "land_use.nc")
    with staged(grid, 2) as g:
        assert "met" in g.scratch
    names = {n for _, n in reads}
    assert len(names) >= 6
    for a, na in reads:
        for b, nb in reads:
            assert na == nb or a is not b, (na, nb)


def test_period_means_do_not_depend_on_blas():
    """The period means of the maps are numpy's sums along time, bit for bit: the same
    in process and on single-threaded dask workers.  Before, a product with a (time,
    period) matrix went through BLAS, whose order of additions follows its threads
    and kernel: 60 x 60 maps of Vd differed in 468-641 cells by up to 7e-16 relative
    between `--in-process` and `--workers 2` (2026-12-03)."""
    from workbench.grid import _period_means
    rng = np.random.default_rng(7)
    vd = rng.lognormal(-5, 1, (37, 2200))
    vd[rng.random(vd.shape) < 0.05] = np.nan
    which = np.repeat(np.arange(4), 550)
    which[:3] = -1                                   # hours outside every period
    want = np.stack([np.nanmean(vd[:, which == p], axis=1) for p in range(4)], 1)
    ok = np.isfinite(vd)
    exact = np.stack([np.where(ok, vd, 0.0)[:, which == p].sum(axis=1)
                      / ok[:, which == p].sum(axis=1) for p in range(4)], 1)
    got = _period_means(vd, which, 4)
    np.testing.assert_array_equal(got, exact)
    np.testing.assert_allclose(got, want, rtol=1e-14)


def test_flagged_rows_counted_without_a_text_array(tmp_path, monkeypatch):
    """The flags of a block's met records are counted from the reasons as they come
    (an object array): no fixed-width text array of every record at the length of the
    longest reason (4 bytes a character: 2,000-character reasons on 11,904 records
    were 95 MB before, for a count of booleans)."""
    import tracemalloc
    from workbench import grid_io
    from workbench.io import metchecks
    folder = _demo(tmp_path)
    grid = open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")
    real = metchecks.run_row_checks

    def long_reasons(values, sites, t, catalogue, units):
        reasons, values = real(values, sites, t, catalogue, units)
        reasons = np.full(len(reasons), "", object)
        reasons[::2] = "x" * 2000                       # one string object, shared
        return reasons, values
    monkeypatch.setattr(metchecks, "run_row_checks", long_reasons)
    ys, xs = slice(0, 4), slice(0, 4)
    cat = grid_io.block_catalogue(grid, ys, xs)
    tracemalloc.start()
    try:
        _, _, flagged = grid_io.read_block(grid, ys, xs, cat)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert flagged.sum() == flagged.size // 2
    assert peak < 30e6, peak


def test_cluster_close_hides_the_nannys_kill_warning(monkeypatch):
    """`--workers`: at the end of a good run on a busy machine, the nanny killed a
    worker slow to stop and printed `distributed.nanny - WARNING - Worker process still
    alive after 4.0 seconds, killing` (seen in every `--workers 2` run of the trial at
    load 6-12).  The close runs with that logger at ERROR, restored after."""
    import logging
    from workbench import blocks, grid_output
    seen = []

    class Fake:
        cluster = None

        def close(self):
            seen.append(logging.getLogger("distributed.nanny").getEffectiveLevel())
            logging.getLogger("distributed.nanny").warning("Worker process still alive")
    fake = Fake()
    fake.cluster = Fake()
    monkeypatch.setattr(blocks, "start_client", lambda w, s, log=None: fake)
    before = logging.getLogger("distributed.nanny").level
    with grid_output._cluster(workers=2) as client:
        assert client is fake
    assert seen == [logging.ERROR, logging.ERROR]
    assert logging.getLogger("distributed.nanny").level == before


def test_cells_without_concentrations_are_counted(tmp_path):
    """SO2 missing at every interval of cell (2, 3): its dry_SO2 is NaN and
    flux_coverage_SO2 0 (the other species as usual), and a note counts it per species."""
    folder = _demo(tmp_path)

    def gap(ds):
        v = ds["SO2"].values.copy()
        v[:, 2, 3] = np.nan
        return ds.assign(SO2=ds["SO2"].copy(data=v))
    _rewrite(folder / "air.nc", gap)
    ds, prov = _run(folder / "scenario.toml", tmp_path / "out")
    assert np.all(np.isnan(ds["dry_SO2"].values[:, 2, 3]))
    assert np.all(ds["flux_coverage_SO2"].values[:, 2, 3] == 0)
    assert np.all(np.isfinite(ds["dry_NH3"].values[:, 2, 3]))
    notes = " | ".join(prov["notes"])
    assert "no concentration in any period" in notes and "SO2 1" in notes
    assert "NH3 " not in notes.split("no concentration in any period")[1].split("|")[0]


def test_a_missing_met_hour_is_named(tmp_path):
    """A met file with one hour dropped (a model output that skipped a step): the error
    names the hour before the gap, the step and how many hours are missing.  Before:
    "not hourly (time index 100): got '...'", leaving the user to find the gap."""
    from workbench.grid_io import GridError
    folder = _demo(tmp_path)

    def drop(ds):
        keep = np.ones(ds.sizes["time"], bool)
        keep[100] = False
        return ds.isel(time=keep)
    _rewrite(folder / "met.nc", drop)
    with xr.open_dataset(folder / "met.nc") as ds:
        t = ds["time_bnds"].values[99, 1] if "time_bnds" in ds else ds["time"].values[99]
    with pytest.raises(GridError) as err:
        open_grid(folder / "met.nc", folder / "air.nc", folder / "land_use.nc")
    msg = str(err.value)
    assert "met.nc" in msg and "'time'" in msg
    assert f"a step of 2 h after {str(t)[:16]}, 1 hour missing (time index 100)" in msg


def test_map_of_a_variable_without_periods_says_what_to_choose(tmp_path):
    """grid_map(maps, "land_use"): a plain ValueError listing the maps to choose
    (before: "cannot reshape array of size 16 into shape (4,)" from inside numpy)."""
    from workbench.ui.figures_grid import grid_map_spec
    folder = _demo(tmp_path)
    ds, _ = _run(folder / "scenario.toml", tmp_path / "out")
    with pytest.raises(ValueError, match="'land_use' is not in the grid output; choose one "
                       "of vd_"):
        grid_map_spec(ds, "land_use", 0)


def test_sigterm_leaves_nothing_behind(tmp_path):
    """`kill PID` (SIGTERM, as a batch system's time limit sends) during `workbench grid`
    ends it as Ctrl-C does: exit 130, "interrupted; nothing was written", and no
    `.out.incomplete` (with its scratch copy) or lock left beside the output.  Before,
    the process died at once and left both."""
    import os
    import signal
    import subprocess
    import sys
    folder = _demo(tmp_path, n=6)
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(sys.path))
    p = subprocess.Popen([sys.executable, "-c", "import sys; from workbench.cli import main; "
                          "sys.exit(main())", "grid", str(folder / "scenario.toml"), "--out",
                          str(out), "--in-process", "--block", "1"],
                         stderr=subprocess.PIPE, text=True, env=env, cwd=tmp_path)
    # the signal goes when the first block is said (stderr is line-buffered), so the run
    # is inside its blocks whatever the machine's speed: a fixed wait of 1 s after the
    # scratch folder appeared let a quiet machine finish all the blocks first
    said = []
    for line in p.stderr:
        said.append(line)
        if line.strip().startswith("block 1/"):
            break
    assert (tmp_path / ".out.incomplete").exists(), "".join(said) + p.communicate()[1]
    p.send_signal(signal.SIGTERM)
    err = "".join(said) + p.communicate(timeout=120)[1]
    assert p.returncode == 130, err
    assert "interrupted; nothing was written" in err
    assert sorted(x.name for x in tmp_path.iterdir()) == ["in"]


def test_met_in_local_time_is_explained(tmp_path):
    """Met written in local time (6 h behind UTC) labelled as UTC: the sun shines at
    night at many hours of every cell.  met_flagged_hours counted them, with no word
    why; now a note gives the count and the reasons at the cell with the most, worded
    for a grid (the time coordinate, not a site's utc_offset_h)."""
    folder = _demo(tmp_path)

    def local(ds):
        shift = np.timedelta64(-6, "h")
        ds = ds.assign_coords(time=ds["time"].values + shift)
        if "time_bnds" in ds:
            ds["time_bnds"] = ds["time_bnds"] + shift
        return ds
    _rewrite(folder / "met.nc", local)
    ds, prov = _run(folder / "scenario.toml", tmp_path / "out")
    total = int(np.nansum(ds["met_flagged_hours"].values))
    assert total > 16 * 50
    note = [n for n in prov["notes"] if "failed a plausibility check" in n]
    assert len(note) == 1 and f"{total} cell-hours in 16 cells" in note[0]
    assert "solar radiation at night" in note[0]
    assert "check that the time coordinate is UTC" in note[0]
    assert "utc_offset_h" not in note[0]


def test_verify_of_a_grid_run_folder_moved_whole(tmp_path, capsys, monkeypatch):
    """A `workbench grid` run folder handed to a colleague with its project (a trial user).
    Old code: `workbench verify` looked for the grid's files in the scenario's
    [inputs] ("the scenario names no met file now", exit 1 for an untouched folder),
    said "runs of this version do" record output checksums when grid runs did not,
    recorded no path relative to the run folder, and `run_finished_utc` was the time
    the blocks started, not the end."""
    import shutil
    project = tmp_path / "ann" / "study"
    scenario = make_demo_grid(project / "grid", n=4)
    out = project / "runs" / "grid"
    ds, prov = _run(scenario, out, "--block", "2")
    assert prov["run_finished_utc"] >= prov["run_started_utc"]
    assert prov["grid_block"] == 2
    assert set(prov["output_sha256"]) == {"grid.nc"}
    assert prov["inputs"]["land_use"]["from_run_folder"] == "../../grid/land_use.nc"
    moved = tmp_path / "bert" / "unpacked"
    shutil.move(str(project), str(moved))                 # A's folder is gone
    monkeypatch.chdir(tmp_path / "bert")
    capsys.readouterr()
    assert main(["verify", "unpacked/runs/grid"]) == 0
    text = " ".join(capsys.readouterr().out.split())   # wrapped for 80 columns
    assert "outputs: the 1 file besides provenance.json (grid.nc) is as written" in text
    for role, name in (("met", "met.nc"), ("air", "air.nc"), ("land_use", "land_use.nc")):
        assert f"input {role} ({name}): as at the run" in text
    assert "result: the grid folder matches its scenario and inputs" in text
    assert text.startswith(f"grid folder {(moved / 'runs' / 'grid').resolve()} (written by "
                           "`workbench grid`)")
    # one input edited after the run: verify names that file, and only it
    _rewrite(moved / "grid" / "land_use.nc",
             lambda d: d.assign_attrs(comment="edited after the run"))
    assert main(["verify", "unpacked/runs/grid"]) == 1
    text = " ".join(capsys.readouterr().out.split())
    assert "input land_use (land_use.nc): " + str(moved / "grid" / "land_use.nc") \
        + " differs from the run" in text
    assert "input met (met.nc): as at the run" in text
    assert "1 difference(s)" in text


def test_check_of_a_grid_scenario_reads_the_grid(tmp_path, capsys):
    """`workbench check` of a scenario with a [grid] section only (a trial user).  Old code:
    "error: ...: no site catalogue", exit 2, so a grid user could not check the files
    before a run.  Now the grid files are opened and checked and the periods counted; a
    grid file that is not there is the scenario's located error."""
    scenario = make_demo_grid(tmp_path / "in", n=4)
    capsys.readouterr()
    assert main(["check", str(scenario)]) == 0
    out = capsys.readouterr().out
    assert "grid 4 x 4 cells" in out
    assert "periods: 1 month period\n" in out
    assert "run it with `workbench grid SCENARIO --out DIR`" in out
    (tmp_path / "in" / "land_use.nc").rename(tmp_path / "in" / "landuse.nc")
    assert main(["check", str(scenario)]) == 2
    err = capsys.readouterr().err
    assert "column 'grid.land_use': input file does not exist: got 'land_use.nc'" in err
