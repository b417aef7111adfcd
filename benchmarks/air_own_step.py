"""False alarms and detection of the lone-sampler unit-step hint of the air reader
(workbench/io/airownstep.py; docs/data_formats.md section 3).

Run: ``python benchmarks/air_own_step.py [--records 200] [--years 4]``.  Invented weekly
records of one filter pack alone in its file: log value = a seasonal cycle (amplitude
0.6 in log; winter peak for SO2, NO2 and HNO3... as invented, summer peak for NH3) + a
weekly weather AR(1) (sd 0.35, as benchmarks/air_unit_step.py) + the sampler's own noise
(sd 0.35, or 0.5 with the noisy rows) + a level of each year (sd 0.15) + a trend
(uniform -10 to +5 % a year).  Clean records count the false alarms (notes per record);
slipped ones hold a run of L consecutive weeks written in ppb under the ug/m3 header,
at a random place, and count detection (a note naming lines holding more than half of
the run).  A third kind, a real change of the sources by the gas's factor from a random
week to the end (one step, no way back), counts as a false alarm too.  The demo's
air.csv is read one site at a time (each site's filter pack alone in its file).
"""
from __future__ import annotations

import argparse
import re
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io.airownstep import own_step_notes  # noqa: E402
from workbench.io.airslip import amount_per_number  # noqa: E402

LEVEL = {"SO2": 1.5, "NH3": 3.0, "NO2": 8.0, "HNO3": 0.8}      # invented typical values
PEAK_DAY = {"SO2": 15, "NH3": 196, "NO2": 15, "HNO3": 196}     # invented season peaks


def invented_record(rng, gas, years, noise):
    """One invented lone sampler: week starts and values in ug/m3."""
    weeks = 52 * years
    start = np.datetime64("2016-01-07T09:00") + np.arange(weeks) * np.timedelta64(7, "D")
    doy = (start - start.astype("datetime64[Y]")) / np.timedelta64(1, "D")
    season = 0.6 * np.cos(2 * np.pi * (doy - PEAK_DAY[gas]) / 365.25)
    e = rng.normal(0, 0.5 * np.sqrt(1 - 0.25), weeks)
    weather = pd.Series(e).ewm(alpha=0.5).mean().to_numpy() * 1.4
    year = np.repeat(rng.normal(0, 0.15, years), 52)
    trend = rng.uniform(-0.10, 0.05) * np.arange(weeks) / 52
    logv = np.log(LEVEL[gas]) + season + weather + year + trend + rng.normal(0, noise, weeks)
    return start, np.exp(logv)


def as_dataset(start, values, gas):
    per = amount_per_number("ug/m3", gas)
    n = len(values)
    return xr.Dataset({
        "site": ("period", np.full(n, "s0")), "sampler_id": ("period", np.full(n, "F1")),
        "start": ("period", start), "end": ("period", start + np.timedelta64(7, "D")),
        "line": ("period", np.arange(n) + 3),
        gas: ("period", values * per, {"quantity": "amount_density"})}), {
        gas: (f"{gas} [ug/m3]", "ug/m3", None)}


def ppb_per_ug(gas):
    """The number written in ppb over the number in ug/m3 of the same air [-]."""
    return amount_per_number("ug/m3", gas) / amount_per_number("ppb", gas)


def _names_run(note, first, weeks):
    m = re.search(r"the file: lines? (\d+)(?:-(\d+))? \(", note)
    if not m:
        return False
    a, b = int(m[1]), int(m[2] or m[1])
    return min(b, first + weeks - 1) - max(a, first) + 1 > weeks / 2


def run(records, gas, years, run_weeks, noise, seed=0):
    rng = np.random.default_rng(seed)
    alarms = found = changed = 0
    for _ in range(records):
        start, v = invented_record(rng, gas, years, noise)
        alarms += len(own_step_notes(*as_dataset(start, v, gas), "a.csv"))
        a = int(rng.integers(0, len(v) - run_weeks + 1))
        w = v.copy()
        w[a:a + run_weeks] *= ppb_per_ug(gas)
        first = a + 3
        found += any(_names_run(n, first, run_weeks)
                     for n in own_step_notes(*as_dataset(start, w, gas), "a.csv"))
        k = int(rng.integers(len(v) // 4, 3 * len(v) // 4))
        c = v.copy()
        c[k:] /= ppb_per_ug(gas)          # sources cut by the factor, for good
        changed += len(own_step_notes(*as_dataset(start, c, gas), "a.csv"))
    return alarms / records, found / records, changed / records


def demo_notes():
    from workbench.io import read_air, read_sites
    cat = read_sites(ROOT / "demo_data" / "sites.toml")
    lines = (ROOT / "demo_data" / "air.csv").read_text().splitlines()
    head = [i for i, ln in enumerate(lines) if not ln.startswith("#")][0]
    notes = []
    import tempfile
    with tempfile.TemporaryDirectory() as tmp:
        for s in sorted({ln.split(",")[0] for ln in lines[head + 1:] if ln}):
            p = Path(tmp) / f"{s}.csv"
            p.write_text("\n".join(lines[:head + 1] + [ln for ln in lines[head + 1:]
                                                       if ln.split(",")[0] == s]) + "\n")
            _, led = read_air(p, cat)
            notes += [n for n in led.notes if "the only sampler" in n]
    return notes


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--records", type=int, default=100)
    ap.add_argument("--years", type=int, default=4)
    args = ap.parse_args(argv)
    t0 = time.process_time()
    print(f"demo air.csv, each site alone: {len(demo_notes())} notes of the lone-sampler hint")
    print("| gas | noise | run [weeks] | false alarms per record (clean) | false alarms "
          "(a real change by the factor, for good) | detected (slipped run) |")
    print("|---|---|---|---|---|---|")
    rows = []
    for gas in ("SO2", "HNO3", "NO2", "NH3"):
        for noise in (0.35, 0.5):
            for weeks in (8, 13, 26, 52):
                fa, det, ch = run(args.records, gas, args.years, weeks, noise)
                rows.append((gas, noise, weeks, fa, ch, det))
                print(f"| {gas} | {noise} | {weeks} | {fa:.3f} | {ch:.3f} | {det:.2f} |",
                      flush=True)
    print(f"CPU {time.process_time() - t0:.0f} s")
    return rows


if __name__ == "__main__":
    main()
