"""Intervals, CPU time and peak memory of the Monte Carlo of a whole run.

    python benchmarks/uncertainty_network.py                     # the demo, 2000 draws
    python benchmarks/uncertainty_network.py --scenario S --draws 2000 \\
        --set vd_site_gsd=1.0 --set lab_bias_filter_pack=false --budget bulk_correction=scale_wet

Printed: the 5-95 % range of the span mean (the mean yearly rate of the years that pass)
of the S and N totals on each site's own surface, and of the network's sum of them
(eq/ha/yr; width over median), then the CPU time (``time.process_time``) and the
tracemalloc peak of :func:`workbench.analysis.uncertainty.monte_carlo` alone (the engine
and the linear layer run before the clock starts).  ``--npz`` keeps the arrays of
quantiles and draws (to compare two versions of the code bit for bit).  Nothing is
asserted: times depend on the machine and its load; report ratios.
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import sys
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def _value(text):
    """A ``key=value`` value as TOML would read it (true, 1.0, "x")."""
    try:
        return json.loads(text)
    except ValueError:
        return text


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    ap.add_argument("--draws", type=int, default=2000)
    ap.add_argument("--set", action="append", default=[], metavar="KEY=VALUE",
                    help="an [uncertainty] option for this run")
    ap.add_argument("--budget", action="append", default=[], metavar="KEY=VALUE",
                    help="a [budget] option for this run")
    ap.add_argument("--npz", help="write the quantiles and draws to this .npz file")
    args = ap.parse_args(argv)

    import numpy as np

    from workbench.analysis import uncertainty as U
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario

    def pairs(items):
        return {k: _value(v) for k, v in (s.split("=", 1) for s in items)}
    sc = load_scenario(args.scenario)
    study = Study.from_scenario(sc)
    bud = dataclasses.replace(sc.options["budget"], **pairs(args.budget))
    res = study.run(sc.options["wet"], sc.options["dry"], bud, sc.fixed_velocity, "year")
    opt = dataclasses.replace(sc.options["uncertainty"], draws=args.draws, **pairs(args.set))
    layer = U.linear_layer(res, study, "years")
    tracemalloc.start()
    c0 = time.process_time()
    q = U.monte_carlo(res, study, opt, {"years": layer, "budget": layer})
    cpu = time.process_time() - c0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    td = q.total_draws
    cat = {s.id: s for s in study.catalogue()}
    sites = [str(s) for s in td["site"].values]
    own = [cat[s].land_use for s in sites]
    span = list(td["period"].values).index("span")
    out = {"cpu_s": cpu, "peak_mb": peak / 1e6, "intervals": {}}
    arrays = {"years_deposition": q.years["deposition"].values,
              "span_total": q.span["total_deposition"].values}

    def line(label, v):
        lo, mid, hi = np.quantile(v, [0.05, 0.5, 0.95])
        out["intervals"][label] = [lo, mid, hi]
        return f"{label}: {lo:.1f} .. {hi:.1f} (median {mid:.1f}, width / median {(hi - lo) / mid:.3f})"
    for e in ("s", "n"):
        v = td[f"{e}_dep_eq_ha_yr"]
        per_site = np.stack([v.sel(site=s, receptor=r).values[:, span] for s, r in zip(sites, own)], 1)
        arrays[f"{e}_span_draws"] = per_site
        print(line(f"{e.upper()} network sum, span [eq/ha/yr]", np.nansum(per_site, 1)))
        for k, s in enumerate(sites):
            print("  " + line(f"{s} ({own[k]})", per_site[:, k]))
    if args.npz:
        np.savez(args.npz, **arrays)
    print(f"{args.draws} draws: CPU {cpu:.2f} s, tracemalloc peak {peak / 1e6:.1f} MB")
    return out


if __name__ == "__main__":
    main()
