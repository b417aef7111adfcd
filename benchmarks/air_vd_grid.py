"""The Monte Carlo's velocities following the drawn air (``[uncertainty] vd_follows_air``):
its error against the engine run on a draw's air, and its cost.

Under ``[dry] so2_codeposition`` and ``nh3_acid_ratio_from_air`` the draws can follow
the NH3/SO2 and acid ratios of their drawn air by the grid method of
:mod:`workbench.analysis.airvd` (the velocities run on the air with NH3 scaled by the
factors of ``GRID_FACTORS``, each sample's part interpolated at the draw's factor of
the ratio).  This script

* runs the engine again on the air of ``--check`` draws (every SO2, HNO3 and NH3 sample
  of the site times its drawn factors: :func:`workbench.analysis.airvd.air_of_draw`) and
  compares its dry SO2 and NH3 deposition of the year with the grid's
  (:func:`workbench.analysis.airvd.air_only_draws`, the air factors alone: the Vd, class,
  site and fill factors multiply both alike) and with the fixed velocities of the
  measured air;
* times a run with its Monte Carlo (``--draws``) with the option off and on, each in a
  fresh study (its graph empty), and gives the ratio; and the Monte Carlo asked again
  (the grid's velocity runs then come from the graph's cache: the draws alone).

Run: ``python benchmarks/air_vd_grid.py [--site ridge] [--year 2021] [--draws 1000]
[--check 5] [--points 9] [--air-sd 0.05] [--censored-every 4]`` (``--check`` engine
runs of one site-year, a minute or two; ``--censored-every`` takes every n-th SO2 and NH3
sample as below detection, its draws the spread of such a value).
"""
from __future__ import annotations

import argparse
import dataclasses
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT))

from ui.demo_subset import study_and_args, write_demo_subset  # noqa: E402
from workbench.analysis import airvd  # noqa: E402
from workbench.analysis import uncertainty as U  # noqa: E402
from workbench.pipeline import Study  # noqa: E402

LINES = "so2_codeposition = true\nnh3_acid_ratio_from_air = true"


def scenario(work: Path, site: str, year: int) -> Path:
    sc = write_demo_subset(work / "base", (site,), year, year)
    sc.write_text(sc.read_text().replace("[budget]", f"[dry]\n{LINES}\n\n[budget]"))
    return sc


def _quiet(fn, *a, **k):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return fn(*a, **k)


def drawn_site(sc, site, draws, seed, air_sd=None, censored_every=0):
    """(study, run arguments, linear layer, the site's index in it, its draws' noise):
    the site of scenario `sc` run and drawn with ``vd_follows_air`` (`draws` draws,
    `seed`; ``air_rel_sd`` `air_sd` where given; every `censored_every`-th SO2 and NH3
    sample taken as below detection where not 0). tests/test_docs_uncertainty_grid.py
    holds docs/methods_uncertainty.md's "Draws beyond the grid" with it."""
    study, args = study_and_args(sc)
    res = _quiet(study.run, *args)
    more = {} if air_sd is None else {"air_rel_sd": air_sd}
    opt = U.UncertaintyOptions(draws=draws, seed=seed, vd_follows_air=True, **more)
    lay = _quiet(U.linear_layer, res, study, "years", None, False, True)
    ds = lay.budget
    k = [str(s) for s in ds["site"].values].index(site)       # the catalogue keeps all
    ls = lay.sites[k]
    if censored_every:
        # every n-th SO2 and NH3 sample taken as below detection: drawn with the spread
        # of such a value (censored_rel_sd, cut at 0), as a site near its limits
        for sp in ("SO2", "NH3"):
            c = np.zeros(len(ls.dry[sp].ident), bool)
            c[::censored_every] = True
            ls.dry[sp].censored = c
    year0 = int(lay.period_year.min())
    noise = U.site_noise(ls, opt, draws, 1, ds.sizes["period"], (seed, site), year0,
                         (ds["period_start"].values, ds["period_end"].values))
    return study, args, lay, k, noise


def check(sc, site, draws, seed, n_check, air_sd=None, censored_every=0):
    study, args, lay, k, noise = drawn_site(sc, site, draws, seed, air_sd, censored_every)
    ds, ls = lay.budget, lay.sites[k]
    recs = [str(r) for r in ds["receptor"].values]
    out = {}
    for sp, grid in ls.air_vd.items():
        held = grid.held(noise.air)                                         # (D, n)
        outside = float(held.mean())
        interp = airvd.air_only_draws(grid, noise.air)                      # (D, P, R)
        fixed = np.einsum("dn,npr->dpr", noise.air[sp], ls.dry[sp].contrib)
        errs, ferrs = [], []
        picked = list(range(n_check))
        if held.any(1).any() and not held.any(1).all():
            # half the draws checked with a sample held at the grid's end, half without
            h, f = np.flatnonzero(held.any(1)), np.flatnonzero(~held.any(1))
            picked = list(h[: (n_check + 1) // 2]) + list(f[: n_check // 2])
        for d in picked:
            air_d = airvd.air_of_draw(study.inputs.air, ls, noise.air, d)
            st = Study(dataclasses.replace(study.inputs, air=air_d), study.site_overrides)
            r_d = _quiet(st.run, *args)
            got = _quiet(U.linear_layer, r_d, st, "years").sites[k].dry[sp].contrib.sum(0)
            with np.errstate(invalid="ignore", divide="ignore"):
                errs.append(np.abs(interp[d] / got - 1.0))
                ferrs.append(np.abs(fixed[d] / got - 1.0))
        errs, ferrs = np.stack(errs), np.stack(ferrs)                 # (check, P, R)
        out[sp] = {rec: (float(np.nanmax(errs[..., i])), float(np.nanmax(ferrs[..., i])))
                   for i, rec in enumerate(recs) if np.isfinite(errs[..., i]).any()}
        print(f"{sp}: {len(picked)} draws of {draws} (seed {seed}), engine on the drawn "
              f"air; {outside:.2%} of the samples' ratio factors outside the grid (held at "
              f"its end), {int(held.any(1).sum())} of {draws} draws with one or more")
        for rec in out[sp]:
            i = recs.index(rec)
            for d, e_d, f_d in zip(picked, errs[..., i], ferrs[..., i]):
                print(f"  {rec:18s} draw {d:4d} ({int(held[d].sum()):2d} samples held): grid "
                      f"|interp/engine - 1| {np.nanmax(e_d):.1e}   fixed Vd {np.nanmax(f_d):.1e}")
    return out


def cost(sc, draws, seed, repeat):
    rows = []
    for follow in (False, True, False, True)[: 2 * repeat]:
        study, args = study_and_args(sc)
        t0 = time.perf_counter()
        res = _quiet(study.run, *args)
        t1 = time.perf_counter()
        opt = U.UncertaintyOptions(draws=draws, seed=seed, vd_follows_air=follow)
        _quiet(U.monte_carlo, res, study, opt)
        t2 = time.perf_counter()
        _quiet(U.monte_carlo, res, study, opt)          # again: the grid from the cache
        t3 = time.perf_counter()
        rows.append((follow, t1 - t0, t2 - t1, t3 - t2))
    for follow in (False, True):
        r = [x for x in rows if x[0] == follow]
        run, mc, again = (min(x[i] for x in r) for i in (1, 2, 3))
        print(f"vd_follows_air = {str(follow).lower():5s}: run {run:.2f} s, Monte Carlo "
              f"{mc:.2f} s, together {run + mc:.2f} s; Monte Carlo again (cached) "
              f"{again:.2f} s")
    off = min(x[1] + x[2] for x in rows if not x[0])
    on = min(x[1] + x[2] for x in rows if x[0])
    print(f"ratio on / off (run and Monte Carlo): {on / off:.1f}")
    return on / off


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--site", default="ridge")
    ap.add_argument("--year", type=int, default=2021)
    ap.add_argument("--draws", type=int, default=1000)
    ap.add_argument("--seed", type=int, default=12345)
    ap.add_argument("--check", type=int, default=5, help="engine runs on drawn air")
    ap.add_argument("--points", type=int, default=len(airvd.GRID_FACTORS),
                    help="factors of the grid, 0.5-2 (odd: 1 among them)")
    ap.add_argument("--repeat", type=int, default=2, help="timings of each (best kept)")
    ap.add_argument("--no-cost", action="store_true")
    ap.add_argument("--air-sd", type=float, default=None,
                    help="air_rel_sd of the draws (default: the option's default)")
    ap.add_argument("--censored-every", type=int, default=0,
                    help="take every n-th SO2 and NH3 sample as below detection")
    args = ap.parse_args(argv)
    airvd.GRID_FACTORS = tuple(float(x) for x in 2.0 ** np.linspace(-1, 1, args.points))
    with tempfile.TemporaryDirectory() as tmp:
        sc = scenario(Path(tmp), args.site, args.year)
        out = (check(sc, args.site, args.draws, args.seed, args.check, args.air_sd,
                     args.censored_every) if args.check else {})
        if not args.no_cost:
            cost(sc, args.draws, args.seed, args.repeat)
    return out


if __name__ == "__main__":
    main()
