"""Intervals, CPU time and peak memory of the Monte Carlo of a whole run.

    python benchmarks/uncertainty_network.py                     # the demo, 2000 draws
    python benchmarks/uncertainty_network.py --scenario S --draws 2000 \\
        --set vd_site_gsd=1.0 --set lab_bias_filter_pack=false --budget bulk_correction=scale_wet
    python benchmarks/uncertainty_network.py --draws 1000 --dry so2_codeposition=true \\
        --dry nh3_acid_ratio_from_air=true --set vd_follows_air=true --profile 25

Printed: the 5-95 % range of the span mean (the mean yearly rate of the years that pass)
of the S and N totals on each site's own surface, and of the network's sum of them
(eq/ha/yr; width over median), then the CPU time (``time.process_time``) and the
tracemalloc peak of :func:`workbench.analysis.uncertainty.monte_carlo` alone (the engine
and the linear layer run before the clock starts).  The linear layer's CPU time is
printed beside it: under ``vd_follows_air`` it holds the grid of velocity runs on
scaled air (:func:`workbench.analysis.airvd.grid_pieces`), so the cost of the option is
the layer and the Monte Carlo together.  ``--profile N`` runs the layer and the Monte
Carlo again under cProfile in a fresh study and prints the N largest cumulative
times.  ``--npz`` keeps the arrays of
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


def own_surface_span_draws(q, catalogue):
    """(sites, their own surfaces, {"s": (D, K), "n": (D, K)}): the draws of each site's
    span mean of the S and N totals on its own surface [eq/ha/yr], from the
    ``total_draws`` of :func:`workbench.analysis.uncertainty.monte_carlo`'s result `q`
    (the network's sum: ``numpy.nansum`` over the sites; tests/test_docs_uncertainty_
    network.py holds docs/methods_uncertainty.md's figures with it)."""
    import numpy as np
    td = q.total_draws
    cat = {s.id: s for s in catalogue}
    sites = [str(s) for s in td["site"].values]
    own = [cat[s].land_use for s in sites]
    span = list(td["period"].values).index("span")
    draws = {e: np.stack([td[f"{e}_dep_eq_ha_yr"].sel(site=s, receptor=r).values[:, span]
                          for s, r in zip(sites, own)], 1) for e in ("s", "n")}
    return sites, own, draws


def interval(v):
    """The 5, 50 and 95 % of the draws `v` (numpy's default quantile)."""
    import numpy as np
    return [float(x) for x in np.quantile(v, [0.05, 0.5, 0.95])]


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    ap.add_argument("--draws", type=int, default=2000)
    ap.add_argument("--set", action="append", default=[], metavar="KEY=VALUE",
                    help="an [uncertainty] option for this run")
    ap.add_argument("--budget", action="append", default=[], metavar="KEY=VALUE",
                    help="a [budget] option for this run")
    ap.add_argument("--dry", action="append", default=[], metavar="KEY=VALUE",
                    help="a [dry] option for this run")
    ap.add_argument("--profile", type=int, default=0, metavar="N",
                    help="also profile the layer and the Monte Carlo (N largest entries)")
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
    dry = dataclasses.replace(sc.options["dry"], **pairs(args.dry))
    run_args = (sc.options["wet"], dry, bud, sc.fixed_velocity, "year")
    res = study.run(*run_args)
    opt = dataclasses.replace(sc.options["uncertainty"], draws=args.draws, **pairs(args.set))
    follow = bool(opt.vd_follows_air)
    c0, w0 = time.process_time(), time.perf_counter()
    layer = U.linear_layer(res, study, "years", None, False, follow)
    layer_cpu, layer_wall = time.process_time() - c0, time.perf_counter() - w0
    tracemalloc.start()
    c0, w0 = time.process_time(), time.perf_counter()
    q = U.monte_carlo(res, study, opt, {"years": layer, "budget": layer})
    cpu, wall = time.process_time() - c0, time.perf_counter() - w0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    out = {"cpu_s": cpu, "wall_s": wall, "layer_cpu_s": layer_cpu, "layer_wall_s": layer_wall,
           "peak_mb": peak / 1e6, "intervals": {}}
    arrays = {"years_deposition": q.years["deposition"].values,
              "span_total": q.span["total_deposition"].values}
    sites, own, per_site = own_surface_span_draws(q, study.catalogue())

    def line(label, v):
        lo, mid, hi = out["intervals"][label] = interval(v)
        return f"{label}: {lo:.1f} .. {hi:.1f} (median {mid:.1f}, width / median {(hi - lo) / mid:.3f})"
    for e in ("s", "n"):
        arrays[f"{e}_span_draws"] = per_site[e]
        print(line(f"{e.upper()} network sum, span [eq/ha/yr]", np.nansum(per_site[e], 1)))
        for k, s in enumerate(sites):
            print("  " + line(f"{s} ({own[k]})", per_site[e][:, k]))
    if args.npz:
        np.savez(args.npz, **arrays)
    print(f"{args.draws} draws: CPU {cpu:.2f} s, tracemalloc peak {peak / 1e6:.1f} MB; "
          f"linear layer CPU {layer_cpu:.2f} s (vd_follows_air {str(follow).lower()}); "
          f"wall: Monte Carlo {wall:.2f} s, layer {layer_wall:.2f} s")
    if args.profile:
        import cProfile
        import pstats
        fresh = Study.from_scenario(sc)
        res2 = fresh.run(*run_args)
        before = dict(fresh.graph.counts)
        prof = cProfile.Profile()
        prof.enable()
        lay2 = U.linear_layer(res2, fresh, "years", None, False, follow)
        U.monte_carlo(res2, fresh, opt, {"years": lay2, "budget": lay2})
        prof.disable()
        pstats.Stats(prof).sort_stats("cumulative").print_stats(args.profile)
        print("graph computations per stage (layer and Monte Carlo):",
              {k: n - before.get(k, 0) for k, n in sorted(fresh.graph.counts.items())
               if n > before.get(k, 0)})
    return out


if __name__ == "__main__":
    main()
