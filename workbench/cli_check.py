"""``workbench check``: the scenario's inputs read and described, without a run.

Part of :mod:`workbench.cli`, which re-exports every name here.
"""
from __future__ import annotations

import sys


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
    from .cli_status import console_lines, labelled_path
    print("\n".join(labelled_path("scenario:", prep.scenario.path)))  # a path never broken
    print(_inputs_text(prep.study.inputs))
    for line in console_lines(absent_site_lines(prep.study.inputs)):
        print(line)
    print()
    print("\n".join(console_lines(prep.describe().splitlines())))
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
    from .cli_status import console_lines, labelled_path
    print("\n".join(labelled_path("scenario:", sc.path)))
    lines = [describe(grid)] + [f"note: {note}" for note in grid.notes]
    lines.append(f"periods: {len(periods)} {p['resolution']} "
                 f"period{'s' if len(periods) != 1 else ''}")
    lines.extend("note: " + note.removeprefix("period: ")      # as `workbench check` of sites
                 for note in span_notes(grid, p["start"], p["end"]))
    lines.append("the grid files were read and checked (metadata, coordinates, times, "
                 "land-use classes; the hourly values are checked block by block as the run "
                 "reads them): run it with `workbench grid SCENARIO --out DIR`")
    print("\n".join(console_lines(lines)))          # fitted to 80 columns
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
    """:func:`inputs_console_lines` as one text."""
    return "\n".join(inputs_console_lines(inputs))


def inputs_console_lines(inputs) -> list[str]:
    """What was loaded (:meth:`workbench.io.inputs.Inputs.describe`) fitted to an
    80-column terminal, for ``workbench check`` and ``workbench demo``: every line at
    most :data:`workbench.cli_status.NOTE_WIDTH` characters but a file's path, which
    stands once on a line of its own and is never broken.  The sites, the samples per
    site and the notes are wrapped under a hanging indent
    (:func:`workbench.cli_status.console_lines`); the table of rows per file names each
    file by its short name (:func:`short_file_names`), the paths in full below it; the
    reasons are one entry each, "file: rows status, lines: reason", wrapped.  For a
    network of more than :data:`workbench.report_network.NETWORK_SITES` sites the
    notes are grouped by site (:func:`workbench.report_network.grouped_free_notes`:
    "met v01: complete hourly record ... — the same at 21 more sites: ...")."""
    from .cli_status import console_lines
    from .report_network import NETWORK_SITES, grouped_free_notes
    out = console_lines(inputs.loaded_lines())
    summ = inputs.ledger.summary()
    files = [str(f) for f in summ["file"]]
    reasons = inputs.ledger.reasons()
    short = short_file_names(files + [str(f) for f in reasons["file"]])
    out += ["", "rows per file:"]
    out += summ.assign(file=[short[f] for f in files]).to_string(index=False).splitlines()
    paths = [f for f in dict.fromkeys(files + [str(f) for f in reasons["file"]])
             if short[f] != f]
    if paths:
        out += ["", "files (in full):"] + [f"  {f}" for f in paths]
    if not reasons.empty:
        out += ["", "reasons:"]
        out += console_lines(
            f"  {short[str(f)]}: {int(n)} row{'s' if int(n) != 1 else ''} {status}"
            + (f", {lines}" if str(lines) else "") + f": {reason}"
            for f, status, reason, n, lines in reasons[
                ["file", "status", "reason", "rows", "lines"]].itertuples(index=False))
    notes = list(inputs.ledger.notes)
    if notes:
        if len(list(inputs.catalogue.ids)) > NETWORK_SITES:
            notes = grouped_free_notes(notes, list(inputs.catalogue.ids))
        out += ["", "notes:"] + console_lines(f"  {n}" for n in notes)
    return out


def short_file_names(paths) -> dict:
    """Each path's shortest tail of parts that no other of `paths` ends with: its file
    name where the names differ.

    >>> short_file_names(["/d/a/air.csv", "/d/b/air.csv", "/d/met.csv"])
    {'/d/a/air.csv': 'a/air.csv', '/d/b/air.csv': 'b/air.csv', '/d/met.csv': 'met.csv'}
    """
    from pathlib import PurePath
    paths = list(dict.fromkeys(str(p) for p in paths))
    parts = {p: PurePath(p).parts for p in paths}
    out = {}
    for p in paths:
        for k in range(1, len(parts[p]) + 1):
            tail = parts[p][-k:]
            if not any(q != p and parts[q][-k:] == tail for q in paths):
                break
        out[p] = str(PurePath(*tail))
    return out
