"""Cost of the run-time check of the aerodynamic limit of the particle Vd (issue 12).

    python benchmarks/particle_limit.py                 # demo year 2021, 5 repeats
    python benchmarks/particle_limit.py --repeat 9

``workbench.drydep.velocities`` on the demo scenario's met of 2021 and its surfaces,
the six particle species and no gas (the worst case: nothing else to dilute the check),
under each ``particle_settling`` rule, with the check and with it switched off (the
engine's ``check_aerodynamic_limit`` replaced by a function that returns the Vd), the
four alternating.  Printed: the median and best wall-clock time [s] of each and the
ratios with / without of the medians and of the best.  Nothing is asserted.  The mode's
settling velocity that the check needs is computed in both (it is a by-product of the
Vd sum), so the ratio is the check's own cost; the cost of returning the settling is
measured against the old code with ``--velocities-only`` run from each tree.
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
    parser.add_argument("--repeat", type=int, default=5, help="runs of each case (5)")
    parser.add_argument("--velocities-only", action="store_true",
                        help="time the particle Vd as it is (no switch; any version)")
    args = parser.parse_args(argv)
    from workbench.drydep import DryOptions, velocities
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    study = Study.from_scenario(load_scenario(ROOT / "demo_data" / "scenario.toml"))
    met = study.inputs.met.sel(time=slice("2021-01-01T01:00", "2022-01-01T00:00"))
    surf = study.surfaces()

    def run(rule):
        t0 = time.perf_counter()
        velocities(met, surf, DryOptions(gases=(), components=False, particle_settling=rule))
        return time.perf_counter() - t0
    if args.velocities_only:
        t = [run("stokes") for _ in range(args.repeat)]
        print(f"stokes: median {statistics.median(t):.3f} s, best {min(t):.3f} s")
        return
    from workbench.drydep import core
    checked = core._limit.check_aerodynamic_limit
    times = {}
    for _ in range(args.repeat):
        for rule in ("stokes", "clift_gauvin"):
            for on in (True, False):
                core._limit.check_aerodynamic_limit = (
                    checked if on else lambda vd, *a, **k: vd)
                times.setdefault((rule, on), []).append(run(rule))
    core._limit.check_aerodynamic_limit = checked
    for (rule, on), t in times.items():
        print(f"{rule} check {'on ' if on else 'off'}: median {statistics.median(t):.3f} s, "
              f"best {min(t):.3f} s")
    for rule in ("stokes", "clift_gauvin"):
        on, off = times[rule, True], times[rule, False]
        print(f"{rule}: on / off medians {statistics.median(on) / statistics.median(off):.3f}, "
              f"best {min(on) / min(off):.3f}")


if __name__ == "__main__":
    main()
