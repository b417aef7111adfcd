"""False alarms and detection of the met reader's hint of a clock going forward to
summer time (a one-hour gap; workbench/io/metchecks.py, clock_forward_hint;
docs/data_formats.md section 4).

Run: ``python benchmarks/clock_forward_gaps.py [--records 2000]``.  Invented hourly
records of one site over `--years` years (2019 on) with k one-hour gaps at random hours
(k = 1, 2, 3, 10 per year): the share of records whose gap note carries the hint (false
alarms: no clock moved).  Then records whose clock skips the hour of the EU change
(01:00 UTC of the last Sunday of March) and of the US one (10:00 UTC, 02:00 at UTC-8, of
the second Sunday of March), with 0 or 1 random one-hour gaps per year besides: the
share that gets the hint.  Prints the rule of the code under test and the old rule
(any one-hour gap in March, April, September, October or November).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path
from types import SimpleNamespace

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io.metchecks import describe_gaps  # noqa: E402

HOUR = np.timedelta64(1, "h")


def _note(times, present):
    return describe_gaps({"row_present": SimpleNamespace(values=present[None, :]),
                          "site": SimpleNamespace(values=np.array(["s"], object)),
                          "time": SimpleNamespace(values=times)})[0]


def old_rule(times, present):
    """The rule before: any one-hour gap in a month of clock changes."""
    miss = np.flatnonzero(~present[1:-1]) + 1
    single = miss[present[miss - 1] & present[miss + 1]]
    months = times[single].astype("datetime64[M]").astype(int) % 12 + 1
    return bool(np.isin(months, (3, 4, 9, 10, 11)).any())


def change_hours(years, kind):
    """The UTC hour end a clock skips each year (EU: last Sunday of March, 01:00 UTC;
    US: second Sunday of March, 10:00 UTC at UTC-8)."""
    out = []
    for y in range(2019, 2019 + years):
        days = np.arange(np.datetime64(f"{y}-03-01"), np.datetime64(f"{y}-04-01"))
        sunday = days[(days - np.datetime64("1970-01-04")).astype(int) % 7 == 0]
        day, h = (sunday[-1], 2) if kind == "EU" else (sunday[1], 11)
        out.append(day.astype("datetime64[h]") + h * HOUR)
    return out


def run(records, years, per_year, clock=None, seed=0):
    rng = np.random.default_rng(seed)
    times = np.datetime64("2019-01-01T01:00") + np.arange(8760 * years) * HOUR
    new = old = 0
    for _ in range(records):
        present = np.ones(len(times), bool)
        k = rng.poisson(per_year * years) if per_year else 0
        present[rng.integers(24, len(times) - 24, k)] = False
        if clock:
            for h in change_hours(years, clock):
                present[np.searchsorted(times, h)] = False
        new += "clock going forward" in _note(times.astype("datetime64[ns]"), present)
        old += old_rule(times, present)
    return new / records, old / records


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--records", type=int, default=1000)
    ap.add_argument("--years", type=int, default=1)
    args = ap.parse_args(argv)
    print("| clock | random one-hour gaps per year | hint now | hint before |")
    print("|---|---|---|---|")
    rows = []
    for clock, per_year in ((None, 1), (None, 2), (None, 3), (None, 10), ("EU", 0),
                            ("EU", 1), ("US", 0), ("US", 1)):
        now, before = run(args.records, args.years, per_year, clock)
        rows.append((clock, per_year, now, before))
        print(f"| {clock or 'none moved'} | {per_year} | {now:.3f} | {before:.3f} |",
              flush=True)
    return rows


if __name__ == "__main__":
    main()
