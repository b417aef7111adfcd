"""Where the time of the site explorer's "Export figures" (PNG) goes.

The button writes each figure of the explorer (seven for a site-year: budget, monthly
fluxes, deposition velocity, resistances, ion balance, capture efficiency, excluded
samples).  Through plotly's ``write_image`` each figure is one kaleido call, and each
call starts a headless Chrome/Chromium of its own; ``workbench.ui.export.export_figures``
writes them all through one kaleido session (plotly's ``write_images``).

    python benchmarks/export_figures.py                       # ridge 2021, 3 repeats
    python benchmarks/export_figures.py --repeat 1 --cases sizes together
    python benchmarks/export_figures.py --json out.json

Cases (``--cases``, default all):

- ``sizes``: each figure's plotly JSON [bytes], traces and points, and its PNG [bytes];
- ``alone``: each figure through ``export_figure`` (one kaleido call, one browser
  each: the button before) [s per figure and in all];
- ``together``: every figure through ``export_figures`` (one session: the button now);
- ``startup``: one kaleido call of an empty figure (the start of a browser and one
  trivial drawing) [s];
- ``drawing``: each figure written with a kaleido server kept running (its browser
  started before the clock), i.e. the drawing of the figure alone [s];
- ``scale1``: every figure together at scale 1 instead of 2 (time and PNG bytes);
- ``clicks``: three clicks of the button in a row, each writing every figure
  together, with a browser started for each click (``keep=False``, the button before)
  and with the browser kept between clicks (``keep=True``, the button now; the first
  click starts it): [s] per click, the second click's time over the first, and
  whether the kept browser's PNGs are byte for byte those of a browser of their own.

Printed with the load average (1, 5, 15 min) before and after: the machine is shared.
Nothing here is asserted; the numbers go into docs/performance.md.
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import sys
import tempfile
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))
from ui_latency import machine  # noqa: E402  (the machine's description, as there)

CASES = ("sizes", "alone", "together", "startup", "drawing", "scale1", "clicks")


def _load() -> list:
    try:
        return [round(x, 2) for x in os.getloadavg()]
    except OSError:
        return []


def explorer_figures(scenario, site, year) -> dict:
    """{name: plotly Figure} as the explorer's button hands them to the writer."""
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.controls import shown_figure
    from workbench.ui.export import _figure
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(Session.open(scenario), site=site, years=(year, year))
    return {name: _figure(f if isinstance(f, dict) else shown_figure(f))
            for name, f in app.figure_export._figures().items()}


def _points(fig) -> int:
    n = 0
    for t in fig.data:
        for key in ("x", "y", "z"):
            v = getattr(t, key, None)
            if v is not None:
                try:
                    n += len(v)
                except TypeError:
                    pass
                break
    return n


def _timed(fn) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def main(argv=None) -> dict:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    p.add_argument("--site", default="ridge")
    p.add_argument("--year", type=int, default=2021)
    p.add_argument("--repeat", type=int, default=3, help="repeats of each timed case")
    p.add_argument("--cases", nargs="+", choices=CASES, default=list(CASES))
    p.add_argument("--json", default=None, help="also write the numbers to this file")
    args = p.parse_args(argv)
    import plotly.io as pio
    from workbench.ui import export
    out = {"machine": machine(), "load_before": _load(), "repeat": args.repeat,
           "scale": export.PNG_SCALE, "width": export.WIDTH}
    figs = explorer_figures(args.scenario, args.site, args.year)
    names = list(figs)
    out["figures"] = names
    print(f"{len(figs)} figures of the site explorer ({args.site} {args.year}); "
          f"load average {out['load_before']}")
    folder = Path(tempfile.mkdtemp(prefix="export-bench-"))
    paths = {n: folder / f"{i}.png" for i, n in enumerate(names)}
    items = [(figs[n], paths[n]) for n in names]
    reps = max(1, args.repeat)

    if "together" in args.cases or "sizes" in args.cases:
        times = [_timed(lambda: export.export_figures(items)) for _ in range(reps)]
        out["together_s"] = {"median": statistics.median(times), "best": min(times)}
        print(f"together (one kaleido session): median {statistics.median(times):.2f} s, "
              f"best {min(times):.2f} s")
    if "sizes" in args.cases:
        out["sizes"] = {n: {"json_bytes": len(pio.to_json(figs[n])), "traces": len(figs[n].data),
                            "points": _points(figs[n]), "png_bytes": paths[n].stat().st_size,
                            "height_px": export._height(figs[n])} for n in names}
        for n, s in out["sizes"].items():
            print(f"  {n}: {s['json_bytes']:,} B JSON, {s['traces']} traces, "
                  f"{s['points']:,} points, {s['png_bytes']:,} B PNG, {s['height_px']} px high")
    if "alone" in args.cases:
        per = {n: [] for n in names}
        totals = []
        for _ in range(reps):
            t0 = time.perf_counter()
            for n in names:
                per[n].append(_timed(lambda: export.export_figure(figs[n], paths[n])))
            totals.append(time.perf_counter() - t0)
        out["alone_s"] = {"median": statistics.median(totals), "best": min(totals),
                          "per_figure_median": {n: statistics.median(v) for n, v in per.items()}}
        print(f"alone (one kaleido call each): median {statistics.median(totals):.2f} s, best "
              f"{min(totals):.2f} s")
        for n, v in per.items():
            print(f"  {n}: {statistics.median(v):.2f} s")
    if "startup" in args.cases:
        import plotly.graph_objects as go
        empty = go.Figure()
        times = [_timed(lambda: export.export_figure(empty, folder / "empty.png"))
                 for _ in range(reps)]
        out["startup_s"] = {"median": statistics.median(times), "best": min(times)}
        print(f"one kaleido call of an empty figure (browser start + a trivial drawing): "
              f"median {statistics.median(times):.2f} s")
    if "drawing" in args.cases:
        import kaleido
        kaleido.start_sync_server(silence_warnings=True)
        try:
            export.export_figure(figs[names[0]], folder / "warm.png")      # browser up
            per = {n: [] for n in names}
            for _ in range(reps):
                for n in names:
                    per[n].append(_timed(lambda: export.export_figure(figs[n], paths[n])))
        finally:
            kaleido.stop_sync_server(silence_warnings=True)
        med = {n: statistics.median(v) for n, v in per.items()}
        out["drawing_s"] = {"per_figure_median": med, "sum": sum(med.values())}
        print(f"drawing alone (a kaleido server kept running): {sum(med.values()):.2f} s "
              "for all")
        for n, v in med.items():
            print(f"  {n}: {v:.2f} s")
    if "scale1" in args.cases:
        p1 = [folder / f"s1-{i}.png" for i in range(len(names))]
        times = [_timed(lambda: pio.write_images([figs[n] for n in names], p1,
                                                 format="png", width=export.WIDTH,
                                                 height=[export._height(figs[n])
                                                         for n in names], scale=1))
                 for _ in range(reps)]
        out["scale1_s"] = {"median": statistics.median(times), "best": min(times),
                           "png_bytes": sum(q.stat().st_size for q in p1)}
        print(f"together at scale 1: median {statistics.median(times):.2f} s, "
              f"{out['scale1_s']['png_bytes']:,} B of PNG")
    if "clicks" in args.cases:
        out["clicks_s"] = _clicks(export, items, reps, folder)
        for keep, c in out["clicks_s"].items():
            print(f"clicks, {keep}: " + ", ".join(f"{t:.2f}" for t in c["median"])
                  + f" s (medians); second / first {c['second_over_first']:.2f}")
        print(f"kept browser's PNGs the same bytes: {out['clicks_s']['kept']['same_bytes']}")
    if "alone_s" in out and "together_s" in out:
        out["ratio_alone_to_together"] = out["alone_s"]["median"] / out["together_s"]["median"]
        print(f"alone / together: {out['ratio_alone_to_together']:.1f}x (medians)")
    out["load_after"] = _load()
    print(f"load average after: {out['load_after']}")
    if args.json:
        Path(args.json).write_text(json.dumps(out, indent=2))
    return out


def _clicks(export, items, reps, folder) -> dict:
    """Three clicks in a row, a browser started for each or kept between them; each
    repeat starts anew (the kept browser closed first)."""
    import hashlib
    out = {}
    digest = {}
    for keep in (False, True):
        runs = []
        for _ in range(reps):
            export.close_kept_browser()
            runs.append([_timed(lambda: export.export_figures(items, keep=keep))
                         for _ in range(3)])
            digest[keep] = [hashlib.sha256(p.read_bytes()).hexdigest() for _, p in items]
        export.close_kept_browser()
        med = [statistics.median(r[i] for r in runs) for i in range(3)]
        out["kept" if keep else "each"] = {"median": med, "runs": runs,
                                           "second_over_first": med[1] / med[0]}
    out["kept"]["same_bytes"] = f"{sum(a == b for a, b in zip(digest[False], digest[True]))}" \
                                f" of {len(items)}"
    return out


if __name__ == "__main__":
    main()
