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
