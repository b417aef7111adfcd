"""Detection rates of the met clock check on invented years (docs/data_formats.md, section 4).

Run: ``python benchmarks/clock_half_hour.py``.  One year per invented site (6 sites of
tests/clock_years.py, 65 N to 45 S) and seed (5), with labels 0, 0.5, 1 and 2 h late and
a daily cloud cycle of none, a moderate (0.3) or strong (0.6) afternoon maximum (15 h
solar time), and at 0 h also a forenoon maximum (9 h).  Prints a Markdown table: per
case the share of years with a note (lag of 0.75 h or more), with the half-hour hint
(0.3 to 0.75 h late), and the range of the measured whole-record lags.
"""
from __future__ import annotations

import sys
from pathlib import Path
from types import SimpleNamespace

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from clock_years import SITES, radiation_year  # noqa: E402
from workbench.io import metclock  # noqa: E402

SEEDS = range(5)


def case(offset, cycle, hour=15.0):
    notes, hints, lags = 0, 0, []
    for sid, lat, lon in SITES:
        for seed in SEEDS:
            t, r = radiation_year(lat, lon, offset, cycle, seed, cycle_hour=hour)
            tab = metclock.site_lags(r[None, :], t, np.array([lat]), np.array([lon]))
            cat = {sid: SimpleNamespace(utc_offset_h=0.0, latitude=lat, longitude=lon)}
            out = metclock.notes_from_lags(tab, [sid], cat, "met.csv")
            hints += any(": hint:" in n for n in out)
            notes += any(": hint:" not in n for n in out)
            lags.append(float(tab["lag"].iloc[0]))
    n = len(SITES) * len(SEEDS)
    return n, notes / n, hints / n, min(lags), max(lags)


def main():
    print("| labels late [h] | daily cloud maximum | years | note | hint | either | "
          "whole-record lag [h] |")
    print("|---|---|---|---|---|---|---|")
    cases = [(off, cyc, 15.0) for off in (0.0, 0.5, 1.0, 2.0) for cyc in (0.0, 0.3, 0.6)]
    cases += [(0.0, 0.3, 9.0), (0.0, 0.6, 9.0)]
    words = {0.0: "none", 0.3: "moderate", 0.6: "strong"}
    for off, cyc, hour in cases:
        n, a, b, lo, hi = case(off, cyc, hour)
        when = words[cyc] + ("" if cyc == 0 else (" afternoon" if hour == 15 else " forenoon"))
        print(f"| {off:g} | {when} | {n} | {a:.0%} | {b:.0%} | {a + b:.0%} | "
              f"{lo:+.2f} to {hi:+.2f} |")


if __name__ == "__main__":
    main()
