"""Command line: ``workbench check | demo`` (``run`` comes with the budget)."""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from . import __version__
from .errors import WorkbenchError

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


def cmd_demo(args) -> int:
    if not DEMO_SCENARIO.exists():
        print(f"error: the demo scenario is missing at {DEMO_SCENARIO}", file=sys.stderr)
        return 2
    args.scenario = DEMO_SCENARIO
    return cmd_check(args)


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="workbench", description="Wet and dry deposition "
                                "budgets of sulfur and nitrogen.")
    p.add_argument("--version", action="version", version=f"%(prog)s {__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="validate a scenario's inputs and print the ledger")
    c.add_argument("scenario", type=Path)
    c.add_argument("--quiet", action="store_true", help="no progress messages")
    c.set_defaults(func=cmd_check)
    d = sub.add_parser("demo", help="load the bundled demo network and print what was loaded")
    d.add_argument("--quiet", action="store_true", help="no progress messages")
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
