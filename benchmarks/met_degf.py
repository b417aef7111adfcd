"""Detection and false alarms of the met check for days written in degF under a degC
header (workbench/io/metdegf.py; docs/data_formats.md section 4).

Run: ``python benchmarks/met_degf.py [--years 3 --seeds 10]``.  Invented hourly
temperatures of five climates (annual mean, seasonal amplitude, sd of a synoptic AR(1)
of 3 days' memory, diurnal amplitude): tundra, continental, temperate, hot desert,
tropical.  Clean records count false alarms (days found per site-year); slipped ones
hold a run of L days (from 6 hours up) from a random hour written in degF, and count the
share of the run's days found.  A stress of the false alarms adds 20 abrupt warm or cold
spells a year (8-25 K within an hour, 2-96 h long, back within an hour).  An invented
relative humidity goes with each record (its vapour pressure follows the record without
the spells; :func:`invented_rh`): ``--no-rh`` leaves it out, as a file without the
column.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
from scipy.signal import lfilter

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.constants import ZERO_CELSIUS  # noqa: E402
from workbench.io.metdegf import fahrenheit_days, fahrenheit_edges  # noqa: E402

#: name -> (annual mean, seasonal amplitude, synoptic sd, diurnal amplitude) [degC, K]
CLIMATES = {"tundra": (-12.0, 20.0, 7.0, 3.0), "continental": (3.0, 18.0, 6.0, 6.0),
            "temperate": (10.0, 7.0, 3.5, 4.0), "hot desert": (28.0, 10.0, 3.0, 9.0),
            "tropical": (27.0, 1.5, 1.2, 4.0),
            # a high cold plateau: winters near -55 degC, where degF reads below degC
            "plateau": (-35.0, 20.0, 7.0, 3.0)}


def invented_year(rng, climate, years):
    """Hourly temperature [degC] and its hours."""
    mean, amp, sd, diurnal = CLIMATES[climate]
    n = 24 * 365 * years
    t = np.datetime64("2019-01-01T01:00") + np.arange(n) * np.timedelta64(1, "h")
    doy = np.arange(n) / 24.0 % 365.0
    hour = np.arange(n) % 24
    a = np.exp(-1.0 / 72.0)
    syn = lfilter([np.sqrt(1 - a * a)], [1, -a], rng.normal(0, sd, n))
    x = (mean - amp * np.cos(2 * np.pi * (doy - 15) / 365) + syn
         - diurnal * np.cos(2 * np.pi * (hour - 3) / 24))
    return t, x


def with_steps(rng, x, per_year=20):
    """`x` with abrupt warm or cold spells (a foehn, a cold pool breaking): per year
    `per_year` steps of 8-25 K up or down within one hour, lasting 2-96 h, and back
    within one hour (a stress: real such steps are rare at most sites)."""
    y = x.copy()
    n = len(x)
    for _ in range(int(per_year * n / 8760)):
        a = int(rng.integers(0, n - 100))
        y[a:a + int(rng.integers(2, 97))] += rng.choice([-1, 1]) * rng.uniform(8, 25)
    return y


def saturation_hpa(c):
    """Saturation vapour pressure over water [hPa] at `c` [degC] (Magnus formula,
    WMO-No. 8 (2008) Annex 4.B)."""
    return 6.112 * np.exp(17.62 * c / (243.12 + c))


def invented_rh(rng, smooth, actual):
    """Hourly relative humidity [1]: the air's vapour pressure follows the air mass of
    the temperature `smooth` [degC] (an AR(1) relative humidity of mean 0.8, sd 0.08, a
    day's memory, and the diurnal cycle), read at the temperature `actual` [degC] (a
    natural spell of another air mass brings its temperature at the same vapour
    pressure; a worst case: a drier warm air mass lowers it more), capped at 1."""
    n = len(smooth)
    a = np.exp(-1.0 / 24.0)
    base = np.clip(0.8 + lfilter([np.sqrt(1 - a * a)], [1, -a], rng.normal(0, 0.08, n)),
                   0.2, 1.0)
    e = base * saturation_hpa(smooth)
    return np.minimum(e / saturation_hpa(actual), 1.0) + rng.normal(0, 0.01, n)


def run(climate, years, seeds, run_days, steps=False, rh=True, spells_keep_rh=False,
        cold_start=None):
    false_days = found = total = 0
    for seed in range(seeds):
        rng = np.random.default_rng(seed)
        t, x0 = invented_year(rng, climate, years)
        x = with_steps(rng, x0) if steps else x0
        r = (invented_rh(np.random.default_rng(seed + 1000), x if spells_keep_rh else x0, x)
             if rh else None)
        codes = np.zeros(len(t), np.int64)
        hit = found_rows(x + ZERO_CELSIUS, codes, t, r)
        false_days += len(np.unique(t[hit].astype("datetime64[D]")))
        if run_days:
            h = int(round(24 * run_days))
            if cold_start is None:
                a = int(rng.integers(0, 24 * 365 * years - h))   # from any hour
            else:                                  # from an hour colder than cold_start
                cold = np.flatnonzero(x[:-h] < cold_start)
                if not len(cold):
                    continue
                a = int(rng.choice(cold))
            y = x.copy()
            y[a:a + h] = y[a:a + h] * 1.8 + 32.0
            hit = found_rows(y + ZERO_CELSIUS, codes, t, r)
            found += hit[a:a + h].sum() / 24
            total += run_days
    return false_days / (seeds * years), (found / total if total else np.nan)


def found_rows(temperature_k, codes, t, rh=None, edges=True):
    """The rows the reader masks: the day test, and the edges of a run (with the
    relative humidity `rh` [1] when given)."""
    hit = fahrenheit_days(temperature_k, codes, t)
    return hit | fahrenheit_edges(temperature_k, codes, t, rh) if edges else hit


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--years", type=int, default=3)
    ap.add_argument("--seeds", type=int, default=10)
    ap.add_argument("--daily-only", action="store_true",
                    help="the daily test alone (the reader before the edges)")
    ap.add_argument("--no-rh", action="store_true",
                    help="the edges without the relative humidity (the reader before the "
                         "cold edges)")
    ap.add_argument("--spells-keep-rh", action="store_true",
                    help="a worst case: each abrupt spell keeps the relative humidity of "
                         "the air before it (its vapour pressure changes with it)")
    ap.add_argument("--cold-start", type=float, default=None, metavar="DEGC",
                    help="each run starts at an hour colder than DEGC (climates without "
                         "such hours: nan)")
    args = ap.parse_args(argv)
    if args.daily_only:
        global found_rows
        edges_too = found_rows
        found_rows = lambda tk, c, t, rh=None: edges_too(tk, c, t, edges=False)  # noqa: E731
    print("| climate | run [days] | false days per site-year (clean) | false days per "
          "site-year (20 abrupt spells a year) | run days found |")
    print("|---|---|---|---|---|")
    rows = []
    for climate in CLIMATES:
        for days in (0.25, 1, 3, 14, 45):
            fa, det = run(climate, args.years, args.seeds, days, rh=not args.no_rh,
                          cold_start=args.cold_start)
            fs, _ = run(climate, args.years, args.seeds, 0, steps=True, rh=not args.no_rh,
                        spells_keep_rh=args.spells_keep_rh)
            rows.append((climate, days, fa, fs, det))
            print(f"| {climate} | {days} | {fa:.3f} | {fs:.3f} | {det:.2f} |", flush=True)
    return rows


if __name__ == "__main__":
    main()
