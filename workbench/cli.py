"""Command line: ``workbench run | check | demo | sensitivity | grid | verify | compare``
(also ``python -m workbench``).

Every failure ends in one line ``error: ...`` on stderr that says where and what to do,
with a non-zero exit code (2; 130 after Ctrl-C), never a traceback: the workbench's own
errors, OS errors while reading or writing (disk full, read-only folder, file-size
limit) and interrupts.  A run folder is written whole or not at all
(:mod:`workbench.runfolder`).
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import __version__
from .errors import WorkbenchError


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

#: Reporting resolutions of ``workbench run --resolution`` (as ``[period] resolution``).
RESOLUTIONS = ("year", "hydro_year", "season", "month")


class _LineEnd:
    """A text stream written through, knowing whether its last line is still open (text
    written since the last newline).

    ``main`` puts it in place of ``sys.stderr`` for a command, so that an error always
    starts on a line of its own, in a terminal and piped: a progress bar shown by a
    refresh before its ``delay`` has passed (tqdm) closes without its newline.
    """

    def __init__(self, stream):
        self.stream = stream
        self.open = False

    def write(self, text):
        if text:
            self.open = not text.endswith("\n")
        return self.stream.write(text)

    def end_line(self):
        """Write a newline if the last line is open."""
        if self.open:
            self.stream.write("\n")
            self.open = False

    def __getattr__(self, name):          # flush, fileno, isatty, encoding, ...
        return getattr(self.stream, name)


def _end_line():
    """End an open line on stderr (see :class:`_LineEnd`)."""
    if isinstance(sys.stderr, _LineEnd):
        sys.stderr.end_line()


def _progress(quiet):
    if quiet:
        return None
    return lambda text: print(f"reading {text} ...", file=sys.stderr, flush=True)


def cmd_check(args) -> int:
    from .cli_runs import run_folder_hint
    from .preflight import prepare
    from .runcheck import RunRecordError
    hint = run_folder_hint(args.scenario)
    if hint:
        raise RunRecordError(hint)
    if _check_grid_only(args.scenario):
        return 0
    prep = prepare(args.scenario, progress=_progress(args.quiet))
    print(f"scenario: {prep.scenario.path}")
    print(_inputs_text(prep.study.inputs))
    for line in absent_site_lines(prep.study.inputs):
        print(line)
    print()
    print(prep.describe())
    return 0


def _check_grid_only(path) -> bool:
    """``workbench check`` of a scenario with a ``[grid]`` section and no site catalogue:
    open and check the three grid files (metadata, coordinates, times, the 2-D fields:
    :func:`workbench.grid_io.open_grid`) and the reporting periods, and print what
    ``workbench grid`` would compute; False for any other scenario.  It said "no site
    catalogue" before, so a grid could not be checked before its run."""
    from pathlib import Path as _Path
    if not _Path(path).is_file():
        return False                     # the site path says where it looked
    from .scenario import load_scenario
    sc = load_scenario(path)
    if "sites" in sc.input_paths() or not sc.data.get("grid"):
        return False
    from .errors import ScenarioError
    from .grid import make_periods, span_notes
    from .grid_io import describe, open_grid
    from .grid_output import grid_paths
    paths = grid_paths(sc)
    if len(paths) != 3:
        raise ScenarioError("no [grid] section", file=sc.path, column="grid",
                            expected="a [grid] section with met, air and land_use paths")
    grid = open_grid(paths["met"], paths["air"], paths["land_use"])
    p = sc.data["period"]
    periods = make_periods(grid, p["resolution"], p["start"], p["end"])
    print(f"scenario: {sc.path}")
    print(describe(grid))
    for note in grid.notes:
        print(f"note: {note}")
    print(f"periods: {len(periods)} {p['resolution']} period{'s' if len(periods) != 1 else ''}")
    for note in span_notes(grid, p["start"], p["end"]):     # as `workbench check` of sites
        print("note: " + note.removeprefix("period: "))
    print("the grid files were read and checked (metadata, coordinates, times, land-use "
          "classes; the hourly values are checked block by block as the run reads them): "
          "run it with `workbench grid SCENARIO --out DIR`")
    return True


def absent_site_lines(inputs) -> list[str]:
    """Sites of sites.toml that a data file does not hold, for ``workbench check``: one
    line per set of absent inputs, naming the sites (their budgets will miss what those
    files give).  Empty when every site is in every file that was given."""
    import numpy as np
    have = {}
    for role, ds in (("precipitation samples", inputs.precipitation),
                     ("air concentrations", inputs.air), ("met hours", inputs.met)):
        if ds is not None and "site" in ds.variables:
            have[role] = set(np.unique(ds["site"].values.astype(str)))
    if not have:
        return []
    by = {}
    for sid in inputs.catalogue.ids:
        gone = tuple(r for r, ids in have.items() if str(sid) not in ids)
        if gone:
            by.setdefault(gone, []).append(str(sid))
    lines = []
    for gone, sites in by.items():
        every = len(gone) == len(have)
        what = "no record at all (in no data file)" if every else "no " + " and no ".join(gone)
        lines.append(f"note: {len(sites)} site{'s' if len(sites) > 1 else ''} of sites.toml "
                     f"with {what}: {', '.join(sites)}; "
                     + ("its budgets will be missing" if every and len(sites) == 1 else
                        "their budgets will be missing" if every else
                        "the parts of the budget those files give will be missing"))
    return lines


def _inputs_text(inputs) -> str:
    """``inputs.describe()``; for a network of more than
    :data:`workbench.report_network.NETWORK_SITES` sites with its closing notes grouped
    by site (:func:`workbench.report_network.grouped_free_notes`: "met v01: complete
    hourly record ... — the same at 21 more sites: ...")."""
    from .report_network import NETWORK_SITES, grouped_free_notes
    text = inputs.describe()
    notes = list(inputs.ledger.notes)
    ids = list(inputs.catalogue.ids)
    block = "\nnotes:\n" + "\n".join(f"  {n}" for n in notes)
    if len(ids) <= NETWORK_SITES or not notes or not text.endswith(block):
        return text
    return text[:-len(block)] + "\nnotes:\n" + "\n".join(
        f"  {n}" for n in grouped_free_notes(notes, ids))


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
    print(f"wrote {len(written)} files into {Path(args.out).resolve()}:")
    for name in written:
        print(f"  {name}")
    _dask_log_note(args.out)                 # warnings of the workers, if any
    from .writers import changed_note
    for path in changed_inputs(Path(args.out)):         # edited after the run read it
        print(f"warning: {changed_note(path, None)}", file=sys.stderr)
    for line in status_lines(result.table, study.inputs):
        print(line)
    for line in run_span_notes(args.scenario, result.table, args.resolution, study):
        print(line)
    for line in site_status_lines(result.table):
        print(line)
    return 0


def status_lines(table, inputs) -> list[str]:
    """What a run's budgets hold, for the console: per element the status counts of the
    total budget of each site, receptor and period; with the coverage warnings when
    every one is missing (:func:`workbench.preflight.coverage_notes`)."""
    from .preflight import coverage_notes
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    if t.empty:
        return []
    parts = []
    els = sorted(t["element"].astype(str).unique(), key=lambda e: ("S", "N").index(e)
                 if e in ("S", "N") else 2)
    for el in els:
        g = t[t["element"].astype(str) == el]
        counts = g["status"].astype(str).value_counts()
        order = ["complete", "filled", "partial", "flagged", "missing"]
        keys = [k for k in order if k in counts] + [k for k in counts.index if k not in order]
        parts.append(f"{el}: " + ", ".join(f"{int(counts[k])} {k}" for k in keys))
    lines = ["budgets per site, receptor and period (total, summary.csv): " + "; ".join(parts)]
    if (t["status"].astype(str) == "missing").all():
        start = t["period_start"].min() if "period_start" in t else None
        end = t["period_end"].max() if "period_end" in t else None
        lines.append("warning: every budget is missing")
        if start is not None and end is not None:
            lines.extend("  " + c for c in coverage_notes(inputs, start, end))
    return lines


def run_span_notes(scenario, table, resolution=None, study=None) -> list[str]:
    """:func:`workbench.preflight.span_notes` for a finished run: its periods from
    `table` (budget rows), ``[period]`` start and end from the scenario file; with
    `study`, also the days of the record a default start or end left out
    (:meth:`workbench.pipeline.Study.span_notes`)."""
    from .preflight import span_notes
    from .scenario import load_scenario
    t = table[table["period"].astype(str) != "span"]
    if t.empty or "period_start" not in t:
        return []
    p = load_scenario(scenario).data["period"]
    left = [] if study is None else [
        "note: " + n.removeprefix("period: ") for n in study.span_notes(p.get("start"),
                                                                       p.get("end"))]
    return span_notes(p.get("start"), p.get("end"), t["period_start"].min(),
                      t["period_end"].max(), resolution or p["resolution"]) + left


def site_status_lines(table, min_sites=None) -> list[str]:
    """Where a network's totals are not complete, for the console: one line per element,
    status and set of missing components, naming the sites (with the periods, where not
    every period).  Empty for a run of at most `min_sites` sites (default
    :data:`workbench.report_network.NETWORK_SITES`), whose few sites the report shows
    one by one.

    A site counts when any of its receptors has that status in that period."""
    from .report_network import NETWORK_SITES, year_span
    min_sites = NETWORK_SITES if min_sites is None else min_sites
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    if t.empty or t["site"].nunique() <= min_sites:
        return []
    every = set(t["period"].astype(str))
    miss = t["missing_components"].fillna("").astype(str) if "missing_components" in t \
        else ""
    t = t.assign(_miss=miss, _period=t["period"].astype(str), _status=t["status"].astype(str))
    words = {"partial": "partial", "flagged": "flagged (read with care: report.html says why)",
             "missing": "missing (no data)"}
    lines = []
    for el in ("S", "N"):
        for status, word in words.items():
            g = t[(t["element"] == el) & (t["_status"] == status)]
            if status != "partial":            # missing: every component; flagged: kept
                g = g.assign(_miss="")
            for m, gm in g.groupby("_miss", sort=True):
                sites = []
                for site, gs in gm.groupby("site", sort=False):
                    ps = set(gs["_period"])
                    sites.append(f"{site}" if ps == every else f"{site} ({year_span(ps)})")
                what = f"{el} {word}" + (f" without {', '.join(m.split())}" if m else "")
                lines.append(f"  {what}: {len(sites)} site{'s' if len(sites) > 1 else ''}: "
                             + ", ".join(sites))
    if lines:
        lines.insert(0, "sites whose totals are not complete (a site counts when any "
                     "receptor is; summary.csv has each; no period named = every period):")
    return lines


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
    print(study.inputs.describe())
    print()
    if result.screened is not None:
        st = pd.Series(result.screened["status"].values.astype(str)).value_counts()
        words = {"used": "used", "flagged": "used with a QA flag", "excluded": "excluded",
                 "dry": "dry"}
        print("precipitation screening, per sample: "
              + ", ".join(f"{int(st.get(k, 0))} {w}" for k, w in words.items())
              + " (status and reasons in samples.csv; the rows per file above count the "
              "rows read with a note)")
        print()
    t = result.table
    span = t[(t["period"] == "span") & (t["species"] == "all") & (t["pathway"] == "total")]
    if len(span):
        print("whole-span totals (mean of the years that pass completeness):")
        cols = ["site", "receptor", "element", "flux_kg_ha_yr", "flux_eq_ha_yr", "status",
                "missing_components", "years_used"]
        if "years_excluded" in span and span["years_excluded"].fillna("").astype(str).ne("").any():
            cols.append("years_excluded")
        print(span[[c for c in cols if c in span]].to_string(
            index=False, formatters={"flux_kg_ha_yr": "{:.3g}".format,
                                     "flux_eq_ha_yr": "{:,.0f}".format}))
        from .tables import SPAN_STATUS_WORDS
        print("status: " + SPAN_STATUS_WORDS)
    print()
    print(f"report: {written['report.html']}")
    return 0


def cmd_sensitivity(args) -> int:
    from .analysis.sensitivity import write_sensitivity
    from .scenario import load_scenario
    written = write_sensitivity(load_scenario(args.scenario), args.out, args.overwrite,
                                args.quiet)
    from .analysis.sensitivity_design import design_lines
    record = json.loads(written["provenance.json"].read_text(encoding="utf-8"))
    for line in design_lines(record["sensitivity_design"]):      # runs, seed, what was held
        print(line)
    print(f"wrote {len(written)} files into {Path(args.out).resolve()}:")
    for name in written:
        print(f"  {name}")
    return 0


def cmd_grid(args) -> int:
    from .grid_output import run_grid
    written = run_grid(args.scenario, args.out, args.overwrite, args.quiet, block=args.block,
                       use_dask=False if args.in_process else None, workers=args.workers,
                       scheduler=args.scheduler)
    print(f"wrote {len(written)} files into {Path(args.out).resolve()}:")
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
    c.add_argument("scenario", type=Path)
    c.add_argument("--quiet", action="store_true", help="no progress messages")
    c.set_defaults(func=cmd_check)
    r = sub.add_parser("run", help="compute a scenario's budget and write the run folder")
    r.add_argument("scenario", type=Path)
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
    g.add_argument("scenario", type=Path)
    g.add_argument("--out", type=Path, required=True, help="output folder (created if needed)")
    g.add_argument("--overwrite", action="store_true", help="replace files in a non-empty folder")
    g.add_argument("--quiet", action="store_true", help="no progress bar")
    g.set_defaults(func=cmd_sensitivity)
    gr = sub.add_parser("grid", help="gridded Vd and dry deposition maps from the "
                        "scenario's [grid] files (CF NetCDF)")
    gr.add_argument("scenario", type=Path)
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


def _in_gc_callback(frame) -> bool:
    """Whether `frame` runs inside a callback of the garbage collector."""
    import gc
    codes = set()
    for cb in gc.callbacks:
        fn = getattr(cb, "__func__", cb)
        code = getattr(fn, "__code__", None)
        if code is not None:
            codes.add(code)
    while frame is not None and codes:
        if frame.f_code in codes:
            return True
        frame = frame.f_back
    return False


def _on_ctrl_c(signum, frame):
    """SIGINT: KeyboardInterrupt, as Python's own handler, except inside a callback of
    the garbage collector (dask's scheduler hooks one into this process), where the
    exception would be printed as "ignored" and the run would go on to its end: there
    the signal is sent again 20 ms later, once the callback has returned."""
    if _in_gc_callback(frame):
        import signal
        import threading
        timer = threading.Timer(0.02, signal.raise_signal, (signal.SIGINT,))
        timer.daemon = True
        timer.start()
        return
    raise KeyboardInterrupt


def _catch_ctrl_c():
    """Install :func:`_on_ctrl_c` where Python's own SIGINT handler is in force (the main
    thread); returns the handler to restore, or None."""
    import signal
    import threading
    if threading.current_thread() is not threading.main_thread() or \
            signal.getsignal(signal.SIGINT) is not signal.default_int_handler:
        return None
    return signal.signal(signal.SIGINT, _on_ctrl_c)


def main(argv=None) -> int:
    """Run the command line; returns the exit code (0 success, 2 error, 130 Ctrl-C)."""
    import signal
    args = build_parser().parse_args(argv)
    stderr = sys.stderr
    sys.stderr = _LineEnd(stderr)        # an error starts on a line of its own
    before = _catch_ctrl_c()
    try:
        return args.func(args)
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
        sys.stderr = stderr


def _error(text):
    """Print ``error: text`` on stderr, on a line of its own."""
    _end_line()
    print(f"error: {text}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
