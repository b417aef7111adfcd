"""``workbench verify RUN`` and ``workbench compare RUN_A RUN_B``: run folders that are
handed on (docs/run_folder.md).  Logic in :mod:`workbench.runcheck` and
:mod:`workbench.runcompare`; here the arguments and the exit codes."""
from __future__ import annotations

from pathlib import Path


def cmd_verify(args) -> int:
    """Exit 0 when the run folder matches its scenario and inputs, 1 when not."""
    from .runcheck import verify_run
    v = verify_run(args.run, scenario=args.scenario)
    print(console_text(v.lines))
    return 0 if v.ok else 1


def cmd_compare(args) -> int:
    """Exit 0 when the runs hold the same options, inputs and totals, 1 when not."""
    from .runcompare import compare_runs
    c = compare_runs(args.run_a, args.run_b, rtol=args.rtol,
                     rows=None if args.all else args.rows)
    print(console_text(c.lines))
    if args.csv is not None:
        from .csvcaution import write_sidecar_caution
        from .runfolder import OutputError, atomic_write, os_error_message
        try:
            atomic_write(Path(args.csv), lambda tmp: c.budget.to_csv(tmp, index=False))
            side = write_sidecar_caution(Path(args.csv), atomic_write)
        except OSError as exc:        # the file asked for (not its temporary sibling),
            bare = OSError(exc.errno, exc.strerror)   # and advice that names --csv
            raise OutputError(os_error_message(bare, Path(args.csv).resolve(),
                                               option="--csv")) from exc
        what = "total" if "file" not in c.budget else "number"
        where = f"{Path(args.csv).resolve()} (caution: {side.name})"
        print(console_text([f"every differing {what}: {where}" if len(c.budget) else
                            f"no {what} differs: {where} holds the header line only"]))
    return 0 if c.same else 1


def console_text(lines) -> str:
    """The lines of a verification or comparison for an 80-column terminal: each line
    wrapped under a hanging indent (:func:`workbench.cli_status.console_lines`, never
    inside a path), a table (a line holding line breaks, already set to the width by
    :mod:`workbench.runcompare`) as it is.  The lines themselves stay whole for a
    notebook cell and for tests that read them."""
    from .cli_status import console_lines
    out = []
    for line in lines:
        out.extend([line] if "\n" in line else console_lines([line]))
    return "\n".join(out)


def run_folder_hint(path) -> str | None:
    """For ``workbench check`` given a run folder: what to type instead."""
    p = Path(path)
    if p.is_dir() and (p / "provenance.json").is_file():
        from .runcheck import FOLDER_NAMES, folder_kind
        folder = FOLDER_NAMES[folder_kind(p, {})][0]      # by the files it holds
        return (f"{p.resolve()} is a {folder}, not a scenario: `workbench verify {path}` "
                "checks it against its scenario and inputs; `workbench check` takes the "
                "scenario's .toml file")
    return None


def add_parsers(sub) -> None:
    """The ``verify`` and ``compare`` commands on subparsers `sub`."""
    from .runcompare import SHOWN_ROWS
    v = sub.add_parser("verify", help="check that a run, sensitivity or grid folder still "
                       "matches its scenario and input files (checksums in provenance.json)")
    v.add_argument("run", type=Path, help="a folder written by `workbench run`, `workbench "
                   "sensitivity` or `workbench grid` (the lines name which)")
    v.add_argument("--scenario", type=Path, default=None, help="the scenario file to check "
                   "against (default: the run's own, found relative to the run folder, "
                   "then where it was)")
    v.set_defaults(func=cmd_verify)
    c = sub.add_parser("compare", help="what differs between two run folders: options, "
                       "inputs and the budget totals per site, receptor and period (two "
                       "sensitivity folders: their Sobol indices and tornado)")
    c.add_argument("run_a", type=Path, help="the first folder (A): a `workbench run` or "
                   "`workbench sensitivity` folder")
    c.add_argument("run_b", type=Path, help="the second folder (B), of the same kind")
    c.add_argument("--rtol", type=float, default=0.0, help="relative difference below "
                   "which two totals count as equal (default 0: as written)")
    c.add_argument("--rows", type=int, default=SHOWN_ROWS, help="differing totals listed, "
                   f"largest change first (default {SHOWN_ROWS})")
    c.add_argument("--all", action="store_true", help="list every differing total")
    c.add_argument("--csv", type=Path, default=None, metavar="FILE",
                   help="write every differing total to FILE")
    c.set_defaults(func=cmd_compare)
