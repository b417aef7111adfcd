"""False alarms and detection of a precipitation counter restarted each day in the hourly
met (workbench/io/metcounter.py; docs/data_formats.md, "Chemistry and metadata slips (a
third audit)").

Run: ``python benchmarks/precip_counter_alarms.py [--draws 25]``.  The invented demo's
met precipitation (4 sites x 8 years, hourly, 0.1 mm steps) with every hour's amount
times a lognormal factor ``exp(N(0, sd))``, sd 0.2 and 0.4 (the readers' audit's
noise), rounded to 0.1 mm, `draws` records each: (a) as hourly amounts: the site
records judged a daily counter (false alarms); (b) the same written as the day's
running total restarted at 00:00 or at 09:00 (file's clock): those judged so
(detection).  Also the largest share of a site's falls at one hour in (a).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io.metcounter import daily_reset_sites  # noqa: E402


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--draws", type=int, default=25, help="noisy records per noise level")
    ap.add_argument("--seed", type=int, default=1)
    a = ap.parse_args(argv)
    met = pd.read_csv(ROOT / "demo_data" / "met.csv.gz", comment="#")
    codes, names = pd.factorize(met["site"])
    label = pd.to_datetime(met["time"])
    t_utc = (label - pd.Timedelta(hours=1)).to_numpy("datetime64[m]")   # demo: UTC+1
    offset = np.ones(len(names))
    p0 = met["precipitation [mm]"].to_numpy(float)
    rng = np.random.default_rng(a.seed)
    rows = []
    for sd in (0.2, 0.4):
        for _ in range(a.draws):
            p = np.round(p0 * np.exp(rng.normal(0.0, sd, len(p0))), 1)
            r, _, share, _ = daily_reset_sites(p, codes, len(names), t_utc, offset)
            rows += [{"sd": sd, "record": "hourly", "judged": bool(x), "share": s}
                     for x, s in zip(r, share)]
            for start in (0, 9):
                day = (label - pd.Timedelta(hours=start, minutes=1)).dt.floor("D")
                run = pd.Series(p).groupby([codes, day.to_numpy()]).cumsum().round(1)
                r, _, share, _ = daily_reset_sites(run.to_numpy(), codes, len(names),
                                                   t_utc, offset)
                rows += [{"sd": sd, "record": f"counter from {start:02d}:00",
                          "judged": bool(x), "share": s} for x, s in zip(r, share)]
    df = pd.DataFrame(rows)
    print(f"site records judged a daily counter ({a.draws} draws x 4 sites per noise level)")
    print(df.groupby(["sd", "record"]).agg(judged=("judged", "mean"), n=("judged", "size"),
                                           share_max=("share", "max"),
                                           share_min=("share", "min")).round(3).to_string())


if __name__ == "__main__":
    main()
