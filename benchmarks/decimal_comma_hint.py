"""False alarms and detection of the decimal-comma hint of a CSV row with too many
fields (workbench/io/table.py, fields_error; docs/data_formats.md, "Files as
spreadsheets save them").

Run: ``python benchmarks/decimal_comma_hint.py [--rows 3000]``.  Rows of the invented
demo's air.csv and precipitation.csv and of an invented hourly met file whose logger
writes whole numbers (the case that tempts the hint most): (a) one extra cell put at a
random place (a whole number 0-20, an empty cell or a word: a stray cell, not a decimal
comma; 200 other rows of the file given, as the readers do): the share of rows the hint names a decimal comma for (false alarms); (b) one
decimal cell ``a.b`` written ``a,b``: the share that gets the hint (detection).  Both for
the rule of the code under test and the old one (any two neighbouring whole numbers).
"""
from __future__ import annotations

import argparse
import re
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
from workbench.io.table import fields_error  # noqa: E402

HINT = "a decimal comma, as in"


def old_hint(cells, n_head):
    c = [str(x).strip() for x in cells]
    return len(c) > n_head and any(re.match(r"^[-+]?\d+$", a) and b.isdigit()
                                   for a, b in zip(c, c[1:]))


def sources():
    out = []
    for name in ("air.csv", "precipitation.csv"):
        lines = [ln for ln in (ROOT / "demo_data" / name).read_text().splitlines()
                 if ln and not ln.startswith("#")]
        out.append((name, lines[0].split(","), [ln.split(",") for ln in lines[1:]]))
    rng = np.random.default_rng(7)
    head = ("site,time,wind_speed [m/s],temperature [degC],relative_humidity [%],"
            "solar_radiation [W/m2],precipitation [mm],pressure [hPa]").split(",")
    rows = [["alpha", f"2020-01-{1 + i // 24:02d}T{i % 24:02d}:00", str(rng.integers(0, 12)),
             str(rng.integers(-5, 25)), str(rng.integers(40, 100)), str(rng.integers(0, 800)),
             str(rng.integers(0, 3)), str(rng.integers(990, 1030))] for i in range(480)]
    out.append(("met (whole numbers)", head, rows))
    return out


def run(n_rows, seed=0):
    rng = np.random.default_rng(seed)
    table = []
    for name, head, rows in sources():
        fa_new = fa_old = det_new = det_old = n_dec = 0
        for _ in range(n_rows):
            r = list(rows[rng.integers(len(rows))])
            extra = [str(rng.integers(0, 21)), "", "x"][rng.integers(3)]
            k = int(rng.integers(0, len(r) + 1))
            bad = r[:k] + [extra] + r[k:]
            others = [rows[i] for i in rng.integers(0, len(rows), 200)]
            fa_new += HINT in str(fields_error("f.csv", 2, len(head), bad, head, others))
            fa_old += old_hint(bad, len(head))
            dec = [j for j, c in enumerate(r) if re.match(r"^-?\d+\.\d+$", c)]
            if dec:
                j = dec[rng.integers(len(dec))]
                a, b = r[j].split(".")
                comma = r[:j] + [a, b] + r[j + 1:]
                det_new += HINT in str(fields_error("f.csv", 2, len(head), comma, head,
                                                    others))
                det_old += old_hint(comma, len(head))
                n_dec += 1
        table.append((name, fa_new / n_rows, fa_old / n_rows,
                      det_new / n_dec if n_dec else np.nan,
                      det_old / n_dec if n_dec else np.nan))
    return table


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=3000)
    args = ap.parse_args(argv)
    print("| file | stray cell: hint now | before | decimal comma: hint now | before |")
    print("|---|---|---|---|---|")
    table = run(args.rows)
    for name, fa_new, fa_old, det_new, det_old in table:
        print(f"| {name} | {fa_new:.3f} | {fa_old:.3f} | {det_new:.3f} | {det_old:.3f} |")
    return table


if __name__ == "__main__":
    main()
