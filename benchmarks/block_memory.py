"""Memory of one block of sites of ``workbench run``, per site-hour and receptor surface.

    python benchmarks/block_memory.py                  # the demo network, a block a site
    python benchmarks/block_memory.py --repeat 2       # each block measured twice

What :data:`workbench.blocks.BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR` stands for (the
message of a worker with too little memory; docs/performance.md, "A block of sites on a
worker").  The demo scenario is read once; its sites are put in blocks of one site
each (a block holds sites that ask for the same receptor surfaces), and each block runs
with ``blocks.run_block`` in this process, as a worker runs it, after a first block has
warmed up the imports and tables.  Two measures of the same block: tracemalloc's traced
peak (numpy's arrays are traced) and the peak resident size minus the size before the
block, sampled by psutil every 5 ms on a thread.  Printed per block: its receptors, its
hourly met (sites x hours x variables x 8 bytes), both peaks [MiB] and the traced peak
per site-hour and receptor [bytes].  Memory, not time: the load of the machine does not
move it much.  Nothing is asserted.
"""
from __future__ import annotations

import argparse
import threading
import time
import tracemalloc
from pathlib import Path

import psutil

ROOT = Path(__file__).resolve().parents[1]
MIB = 2 ** 20


class _Resident:
    """Peak resident size [bytes] sampled every `every` seconds on a thread."""

    def __init__(self, every=0.005):
        self.every, self.peak, self._stop = every, 0, threading.Event()
        self._proc = psutil.Process()
        self._thread = threading.Thread(target=self._run, daemon=True)

    def _run(self):
        while not self._stop.is_set():
            self.peak = max(self.peak, self._proc.memory_info().rss)
            time.sleep(self.every)

    def __enter__(self):
        self.before = self._proc.memory_info().rss
        self.peak = self.before
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()


def _blocks(scenario):
    from workbench.blocks import block_inputs, block_layout, blocks_with_met, wanted_blocks
    from workbench.preflight import prepare
    from workbench.scenario import load_scenario
    sc = load_scenario(scenario)
    study, o, p = prepare(sc).study, sc.options, sc.data["period"]
    start, end = p["start"], p["end"]
    if start is None or end is None:
        s0, e0 = study.span()
        start, end = (s0 if start is None else start), (e0 if end is None else end)
    args = {"wet_options": o["wet"], "dry_options": o["dry"], "budget_options": o["budget"],
            "fixed_velocity": sc.fixed_velocity, "resolution": p["resolution"],
            "start": start, "end": end}
    receptors = study.receptors()
    wanted = blocks_with_met(wanted_blocks(study.catalogue(), receptors, 1), study.inputs,
                             receptors)
    for sites, recs in wanted:
        yield (sites, recs, block_inputs(study.inputs, sites),
               {**args, "receptors": recs, "layout": block_layout(receptors, recs)},
               study.site_overrides)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    ap.add_argument("--repeat", type=int, default=1, help="measures of each block")
    a = ap.parse_args(argv)
    from workbench.blocks import run_block
    blocks = list(_blocks(a.scenario))
    sites, recs, inputs, args, over = blocks[0]
    run_block(inputs, over, args)                       # warm-up: imports, tables
    print("| block | receptors | hourly met (sites x hours x vars x 8 B) | traced peak | "
          "resident peak - before | bytes a site-hour and receptor (traced) |")
    print("| --- | --- | --- | --- | --- | --- |")
    for sites, recs, inputs, args, over in blocks:
        met = inputs.met
        n_hours = met.sizes["time"]
        n_vars = len([v for v in met.data_vars if "time" in met[v].dims])
        met_b = len(sites) * n_hours * n_vars * 8
        for _ in range(a.repeat):
            tracemalloc.start()
            tracemalloc.reset_peak()
            with _Resident() as rss:
                run_block(inputs, over, args)
            traced = tracemalloc.get_traced_memory()[1]
            tracemalloc.stop()
            per = traced / (len(sites) * n_hours * max(1, len(recs)))
            print(f"| {', '.join(sites)} | {len(recs)} | {met_b / MIB:.1f} MiB | "
                  f"{traced / MIB:.1f} MiB | {(rss.peak - rss.before) / MIB:.1f} MiB | "
                  f"{per:.0f} |", flush=True)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
