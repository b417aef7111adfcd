"""Time of ``workbench.drydep.velocities`` for one site-year, with its sections.

    python benchmarks/velocities.py                       # ridge 2021, 7 repeats
    python benchmarks/velocities.py --site farm --year 2019 --repeat 9

The demo scenario's site-year and dry options are used (as in the site explorer).
Printed: the median and the best wall-clock time [ms] of the whole call, and the
median of each section:

* setup: from the call to the start of the hourly block (previous hour's rain,
  first autumn frost, the augmented Dataset);
* steps 1-2: pressure, air, sun and clouds;
* step 3: the wind mast's surface (Charnock, u* solvers);
* steps 4-5: receptors (u* transfer, Ra), season and wetness;
* gases: Rb, Rc and Vd of every gas;
* particles: mass-weighted Vd of every particle (time spent in
  ``mass_weighted_velocities``);
* assemble: the rest of the hourly block (output Variables);
* post: from the end of the hourly block to the return (counts, attributes).

The sections are found by wrapping a few functions of the module with a clock; the
wrappers add a few microseconds.  Nothing is asserted: times depend on the machine.
The ratio to the 50 ms goal of one site-year is printed for orientation.
"""
from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

#: Goal for one site-year [s] (a UI latency budget of 100 ms for a dry option change).
GOAL_S = 0.050


def _clocked(module, name, marks, key, accumulate=False):
    """Replace ``module.name`` by a wrapper that records its first entry (or its time)."""
    fn = getattr(module, name)

    def wrapper(*args, **kwargs):
        t = time.perf_counter()
        if not accumulate:
            marks.setdefault(key, t)
        out = fn(*args, **kwargs)
        if accumulate:
            marks[key] = marks.get(key, 0.0) + time.perf_counter() - t
        return out

    setattr(module, name, wrapper)
    return fn


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    ap.add_argument("--site", default="ridge")
    ap.add_argument("--year", type=int, default=2021)
    ap.add_argument("--repeat", type=int, default=7)
    args = ap.parse_args(argv)

    from workbench.drydep import core
    from workbench.drydep import particles
    from workbench.drydep import receptors
    from workbench.drydep import gas
    from workbench.ui.session import Session

    session = Session.open(args.scenario)
    study = session.study_for(args.site, args.year, args.year)
    met = study.inputs.met.load()
    surf = study.catalogue().surfaces()
    opt = session.baseline.run_args()["dry_options"]
    core.velocities(met, surf, opt)  # warm-up (imports, caches of numpy)

    marks = {}
    _clocked(receptors, "met_surface", marks, "step3")
    _clocked(receptors, "receptor_roughness", marks, "step4")
    _clocked(gas, "quasi_laminar_resistance", marks, "gases")
    if hasattr(gas, "surface_resistances"):  # all gases at once, before the first Rb
        _clocked(gas, "surface_resistances", marks, "gases")
    # the particle entry point (one call for all modes; older versions: one per mode)
    entry = ("mass_weighted_velocities" if hasattr(particles, "mass_weighted_velocities")
             else "mass_weighted_velocity")
    _clocked(particles, entry, marks, "particles_s", accumulate=True)
    hourly = core._hourly

    def timed_hourly(*a, **k):
        marks.setdefault("hourly_in", time.perf_counter())
        out = hourly(*a, **k)
        marks["hourly_out"] = time.perf_counter()
        return out

    core._hourly = timed_hourly
    # the first mass_weighted_velocities call ends the gases loop
    first_particle = getattr(particles, entry)

    def particle_entry(*a, **k):
        marks.setdefault("particles", time.perf_counter())
        return first_particle(*a, **k)

    setattr(particles, entry, particle_entry)

    rows = []
    for _ in range(args.repeat):
        marks.clear()
        t0 = time.perf_counter()
        core.velocities(met, surf, opt)
        t1 = time.perf_counter()
        m = marks
        part = m["particles_s"]
        rows.append({
            "total": t1 - t0,
            "setup": m["hourly_in"] - t0,
            "steps 1-2": m["step3"] - m["hourly_in"],
            "step 3": m["step4"] - m["step3"],
            "steps 4-5": m["gases"] - m["step4"],
            "gases": m["particles"] - m["gases"],
            "particles": part,
            "assemble": m["hourly_out"] - m["particles"] - part,
            "post": t1 - m["hourly_out"],
        })
    n = met.sizes["time"] * surf.sizes["receptor"]
    print(f"velocities: site {args.site}, {args.year}: {met.sizes['time']} hours x "
          f"{surf.sizes['receptor']} receptors ({n} site-receptor-hours), "
          f"{args.repeat} repeats")
    for key in rows[0]:
        vals = [r[key] for r in rows]
        print(f"  {key:<10} median {1e3 * statistics.median(vals):7.1f} ms   "
              f"best {1e3 * min(vals):7.1f} ms")
    med = statistics.median(r["total"] for r in rows)
    print(f"  ratio of the median total to the {1e3 * GOAL_S:.0f} ms goal: {med / GOAL_S:.2f}")
    print(f"  site-receptor-hours per second (median): {n / med:.3g}")


if __name__ == "__main__":
    main()
