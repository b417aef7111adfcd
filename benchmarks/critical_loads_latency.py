"""Critical-loads explorer latency: time from a control change to the redrawn view,
Python side, on the demo scenario (every year of each site's record).

Each control is set as a user would and the time until its observer returns is
taken: a site change (the site's yearly budget from the session's graph, every site
visited once before timing, so its stages are cached), a receptor, a year, each cut
slider (a value not used before) and what is cut.  The Monte Carlo range is off (its
draws are computed once a site, not on a change).  No browser.

    python benchmarks/critical_loads_latency.py --clock cpu --repeat 5
    python benchmarks/critical_loads_latency.py --code /tmp/old-tree --clock cpu

``--code DIR`` imports the package from `DIR` (another checkout: the code before a
change), so that two versions can be timed alternately with this same script.  Also
reported: the gap line's rows alone, built as budget.csv's whole table
(:func:`workbench.tables.budget_table`) and, where the package has it, as the total
rows' notes (:func:`workbench.ui.summaries_budget.gap_lines`), and their ratio.
``--clock cpu`` times the process's CPU time (a machine shared with other jobs: see
benchmarks/ui_latency.py).
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import sys
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CLOCK = time.perf_counter


def _timed(fn):
    t0 = CLOCK()
    fn()
    return 1e3 * (CLOCK() - t0)


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--code", default=str(ROOT), help="the checkout to import from")
    p.add_argument("--scenario", default=None, help="default: the demo of --code")
    p.add_argument("--repeat", type=int, default=5)
    p.add_argument("--clock", choices=("wall", "cpu"), default="wall")
    p.add_argument("--json", default=None, help="write the results here")
    args = p.parse_args(argv)
    global CLOCK
    CLOCK = time.process_time if args.clock == "cpu" else time.perf_counter
    sys.path.insert(0, args.code)
    warnings.simplefilter("ignore", RuntimeWarning)
    import workbench
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    scenario = args.scenario or str(Path(args.code) / "demo_data" / "scenario.toml")
    session = Session.open(scenario)
    app = CriticalLoadsExplorer(session, site=session.sites[0])
    sites = list(session.sites)
    for s in sites[1:] + sites[:1]:                 # every site's budget computed once
        app.site_w.value = s
    times = {k: [] for k in ("site", "receptor", "year", "cut S", "cut NOx", "cut NHx",
                             "what is cut")}
    modes = [v for _, v in app.mode_w.options]
    for i in range(args.repeat):
        times["site"].append(_timed(lambda: setattr(app.site_w, "value",
                                                    sites[(i + 1) % len(sites)])))
        recs = list(app.receptor_w.options)
        times["receptor"].append(_timed(lambda: setattr(app.receptor_w, "value",
                                                        recs[(i + 1) % len(recs)])))
        years = list(app.year_w.options)
        times["year"].append(_timed(lambda: setattr(app.year_w, "value",
                                                    years[i % len(years)])))
        for g in ("S", "NOx", "NHx"):
            value = 5 * ((i + 3 * len(g)) % 19 + 1)          # 5-95 %, a new one mostly
            times[f"cut {g}"].append(_timed(lambda: setattr(app.cut_w[g], "value", value)))
        mode = modes[(modes.index(app.mode_w.value) + 1) % len(modes)]
        times["what is cut"].append(_timed(lambda: setattr(app.mode_w, "value", mode)))
    # the gap line's rows alone, of the budget shown
    from workbench.tables import budget_table
    years_ds = app.result.years
    rows = {"budget_table": statistics.median(
        _timed(lambda: budget_table(years_ds)) for _ in range(args.repeat))}
    try:
        from workbench.ui.summaries_budget import gap_lines
    except ImportError:                                  # the code before
        gap_lines = None
    if gap_lines is not None:
        sel = (app.site_w.value, app.receptor_w.value, [app.year_w.value])
        rows["gap_lines"] = statistics.median(
            _timed(lambda: gap_lines(years_ds, *sel)) for _ in range(args.repeat))
    out = {"code": str(Path(workbench.__file__).parent.parent), "clock": args.clock,
           "load": os.getloadavg()[0], "median_ms": {k: statistics.median(v)
                                                     for k, v in times.items()},
           "rows_ms": rows}
    print(f"code {out['code']}, clock {args.clock}, load {out['load']:.1f}, "
          f"{args.repeat} repeats")
    print("median ms: " + ", ".join(f"{k} {v:.0f}" for k, v in out["median_ms"].items()))
    line = ", ".join(f"{k} {v:.1f}" for k, v in rows.items())
    if "gap_lines" in rows:
        line += f" (ratio {rows['gap_lines'] / rows['budget_table']:.3f})"
    print(f"the gap line's rows [ms]: {line}")
    if args.json:
        Path(args.json).write_text(json.dumps(out, indent=1))
    return out


if __name__ == "__main__":
    main()
