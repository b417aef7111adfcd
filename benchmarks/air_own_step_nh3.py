"""Can a unit slip of a run of NH3 weeks in a lone sampler's record be told from its
weekly scatter?  A measurement behind docs/data_formats.md section 3 (item "NH3").

Run: ``python benchmarks/air_own_step_nh3.py [--places 30]``.  NH3's unit factors are
small in log: 1 ppb = 0.708 ug/m3 at 20 degC, 1013.25 hPa (a step of 0.35 in log) and
ug N/m3 against ug NH3/m3 = 14.007 / 17.031 = 0.822 (0.20 in log) (molar masses, IUPAC
atomic weights; as workbench.io.airslip).  The lone-sampler test
(workbench/io/airownstep.py) is run unchanged on

* the log NH3 of each NH3 sampler of the demo's air.csv alone (8 years of weeks), and
* the log of NH3 / pNH4 of the same filter pack (a co-located reference that takes out
  the weather the two share), and
* the same on invented records whose NH3 and pNH4 anomalies correlate by rho (0.45, as
  the demo; 0.8; 0.95) with the demo's sd of 0.33 each,

with a run of L weeks multiplied by each factor at a random place; a run is found when
the test's verdict holds more than half of it.  Clean records (no run) count false
alarms.  It also prints the deseasoned scatter (sd) of each series and the share of a
long run's values beyond the midpoint of the two levels, Phi(step / (2 sd)), against
the test's SEPARATION (0.75), which no run can pass when that share is below it.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.stats import norm

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io.airownstep import SEPARATION, _two_passes, deseasoned  # noqa: E402

PPB = 1 / 0.708                      # the number in ppb over the number in ug/m3 of NH3
N_BASIS = 14.007 / 17.031            # ug N/m3 over ug NH3/m3 of the same air
FACTORS = [PPB, 1 / PPB, N_BASIS, 1 / N_BASIS]


def demo_records():
    a = pd.read_csv(ROOT / "demo_data" / "air.csv", comment="#")
    out = {}
    for s, g in a.groupby("site"):
        g = g.sort_values("start")
        nh3 = pd.to_numeric(g["NH3 [ug/m3]"], errors="coerce").to_numpy()
        nh4 = pd.to_numeric(g["pNH4 [ug/m3]"], errors="coerce").to_numpy()
        ok = (nh3 > 0) & (nh4 > 0)
        if ok.sum() > 104:
            t = pd.to_datetime(g["start"]).to_numpy().astype("datetime64[s]")[ok]
            out[s] = (t, np.log(nh3[ok]), np.log(nh4[ok]))
    return out


def invented(rng, t, rho, sd=0.33):
    """Log NH3 and log pNH4 [-]: a seasonal cycle each and anomalies correlated by rho."""
    n = len(t)
    doy = (t - t.astype("datetime64[Y]")) / np.timedelta64(1, "D")
    z1, z2 = rng.normal(size=(2, n))
    a = sd * z1
    b = sd * (rho * z1 + np.sqrt(1 - rho * rho) * z2)
    return (1.0 + 0.6 * np.cos(2 * np.pi * (doy - 196) / 365.25) + a,
            0.3 + 0.4 * np.cos(2 * np.pi * (doy - 60) / 365.25) + b)


def verdict(x, t):
    got, rows = _two_passes(x, t, np.arange(len(x)), FACTORS)
    return got, rows


def found(x, t, a, weeks):
    got, rows = verdict(x, t)
    if got is None:
        return False
    run = set(rows[got["a"]:got["b"]].tolist()) if got["run_slipped"] else set(
        np.setdiff1d(rows, rows[got["a"]:got["b"]]).tolist())
    return len(run & set(range(a, a + weeks))) > weeks / 2


def measure(series, rng, places, weeks, factor, pnh4_ratio):
    """Detection share and false alarms per record over `series` [(t, lnh3, lnh4)]."""
    hits = tries = alarms = 0
    for t, l3, l4 in series:
        ref = l4 if pnh4_ratio else 0.0
        alarms += verdict(l3 - ref, t)[0] is not None
        for _ in range(places):
            a = int(rng.integers(0, len(t) - weeks))
            y = l3.copy()
            y[a:a + weeks] += np.log(factor)
            hits += found(y - ref, t, a, weeks)
            tries += 1
    return hits / tries, alarms / len(series)


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--places", type=int, default=30)
    args = ap.parse_args(argv)
    rng = np.random.default_rng(0)
    demo = list(demo_records().values())
    t = demo[0][0]
    sets = {"demo": demo}
    for rho in (0.45, 0.8, 0.95):
        sets[f"invented rho={rho}"] = [invented(rng, t, rho) for _ in range(3)]
        sets[f"invented rho={rho}"] = [(t, a, b) for a, b in sets[f"invented rho={rho}"]]
    print("| records | series | sd (deseasoned) | Phi(step/2sd) ppb, N | false alarms per "
          "record | found, ppb run 26 / 52 / 104 weeks | found, ug N run 52 weeks |")
    print("|---|---|---|---|---|---|---|")
    for name, series in sets.items():
        for ratio in (False, True):
            sd = np.mean([np.nanstd(deseasoned(l3 - (l4 if ratio else 0), tt))
                          for tt, l3, l4 in series])
            ceil = [norm.cdf(abs(np.log(f)) / (2 * sd)) for f in (PPB, N_BASIS)]
            det = [measure(series, rng, args.places, w, PPB, ratio) for w in (26, 52, 104)]
            dn = measure(series, rng, args.places, 52, N_BASIS, ratio)
            label = "NH3 / pNH4" if ratio else "NH3"
            print(f"| {name} | {label} | {sd:.2f} | {ceil[0]:.2f}, {ceil[1]:.2f} "
                  f"(test needs > {SEPARATION}) | {det[0][1]:.2f} | "
                  f"{det[0][0]:.2f} / {det[1][0]:.2f} / {det[2][0]:.2f} | {dn[0]:.2f} |",
                  flush=True)


if __name__ == "__main__":
    main()
