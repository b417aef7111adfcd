"""False alarms and detection of the note on an ion column on the other element basis
below the site-wide share (workbench/wet/unitslip.py, _basis_notes; docs/data_formats.md,
"Chemistry and metadata slips (a third audit)").

Run: ``python benchmarks/basis_slip_alarms.py [--draws 3]``.  The invented demo's
precipitation.csv (4 sites) with every ion value times a lognormal factor
``exp(N(0, sd))``, sd 0.2 and 0.4 (the readers' audit's noise), `draws` files each:
(a) as written: the site records with any unit-slip note (false alarms; every note
counts, the site-wide ones too); (b) the same noise with one column on the other basis,
its header left as the ion's: nitrate as N under ``NO3 [mg/L]`` (x 14/62), sulfate as S
under ``SO4 [mg/L]`` (x 32/96), ammonium as N under ``NH4 [mg/L]`` (x 14/18): the site
records whose note names that column (detection), and those naming another column.
For (a) also the margin: the smallest share of a site's failing samples left failing
by any reading on the other basis that mends at least BASIS_MIN_MENDED (a note needs
BASIS_REST = 0.5 or less).
"""
from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io import read_precipitation, read_sites  # noqa: E402
from workbench.wet import unitslip as U  # noqa: E402
from workbench.wet.options import WetOptions  # noqa: E402

IONS = ("SO4", "NO3_as_N", "NH4_as_N", "Cl", "Na", "K", "Ca", "Mg")
SLIPS = {                          # column -> (header written, what the values are)
    "none": None,
    "NO3 as N": ("NO3_as_N [mg/L]", "NO3 [mg/L]", "NO3"),
    "SO4 as S": ("SO4 [mg/L]", "SO4 [mg/L]", "SO4"),
    "NH4 as N": ("NH4_as_N [mg/L]", "NH4 [mg/L]", "NH4"),
}


def noisy(lines, sd, rng):
    head = lines[0].split(",")
    cols = [head.index(h) for h in head if h.split(" [")[0] in IONS]
    out = [lines[0]]
    for r in lines[1:]:
        c = r.split(",")
        for j in cols:
            if c[j] and not c[j].startswith("<"):
                c[j] = f"{float(c[j]) * np.exp(rng.normal(0.0, sd)):.5g}"
        out.append(",".join(c))
    return out


def slipped(lines, slip):
    """The file with one column on the other basis under the ion's header."""
    if slip is None:
        return lines
    col, header, ion = slip
    head = lines[0].split(",")
    j = head.index(col)
    if ion == "SO4":                 # the values as S: x 32/96
        import periodictable
        f = periodictable.S.mass / periodictable.formula("SO4").mass
        out = [lines[0]]
        for r in lines[1:]:
            c = r.split(",")
            if c[j] and not c[j].startswith("<"):
                c[j] = f"{float(c[j]) * f:.5g}"
            out.append(",".join(c))
        return out
    head[j] = header                 # NO3_as_N / NH4_as_N: the N values, an ion's header
    return [",".join(head)] + lines[1:]


def best_rest(ds, units):
    """The smallest share of a site's failing samples (ion balance or conductivity)
    still failing under any reading on the other basis, among the sites where that
    reading mends at least BASIS_MIN_MENDED (the note's margin: it needs
    BASIS_REST or less). [-]"""
    o = WetOptions()
    eqs, c, a = U._ion_balance(ds, o)
    ev, fail, _ = U._ib_fail(c, a, o)
    chk = U._conductivity_check(ds, o)
    bad = (ev & fail) | chk(eqs)[1]
    sites = ds["site"].values.astype(str)
    out = np.inf
    for t in U._basis_trials(U._ion_columns(units, eqs)):
        _, f2, _ = U._ib_fail(*U._rescaled_sums(eqs, c, a, t[0], np.arange(len(sites))), o)
        bad2 = (ev & f2) | chk(U._scaled(eqs, t[0]))[1]
        for s in np.unique(sites):
            at = sites == s
            if (bad & ~bad2 & at).sum() >= U.BASIS_MIN_MENDED:
                out = min(out, (bad2 & at).sum() / (bad & at).sum())
    return out


UNITS = {"SO4": ("SO4 [mg/L]", "mg/L", None), "NO3": ("NO3_as_N [mg/L]", "mg/L", "N"),
         "NH4": ("NH4_as_N [mg/L]", "mg/L", "N")}


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--draws", type=int, default=3)
    ap.add_argument("--seed", type=int, default=20261205)
    args = ap.parse_args(argv)
    cat = read_sites(ROOT / "demo_data" / "sites.toml")
    base = (ROOT / "demo_data" / "precipitation.csv").read_text().splitlines()
    rng = np.random.default_rng(args.seed)
    with tempfile.TemporaryDirectory() as tmp:
        p = Path(tmp) / "p.csv"
        for name, slip in SLIPS.items():
            for sd in (0.0, 0.2, 0.4):
                n_rec = named = other = 0
                rest = np.inf
                for _ in range(1 if sd == 0.0 else args.draws):
                    lines = slipped(noisy(base, sd, rng) if sd else base, slip)
                    p.write_text("\n".join(lines) + "\n")
                    ds, led = read_precipitation(p, cat)
                    notes = [n for n in led.notes if "header" in n]
                    if slip is None:
                        rest = min(rest, best_rest(ds, UNITS))
                    for site in ("farm", "fell", "mere", "ridge"):
                        n_rec += 1
                        at = [n for n in notes if f" at {site}: " in n]
                        hit = slip is not None and any(n.startswith(f"p.csv: {slip[2]} at ")
                                                       for n in at)
                        named += hit
                        other += bool(at) and not hit
                what = "false alarms" if slip is None else "named"
                print(f"{name:9s} sd {sd:.1f}: {n_rec:3d} site records, {what} {named if slip else other}"
                      f"{'' if slip is None else f', another column named {other}'}"
                      f"{f'; smallest share left failing {rest:.2f}' if np.isfinite(rest) else ''}")


if __name__ == "__main__":
    main()
