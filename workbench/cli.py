"""Command line: ``workbench run | check | demo | sensitivity | grid | verify | compare``
(also ``python -m workbench``).

Every failure ends in one line ``error: ...`` on stderr that says where and what to do,
with a non-zero exit code (2; 130 after Ctrl-C), never a traceback: the workbench's own
errors, OS errors while reading or writing (disk full, read-only folder, file-size
limit) and interrupts.  A run folder is written whole or not at all
(:mod:`workbench.runfolder`).

Where the parts are: ``workbench check`` (:func:`cmd_check`, :func:`absent_site_lines`)
in :mod:`workbench.cli_check`; what a run prints after it (:func:`status_lines`,
:func:`run_span_notes`, :func:`site_status_lines`, :func:`failing_lines`,
:func:`run_note_lines`, :func:`uncertainty_lines`, :func:`input_note_lines`,
:func:`console_lines`) in
:mod:`workbench.cli_status`; the
terminal (:class:`_LineEnd`, Ctrl-C) in :mod:`workbench.cli_terminal`; ``verify`` and
``compare`` in :mod:`workbench.cli_runs`.  This module re-exports them, so that
``workbench.cli.<name>`` keeps working.
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import __version__
from .errors import WorkbenchError
# workbench check (defined here before)
from .cli_check import (_check_grid_only, _inputs_text, _progress,  # noqa: F401
                        absent_site_lines, cmd_check)
# what a run prints after it (defined here before)
from .cli_status import (console_lines, failing_lines, input_note_lines,  # noqa: F401
                         labelled_path,
                         run_note_lines, run_span_notes, site_status_lines, span_lines,
                         status_lines, uncertainty_lines)
# the terminal: stderr's open line, Ctrl-C (defined here before)
from .cli_terminal import (_LineEnd, _PipeWatch, _catch_ctrl_c, _end_line,  # noqa: F401
                           _in_gc_callback, _on_ctrl_c, _quiet_stdout)


def demo_folder() -> Path:
    """The folder of the bundled demo scenario.

    Inside an installed package it is ``workbench/demo_data`` (shipped from the
    repository's top-level ``demo_data/``); in a source tree or an editable install it
    is that top-level folder itself.
    """
    here = Path(__file__).resolve().parent
    for folder in (here / "demo_data", here.parent / "demo_data"):
        if (folder / "scenario.toml").is_file():
            return folder
    return here / "demo_data"


DEMO_SCENARIO = demo_folder() / "scenario.toml"

#: Largest default block of a run in blocks in this process [site-years]: the peak
#: memory of a block grows with its site-years (about 290 MB + 43 MB a site-year on the
#: 30-site, 10-year network of benchmarks/analyst_network.py, docs/performance.md), so a
#: long record gets blocks of fewer sites than :data:`workbench.blocks.DEFAULT_MAX_BLOCK`.
BLOCK_SITE_YEARS = 20

#: Help of the SCENARIO argument of check, run and sensitivity.
SCENARIO_HELP = ("the scenario's .toml file (e.g. demo_data/scenario.toml in the "
                 "repository; docs/scenario.md)")

#: Reporting resolutions of ``workbench run --resolution`` (as ``[period] resolution``).
RESOLUTIONS = ("year", "hydro_year", "season", "month")


def run_scenario(scenario_path, out, overwrite=False, quiet=False, resolution=None,
                 workers=None, scheduler=None, block_sites=None):
    """Load a scenario, compute its budget and write the run folder.

    With `workers` (a local dask cluster of that many processes), `scheduler` (the
    address of a running dask scheduler) or `block_sites`, and for a network of more
    than :data:`workbench.blocks.AUTO_BLOCK_SITES` sites, the sites are computed in
    blocks (:func:`workbench.blocks.run_blocks`) and velocities.nc is not written.

    The output folder is checked and locked before anything is computed (a second run
    into it is refused at once); the files go into a temporary sibling that is renamed
    into place at the end, ``provenance.json`` last.

    Returns
    -------
    (written, result, study)
    """
    from .cliprogress import StageProgress
    from .preflight import prepare
    from .scenario import load_scenario
    from .writers import RunFolder, write_run
    sc = load_scenario(scenario_path)
    say = (lambda text: None) if quiet else (lambda text: print(text, file=sys.stderr))
    from .dasklog import run_log
    with RunFolder(out, {"scenario": sc.path, **sc.input_paths()}, overwrite, say=say) as folder, \
            run_log(folder, active=bool(workers or scheduler)) as log:
        # distributed's own messages go to dask.log of the run folder (workbench.dasklog);
        # a local cluster starts (and its workers import the package) while the inputs
        # are read; closed after the blocks, or after an error here
        cluster = _early_cluster(sc, workers, scheduler, log)
        steps = ["sites", "precipitation", "air", "met", "budget", "outputs"]
        # a bar on a terminal; one line per stage on a log file or a pipe (cliprogress)
        bar = StageProgress(len(steps), quiet)
        try:
            prep = prepare(sc, progress=bar.step)
            study, o = prep.study, sc.options
            p = sc.data["period"]
            args = (study, o["wet"], o["dry"], o["budget"], sc.fixed_velocity,
                    resolution or p["resolution"], p["start"], p["end"])
            bar.step("computing the budget")
            from .blocks import wants_blocks
            unc = o.get("uncertainty")
            if wants_blocks(len(study.inputs.catalogue.ids), workers, scheduler, block_sites,
                            getattr(unc, "draws", 0) if unc is not None else 0):
                from .blocks import run_network
                # the same site-years rule for the blocks of this process and of workers
                cap = default_block_sites(len(prep.years))
                result = run_network(*args, sc=sc, workers=workers, scheduler=scheduler,
                                     block_sites=block_sites, progress=bar.detail,
                                     cluster=cluster, max_block_sites=cap)
            else:
                from .comparison import run as run_compared
                result = run_compared(*args)
            bar.step("writing")
            written = write_run(result, study, sc, out,
                                progress=output_progress(result, bar.detail),
                                folder=folder)
            bar.finish()
        finally:
            bar.close()
            _end_line()
            if cluster is not None:
                cluster.close()
    return written, result, study


def output_progress(result, say):
    """`say` for the writer's steps, except that a run without hourly velocities (in
    blocks) says ``velocities.nc not written (blocks)`` for the step that writes none."""
    if getattr(result, "velocities", None) is not None:
        return say
    return lambda text: say("velocities.nc not written (blocks)" if text == "velocities.nc"
                            else text)


def default_block_sites(n_years) -> int:
    """Sites per block of a run in blocks in this process without ``--block-sites``:
    :data:`workbench.blocks.DEFAULT_MAX_BLOCK`, fewer when a block of them would hold
    more than :data:`BLOCK_SITE_YEARS` site-years (at least 1).

    >>> default_block_sites(2), default_block_sites(10), default_block_sites(30)
    (4, 2, 1)
    """
    from . import blocks
    return max(1, min(blocks.DEFAULT_MAX_BLOCK, BLOCK_SITE_YEARS // max(1, int(n_years))))


def _early_cluster(sc, workers, scheduler, log=None):
    """A :class:`workbench.blocks.ClusterStart` of `workers` processes for ``workbench
    run --workers`` (None with ``--scheduler``, which connects when the blocks start,
    and when the scenario's ``[uncertainty]`` draws refuse block mode); its workers'
    log records go to `log` (a path)."""
    if not workers or scheduler:
        return None
    unc = sc.options.get("uncertainty")
    if unc is not None and getattr(unc, "draws", 0):
        return None
    from .blocks import ClusterStart
    return ClusterStart(workers, log=log)


def changed_inputs(out: Path) -> list:
    """The paths of the inputs the run folder `out` marks ``changed_after_read`` (what
    provenance.json says, with no second hash of every input)."""
    import json
    try:
        prov = json.loads((out / "provenance.json").read_text())
    except (OSError, ValueError):
        return []
    return [Path(rec["path"]) for rec in prov.get("inputs", {}).values()
            if isinstance(rec, dict) and rec.get("changed_after_read")]


def cmd_run(args) -> int:
    written, result, study = run_scenario(args.scenario, args.out, args.overwrite, args.quiet,
                                          resolution=args.resolution, workers=args.workers,
                                          scheduler=args.scheduler, block_sites=args.block_sites)
    print("\n".join(labelled_path(f"wrote {len(written)} files into", Path(args.out).resolve(), end=":")))
    for name in written:
        print(f"  {name}")
    _dask_log_note(args.out)                 # warnings of the workers, if any
    from .writers import changed_note
    for path in changed_inputs(Path(args.out)):         # edited after the run read it
        print(f"warning: {changed_note(path, None)}", file=sys.stderr)
    # each wrapped for an 80-column terminal (console_lines); `said` stays whole, for
    # the run notes to leave out what it holds
    for line in console_lines(status_lines(result.table, study.inputs)):
        print(line)
    said = run_span_notes(args.scenario, result.table, args.resolution, study)
    for line in console_lines(said):
        print(line)
    for line in console_lines(site_status_lines(result.table)):
        print(line)
    for line in console_lines(failing_lines(result.table)):  # totals not a full period's
        print(line)
    for line in uncertainty_lines(args.out, result):  # the draws, where they were made
        print(line)
    for line in _note_lines(result, args.scenario, said):   # report.html's "Notes"
        print(line)
    # the readers' notes (suspected slips...): workbench check's, report.html's "Input
    # rows"; the first few whole, the rest counted (`workbench demo` prints them all
    # with the inputs, above)
    for line in input_note_lines(study.inputs.ledger.notes, _sites(result),
                                 Path(args.scenario).resolve().parent, str(args.scenario)):
        print(line)
    return 0


def _sites(result) -> list:
    """The sites of a finished run (none when it has no yearly table)."""
    years = getattr(result, "years", None)
    return [] if years is None or "site" not in years.coords else list(years["site"].values)


def _note_lines(result, scenario, said=()) -> list[str]:
    """:func:`run_note_lines` of a finished run: its notes, its sites, paths relative to
    the folder of the scenario file `scenario`."""
    return run_note_lines(getattr(result, "notes", []), _sites(result),
                          Path(scenario).resolve().parent, said)


def cmd_demo(args) -> int:
    if not DEMO_SCENARIO.exists():
        print(f"error: the demo scenario is missing at {DEMO_SCENARIO}: reinstall the "
              "package (python -m pip install deposition-workbench)", file=sys.stderr)
        return 2
    import datetime as dt
    import pandas as pd
    out = Path(args.out) if args.out else Path.cwd() / (
        "workbench-demo-" + dt.datetime.now().strftime("%Y%m%d-%H%M%S"))
    written, result, study = run_scenario(DEMO_SCENARIO, out, overwrite=False, quiet=args.quiet)
    print(_inputs_text(study.inputs))         # fitted to 80 columns, as `check`
    print()
    if result.screened is not None:
        st = pd.Series(result.screened["status"].values.astype(str)).value_counts()
        words = {"used": "used", "flagged": "used with a QA flag", "excluded": "excluded",
                 "dry": "dry"}
        print("\n".join(console_lines([
            "precipitation screening, per sample: "
            + ", ".join(f"{int(st.get(k, 0))} {w}" for k, w in words.items())
            + " (status and reasons in samples.csv; the rows per file above count the "
            "rows read with a note)"])))
        print()
    t = result.table
    span = span_lines(t)                   # whole-span table, fitted to 80 columns
    if span:
        print("\n".join(console_lines([
            "whole-span totals, the mean of the years that pass completeness "
            "(budget.csv's rows of period \"span\" have them with every column; "
            "missing is its missing_components):"])))
        print("\n".join(span))
        from .tables import SPAN_STATUS_WORDS
        print("\n".join(console_lines(["status: " + SPAN_STATUS_WORDS])))
    for line in console_lines(failing_lines(t)):     # totals that are not a full period's
        print(line)
    for line in _note_lines(result, DEMO_SCENARIO):  # report.html's "Notes"
        print(line)
    print()
    print(f"report: {written['report.html']}")
    return 0


def cmd_sensitivity(args) -> int:
    from .analysis.sensitivity import write_sensitivity
    from .scenario import load_scenario
    written = write_sensitivity(load_scenario(args.scenario), args.out, args.overwrite,
                                args.quiet)
    from .analysis.sensitivity_design import VARIED, design_lines
    record = json.loads(written["provenance.json"].read_text(encoding="utf-8"))
    # runs, seed, what was held; each wrapped for an 80-column terminal, the factors
    # varied between whole items (a range never parted from its unit or kind)
    for line in console_lines(design_lines(record["sensitivity_design"]), lists=(VARIED,)):
        print(line)
    print("\n".join(labelled_path(f"wrote {len(written)} files into", Path(args.out).resolve(), end=":")))
    for name in written:
        print(f"  {name}")
    return 0


def cmd_grid(args) -> int:
    from .grid_output import run_grid
    written = run_grid(args.scenario, args.out, args.overwrite, args.quiet, block=args.block,
                       use_dask=False if args.in_process else None, workers=args.workers,
                       scheduler=args.scheduler)
    print("\n".join(labelled_path(f"wrote {len(written)} files into", Path(args.out).resolve(), end=":")))
    for name in written:
        print(f"  {name}")
    _dask_log_note(args.out)                 # warnings of the workers, if any
    return 0


def _dask_log_note(out):
    """A note on stderr naming ``dask.log`` of the run folder `out`, when distributed
    warned during the run (:mod:`workbench.dasklog`)."""
    from .dasklog import LOG_NAME
    log = Path(out) / LOG_NAME
    if log.is_file():
        print(f"note: distributed's own warnings (worker memory, restarts): {log.resolve()}",
              file=sys.stderr)


def _positive(text) -> int:
    try:
        n = int(text)
    except ValueError:
        n = 0
    if n < 1:
        raise argparse.ArgumentTypeError(f"expected a whole number of at least 1, got {text!r}")
    return n


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="workbench", description="Wet and dry deposition "
                                "budgets of sulfur and nitrogen.")
    p.add_argument("--version", action="version", version=f"%(prog)s {__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="validate everything a run would use, without computing")
    c.add_argument("scenario", type=Path, help=SCENARIO_HELP)
    c.add_argument("--quiet", action="store_true", help="no progress messages")
    c.set_defaults(func=cmd_check)
    r = sub.add_parser("run", help="compute a scenario's budget and write the run folder")
    r.add_argument("scenario", type=Path, help=SCENARIO_HELP)
    r.add_argument("--out", type=Path, required=True, help="output folder (created; written "
                   "whole or not at all)")
    r.add_argument("--overwrite", action="store_true",
                   help="replace a non-empty output folder whole")
    r.add_argument("--quiet", action="store_true", help="no progress bar")
    r.add_argument("--resolution", choices=RESOLUTIONS, default=None,
                   help="reporting periods of budget.csv (default: the scenario's [period])")
    r.add_argument("--workers", type=_positive, default=None, help="compute blocks of "
                   "sites on a local dask cluster of N single-threaded worker processes")
    r.add_argument("--scheduler", default=None, metavar="ADDRESS", help="compute blocks of "
                   "sites on the dask scheduler at ADDRESS (e.g. tcp://host:8786)")
    r.add_argument("--block-sites", type=_positive, default=None, metavar="K",
                   # blocks.DEFAULT_MAX_BLOCK and AUTO_BLOCK_SITES (not imported here:
                   # the parser stays light; tests/test_cli.py holds the text to them)
                   help="sites per block, in this process and on the workers of "
                   "--workers or --scheduler alike (default 4; fewer for a long record, "
                   "at most 20 site-years a block, and on workers at most an even share "
                   "of two blocks per worker; a network of more than 20 sites is "
                   "computed in blocks without this option); in block mode velocities.nc "
                   "is not written")
    r.set_defaults(func=cmd_run)
    g = sub.add_parser("sensitivity", help="Sobol indices and a tornado of the budget totals "
                       "([sensitivity] section of the scenario)")
    g.add_argument("scenario", type=Path, help=SCENARIO_HELP)
    g.add_argument("--out", type=Path, required=True, help="output folder (created; written "
                   "whole or not at all)")
    g.add_argument("--overwrite", action="store_true",
                   help="replace a non-empty output folder whole")
    g.add_argument("--quiet", action="store_true", help="no progress bar")
    g.set_defaults(func=cmd_sensitivity)
    gr = sub.add_parser("grid", help="gridded Vd and dry deposition maps from the "
                        "scenario's [grid] files (CF NetCDF)")
    gr.add_argument("scenario", type=Path, help="the scenario's .toml file with a [grid] "
                    "section (python demo_data/make_grid.py --out DIR writes one beside an "
                    "invented demo grid)")
    gr.add_argument("--out", type=Path, required=True, help="output folder (created; written "
                    "whole or not at all)")
    gr.add_argument("--overwrite", action="store_true",
                    help="replace a non-empty output folder whole")
    gr.add_argument("--quiet", action="store_true", help="no progress messages")
    gr.add_argument("--block", type=_positive, default=None, metavar="N",
                    help="cells per side of a block (one dask task each; default: about "
                    "100 cell-years of hours a block, 32 for a month of hours, 10 for a "
                    "year, at least 4)")
    where = gr.add_mutually_exclusive_group()
    where.add_argument("--in-process", action="store_true", help="run the blocks one after "
                       "the other without dask (the default when dask is not installed)")
    where.add_argument("--workers", type=_positive, default=None, help="run the blocks on "
                       "a local dask cluster of N single-threaded worker processes")
    where.add_argument("--scheduler", default=None, metavar="ADDRESS", help="run the blocks "
                       "on the dask scheduler at ADDRESS (e.g. tcp://host:8786)")
    gr.set_defaults(func=cmd_grid)
    d = sub.add_parser("demo", help="run the bundled demo scenario into a fresh folder")
    d.add_argument("--out", type=Path, default=None, help="output folder (default: a new "
                   "workbench-demo-<time> folder here)")
    d.add_argument("--quiet", action="store_true", help="no progress bar")
    d.set_defaults(func=cmd_demo)
    from .cli_runs import add_parsers
    add_parsers(sub)                     # verify, compare: run folders handed on
    return p


def main(argv=None) -> int:
    """Run the command line; returns the exit code (0 success, 2 error, 130 Ctrl-C, 141
    stdout closed by its reader).

    A closed stdout (``workbench verify DIR | head -2``: ``head`` is done after two
    lines) is not an error: the command ends quietly with 141, the status a shell gives
    a program ended by SIGPIPE (128 + 13; common practice), and stdout is pointed at
    os.devnull as the Python docs recommend (signal module, "Note on SIGPIPE")."""
    import signal
    args = build_parser().parse_args(argv)
    stderr, stdout = sys.stderr, sys.stdout
    sys.stderr = _LineEnd(stderr)        # an error starts on a line of its own
    sys.stdout = _PipeWatch(stdout)      # a closed stdout ends the command quietly
    before = _catch_ctrl_c()
    try:
        code = args.func(args)
        sys.stdout.flush()               # a closed pipe is met here, not at exit
        return code
    except BrokenPipeError as exc:
        if sys.stdout.broken:
            _quiet_stdout(stdout)
            return 141
        from .runfolder import os_error_message
        _error(os_error_message(exc, what="read or write"))
        return 2
    except WorkbenchError as exc:
        _error(f"{exc}")
        return 2
    except OSError as exc:  # reading or writing outside the run folder's own messages
        from .runfolder import os_error_message
        _error(os_error_message(exc, what="read or write"))
        return 2
    except KeyboardInterrupt:
        where = getattr(args, "out", None)
        _error("interrupted" + (f"; nothing was written into {Path(where).resolve()}"
                                if where else ""))
        return 130
    finally:
        if before is not None:
            signal.signal(signal.SIGINT, before)
        _end_line()
        sys.stderr, sys.stdout = stderr, stdout


def _error(text):
    """Print ``error: text`` on stderr, on a line of its own."""
    _end_line()
    print(f"error: {text}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
