"""Time of the Monte Carlo of a site-year's budget (``workbench.analysis.uncertainty``).

    python benchmarks/uncertainty.py                          # ridge 2021, 1000 draws
    python benchmarks/uncertainty.py --site farm --year 2019 --draws 1000 --repeat 5

The demo scenario's options are used (the default factors of ``[uncertainty]``).
Printed, as median and best wall-clock times [ms]:

* layer: taking the per-sample pieces of the computed run (once per run);
* site-year: the factors, the draws of every component, the totals and their
  quantiles of one site and year (all its receptors) — the number the goal is about;
* network-year: :func:`monte_carlo` of every site for that year, budget and span;
* with ``--band``: the 5-95 % range added to the site explorer's budget bars on each
  redraw (one receptor, the years only; :func:`workbench.ui.uncertainty_band.with_range`);
* with ``--sobol``: the Sobol analysis (:func:`workbench.analysis.sensitivity.sobol`)
  of the site-year with the default ``[sensitivity]`` factors (10 linear factors,
  N = 64), once, split into the model evaluations and SALib's analysis;
* with ``--shares``: each drawn factor's share of the variance of the span's totals
  at the site (:func:`workbench.analysis.variance_shares.variance_shares`: the site's
  draws again with each factor alone), once, on the whole run's years;
* with ``--engine``: the same with two engine factors added (``wetness_rule`` over
  three rules, ``fine_fraction_pNO3`` 0.2-0.8), N = 16, on a study of the site alone
  (as ``workbench sensitivity`` with ``sites`` and the Sobol explorer do).

The engine (the budget itself) runs once before the clock starts; nothing is
asserted: times depend on the machine.  The ratios to the 5 s limit and the 1 s goal
of 1,000 draws of a site-year are printed for orientation.
"""
from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

#: Limit and goal for 1,000 draws of a site-year [s].
LIMIT_S, GOAL_S = 5.0, 1.0


def _times(fn, repeat):
    out = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t)
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    ap.add_argument("--site", default="ridge")
    ap.add_argument("--year", type=int, default=2021)
    ap.add_argument("--draws", type=int, default=1000)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--sobol", action="store_true", help="also time the Sobol analysis")
    ap.add_argument("--band", action="store_true",
                    help="also time the range on the site explorer's budget bars")
    ap.add_argument("--shares", action="store_true",
                    help="also time the variance shares of the site's span totals")
    ap.add_argument("--engine", action="store_true",
                    help="also time a Sobol analysis with two engine factors")
    args = ap.parse_args(argv)

    import dataclasses

    import numpy as np

    from workbench.analysis import uncertainty as U
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario

    sc = load_scenario(args.scenario)
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"], sc.fixed_velocity,
                    "year", f"{args.year}-01-01", f"{args.year + 1}-01-01")
    opt = dataclasses.replace(sc.options["uncertainty"], draws=args.draws)
    sites = [str(s) for s in res.budget["site"].values]
    k = sites.index(args.site)
    t_layer = _times(lambda: U.linear_layer(res, study), args.repeat)
    layer = U.linear_layer(res, study)
    year0 = int(layer.period_year.min())
    q = np.asarray(U.QUANTILES)

    def site_year():
        noise = U.site_noise(layer.sites[k], opt, opt.draws, 1, 1, (opt.seed, k))
        comp = U.component_draws(layer, k, noise, year0)
        np.quantile(comp, q, axis=0)
        for v in U.totals_of(comp).values():
            np.quantile(v, q, axis=0)

    t_site = _times(site_year, args.repeat)
    t_net = _times(lambda: U.monte_carlo(res, study, opt, {"budget": layer, "years": layer}),
                   args.repeat)
    n_rows = sum(len(p.censored) for p in layer.sites[k].dry.values())
    wet = layer.sites[k].wet
    print(f"{args.site} {args.year}: {res.budget.sizes['receptor']} receptors, {n_rows} air "
          f"rows, {0 if wet is None else wet.n_samples} precipitation samples; "
          f"{opt.draws} draws, {args.repeat} repeats")
    for name, t in (("layer", t_layer), ("site-year", t_site), ("network-year", t_net)):
        print(f"  {name:13s} median {1e3 * statistics.median(t):8.1f} ms   best "
              f"{1e3 * min(t):8.1f} ms")
    per_1000 = statistics.median(t_site) * 1000 / opt.draws
    print(f"  1,000 draws of the site-year: {per_1000:.3f} s = {per_1000 / LIMIT_S:.2f} x the "
          f"5 s limit, {per_1000 / GOAL_S:.2f} x the 1 s goal")
    out = {"layer_s": t_layer, "site_year_s": t_site, "network_year_s": t_net}
    if args.band:
        from workbench.ui import figures
        from workbench.ui.session import Session
        from workbench.ui.uncertainty_band import with_range
        session = Session.open(args.scenario)
        one = session.study_for(args.site, args.year, args.year)
        rec = session.receptors(args.site)[0]
        r = session.run(session.baseline, args.site, args.year, args.year, "year", rec)
        spec = figures.budget_bars_spec(r.years, args.site, rec, None, "kg/ha/yr")
        t_band = _times(lambda: with_range(spec, one, r, args.site, rec, "kg/ha/yr", opt,
                                           session.baseline.overrides), args.repeat)
        print(f"  {'band':13s} median {1e3 * statistics.median(t_band):8.1f} ms   best "
              f"{1e3 * min(t_band):8.1f} ms   (site explorer redraw, receptor {rec})")
        out["band_s"] = t_band
    if args.sobol:
        from workbench.analysis import sensitivity as S
        sopt = dataclasses.replace(sc.options["sensitivity"], sites=(args.site,))
        base = {"wet": sc.options["wet"], "dry": sc.options["dry"],
                "budget": sc.options["budget"], "fixed_velocity": sc.fixed_velocity}
        kw = {"resolution": "year", "start": f"{args.year}-01-01",
              "end": f"{args.year + 1}-01-01"}
        sample, _ = S._salib()
        x = sample.sample(S.problem(sopt), sopt.samples, calc_second_order=False, seed=sopt.seed)
        t_eval = _times(lambda: S.evaluate(study, base, sopt, x, kw), 1)[0]
        t_all = _times(lambda: S.sobol(study, base, sopt, kw), 1)[0]
        print(f"  Sobol, {len(sopt.factors)} factors, N = {sopt.samples} ({len(x)} rows): "
              f"{t_all:.2f} s, of which the model evaluations {t_eval:.2f} s "
              f"({t_all / 60:.2f} x the 1 minute goal)")
        out.update({"sobol_s": t_all, "sobol_evaluations_s": t_eval})
    if args.shares:
        import os

        from workbench.analysis.variance_shares import variance_shares
        full = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                         sc.fixed_velocity, "year")
        ylayer = U.linear_layer(full, study, "years")
        t_mc = _times(lambda: U.monte_carlo(full, study, opt, {"years": ylayer}), 1)[0]
        t_sh = _times(lambda: variance_shares(full, study, opt, sites=[args.site],
                                              layer=ylayer), 1)[0]
        print(f"  shares of {args.site}'s span totals: {t_sh:.2f} s; the Monte Carlo of "
              f"the whole run's years {t_mc:.2f} s (load {os.getloadavg()[0]:.1f})")
        out.update({"shares_s": t_sh, "monte_carlo_years_s": t_mc})
    if args.engine:
        from workbench.analysis import sensitivity as S
        factors = {**sc.options["sensitivity"].factors,
                   "wetness_rule": ("met", "always_dry", "always_wet"),
                   "fine_fraction_pNO3": (0.2, 0.8)}
        eopt = dataclasses.replace(sc.options["sensitivity"], samples=16, sites=(args.site,),
                                   factors=factors)
        one = Study(study.inputs.subset([args.site]), study.site_overrides)
        base = {"wet": sc.options["wet"], "dry": sc.options["dry"],
                "budget": sc.options["budget"], "fixed_velocity": sc.fixed_velocity}
        kw = {"resolution": "year", "start": f"{args.year}-01-01",
              "end": f"{args.year + 1}-01-01"}
        runs = []

        def counted(items):
            items = list(items)
            runs.append(len(items))
            return items
        t_eng = _times(lambda: S.sobol(one, base, eopt, kw, counted), 1)[0]
        print(f"  Sobol, {len(factors)} factors (2 in the engine), N = 16: {t_eng:.1f} s for "
              f"{runs[0]} engine runs ({t_eng / 60:.2f} x the 1 minute goal)")
        out.update({"sobol_engine_s": t_eng, "engine_runs": runs[0]})
    return out


if __name__ == "__main__":
    main()
