"""Command line: ``workbench run | check | demo``."""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from . import __version__
from .errors import WorkbenchError

#: Reporting resolutions of ``workbench run --resolution`` (as ``[period] resolution``).
RESOLUTIONS = ("year", "hydro_year", "season", "month")
DEMO_SCENARIO = Path(__file__).resolve().parent.parent / "demo_data" / "scenario.toml"


def _progress(quiet):
    if quiet:
        return None
    return lambda text: print(f"reading {text} ...", file=sys.stderr, flush=True)


def cmd_check(args) -> int:
    from .scenario import load_scenario, load_scenario_inputs
    sc = load_scenario(args.scenario)
    inp = load_scenario_inputs(sc, progress=_progress(args.quiet))
    print(f"scenario: {sc.path}")
    print(inp.describe())
    return 0


def run_scenario(scenario_path, out, overwrite=False, quiet=False, resolution=None):
    """Load a scenario, compute its budget and write the run folder.

    Returns
    -------
    (written, result, study)
    """
    from tqdm.auto import tqdm
    from .pipeline import Study
    from .scenario import load_scenario
    from .writers import prepare_out_dir, write_run
    sc = load_scenario(scenario_path)
    prepare_out_dir(out, {"scenario": sc.path, **sc.input_paths()}, overwrite)
    steps = ["sites", "precipitation", "air", "met", "budget", "outputs"]
    bar = tqdm(total=len(steps), desc="workbench", disable=quiet, delay=1.0, file=sys.stderr)

    def step(text):
        bar.set_postfix_str(text)
        bar.update(1)

    study = Study.from_scenario(sc, progress=step)
    p = sc.data["period"]
    result = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                       sc.fixed_velocity, resolution or p["resolution"], p["start"], p["end"])
    step("writing")
    written = write_run(result, study, sc, out, overwrite=True,
                        progress=lambda text: bar.set_postfix_str(text))
    bar.update(bar.total - bar.n)
    bar.close()
    return written, result, study


def cmd_run(args) -> int:
    written, _, _ = run_scenario(args.scenario, args.out, args.overwrite, args.quiet,
                                 args.resolution)
    print(f"wrote {len(written)} files into {Path(args.out).resolve()}:")
    for name in written:
        print(f"  {name}")
    return 0


def cmd_demo(args) -> int:
    if not DEMO_SCENARIO.exists():
        print(f"error: the demo scenario is missing at {DEMO_SCENARIO}", file=sys.stderr)
        return 2
    import datetime as dt
    import pandas as pd
    out = Path(args.out) if args.out else Path.cwd() / (
        "workbench-demo-" + dt.datetime.now().strftime("%Y%m%d-%H%M%S"))
    written, result, study = run_scenario(DEMO_SCENARIO, out, overwrite=False, quiet=args.quiet)
    print(study.inputs.describe())
    print()
    if result.screened is not None:
        st = pd.Series(result.screened["status"].values.astype(str)).value_counts()
        print("precipitation QA: " + ", ".join(f"{int(st.get(k, 0))} {k}" for k in
                                               ("used", "flagged", "excluded", "dry"))
              + " (reasons per sample in samples.csv)")
        print()
    t = result.table
    span = t[(t["period"] == "span") & (t["species"] == "all") & (t["pathway"] == "total")]
    if len(span):
        print("whole-span totals (mean of the years that pass completeness):")
        print(span[["site", "receptor", "element", "flux_kg_ha_yr", "flux_eq_ha_yr", "status",
                    "years_used"]].to_string(index=False, float_format=lambda v: f"{v:.3g}"))
    print()
    print(f"report: {written['report.html']}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="workbench", description="Wet and dry deposition "
                                "budgets of sulfur and nitrogen.")
    p.add_argument("--version", action="version", version=f"%(prog)s {__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="validate a scenario's inputs and print the ledger")
    c.add_argument("scenario", type=Path)
    c.add_argument("--quiet", action="store_true", help="no progress messages")
    c.set_defaults(func=cmd_check)
    r = sub.add_parser("run", help="compute a scenario's budget and write the run folder")
    r.add_argument("scenario", type=Path)
    r.add_argument("--out", type=Path, required=True, help="output folder (created if needed)")
    r.add_argument("--overwrite", action="store_true", help="replace files in a non-empty folder")
    r.add_argument("--quiet", action="store_true", help="no progress bar")
    r.add_argument("--resolution", choices=RESOLUTIONS, default=None,
                   help="reporting periods of budget.csv (default: the scenario's [period])")
    r.set_defaults(func=cmd_run)
    d = sub.add_parser("demo", help="run the bundled demo scenario into a fresh folder")
    d.add_argument("--out", type=Path, default=None, help="output folder (default: a new "
                   "workbench-demo-<time> folder here)")
    d.add_argument("--quiet", action="store_true", help="no progress bar")
    d.set_defaults(func=cmd_demo)
    return p


def main(argv=None) -> int:
    args = build_parser().parse_args(argv)
    try:
        return args.func(args)
    except WorkbenchError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
