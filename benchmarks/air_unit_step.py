"""Detection and false alarms of the single-sampler unit-slip hint of the air reader
(workbench/io/airstep.py; docs/data_formats.md section 3).

Run: ``python benchmarks/air_unit_step.py [--records 200]``.  Invented weekly networks:
`--sites` filter packs of SO2 (or NH3, NO2) over `--years` years, each site's log value
= a shared seasonal cycle (amplitude 0.6 in log) + a shared weekly weather AR(1)
(sd 0.5, memory 0.5) + a site level + its own noise (sd 0.35, or 0.5 with --noisy),
which gives a log ratio scatter between sites like the demo's (0.31-0.54).  Clean
records count the false alarms (notes per record); slipped ones hold a run of L
consecutive weeks of one site written in the other unit (ppb under ug/m3), at a random
place, and count detection (a note naming that site and lines holding more than half
of the run).  The demo's own air.csv is read too (its notes: false alarms).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io.airslip import amount_per_number  # noqa: E402
from workbench.io.airstep import sampler_step_notes  # noqa: E402

GAS_LEVEL = {"SO2": 1.5, "NH3": 3.0, "NO2": 8.0}   # typical values of the invented sites
GAS_UNIT = {"SO2": "ug/m3", "NH3": "ug/m3", "NO2": "ppb"}


def invented_network(rng, gas, sites, years, noise):
    """One invented network: values as typed (ug/m3 or ppb) per (site, week)."""
    weeks = 52 * years
    start = np.datetime64("2016-01-07T09:00") + np.arange(weeks) * np.timedelta64(7, "D")
    doy = (start - start.astype("datetime64[Y]")) / np.timedelta64(1, "D")
    season = 0.6 * np.cos(2 * np.pi * (doy - 15) / 365.25)
    e = rng.normal(0, 0.5 * np.sqrt(1 - 0.25), weeks)
    weather = pd.Series(e).ewm(alpha=0.5).mean().to_numpy() * 1.4
    level = np.log(GAS_LEVEL[gas]) + rng.normal(0, 0.5, sites)
    logv = level[:, None] + season + weather + rng.normal(0, noise, (sites, weeks))
    return start, np.exp(logv)


def as_dataset(start, values, gas):
    sites, weeks = values.shape
    unit = GAS_UNIT[gas]
    kind = "amount_density" if unit == "ug/m3" else "mixing_ratio"
    per = amount_per_number(unit, gas)
    site = np.repeat([f"s{i}" for i in range(sites)], weeks)
    return xr.Dataset({
        "site": ("period", site), "sampler_id": ("period", np.char.add(site, "-F")),
        "start": ("period", np.tile(start, sites)),
        "end": ("period", np.tile(start + np.timedelta64(7, "D"), sites)),
        "line": ("period", np.arange(sites * weeks) + 3),
        gas: ("period", values.ravel() * per, {"quantity": kind})}), {
        gas: (f"{gas} [{unit}]", unit, None)}


def slip_factor(gas):
    """The number written in the other unit over the number in the header's unit."""
    other = "ppb" if GAS_UNIT[gas] == "ug/m3" else "ug/m3"
    return amount_per_number(GAS_UNIT[gas], gas) / amount_per_number(other, gas)


def _names_run(note, site, first, weeks):
    """The note names the site and lines holding more than half of the slipped run."""
    import re
    if f"at s{site}," not in note:
        return False
    m = re.search(r"lines? (\d+)(?:-(\d+))? \(", note)
    if not m:
        return False
    a, b = int(m[1]), int(m[2] or m[1])
    return min(b, first + weeks - 1) - max(a, first) + 1 > weeks / 2


def run(records, gas, sites, years, run_weeks, noise, seed=0):
    rng = np.random.default_rng(seed)
    alarms = found = 0
    for _ in range(records):
        start, v = invented_network(rng, gas, sites, years, noise)
        ds, units = as_dataset(start, v, gas)
        alarms += len(sampler_step_notes(ds, units, "a.csv"))
        if run_weeks:
            s = rng.integers(sites)
            a = rng.integers(0, v.shape[1] - run_weeks + 1)
            v = v.copy()
            v[s, a:a + run_weeks] *= slip_factor(gas)
            ds, units = as_dataset(start, v, gas)
            first = int(s * v.shape[1] + a + 3)
            found += any(_names_run(n, s, first, run_weeks)
                         for n in sampler_step_notes(ds, units, "a.csv"))
    return alarms / records, found / records


def demo_notes():
    from workbench.io import read_air, read_sites
    _, led = read_air(ROOT / "demo_data" / "air.csv", read_sites(ROOT / "demo_data" / "sites.toml"))
    return [n for n in led.notes if "the sampler's other" in n]


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--records", type=int, default=100)
    ap.add_argument("--years", type=int, default=4)
    args = ap.parse_args(argv)
    print(f"demo air.csv: {len(demo_notes())} notes of the single-sampler hint")
    print("| gas | sites | noise | run [weeks] | false alarms per record (clean) | "
          "detected (slipped run) |")
    print("|---|---|---|---|---|---|")
    rows = []
    for gas in ("SO2", "NH3", "NO2"):
        for sites in (2, 4):
            for noise in (0.35, 0.5):
                for weeks in (8, 13, 26, 52):
                    fa, det = run(args.records, gas, sites, args.years, weeks, noise)
                    rows.append((gas, sites, noise, weeks, fa, det))
                    print(f"| {gas} | {sites} | {noise} | {weeks} | {fa:.3f} | {det:.2f} |",
                          flush=True)
    return rows


if __name__ == "__main__":
    main()
