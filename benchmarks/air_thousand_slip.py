"""False alarms and detection of the air reader's 1000x unit slip (a sampler in ng/m3
under a ug/m3 header masked whole; workbench/io/plausible.py, docs/data_formats.md
section 3), for NH3, whose wide maximum (1000 ug/m3) lets a real high site near it.

Run: ``python benchmarks/air_thousand_slip.py [--records 2000]``.  Invented samplers,
each one record of `n` consecutive samples (weekly, or monthly with ``--monthly``):
log value = log(median) + a seasonal cycle (amplitude 0.5 in log, spring peak: manure
spreading) + an AR(1) of memory 0.5, scaled so that the log values have the standard
deviation `sigma` (the spread between weeks).  Genuine sites, values in the header's
unit, count the false alarms: the share of records masked whole with the unit-slip
flag, under the rule as it stands (more than half of the values above the maximum with
one back in range at 1/1000, or a quarter or more, at least 8 values, every one back in
range, the 5th percentile at least a tenth of the maximum), without that floor of the
low values, and with the rule of more than half only.  Clean sites written in ng/m3 count the detection (the record masked whole).
Everything is invented; the medians and spreads are common practice, from memory:
NH3 at a clean or grassland site 0.3-3 ug/m3, in a livestock area 5-15 ug/m3, beside
livestock housing tens to some hundreds of ug/m3 as weekly means.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io import plausible  # noqa: E402

#: Amplitude of the seasonal cycle in log [1] and memory of the weekly AR(1) [1].
SEASON, MEMORY = 0.5, 0.5
#: Genuine high-NH3 sites: median [ug/m3] and the spreads tried (log sd [1]).
GENUINE = (8.0, 11.0, 30.0, 100.0, 200.0, 300.0, 400.0, 500.0, 700.0)
#: Clean sites written in ng/m3: median [ug/m3].
CLEAN = (0.3, 0.8, 1.5, 3.0)
SPREADS = (0.6, 1.0, 1.5)
LENGTHS = (26, 52, 104, 416)


def records(rng, median, sigma, n, count, monthly=False):
    """`count` records of `n` samples [ug/m3], one row each (see the module's text)."""
    step = 30.44 if monthly else 7.0                                       # days
    doy = (np.arange(n) * step + rng.uniform(0, 365.25, (count, 1))) % 365.25
    season = SEASON * np.cos(2 * np.pi * (doy - 100) / 365.25)            # peak in April
    e = rng.normal(0, 1, (count, n))
    ar = pd.DataFrame(e.T).ewm(alpha=1 - MEMORY, adjust=False).mean().to_numpy().T
    ar = ar / ar.std(axis=1, keepdims=True)
    rest = np.sqrt(max(sigma ** 2 - season.var(axis=1).mean(), 0.01))
    return median * np.exp(season - season.mean(axis=1, keepdims=True) + rest * ar)


def masked_whole(values, share=None, low_share=None):
    """Share of the records (rows of `values` [ug/m3]) that air_checks judges in ng/m3
    (its values flagged with the unit-slip hint and masked), under the given
    SLIP_SHARE_ALL_FIT and SLIP_LOW_SHARE (None: as they stand; share above 1: the
    rule of more than half above the maximum only; low share 0: no floor)."""
    count, n = values.shape
    old = (plausible.SLIP_SHARE_ALL_FIT, plausible.SLIP_LOW_SHARE)
    try:
        if share is not None:
            plausible.SLIP_SHARE_ALL_FIT = share
        if low_share is not None:
            plausible.SLIP_LOW_SHARE = low_share
        groups = np.repeat(np.arange(count).astype(str), n)
        _, why = plausible.air_checks("NH3", values.ravel(), np.zeros(values.size, bool),
                                      groups, unit="ug/m3")
    finally:
        plausible.SLIP_SHARE_ALL_FIT, plausible.SLIP_LOW_SHARE = old
    slip = np.char.find(why.astype(str), "look 1000x too high") >= 0
    return float(slip.reshape(count, n).any(axis=1).mean())


def declared(values):
    """The same records at a site declaring ``source_plume = ["NH3"]``: (share judged in
    ng/m3, share of the values masked)."""
    count, n = values.shape
    groups = np.repeat(np.arange(count).astype(str), n)
    bad, why = plausible.air_checks("NH3", values.ravel(), np.zeros(values.size, bool),
                                    groups, unit="ug/m3", plume=np.ones(values.size, bool))
    slip = np.char.find(why.astype(str), "look 1000x too high") >= 0
    return float(slip.reshape(count, n).any(axis=1).mean()), float(bad.mean())


def run(count=2000, seed=0, monthly=False, genuine=GENUINE, clean=CLEAN,
        spreads=SPREADS, lengths=LENGTHS):
    """Rows (kind, median [ug/m3], sigma, n, judged in ng/m3 now, without the floor of
    the low values, by more than half above the maximum only, share of values above
    the maximum)."""
    rng = np.random.default_rng(seed)
    rows = []
    for kind, medians, factor in (("genuine", genuine, 1.0), ("ng/m3", clean, 1000.0)):
        for med in medians:
            for sigma in spreads:
                for n in lengths:
                    v = records(rng, med, sigma, n, count, monthly) * factor
                    rows.append((kind, med, sigma, n, masked_whole(v),
                                 masked_whole(v, low_share=0.0),
                                 masked_whole(v, share=2.0),
                                 float((v > plausible.AIR_RANGES["NH3"][0]).mean()),
                                 *declared(v)))
    return rows


def demo_fell_in_ng():
    """The demo's fell NH3 written in ng/m3: (values, masked with the flag)."""
    d = pd.read_csv(ROOT / "demo_data" / "air.csv", comment=None, skiprows=1)
    v = pd.to_numeric(d.loc[d["site"] == "fell", "NH3 [ug/m3]"], errors="coerce").dropna()
    v = v.to_numpy() * 1000.0
    _, why = plausible.air_checks("NH3", v, np.zeros(v.size, bool),
                                  np.array(["fell"] * v.size), unit="ug/m3")
    return v.size, int((np.char.find(why.astype(str), "look 1000x") >= 0).sum())


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--records", type=int, default=2000)
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--monthly", action="store_true", help="monthly samples, not weekly")
    args = ap.parse_args(argv)
    n, hit = demo_fell_in_ng()
    print(f"demo fell NH3 in ng/m3: {hit} of {n} values masked with the unit-slip flag")
    print("| kind | median [ug/m3] | log sd | samples | judged in ng/m3 (rule now) | "
          "without the low-value floor | more than half above only | "
          "values above 1000 ug/m3 | declared source_plume: judged | values masked |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    rows = run(args.records, args.seed, args.monthly)
    for kind, med, sigma, n, now, nofloor, half, above, d_judged, d_masked in rows:
        print(f"| {kind} | {med:g} | {sigma:g} | {n} | {now:.4f} | {nofloor:.4f} | "
              f"{half:.4f} | {above:.3f} | {d_judged:.4f} | {d_masked:.4f} |", flush=True)
    return rows


if __name__ == "__main__":
    main()
