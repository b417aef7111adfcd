"""The names of the missing parts of the derived sums (``<sum>_missing_components`` of
summary.csv): joined over whole columns (workbench.budget_totals._joined_names) against
the row loop they replaced (``" ".join`` over each row of the parts' statuses).

    python benchmarks/derived_missing_names.py [--rows 200000] [--repeat 5]

The statuses are drawn at random (a third missing) for the ten parts of the potential
acidity; the two give the same strings (checked here, and in
tests/test_derived_missing_names.py).  Prints best-of-`--repeat` wall times and the
ratio.  Load: say `uptime`.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

from workbench.budget import DERIVED_PARTS
from workbench.budget_totals import _joined_names

sys.path.insert(0, str(Path(__file__).resolve().parent))
from lazy_hash import best  # noqa: E402  (best-of-n wall time)


def row_loop(sub, parts):
    return [" ".join(p for p, v in zip(parts, row) if v == "missing") for row in sub]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=200_000)
    ap.add_argument("--repeat", type=int, default=5)
    a = ap.parse_args()
    parts = DERIVED_PARTS["potential_acidity"]
    rng = np.random.default_rng(1)
    sub = rng.choice(np.array(["complete", "flagged", "missing"], dtype=object),
                     size=(a.rows, len(parts)), p=[0.5, 1 / 6, 1 / 3])
    assert _joined_names(sub == "missing", parts).tolist() == row_loop(sub, parts)
    loop = best(lambda: row_loop(sub, parts), a.repeat)
    cols = best(lambda: _joined_names(sub == "missing", parts), a.repeat)
    print(f"{a.rows} rows x {len(parts)} parts: row loop {loop:.3f} s, "
          f"whole columns {cols:.3f} s, ratio {loop / cols:.1f}")


if __name__ == "__main__":
    main()
