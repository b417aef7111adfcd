"""False alarms and detection of the note on a gas written on the element basis at one
site (workbench/io/airgasbasis.py; docs/data_formats.md section 3, "A gas on the element
basis").

Run: ``python benchmarks/gas_basis_alarms.py [--draws 25]``.  The invented demo's
air.csv (4 sites, one filter pack each, 8 years weekly) read once; then, `draws` times
per row of the table, every value times its own lognormal factor ``exp(N(0, sd))`` (sd
0.2 or 0.4, the readers' audits' noise) and every gas at each site times a site factor
``exp(N(0, site_sd))`` (a spread of the gas-to-particle ratio from site to site beyond
the demo's own: 0, 0.3, 0.5 in log).  Counted over site-and-gas records: a note on a
gas as written (false alarms), and with one site's SO2, HNO3 or NH3 on the element
basis under the species' header (each amount / 2.0, 4.5, 1.22; every site in turn):
the note naming that gas at that site (detection), and notes naming another.  Also a
file holding one site alone (no network: never a note).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io import read_air, read_sites  # noqa: E402
from workbench.io import airgasbasis  # noqa: E402
from workbench.io.airgasbasis import PAIRS, _basis_factor, gas_basis_notes  # noqa: E402
from workbench.units import parse_header  # noqa: E402

GASES = tuple(g for g, _ in PAIRS)


def _units(path):
    head = next(line for line in path.read_text().splitlines() if not line.startswith("#"))
    out = {}
    for h in head.split(","):
        p = parse_header(h)
        if p.species:
            out[p.species] = (h, p.unit, p.basis)
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--draws", type=int, default=25, help="noisy files per row of the table")
    ap.add_argument("--seed", type=int, default=20261205)
    ap.add_argument("--gap", type=float, default=None,
                    help="try another GAP (workbench.io.airgasbasis.GAP) in place of its value")
    a = ap.parse_args(argv)
    if a.gap is not None:
        airgasbasis.GAP = a.gap
    print(f"GAP {airgasbasis.GAP}")
    cat = read_sites(ROOT / "demo_data" / "sites.toml")
    path = ROOT / "demo_data" / "air.csv"
    ds0, _ = read_air(path, cat)
    units = _units(path)
    sites = ds0["site"].values.astype(str)
    names = sorted(set(sites))
    species = [s for s in units if s in ds0]
    rng = np.random.default_rng(a.seed)
    print(f"demo: {len(gas_basis_notes(ds0, units, 'air.csv'))} notes as written; "
          f"one site alone: "
          f"{sum(len(gas_basis_notes(ds0.isel(period=sites == s), units, 'air.csv')) for s in names)}"
          " notes")
    print("| sd | site sd | records | false alarms | " + " | ".join(
        f"{g} / {_basis_factor(g):.3g}: found, other" for g in GASES) + " |")
    print("|---|---|--:|--:|" + "--:|" * len(GASES))
    for sd in (0.2, 0.4):
        for site_sd in (0.0, 0.3, 0.5):
            false = records = 0
            found = {g: 0 for g in GASES}
            other = {g: 0 for g in GASES}
            tried = 0
            for _ in range(a.draws):
                ds = ds0.copy()
                for sp in species:
                    v = ds0[sp].values * np.exp(rng.normal(0.0, sd, sites.size))
                    if sp in GASES:
                        fac = dict(zip(names, np.exp(rng.normal(0.0, site_sd, len(names)))))
                        v = v * np.vectorize(fac.get)(sites)
                    ds[sp] = ds0[sp].copy(data=v)
                notes = gas_basis_notes(ds, units, "air.csv")
                records += len(names) * len(GASES)
                false += len(notes)
                tried += 1
                for g in GASES:
                    for s in names:
                        d2 = ds.copy()
                        d2[g] = ds[g].copy(data=np.where(sites == s, ds[g].values
                                                         / _basis_factor(g), ds[g].values))
                        n2 = gas_basis_notes(d2, units, "air.csv")
                        hit = f"air.csv: {g} at {s} "
                        found[g] += any(n.startswith(hit) for n in n2)
                        other[g] += any(not n.startswith(hit) for n in n2)
            per = tried * len(names)
            print(f"| {sd} | {site_sd} | {records} | {false} | " + " | ".join(
                f"{found[g]}/{per}, {other[g]}" for g in GASES) + " |")


if __name__ == "__main__":
    main()
