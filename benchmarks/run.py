"""Benchmarks of the computation on the demo network: speed as ratios, never asserted.

Run ``python benchmarks/run.py``; the numbers quoted in docs/performance.md come from it.
Each timing is the best of a few repeats (wall clock).  Ratios compare like with like on
the same machine, so they travel better than seconds:

* reading: hourly met rows per second, and the cost of one met row relative to one
  precipitation row;
* velocities: site-receptor-hours per second, in memory and dask-chunked over time
  (ratio dask / numpy), and the scaling with the number of hours (ratio 8 years / 1 year);
* budget: a full demo run against one site-year, and a recomputation after a wet or a
  budget option change against the first run (the cache at work).
"""
from __future__ import annotations

import dataclasses
import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))


def best(fn, repeat=3):
    times = []
    out = None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def main():
    from workbench.drydep import DryOptions, velocities
    from workbench.io import read_met, read_precipitation, read_sites
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario

    demo = ROOT / "demo_data"
    res = {}
    cat = read_sites(demo / "sites.toml")
    t_met, (met, _) = best(lambda: read_met(demo / "met.csv.gz", cat), 2)
    n_met = int(met["row_present"].sum())
    t_pr, (pr, _) = best(lambda: read_precipitation(demo / "precipitation.csv", cat), 3)
    res["read_met_rows_per_s"] = n_met / t_met
    res["read_cost_met_row_over_precip_row"] = (t_met / n_met) / (t_pr / pr.sizes["sample"])

    surf = cat.surfaces()
    one_year = met.sel(time=slice("2021-01-01", "2021-12-31T23:00"))
    t1, v1 = best(lambda: velocities(one_year, surf, DryOptions()), 2)
    t8, _ = best(lambda: velocities(met, surf, DryOptions()), 1)
    cells1 = surf.sizes["site"] * surf.sizes["receptor"] * one_year.sizes["time"]
    res["velocities_cells_per_s_1yr"] = cells1 / t1
    res["velocities_time_ratio_8yr_over_1yr"] = t8 / t1
    res["velocities_hours_ratio_8yr_over_1yr"] = met.sizes["time"] / one_year.sizes["time"]
    try:
        chunked = one_year.chunk({"time": 24 * 30})
        td, _ = best(lambda: velocities(chunked, surf, DryOptions()).compute(), 2)
        res["velocities_dask_over_numpy_1yr"] = td / t1
    except ImportError:
        res["velocities_dask_over_numpy_1yr"] = None

    sc = load_scenario(demo / "scenario.toml")
    study = Study.from_scenario(sc)
    t_full, _ = best(lambda: Study(study.inputs, sc.data["sites"]).run(
        sc.options["wet"], sc.options["dry"], sc.options["budget"], sc.fixed_velocity), 1)
    sub_inputs = study.inputs.subset(["ridge"], "2021-01-01", "2022-01-01")
    sub = Study(sub_inputs, sc.data["sites"])
    args = dict(start="2021-01-01", end="2022-01-01")
    t_first, _ = best(lambda: Study(sub_inputs, sc.data["sites"]).run(
        sc.options["wet"], sc.options["dry"], sc.options["budget"], **args), 2)
    sub.run(sc.options["wet"], sc.options["dry"], sc.options["budget"], **args)
    flips = iter(["zero", "limit", "half", "zero", "limit"])
    t_wet, _ = best(lambda: sub.run(dataclasses.replace(sc.options["wet"], detection_limit=next(flips)),
                                    sc.options["dry"], sc.options["budget"], **args), 3)
    covs = iter([0.70, 0.71, 0.72, 0.73])
    t_bud, _ = best(lambda: sub.run(sc.options["wet"], sc.options["dry"],
                                    dataclasses.replace(sc.options["budget"], min_air_coverage=next(covs)),
                                    **args), 3)
    res["budget_full_demo_s"] = t_full
    res["budget_one_site_year_first_s"] = t_first
    res["budget_full_over_one_site_year"] = t_full / t_first
    res["recompute_wet_option_over_first"] = t_wet / t_first
    res["recompute_budget_option_over_first"] = t_bud / t_first
    res["recompute_wet_option_ms"] = t_wet * 1e3
    res["recompute_budget_option_ms"] = t_bud * 1e3
    print(json.dumps({k: (round(v, 4) if isinstance(v, float) else v) for k, v in res.items()}, indent=1))


if __name__ == "__main__":
    main()
