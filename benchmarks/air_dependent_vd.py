"""How far the Monte Carlo's fixed velocities are from the model where a Vd depends on
the measured air (``[dry] so2_codeposition``, ``[dry] nh3_acid_ratio_from_air``).

The draws of :mod:`workbench.analysis.uncertainty` scale each air sample's
concentration by its errors (analysis, laboratory bias, value below detection) and keep
the velocities of the point run.  Two options make a velocity depend on the measured
air itself:

* ``so2_codeposition``: R_ns(SO2) falls with the hourly NH3/SO2 molar ratio, so a draw
  that moves NH3 and SO2 apart moves Vd(SO2) (docs/methods_dry.md 9.5);
* ``nh3_acid_ratio_from_air``: R_w(NH3) = (31.5/AR) exp((100 - RH)/12) with
  AR = (2 SO2 + HNO3)/NH3 of the hour, so a draw that moves the three apart moves
  Vd(NH3) (docs/methods_dry.md 9).

This script measures the difference on one site-year of the invented demo.  The exact
reference is the engine itself: run again with the site's NH3 column scaled by each
factor of a grid (the ratio NH3/SO2 scaled by c, the acid ratio by 1/c), it gives each
sample's deposition at that ratio; a draw's factor of the ratio, per sample, is then
placed on the grid (linear in log c: the grid is fine enough that ``--check`` engine
runs on the drawn air itself agree to the digits printed).  Only the air errors move
a ratio: the other factors (Vd, class, site) multiply the fixed and the exact
deposition alike and cancel in their ratio; the full draws' quantiles are shown both
ways.  It also prints what a drawn ammonium split (``pair_shift_ammonium``, s = -0.3
to 0.3) would do to the ratio's species at the point (the reason the draws refuse it
under these options).

Run: ``python benchmarks/air_dependent_vd.py [--site ridge] [--year 2021] [--draws
1000] [--check 3]`` (about 30 engine runs of one site-year, a few minutes).
"""
from __future__ import annotations

import argparse
import shutil
import sys
import tempfile

import warnings
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
sys.path.insert(0, str(ROOT))

from ui.demo_subset import study_and_args, write_demo_subset  # noqa: E402
from workbench.analysis import uncertainty as U  # noqa: E402
from workbench.io.tomlfile import tomllib  # noqa: E402

#: the two options: scenario lines, the species whose Vd moves
CASES = {
    "codeposition": ("so2_codeposition = true", "SO2"),
    "acid_ratio": ("nh3_acid_ratio_from_air = true", "NH3"),
}
#: molar masses [g mol-1] of the acid ratio's gases (IUPAC standard atomic weights)
MOLAR = {"SO2": 64.064, "HNO3": 63.012, "NH3": 17.031}


def _scenario(base: Path, out: Path, line: str, scale: dict | None = None) -> Path:
    """A copy of the subset in `out` with `line` in [dry] and air columns scaled:
    species -> factor, or species -> array of per-row factors of the site's rows."""
    if out.exists():
        shutil.rmtree(out)
    shutil.copytree(base.parent, out)
    sc = out / "scenario.toml"
    sc.write_text(sc.read_text().replace("[budget]", f"[dry]\n{line}\n\n[budget]"))
    if scale:
        text = (out / "air.csv").read_text().splitlines(keepends=True)
        head = [ln for ln in text if ln.startswith("#")]
        a = pd.read_csv(out / "air.csv", comment="#", dtype=str, keep_default_na=False)
        for sp, f in scale.items():
            col = f"{sp} [ug/m3]"
            v = pd.to_numeric(a[col], errors="coerce") * f
            a[col] = v.map(lambda x: "" if np.isnan(x) else repr(float(x)))
        (out / "air.csv").write_text("".join(head) + a.to_csv(index=False))
    return sc


def _layer(sc: Path):
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    return U.linear_layer(res, study, "years")


def _on_grid(log_grid, table, log_q):
    """Linear interpolation in log q of `table` (G, n, ...) at `log_q` (D, n):
    (D, n, ...); clipped to the grid's ends."""
    g = len(log_grid)
    lq = np.clip(log_q, log_grid[0], log_grid[-1])
    i = np.clip(np.searchsorted(log_grid, lq) - 1, 0, g - 2)
    w = (lq - log_grid[i]) / (log_grid[i + 1] - log_grid[i])
    n = np.arange(table.shape[1])[None, :]
    lo, hi = table[i, n], table[i + 1, n]
    extra = (None,) * (table.ndim - 2)
    return lo + (hi - lo) * w[(...,) + extra]


def grid_tables(base, work, line, targets, ks):
    """The point run's linear layer and, per species of `targets`, the Vd table on the
    grid: the engine run once with `line` in [dry] and once per factor k of `ks` other
    than 1 (the point run's) with the site's NH3 column scaled by k (every target read from the same runs: a scenario
    with both options gives each species' Vd as with its own option alone, the two
    relations reading the concentrations, not each other's Vd).

    Returns (lay0, {target: (keys, contrib0, log_grid, table)}), or (lay0, None) where
    the site lacks SO2, HNO3 or NH3; `table` (G, n, P, R) is each sample's deposition at
    the grid's ratio factor over the point's [1], `log_grid` the logarithms of the
    ratio factors c (c = k for SO2's NH3/SO2, 1/k for NH3's acid ratio), ascending.
    """
    lay0 = _layer(_scenario(base, work / "point", line))
    ls = lay0.sites[0]
    if not all(sp in ls.dry for sp in ("SO2", "NH3", "HNO3")):
        return lay0, None
    p0 = {tg: ls.dry[tg] for tg in targets}
    keys = {tg: [tuple(i[1:3]) for i in p.ident] for tg, p in p0.items()}
    vd_ratio = {tg: [] for tg in targets}
    for k in ks:
        # the factor 1 is the point run itself (its ratios are 1): no run again
        lay = lay0 if k == 1.0 else _layer(_scenario(base, work / "grid", line, {"NH3": k}))
        for tg in targets:
            p = lay.sites[0].dry[tg]
            assert [tuple(i[1:3]) for i in p.ident] == keys[tg]
            conc = k if tg == "NH3" else 1.0               # NH3's own concentration moved
            c0 = p0[tg].contrib                                  # (n, P, R)
            with np.errstate(invalid="ignore", divide="ignore"):
                vd_ratio[tg].append(np.where(c0 > 0, p.contrib / conc / c0, 1.0))
    out = {}
    for tg in targets:
        c = ks if tg == "SO2" else 1.0 / ks
        order = np.argsort(c)
        out[tg] = (keys[tg], p0[tg].contrib, np.log(c[order]),
                   np.stack(vd_ratio[tg])[order])
    return lay0, out


def draw_errors(case, lay0, work, site, year, draws, seed, keys, contrib0, log_grid, table):
    """The draws' deposition of the case's species with the point's Vd (fixed) and with
    the Vd of each draw's ratio on the grid (exact), and what the rest of the script
    reads: a dict with ``a`` (species -> (D, n) air factors), ``air``, ``j`` (the
    samples' rows of air.csv), ``mol`` (acid ratio: mol of each gas per sample),
    ``outside`` (share of sample draws off the grid), ``rel`` (D, P, R) exact / fixed
    - 1 [1], ``fixed``, ``exact`` (D, P, R) [mol m-2], ``full``, ``full_exact`` (D, P, R)
    the full draws of the component (every factor) [mol m-2]."""
    target = CASES[case][1]
    ls = lay0.sites[0]
    opt = U.UncertaintyOptions(draws=draws, seed=seed)
    ds = lay0.budget
    noise = U.site_noise(ls, opt, draws, 1, 1, (seed, site), year,
                         (ds["period_start"].values, ds["period_end"].values))

    def factors(sp):
        p = ls.dry[sp]
        col = {tuple(i[1:3]): j for j, i in enumerate(p.ident)}
        idx = np.array([col.get(kk, -1) for kk in keys])
        if not (idx >= 0).all():
            raise SystemExit(f"{site}: the {sp} samples are not {target}'s (another sampler):"
                             " this script draws a ratio per sample of one filter pack")
        return noise.air[sp][:, idx]

    a = {sp: factors(sp) for sp in ("SO2", "NH3", "HNO3")}
    air = pd.read_csv(work / "point" / "air.csv", comment="#")
    with open(work / "point" / "sites.toml", "rb") as f:         # local times in air.csv
        offset = {x["id"]: x.get("utc_offset_h", 0.0) for x in tomllib.load(f)["site"]}
    t0 = (pd.to_datetime(air["start"]) - pd.to_timedelta(air["site"].map(offset), unit="h")
          ).values.astype("datetime64[ns]").astype(np.int64)
    row = {(st, s, t): j for j, (st, s, t) in enumerate(zip(air["site"], air["sampler_id"], t0))}
    j = np.array([row[(site, s, int(t))] for s, t in keys])        # the keys' rows
    mol = {sp: air[f"{sp} [ug/m3]"].to_numpy(float)[j] / MOLAR[sp] for sp in MOLAR}
    if case == "codeposition":
        q = a["NH3"] / a["SO2"]
    else:
        w = 2 * mol["SO2"] / (2 * mol["SO2"] + mol["HNO3"])
        q = (w * a["SO2"] + (1 - w) * a["HNO3"]) / a["NH3"]
    with np.errstate(divide="ignore", invalid="ignore"):
        lq = np.log(np.where(q > 0, q, np.exp(log_grid[0])))
    outside = float(np.mean((lq < log_grid[0]) | (lq > log_grid[-1])))
    r = _on_grid(log_grid, table, lq)                               # (D, n, P, R)
    x = contrib0[None] * a[target][:, :, None, None]
    fixed, exact = x.sum(1), (x * r).sum(1)                        # (D, P, R)
    with np.errstate(invalid="ignore", divide="ignore"):
        rel = exact / fixed - 1.0
    comp = U.component_draws(lay0, 0, noise, year)                # (D, R, P, C)
    jc = [cc[1:] for cc in U.COMPONENTS].index(("dry", target))
    full = comp[..., jc].transpose(0, 2, 1)                       # (D, P, R)
    full_exact = full * (1.0 + np.nan_to_num(rel))
    return dict(a=a, air=air, j=j, mol=mol, outside=outside, rel=rel, fixed=fixed,
                exact=exact, full=full, full_exact=full_exact)


def table_rows(case, lay0, e):
    """The printed table's numbers of `e` (:func:`draw_errors`) per receptor: median,
    95 % and largest of |exact / fixed - 1| and its mean [1]; the 5 / 50 / 95 % of the
    full draws with the fixed and the exact Vd [kg ha-1 of S or N]."""
    target = CASES[case][1]
    kg = 10.0 * 14.007 if target == "NH3" else 10.0 * 32.06   # mol m-2 -> kg ha-1 of N or S
    rel, full, full_exact = e["rel"], e["full"], e["full_exact"]
    out = {}
    for ri, rec in enumerate(lay0.budget["receptor"].values):
        if not np.isfinite(rel[:, 0, ri]).all():
            continue                                  # a receptor the site does not ask for
        d = np.abs(rel[:, 0, ri])
        qf = np.quantile(full[:, 0, ri], (0.05, 0.5, 0.95)) * kg
        qe = np.quantile(full_exact[:, 0, ri], (0.05, 0.5, 0.95)) * kg
        out[str(rec)] = dict(median=float(np.median(d)), p95=float(np.quantile(d, 0.95)),
                             max=float(d.max()), mean=float(rel[:, 0, ri].mean()),
                             fixed=qf.tolist(), exact=qe.tolist())
    return out


def pair_shift_devs(case, lay0, e, keys, contrib0, log_grid, table,
                    shifts=(-0.3, -0.1, 0.1, 0.3)):
    """What a drawn ammonium split (``pair_shift_ammonium`` = s) would do to the
    velocity of the case's species at the point: s -> receptor -> the deposition with
    the Vd of the shifted air over the fixed Vd's, less 1 [1] (`e` of
    :func:`draw_errors`, the grid of :func:`grid_tables`)."""
    air, j, mol = e["air"], e["j"], e["mol"]
    nh4 = air["pNH4 [ug/m3]"].to_numpy(float)[j] / 18.039
    recs = lay0.budget["receptor"].values
    out = {}
    for sh in shifts:
        if case == "codeposition":
            # NH3 times 1 + s (s < 0) or plus s pNH4 (s > 0) moves the NH3/SO2 ratio by
            # that factor; the draws keep Vd(SO2)
            f = np.full(len(keys), 1.0 + sh) if sh < 0 else (mol["NH3"] + sh * nh4) / mol["NH3"]
            b = contrib0
        else:
            # deposition-only NH3: s < 0 keeps (1 + s) NH3, the acid ratio over 1 + s;
            # s > 0 adds s pNH4 to NH3, the ratio times NH3 / (NH3 + s pNH4); the draws
            # keep the point Vd of NH3
            f = np.full(len(keys), 1.0 / (1.0 + sh)) if sh < 0 else \
                mol["NH3"] / (mol["NH3"] + sh * nh4)
            amt = np.full(len(keys), 1.0 + sh) if sh < 0 else 1.0 + sh * nh4 / mol["NH3"]
            b = contrib0 * amt[:, None, None]
        rs = _on_grid(log_grid, table, np.log(f)[None])[0]                 # (n, P, R)
        with np.errstate(invalid="ignore", divide="ignore"):
            dev = (b * rs).sum(0) / b.sum(0) - 1.0
        out[sh] = {str(rec): float(dev[0, ri]) for ri, rec in enumerate(recs)
                   if np.isfinite(dev[0, ri])}
    return out


def measure(case, base, work, site, year, draws, seed, grid, check):
    line, target = CASES[case]
    ks = np.exp(np.linspace(np.log(0.5), np.log(2.0), grid))
    lay0, tables = grid_tables(base, work, line, (target,), ks)
    if tables is None:
        print(f"\n{case}: {site} {year} lacks SO2, HNO3 or NH3 deposition: skipped")
        return {}
    keys, contrib0, log_grid, table = tables[target]
    e = draw_errors(case, lay0, work, site, year, draws, seed, keys, contrib0, log_grid,
                    table)
    a, air, j, outside = e["a"], e["air"], e["j"], e["outside"]
    fixed, exact = e["fixed"], e["exact"]
    print(f"\n{case}: Vd({target}) of {site} {year}, {draws} draws, seed {seed}; "
          f"grid {grid} factors 0.5-2 ({outside:.2%} of the sample draws outside)")
    print(f"{'receptor':18s} {'median |dev|':>12s} {'95% |dev|':>10s} {'max |dev|':>10s}"
          f" {'mean dev':>9s}   quantiles 5/50/95 fixed Vd -> exact [kg ha-1]")
    out = table_rows(case, lay0, e)
    for rec, s in out.items():
        print(f"{rec:18s} {s['median']:12.2e} {s['p95']:10.2e} {s['max']:10.2e}"
              f" {s['mean']:+9.1e}   " + " ".join(f"{v:.3f}" for v in s["fixed"])
              + " -> " + " ".join(f"{v:.3f}" for v in s["exact"]))
    species = "SO2" if case == "codeposition" else "NH3"
    for sh, dev in pair_shift_devs(case, lay0, e, keys, contrib0, log_grid, table).items():
        print(f"pair_shift_ammonium s = {sh:+.1f}: {species} exact / fixed Vd - 1: "
              + ", ".join(f"{rec} {d:+.3f}" for rec, d in dev.items()))
    # the engine on the drawn air itself (every sample its own factors)
    for dk in range(check):
        scale = {}
        for sp in ("SO2", "NH3", "HNO3"):
            f = np.ones(len(air))
            f[j] = a[sp][dk]
            scale[sp] = f
        lay = _layer(_scenario(base, work / "check", line, scale))
        got = lay.sites[0].dry[target].contrib.sum(0)                  # (P, R)
        want = exact[dk]
        with np.errstate(invalid="ignore", divide="ignore"):
                print(f"check draw {dk}: engine on the drawn air / interpolated exact - 1: "
                  f"max {np.nanmax(np.abs(got / want - 1)):.1e}; fixed Vd off by max "
                  f"{np.nanmax(np.abs(fixed[dk] / got - 1)):.1e}")
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--site", default="ridge")
    ap.add_argument("--year", type=int, default=2021)
    ap.add_argument("--draws", type=int, default=1000)
    ap.add_argument("--seed", type=int, default=12345)
    ap.add_argument("--grid", type=int, default=13, help="factors on the grid 0.5-2")
    ap.add_argument("--check", type=int, default=2, help="engine runs on drawn air")
    ap.add_argument("--case", choices=sorted(CASES), nargs="*", default=sorted(CASES))
    args = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        base = write_demo_subset(work / "base", (args.site,), args.year, args.year)
        return {case: measure(case, base, work, args.site, args.year, args.draws,
                              args.seed, args.grid, args.check) for case in args.case}


if __name__ == "__main__":
    main()
