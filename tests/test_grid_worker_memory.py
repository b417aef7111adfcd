"""`workbench grid` on dask workers whose memory limit is smaller than what a task needs
(workbench.worker_memory, shared with `workbench run`).

The met of an invented 64 x 64 demo grid is NetCDF4 in one zlib chunk a variable (a
month: 744 time steps x 64 x 64 cells, 12 MB of float32), so its block-major scratch
copy runs on a worker and decompresses the chunk whole.  A local cluster of one worker
process with a memory limit of 150 MB (143 MiB; an idle worker takes about 115 MiB):
the copy passes 95 % of the limit and the nanny restarts the worker; before, the command
ended in a traceback of distributed's KilledWorker (after 4 deaths, about 15 s here),
and a worker paused above 80 % of its limit by its own idle memory ran nothing while the
command waited for ever.  Now either way one line names the limit, the chunk and what to
change; the same for a block task of the grid in NetCDF3 (nothing to copy).  The
scheduler here lets a task fail at the first death and the watch gives up after 3 s of
paused workers, so each run ends in about 10 s (the inputs take longer to write).
distributed's own messages go to a log kept beside the output folder
(workbench.dasklog), named at the end of the line.
"""
from __future__ import annotations

import re

import pytest
import xarray as xr

pytest.importorskip("distributed")
pytest.importorskip("netCDF4", reason="NetCDF4 files need the netcdf4 extra")

import workbench.worker_memory as worker_memory  # noqa: E402
from workbench.grid_demo import make_demo_grid  # noqa: E402

N = 64


@pytest.fixture(scope="module")
def one_chunk(tmp_path_factory):
    """The demo grid of N x N cells with its met in one NetCDF4 chunk a variable."""
    base = tmp_path_factory.mktemp("worker_memory")
    sc = make_demo_grid(base / "nc3", n=N)
    with xr.open_dataset(base / "nc3" / "met.nc") as ds:
        ds = ds.load()
    enc = {v: {"zlib": True, "complevel": 1, "chunksizes": ds[v].shape}
           for v in ds.data_vars if ds[v].ndim == 3 and ds[v].dims[0] == "time"}
    ds.to_netcdf(base / "nc3" / "met4.nc", engine="netcdf4", format="NETCDF4", encoding=enc)
    path = base / "nc3" / "scenario4.toml"
    path.write_text(sc.read_text().replace('"met.nc"', '"met4.nc"'))
    return path, ds.sizes["time"]


@pytest.fixture(scope="module")
def address():
    """A local cluster of one worker process limited to 150 MB, whose scheduler lets a
    task fail at its first worker's death."""
    import dask
    import distributed
    with dask.config.set({"distributed.scheduler.allowed-failures": 0}):
        cluster = distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                           memory_limit="150MB", dashboard_address=None)
    try:
        yield cluster.scheduler_address
    finally:
        cluster.close()


def _run(scenario, out, address, capsys, monkeypatch) -> str:
    """`workbench grid` on the cluster: its one error line (exit code 2, no traceback)."""
    from workbench.cli import main
    monkeypatch.setattr(worker_memory, "PAUSED_GIVE_UP_S", 3.0)
    code = main(["grid", str(scenario), "--out", str(out), "--quiet", "--block", "16",
                 "--scheduler", address])
    err = capsys.readouterr().err
    assert code == 2
    lines = [ln for ln in err.splitlines() if ln.startswith("error:")]
    assert len(lines) == 1, err
    assert "Traceback" not in err and "KilledWorker" not in err
    assert not out.exists()
    line = lines[0]
    # distributed's own messages of this process (the cluster's scheduler and nanny run
    # here): in a log beside the output folder, named at the end of the message
    log = out.parent / f"{out.name}.dask.log"
    assert [p.name for p in out.parent.iterdir()] == [log.name]
    assert line.endswith(f" (distributed's own messages: {log})")
    assert line.startswith("error: the dask workers have too little memory for the grid: ")
    assert re.search(r"(the workers that ran|every worker has been paused|no worker has been "
                     r"running)", line), line
    assert "the workers have a memory limit of 143 MiB" in line
    assert "give each worker more memory (start them with a larger `dask worker " \
           "--memory-limit`)" in line
    return line


def test_too_little_memory_for_a_chunk_is_one_message(one_chunk, tmp_path, capsys,
                                                      monkeypatch, address):
    scenario, n_t = one_chunk
    line = _run(scenario, tmp_path / "out", address, capsys, monkeypatch)
    assert "the block-major scratch copy of " in line and " of met4.nc" in line
    assert f"a time chunk of it, {n_t} time steps x {N} x {N} cells, is 12 MiB" in line
    assert "or write met4.nc with fewer time steps a chunk" in line


def test_too_little_memory_for_a_block_is_one_message(one_chunk, tmp_path, capsys,
                                                      monkeypatch, address):
    """The NetCDF3 grid (nothing copied): the block tasks need more than the worker has."""
    scenario, n_t = one_chunk
    line = _run(scenario.parent / "scenario.toml", tmp_path / "out", address, capsys,
                monkeypatch)
    assert "the workers that ran a block of 16 x 16 cells died" in line or \
        "with a block of 16 x 16 cells waiting" in line
    assert f"a block of {16 * 16 * n_t:,} cell-hours (16 x 16 cells x {n_t} hours)" in line
    assert "or a smaller --block (now 16;" in line
