"""Time of the particle Vd under ``[dry] particle_settling = "stokes"`` and ``"clift_gauvin"``.

    python benchmarks/particle_settling.py                 # demo year 2021, 5 repeats
    python benchmarks/particle_settling.py --repeat 9

``workbench.drydep.velocities`` on the demo scenario's met of 2021 and its surfaces,
the six particle species and no gas, once per rule and repeat, alternating.  Printed:
the median and best wall-clock time [s] of each rule and the ratios drag / Stokes of the
medians and of the best (the drag's fixed Newton steps at every size node; on a loaded
machine the best is the steadier).  Nothing is asserted.
"""
from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5, help="runs of each rule (5)")
    args = parser.parse_args(argv)
    from workbench.drydep import DryOptions, velocities
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    study = Study.from_scenario(load_scenario(ROOT / "demo_data" / "scenario.toml"))
    met = study.inputs.met.sel(time=slice("2021-01-01T01:00", "2022-01-01T00:00"))
    surf = study.surfaces()
    times = {"stokes": [], "clift_gauvin": []}
    for _ in range(args.repeat):
        for rule in times:
            t0 = time.perf_counter()
            velocities(met, surf, DryOptions(gases=(), components=False,
                                             particle_settling=rule))
            times[rule].append(time.perf_counter() - t0)
    for rule, t in times.items():
        print(f"{rule}: median {statistics.median(t):.3f} s, best {min(t):.3f} s")
    print(f"drag / stokes: medians "
          f"{statistics.median(times['clift_gauvin']) / statistics.median(times['stokes']):.2f}, "
          f"best {min(times['clift_gauvin']) / min(times['stokes']):.2f}")


if __name__ == "__main__":
    main()
