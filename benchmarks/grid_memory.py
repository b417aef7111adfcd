"""Peak memory of `workbench grid` per block and against the size of the grid.

Flat memory means: a block's peak does not grow with the grid, and the process does not
grow with the number of blocks.  This benchmark measures both on the invented demo grid
(`workbench.grid_demo.make_demo_grid`), three months of hours (2,208 h: 19 x 19 cells a
block by default, 0.80 M cell-hours), the met as NetCDF4 chunked by 736 hours (zlib 1)
and as NetCDF3 (classic, as the demo writes it).  A measurement, not a test.

    python benchmarks/grid_memory.py --make DIR --n 20 --n 60 --n 100
    python benchmarks/grid_memory.py --run DIR --n 20 --n 60 --what block
    python benchmarks/grid_memory.py --run DIR --n 20 --n 60 --what grid
    python benchmarks/grid_memory.py --run DIR --n 20 --n 60 --n 100 --what dask

Each measurement runs in a fresh process (`--child`).  ``--what read``: `read_block` of
the first block alone; ``block``: `block_result` of the first block; ``copy``: the
block-major scratch copy of the time-chunked met alone (`grid.staged`, in this process);
``copy-dask``: the copy alone with a local cluster of 2 workers (on the workers where
`grid.staged` takes the client, in this process in the code before); ``grid``: every
block in process (`compute_grid`); ``dask``: every block as a dask task on a local cluster
of 2 single-threaded worker processes (as ``workbench grid --workers 2``), each worker's
idle resident set before the blocks and its peak (VmHWM) after them, and the most block
results held on the workers at once (a scheduler plugin) and each worker's resident set
after each task it finished, in order (a worker plugin: block to block), and the
largest peak of each kind of task (the copy's ``_copy_one``, the blocks' ``block_result``)
on each worker (its VmHWM reset when a task starts).  Printed: the process's peak resident set (VmHWM),
its resident set before the measured part (imports and the open grid), the difference
("above base"), the resident set after each block (``grid``: growth across blocks), CPU,
and the load average, then the ratio of each size's peak above base to the first size's; ``--trace`` adds the tracemalloc peak (slower).  Report ratios of
the numbers of one machine at one load; see docs/performance.md.
"""
from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ROLES = ("met", "air", "land_use")
#: Met hours a chunk of the NetCDF4 copy [h] (a third of the record, as the trial's).
NC4_CHUNK_HOURS = 736


def _status(key: str) -> float:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(key + ":"):
            return int(line.split()[1]) / 1024
    return float("nan")


def make(folder: Path, n: int, months: int = 3):
    """The demo grid of n x n cells (NetCDF3) and its met as NetCDF4 chunked along time."""
    import xarray as xr
    from workbench.grid_demo import make_demo_grid
    base = folder / f"n{n}"
    sc = make_demo_grid(base / "nc3", n=n, months=months)
    out = base / "nc4"
    out.mkdir(parents=True, exist_ok=True)
    for role in ROLES:
        with xr.open_dataset(base / "nc3" / f"{role}.nc") as ds:
            ds = ds.load()
        enc = {}
        for v in ds.data_vars:
            if role == "met" and ds[v].ndim == 3 and ds[v].dims[0] == "time":
                enc[v] = {"zlib": True, "complevel": 1,
                          "chunksizes": (min(NC4_CHUNK_HOURS, ds.sizes["time"]),) + ds[v].shape[1:]}
        ds.to_netcdf(out / f"{role}.nc", engine="netcdf4", format="NETCDF4", encoding=enc)
    (out / "scenario.toml").write_text(sc.read_text())
    print(json.dumps({"made": str(base), "n": n, "months": months}))


def child(folder: Path, what: str, trace: bool, block: int):
    import numpy as np  # noqa: F401  (imports before the base line)
    from workbench import grid as g
    from workbench.budget import BudgetOptions
    from workbench.drydep import DryOptions
    from workbench.grid_io import block_catalogue, open_grid, read_block
    grid = open_grid(*(folder / f"{r}.nc" for r in ROLES))
    block = block or g.default_block(len(grid.times))
    periods = g.make_periods(grid, "month")
    args = (DryOptions(), BudgetOptions(), periods)
    (ys, xs), = g.blocks(grid.shape, block)[0][:1]
    if trace:
        import tracemalloc
        tracemalloc.start()
    base = _status("VmRSS")
    after = []
    t0, c0 = time.perf_counter(), time.process_time()
    if what == "read":
        read_block(grid, ys, xs, block_catalogue(grid, ys, xs))
    elif what == "block":
        g.block_result(grid, ys, xs, *args)
    elif what == "copy":                 # the block-major scratch copy alone
        with g.staged(grid, block):
            pass
    elif what in ("dask", "copy-dask"):
        workers = _on_dask(grid, args, block, out_workers := {}, what == "copy-dask")
    else:
        g.compute_grid(grid, *args, block=block,
                       progress=lambda _: after.append(round(_status("VmRSS"))))
    out = {"folder": str(folder), "what": what, "shape": list(grid.shape), "block": block,
           "cell_hours_per_block": (ys.stop - ys.start) * (xs.stop - xs.start) * len(grid.times),
           "peak_mb": round(_status("VmHWM")), "base_mb": round(base),
           "above_base_mb": round(_status("VmHWM") - base),
           "cpu_s": round(time.process_time() - c0, 1),
           "wall_s": round(time.perf_counter() - t0, 1), "load": round(os.getloadavg()[0], 2)}
    if trace:
        out["traced_peak_mb"] = round(tracemalloc.get_traced_memory()[1] / 1e6)
    if after:
        out["rss_after_blocks_mb"] = after
    if what in ("dask", "copy-dask"):
        out.update(workers=workers, **out_workers)
    print(json.dumps(out))


def _worker_status():
    """(VmHWM, VmRSS) of this worker process [MB], and its pid."""
    return {"pid": os.getpid(), "peak_mb": round(_status("VmHWM")),
            "rss_mb": round(_status("VmRSS"))}


def _on_dask(grid, args, block, out: dict, copy_only=False) -> int:
    """Every block as a dask task on a local cluster of 2 single-threaded worker
    processes (:func:`workbench.blocks.start_client`, as ``workbench grid --workers
    2``); `out` gets each worker's resident set when idle before the blocks
    (``worker_base_mb``), its peak (VmHWM) after them (``worker_peak_mb``), the
    difference, the tasks' count per worker and the blocks.  `copy_only`: the scratch
    copy alone (on the workers where `grid.staged` takes a client), no blocks."""
    import inspect
    from workbench import grid as g
    from workbench.blocks import close_client, start_client
    client = start_client(2)
    try:
        client.wait_for_workers(2)
        client.run(_warm)            # imports and one tiny engine call before the base line
        base = client.run(_worker_status)
        client.register_plugin(HeldResults())
        client.register_plugin(TaskMemory())
        on = {"client": client} if "client" in inspect.signature(g.staged).parameters else {}
        with g.staged(grid, block, **on) as staged:
            if copy_only:
                pass
            elif hasattr(g, "store_grid"):          # each block into grid.nc as it ends
                import tempfile
                import numpy as np
                from workbench.grid_output import create_grid_netcdf, grid_dataset
                names = g.output_names(grid.species)
                holder = np.broadcast_to(np.float64(np.nan),
                                         (len(names), len(args[2])) + tuple(grid.shape))
                with tempfile.TemporaryDirectory(prefix="grid-memory-") as tmp:
                    maps = create_grid_netcdf(grid_dataset(names, holder, grid, args[2], ""),
                                              Path(tmp) / "grid.nc", names)
                    g.store_grid(staged, maps, *args, block=block, client=client)
            else:                                 # the code before: one dask array
                names, arr = g.compute_grid(staged, *args, block=block, use_dask=True)
                client.compute(arr).result()
        done = client.run(_worker_status)
        tasks = client.run(_tasks_done)
        by_task = client.run(_task_rss)
        peaks = client.run(_task_peaks)
        out["block_results_held_at_most"] = client.run_on_scheduler(_held)
    finally:
        close_client(client)
    keys = sorted(base)
    out["worker_base_mb"] = [base[k]["rss_mb"] for k in keys]
    out["worker_peak_mb"] = [max(done[k]["peak_mb"], peaks[k][1]) for k in keys]
    out["worker_peak_above_base_mb"] = [p - base[k]["rss_mb"]
                                        for p, k in zip(out["worker_peak_mb"], keys)]
    for name in sorted({t for k in keys for t, _ in peaks[k][0]}):
        # each kind of task's largest peak on each worker, above its idle resident set
        out[f"worker_peak_above_base_mb_{name}"] = [
            max((p for t, p in peaks[k][0] if t == name), default=base[k]["rss_mb"])
            - base[k]["rss_mb"] for k in keys]
    out["worker_rss_after_mb"] = [done[k]["rss_mb"] for k in keys]
    out["worker_tasks"] = [tasks[k] for k in keys]
    out["worker_rss_by_task_mb"] = [by_task[k] for k in keys]
    out["blocks"] = sum(len(r) for r in g.blocks(grid.shape, block))
    return len(keys)


try:
    from distributed.diagnostics.plugin import SchedulerPlugin
except ImportError:                      # the dask measurement needs the scale extra
    SchedulerPlugin = object


class HeldResults(SchedulerPlugin):
    """Scheduler plugin: the most results of tasks (any key: the blocks' and, in the code
    before, their concatenation's) in memory on the workers at once."""

    name = "held-block-results"

    def __init__(self):
        self.now, self.most = set(), 0

    def transition(self, key, start, finish, *args, **kwargs):
        if finish == "memory":
            self.now.add(key)
            self.most = max(self.most, len(self.now))
        elif start == "memory":
            self.now.discard(key)


try:
    from distributed.diagnostics.plugin import WorkerPlugin
except ImportError:
    WorkerPlugin = object


class TaskMemory(WorkerPlugin):
    """Worker plugin: the worker's resident set (VmRSS) after each task it finished, in
    order [MB] (block to block: a flat worker does not grow from its first blocks to
    its last), and each task's own peak: the worker's VmHWM is reset when the task
    starts (``/proc/self/clear_refs``) and read when it ends, so that the scratch
    copy's tasks (``_copy_one``) and the blocks' (``block_result``) are told apart.
    The worker's peak over the whole run is the largest of the peaks seen."""

    name = "task-memory"

    def setup(self, worker):
        self.rss, self.tasks, self.most = [], [], 0.0

    def transition(self, key, start, finish, **kwargs):
        if finish == "executing":
            self.most = max(self.most, _status("VmHWM"))
            try:
                Path("/proc/self/clear_refs").write_text("5")    # VmHWM := VmRSS
            except OSError:
                pass
        elif finish == "memory":
            peak = _status("VmHWM")
            self.most = max(self.most, peak)
            self.rss.append(round(_status("VmRSS")))
            from dask.utils import key_split
            self.tasks.append((key_split(key), round(peak)))


def _task_rss(dask_worker=None):
    return dask_worker.plugins[TaskMemory.name].rss


def _task_peaks(dask_worker=None):
    """(task name, peak of the worker during the task [MB]) of each task it ran, and the
    worker's peak over the run [MB]."""
    plugin = dask_worker.plugins[TaskMemory.name]
    return plugin.tasks, round(max(plugin.most, _status("VmHWM")))


def _held(dask_scheduler=None):
    return dask_scheduler.plugins[HeldResults.name].most


def _tasks_done(dask_worker=None):
    """Tasks this worker ran (its transition log of 'memory' states)."""
    return sum(1 for t in getattr(dask_worker, "state", dask_worker).log if len(t) > 2
               and t[2] == "memory") if dask_worker is not None else -1


def _warm():
    """Import what a block imports (the preload of a local cluster does most of it)."""
    import workbench.drydep  # noqa: F401
    import workbench.grid  # noqa: F401
    return True


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--make", type=Path)
    p.add_argument("--run", type=Path)
    p.add_argument("--n", type=int, action="append", help="cells a side (repeatable)")
    p.add_argument("--months", type=int, default=3)
    p.add_argument("--layout", choices=("nc4", "nc3"), default="nc4")
    p.add_argument("--what", choices=("read", "block", "copy", "copy-dask", "grid", "dask"),
                   default="block")
    p.add_argument("--block", type=int, default=0, help="cells a block side (0: the default)")
    p.add_argument("--trace", action="store_true")
    p.add_argument("--repeat", type=int, default=1)
    p.add_argument("--child", type=Path, help=argparse.SUPPRESS)
    a = p.parse_args(argv)
    sys.path.insert(0, str(ROOT))
    if a.child:
        child(a.child, a.what, a.trace, a.block)
        return 0
    sizes = a.n or [20]
    if a.make:
        for n in sizes:
            make(a.make, n, a.months)
        return 0
    if not a.run:
        p.error("--make DIR or --run DIR")
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    above = {}
    for n in sizes:
        for _ in range(a.repeat):
            cmd = [sys.executable, __file__, "--child", str(a.run / f"n{n}" / a.layout),
                   "--what", a.what, "--block", str(a.block)] + (["--trace"] if a.trace else [])
            got = subprocess.run(cmd, check=True, env=env, capture_output=True, text=True)
            print(got.stdout.strip(), flush=True)
            above.setdefault(n, []).append(json.loads(got.stdout.strip().splitlines()[-1])
                                           ["above_base_mb"])
    first = min(above[sizes[0]])
    print(json.dumps({"peak_above_base_ratio_to_first_size":
                      {f"{n}x{n}": round(min(v) / first, 2) for n, v in above.items()}}))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
