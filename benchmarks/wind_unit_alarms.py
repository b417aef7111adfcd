"""False alarms and detection of a wind speed in knots, mph or km/h under an m/s header
(workbench/io/metwind.py; docs/data_formats.md, "Chemistry and metadata slips (a third
audit)").

Run: ``python benchmarks/wind_unit_alarms.py [--draws 25]``.  The invented demo's met
(4 sites x 8 years, hourly; u* measured at ridge only) with every wind speed and u*
times its own lognormal factor ``exp(N(0, sd))``, sd 0.2 and 0.4 (the readers' audit's
noise), `draws` records each; each site also times an exposure factor drawn from 0.8 to
1.25 (a mast more or less sheltered than the demo's).  Counted per site record: flagged
as written in m/s (false alarms) and flagged with the wind x 1.94 (knots), x 2.24 (mph),
x 3.6 (km/h) (detection), by the u* check (ridge) and the median rules (the others).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io import read_sites  # noqa: E402
from workbench.io.metlimits import KMH_MEDIAN_MIN  # noqa: E402
from workbench.io.metwind import SLIP_FACTORS, wind_unit_findings  # noqa: E402


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--draws", type=int, default=25, help="noisy records per noise level")
    ap.add_argument("--seed", type=int, default=1)
    a = ap.parse_args(argv)
    cat = read_sites(ROOT / "demo_data" / "sites.toml")
    met = pd.read_csv(ROOT / "demo_data" / "met.csv.gz", comment="#")
    codes, names = pd.factorize(met["site"])
    u0 = met["wind_speed [m/s]"].to_numpy(float)
    us0 = met["friction_velocity [m/s]"].to_numpy(float)
    rng = np.random.default_rng(a.seed)
    factors = {"m/s": 1.0, **SLIP_FACTORS}
    rows = []
    for sd in (0.2, 0.4):
        for _ in range(a.draws):
            expo = rng.uniform(0.8, 1.25, len(names))[codes]
            u = u0 * expo * np.exp(rng.normal(0.0, sd, len(u0)))
            us = us0 * expo * np.exp(rng.normal(0.0, sd, len(u0)))
            for unit, f in factors.items():
                judged, found = wind_unit_findings(u * f, us, codes, list(names), cat)
                hit = np.zeros(len(names), bool)
                hit[[c for c, _ in found]] = True
                med = pd.Series(u * f).groupby(codes).median().to_numpy()
                kmh = (med > KMH_MEDIAN_MIN) & ~judged & ~hit
                for s, name in enumerate(names):
                    rows.append({"sd": sd, "unit": unit, "site": name,
                                 "by": "u*" if judged[s] else "median",
                                 "flagged": bool(hit[s] or kmh[s])})
    df = pd.DataFrame(rows)
    tab = df.groupby(["sd", "by", "unit"])["flagged"].agg(["mean", "size"]).unstack("unit")
    pd.set_option("display.width", 200)
    print(f"share of site records flagged ({a.draws} draws per noise level)")
    print(tab.round(3).to_string())
    print(df.groupby(["unit", "site"])["flagged"].mean().unstack("site").round(3).to_string())


if __name__ == "__main__":
    main()
