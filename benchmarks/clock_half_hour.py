"""Detection rates of the met clock check on invented years (docs/data_formats.md, section 4).

Run: ``python benchmarks/clock_half_hour.py``.  One year per invented site (6 sites of
tests/clock_years.py, 65 N to 45 S) and seed (5), with labels -1, -0.5, 0, +0.5 and +1 h
off (positive: late) under a daily cloud cycle of none, a moderate (0.3) or strong (0.6)
maximum in the afternoon (15 h solar time) or the forenoon (9 h).  Prints a Markdown
table: per case the share of years with a note (lag of 0.75 h or more), with the
half-hour hint (the clearest days' lag 0.3 h or more either way, the whole record's
under 0.75 h), either, the hint of the rule before (whole-record lag +0.3 to +0.75 h,
late only), and the ranges of the whole-record lag and of the clearest days' lag.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path
from types import SimpleNamespace

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from clock_years import SITES, radiation_year  # noqa: E402
from workbench.io import metclock  # noqa: E402

SEEDS = range(5)
OFFSETS = (-1.0, -0.5, 0.0, 0.5, 1.0)
CYCLES = ((0.0, 15.0), (0.3, 15.0), (0.6, 15.0), (0.3, 9.0), (0.6, 9.0))
WORDS = {0.0: "none", 0.3: "moderate", 0.6: "strong"}


def case(offset, cycle, hour=15.0, seeds=SEEDS):
    notes, hints, before, lags, clear = 0, 0, 0, [], []
    for sid, lat, lon in SITES:
        for seed in seeds:
            t, r = radiation_year(lat, lon, offset, cycle, seed, cycle_hour=hour)
            tab = metclock.site_lags(r[None, :], t, np.array([lat]), np.array([lon]))
            cat = {sid: SimpleNamespace(utc_offset_h=0.0, latitude=lat, longitude=lon)}
            out = metclock.notes_from_lags(tab, [sid], cat, "met.csv")
            hints += any(": hint:" in n for n in out)
            notes += any(": hint:" not in n for n in out)
            lag = float(tab["lag"].iloc[0])
            before += metclock.HALF_HOUR_HINT_H <= lag < metclock.LAG_NOTE_H
            lags.append(lag)
            clear.append(float(tab["lag_clear"].iloc[0]))
    n = len(SITES) * len(seeds)
    return n, notes / n, hints / n, before / n, (min(lags), max(lags)), (min(clear), max(clear))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=len(SEEDS), help="seeds per site (5)")
    args = ap.parse_args(argv)
    t0 = time.process_time()
    print("| labels off [h] | daily cloud maximum | years | note | hint | either | "
          "hint before | whole-record lag [h] | clearest days' lag [h] |")
    print("|---|---|---|---|---|---|---|---|---|")
    for off in OFFSETS:
        for cyc, hour in CYCLES:
            n, a, b, c, (lo, hi), (clo, chi) = case(off, cyc, hour, range(args.seeds))
            when = WORDS[cyc] + ("" if cyc == 0 else (" afternoon" if hour == 15 else
                                                      " forenoon"))
            print(f"| {off:+g} | {when} | {n} | {a:.0%} | {b:.0%} | {a + b:.0%} | {c:.0%} | "
                  f"{lo:+.2f} to {hi:+.2f} | {clo:+.2f} to {chi:+.2f} |")
    print(f"\nCPU {time.process_time() - t0:.0f} s")


if __name__ == "__main__":
    main()
