"""Writers of a run folder: written whole or not at all, never beside or over an input.

``budget.csv``, ``summary.csv``, ``budget.nc``, ``samples.csv``, ``velocities.nc``,
``report.html`` and ``provenance.json`` (see docs/scenario.md).
"""
from __future__ import annotations

import datetime as _dt
import json
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from . import __version__
from .csvwrite import write_csv
from .drydep import wetness as _wetness
from .io.common import release_free_memory
from .io.ledger import STATUSES
from .io.readbytes import file_sha256, gzip_content_sha256
from .runfolder import (OutputError, RunFolder, atomic_write, check_out_dir,  # noqa: F401
                        os_error_message)
from .runpaths import relative_from, scenario_base, shown_path, shown_text
from .budget import derived_status_variables
from .tables import BUDGET_COLUMNS, summary_table

__all__ = ["OUTPUT_STEPS", "OutputError", "RunFolder", "atomic_write", "write_run"]


#: The rule of the inputs' checksums, written into provenance.json beside them.
INPUT_CHECKSUM_RULE = ("sha256: SHA-256 of the file's bytes as read; content_sha256 (gzip "
                       "files, .gz): SHA-256 of the decompressed content, which workbench "
                       "verify and compare go by when both runs have it, so that a file "
                       "compressed again with the same content is not a change")


def sha256(path) -> str:
    """SHA-256 of a file; of a folder (a zarr store), of its files' relative paths and
    contents in name order (:func:`workbench.io.readbytes.file_sha256`)."""
    return file_sha256(path)


def prepare_out_dir(out: Path, inputs: dict, overwrite: bool = False) -> Path:
    """Check that `out` can take a run (see :func:`.runfolder.check_out_dir`)."""
    return check_out_dir(out, inputs, overwrite)


def _netcdf_ready(ds: xr.Dataset) -> xr.Dataset:
    """Object (string) variables as fixed text and bools as int8, for NetCDF3."""
    ds = ds.copy()
    for name in list(ds.variables):
        v = ds[name]
        if v.dtype == bool:
            ds[name] = v.astype("int8")
            ds[name].attrs.update(v.attrs)
            ds[name].attrs["flag_values"] = np.array([0, 1], "int8")
            ds[name].attrs["flag_meanings"] = "false true"
        elif v.dtype == object:
            ds[name] = v.astype(str)
            ds[name].attrs.update(v.attrs)
    for k, val in list(ds.attrs.items()):
        if not isinstance(val, (str, int, float, np.ndarray)):
            ds.attrs[k] = json.dumps(val, default=str)
    return ds


#: long_name (and units where missing) of the variables of budget.nc and velocities.nc
#: that the budget does not name itself (checked by cfchecker, tests/test_cf_outputs.py).
LONG_NAMES = {
    "site": ("site id", None), "receptor": ("receptor surface (land-use class)", None),
    "wet_ion": ("ion of the precipitation chemistry (nss: non-sea-salt part)", None),
    "air_species": ("species of the air concentrations", None),
    "component": ("budget component: element/pathway/species", None),
    "species": ("species of the component", None),
    "pathway": ("pathway of the component (wet or dry)", None),
    "element": ("element the component is counted as (S or N)", None),
    "total": ("sum of components: element_pathway", None),
    "period": ("label of the reporting period", None),
    "period_hours": ("length of the period", "h"),
    "annual_factor": ("factor from the period's deposition to a yearly rate (hours of the "
                      "year over hours of the period)", "1"),
    "note": ("reason in words for the component's status (docs/budget.md)", None),
    "status": ("status of the component: complete, filled, flagged, partial or missing "
               "(docs/budget.md)", None),
    "total_status": ("status of the sum: complete, filled, flagged, partial or missing "
                     "(docs/budget.md)", None),
    "total_completeness": ("completeness of the sum (smallest fraction of its present "
                           "components)", "1"),
    "bracket_nitrate_all_gas": ("dry deposition of the nitrate pair (HNO3 + pNO3) as N, "
                                "all taken as HNO3", None),
    "bracket_nitrate_all_particle": ("dry deposition of the nitrate pair (HNO3 + pNO3) as N, "
                                     "all taken as pNO3", None),
    "bracket_ammonium_all_gas": ("dry deposition of the ammonium pair (NH3 + pNH4) as N, "
                                 "all taken as NH3", None),
    "bracket_ammonium_all_particle": ("dry deposition of the ammonium pair (NH3 + pNH4) as "
                                      "N, all taken as pNH4", None),
    "oxidized_N_eq_ha": ("oxidized N deposition (NO3, HNO3, pNO3, NO2)", None),
    "reduced_N_eq_ha": ("reduced N deposition (NH4, NH3, pNH4)", None),
    "S_dry_share": ("dry share of the S total", "1"),
    "S_wet_share": ("wet share of the S total", "1"),
    "N_dry_share": ("dry share of the N total", "1"),
    "N_wet_share": ("wet share of the N total", "1"),
    "active": ("the site asks for this receptor surface", None),
    "time": ("end of the hour (UTC)", None),
    "surface": ("site/receptor pair", None),
    "surface_site": ("site of the surface", None),
    "surface_receptor": ("receptor of the surface (land-use class)", None),
}

#: Units written in the trade's way that are not UDUNITS (CF 1.8 section 3.1): an element
#: named inside the unit ("kg N ha-1" would read as kilogram x newton per hectare) and
#: equivalents ("eq", not a UDUNITS unit; an equivalent is a mole of charge).
_CF_UNITS = {"kg N ha-1": ("kg ha-1", " [mass of N]"), "kg S ha-1": ("kg ha-1", " [mass of S]"),
             "ug N m-3": ("ug m-3", " [mass of N]"),
             "eq ha-1": ("mol ha-1", " [moles of charge: equivalents per hectare]")}


def cf_attributes(ds: xr.Dataset) -> xr.Dataset:
    """Attributes that CF 1.8 asks for (sections 3, 3.1, 3.3): a long_name on every
    variable, UDUNITS units (the element or the charge basis moves into long_name), no
    standard_name outside the CF standard name table."""
    ds = ds.copy()
    for name, var in ds.variables.items():
        a = dict(var.attrs)
        if name in LONG_NAMES:
            long_name, units = LONG_NAMES[name]
            a.setdefault("long_name", long_name)
            if units is not None:
                a.setdefault("units", units)
        if a.get("units") in _CF_UNITS:
            units, what = _CF_UNITS[a["units"]]
            a["long_name"] = a.get("long_name", name) + what
            a["units_in_tables"] = a["units"]        # the unit as in budget.csv's docs
            a["units"] = units
        var.attrs = a                                 # a copy: the result keeps its own
    return ds


def write_netcdf(ds: xr.Dataset, path: Path, title: str):
    from .report import CAUTION          # the file may travel without report.html
    ds = _netcdf_ready(cf_attributes(ds))
    ds.attrs.update({"Conventions": "CF-1.8", "title": title,
                     "institution": "deposition workbench user",
                     "source": f"deposition workbench {__version__}",
                     "comment": CAUTION,
                     "history": f"{_dt.datetime.now(_dt.timezone.utc):%Y-%m-%dT%H:%M:%SZ} created"})
    ds.to_netcdf(path, engine="scipy", format="NETCDF3_64BIT")


def budget_dataset(result) -> xr.Dataset:
    """The budget as a CF-style Dataset (component coordinate kept as text)."""
    ds = result.budget.copy()
    ds["deposition"].attrs.update({"long_name": "deposition as amount of S or N (element basis)"})
    ds = xr.merge([ds, result.derived], compat="override")
    from .comparison import chosen_scheme
    ds = ds.assign(derived_status_variables(chosen_scheme(result)[0].table, ds))
    ds["period_start"].attrs["long_name"] = "start of the period (UTC)"
    ds["period_end"].attrs["long_name"] = "end of the period, exclusive (UTC)"
    return ds


#: Variables of velocities.nc besides ``rb_*``, ``rc_<gas>`` and ``vd_*`` (the paths of Rc
#: stay in the Python result; writing them all made the demo file near 1 GB).
VELOCITY_FILE_VARIABLES = ("friction_velocity", "obukhov_length", "ra", "roughness_length",
                           "displacement_height", "seasonal_category", "surface_wet",
                           "wetness_source",
                           "ustar_floor_used", "ra_cap_used", "ra_height_raised",
                           "land_use_in_force")


def velocities_dataset(vd: xr.Dataset) -> xr.Dataset:
    """The hourly Ra, Rb, Rc and Vd of the surfaces that are wanted, for velocities.nc.

    The (site, receptor) pairs a site asks for are stacked into one ``surface``
    dimension (with ``surface_site`` and ``surface_receptor`` labels), floats are
    written as float32, and the individual paths of Rc are left out (they are in the
    Python result, :attr:`workbench.pipeline.Result.velocities`).
    """
    keep = [v for v in vd.data_vars
            if v in VELOCITY_FILE_VARIABLES or v.startswith(("rb_", "vd_", "n_"))
            or (v.startswith("rc_") and v.count("_") == 1)]
    ds = vd[keep]
    per_hour = [v for v in keep if "time" in vd[v].dims and {"site", "receptor"} <= set(vd[v].dims)]
    other = [v for v in keep if v not in per_hour]
    active = vd["active"].values if "active" in vd else np.ones(
        (vd.sizes["site"], vd.sizes["receptor"]), bool)
    si, ri = np.nonzero(active)
    sites, recs = vd["site"].values[si].astype(str), vd["receptor"].values[ri].astype(str)
    out = {}
    for v in per_hour:
        a = ds[v].transpose("site", "receptor", "time", ...).values[si, ri]
        attrs = dict(ds[v].attrs)
        if v == "wetness_source":             # a CF flag variable of int8 codes
            a, flags = _wetness.source_flags(a)
            attrs = {k: x for k, x in attrs.items() if k not in ("codes", "units")}
            attrs.update(flags)
        elif a.dtype.kind == "f":
            a = a.astype("float32")
        out[v] = (("surface", "time") + ds[v].dims[3:], a, attrs)
    res = xr.Dataset(out, coords={"time": vd["time"].values,
                                  "surface_site": ("surface", sites),
                                  "surface_receptor": ("surface", recs)})
    res = res.assign_coords(surface=[f"{a}/{b}" for a, b in zip(sites, recs)])
    for v in other:
        res[v] = ds[v]
    res.attrs.update(vd.attrs)
    res.attrs["note"] = ("surfaces are the (site, receptor) pairs a site asks for; the paths "
                         "of Rc are in the Python result")
    return res


def environment() -> dict:
    """Versions of Python and of the libraries that compute and write a run, and the
    platform: what a colleague needs to know to reproduce the numbers."""
    import platform
    from importlib.metadata import PackageNotFoundError, version
    libs = {}
    for name in ("numpy", "pandas", "xarray", "scipy", "pint", "plotly"):
        try:
            libs[name] = version(name)
        except PackageNotFoundError:        # pragma: no cover - all are dependencies
            libs[name] = None
    return {"python": platform.python_version(), "platform": platform.platform(), **libs}


def read_digests(study, scenario=None) -> dict:
    """role -> SHA-256 of the bytes each input of a run was parsed from: the inputs'
    (:attr:`workbench.io.inputs.Inputs.stamps`) and the scenario file's
    (:attr:`workbench.scenario.Scenario.sha256`)."""
    read = dict(getattr(study.inputs, "stamps", {}) or {})
    if scenario is not None and scenario.path is not None and getattr(scenario, "sha256", None):
        read["scenario"] = scenario.sha256
    return read


def changed_since_read(study, scenario=None) -> dict:
    """role -> path of each input of `study` (and of the `scenario` file) whose content
    now differs from the bytes it was read from (SHA-256, :func:`read_digests`): edited
    after it was read, whatever its size and modification time; its numbers came from
    the content recorded in provenance.json, not from the file as it is now."""
    from .io.inputs import file_stamp
    stamps = read_digests(study, scenario)
    return {role: p for role, p in input_paths(study, scenario).items()
            if role in stamps and file_stamp(p) != stamps[role]}


def changed_note(path, base) -> str:
    """The note of an input that changed after the run read it."""
    return (f"{shown_path(path, base)} changed after the run read it: its sha256 in "
            "provenance.json is of the content the numbers come from, not of the file as "
            "it is now; run again to use the file as it is")


def provenance(scenario, inputs_paths: dict, started: _dt.datetime, out=None,
               resolution=None, changed=(), read=None) -> dict:
    """What made a run, for provenance.json (docs/run_folder.md).

    Parameters
    ----------
    scenario : Scenario or None
    inputs_paths : dict
        role -> path of every input (the scenario file first).
    started : datetime
        When the run started (UTC).
    out : path, optional
        The run folder: each input is also named relative to it (``from_run_folder``),
        so that ``workbench verify`` finds the inputs of a project moved whole.
    resolution : str, optional
        The reporting resolution in force (``workbench run --resolution`` overrides the
        scenario's ``[period] resolution``; the recorded scenario says the one used).
    changed : collection of str
        Roles of the inputs that changed after they were read
        (:func:`changed_since_read`): marked ``"changed_after_read": true``, with the
        SHA-256 of the file as it is now (``sha256_now``).
    read : dict, optional
        role -> SHA-256 of the bytes each input was parsed from
        (:attr:`workbench.io.inputs.Inputs.stamps`): recorded as its ``sha256`` (the
        content the numbers come from); an input without one is hashed here.
    """
    read = read or {}
    base = scenario_base(scenario)
    resolved = scenario.resolved() if scenario is not None else None
    overrides = {}
    if resolved is not None and resolution is not None:
        period = resolved.setdefault("period", {})
        if period.get("resolution") != resolution:     # workbench run --resolution
            overrides["period.resolution"] = resolution
        period["resolution"] = resolution
    inputs = {}
    for role, p in inputs_paths.items():
        inputs[role] = {"path": str(p), "sha256": read.get(role) or sha256(p),
                        "in_scenario_folder": shown_path(p, base) if role != "scenario"
                        else Path(p).name}
        content = gzip_content_sha256(p)
        if content is not None:
            inputs[role]["content_sha256"] = content
        if out is not None:
            inputs[role]["from_run_folder"] = relative_from(p, out)
        if role in changed:
            inputs[role]["changed_after_read"] = True
            inputs[role]["sha256_now"] = sha256(p)
    return {
        "package": "deposition-workbench", "version": __version__,
        "run_started_utc": started.strftime("%Y-%m-%dT%H:%M:%SZ"),
        "run_finished_utc": _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "scenario_file": str(scenario.path) if scenario is not None and scenario.path else None,
        "scenario": resolved,
        "inputs": inputs,
        "input_checksums": INPUT_CHECKSUM_RULE,
        "command_line_overrides": overrides,
        "environment": environment(),
    }


def _csv(frame, path, dates=False):
    write_csv(frame, path, "%.10g", "%Y-%m-%dT%H:%M" if dates else None)


def write_budget_csv(result, study, scenario, path):
    table = result.table
    cols = list(BUDGET_COLUMNS) + [c for c in table.columns if c not in BUDGET_COLUMNS]
    _csv(table[cols], path, dates=True)
    return path


def write_summary_csv(result, study, scenario, path):
    _csv(summary_table(result), path)
    return path


def write_budget_nc(result, study, scenario, path):
    write_netcdf(budget_dataset(result), path, "site budgets of S and N deposition")
    return path


def write_samples_csv(result, study, scenario, path):
    if result.screened is None:
        return None
    from .wet import samples_table
    _csv(samples_table(result.screened), path, dates=True)
    return path


def write_velocities_nc(result, study, scenario, path):
    if result.velocities is None:
        return None
    from .surfacehistory import mast_land_use
    ds = velocities_dataset(result.velocities)
    # the class under the wind mast per hour (the stage mast_in_force follows a site's
    # land-use history; docs/methods_dry.md section 11)
    ds["mast_land_use"] = mast_land_use(study.catalogue(), ds["site"].values
                                        if "site" in ds.coords else result.velocities["site"].values,
                                        ds["time"].values)
    write_netcdf(ds, path, "hourly aerodynamic, "
                 "quasi-laminar and surface resistances and deposition velocities")
    return path


def write_report_html(result, study, scenario, path):
    from .report import render_report
    Path(path).write_text(render_report(result, study, scenario), encoding="utf-8")
    return path


def write_input_rows(result, study, scenario, path):
    """input_rows.csv: every row of every input file counted by status and reason.

    Columns ``file, status, reason, rows, lines``. For each file and status one line with
    an empty reason holds the number of rows in that status; the lines below it count each
    single reason (a row with two reasons is counted under both, so the reason lines of
    a status can add up to more than its total), with the file's line numbers of that
    reason in ``lines`` (``lines 442-881``; the first runs). Read = accepted + flagged +
    rejected holds per file (:meth:`workbench.io.ledger.Ledger.check_balanced`).
    """
    led = study.inputs.ledger
    if not led.rows():
        return None
    totals = led.summary().melt(id_vars=["file"], value_vars=list(STATUSES),
                                var_name="status", value_name="rows")
    totals = totals[totals["rows"] > 0].assign(reason="", lines="")
    table = pd.concat([totals[["file", "status", "reason", "rows", "lines"]], led.reasons()],
                      ignore_index=True)
    order = {s: i for i, s in enumerate(STATUSES)}
    table = (table.assign(_s=table["status"].map(order), _r=table["reason"] != "")
             .sort_values(["file", "_s", "_r", "reason"], kind="stable")
             .drop(columns=["_s", "_r"]))
    table["rows"] = table["rows"].astype(int)
    base = scenario_base(scenario)            # the inputs as the scenario names them
    table["file"] = [shown_path(f, base) for f in table["file"]]
    _csv(table, path)
    return path


def write_analysis_tables(result, study, scenario, path):
    """exceedance.csv, trends.csv and the handover tables beside `path`; returns their
    names (:func:`workbench.analysis.outputs.write_analysis`)."""
    from .analysis.outputs import write_analysis
    from .comparison import chosen_scheme
    result, _ = chosen_scheme(result)     # [dry] compare_schemes: the chosen scheme's rows
    return list(write_analysis(result, study, scenario, Path(path).parent, atomic_write))


def write_caution_file(result, study, scenario, path):
    """CAUTION.txt: the caution of the CSV files, which carry no line of their own
    (:mod:`workbench.csvcaution`)."""
    from .csvcaution import write_folder_caution
    return write_folder_caution(Path(path).parent, atomic_write)


def write_range_shares_csv(result, study, scenario, path):
    """range_shares.csv with ``[uncertainty] explain_ranges`` (each drawn factor's share
    of every range, :mod:`workbench.analysis.range_shares`); None otherwise."""
    shares = getattr(result, "range_shares", None)
    if shares is None:
        return None
    _csv(shares, path)
    return path


#: The files of a run folder, in the order they are written: (file name, writer).  A
#: writer is called as ``writer(result, study, scenario, path)`` and returns the path it
#: wrote, None when it has nothing to write, or the list of names of the several files
#: it wrote.  ``provenance.json`` comes after all of
#: them, as the mark of a complete run.  Add an output by appending a step.
OUTPUT_STEPS = [
    ("budget.csv", write_budget_csv),
    ("summary.csv", write_summary_csv),
    ("budget.nc", write_budget_nc),
    ("samples.csv", write_samples_csv),
    ("velocities.nc", write_velocities_nc),
    ("report.html", write_report_html),
    ("input_rows.csv", write_input_rows),
    ("CAUTION.txt", write_caution_file),
    ("analysis tables", write_analysis_tables),
    ("range_shares.csv", write_range_shares_csv),
]


#: The fields of provenance.json's ``air_vd_held`` (only where a draw was held at the end
#: of the grid of ``[uncertainty] vd_follows_air``: :func:`.analysis.airvd.held`).
AIR_VD_HELD_KEYS = ("site", "species", "draws", "held_draws", "held_sample_draws",
                    "sample_draws")


def input_paths(study, scenario) -> dict:
    """role -> path of every input of a run (the scenario file first)."""
    paths = dict(study.inputs.paths)
    if scenario is not None and scenario.path is not None:
        paths = {"scenario": scenario.path, **paths}
    return paths


def write_files(result, study, scenario, folder: Path, progress=None, started=None,
                out=None) -> dict:
    """Write every output into `folder` (the temporary sibling), provenance.json last.

    `out` is the run folder `folder` becomes (default `folder`): provenance.json names
    the inputs relative to it.  provenance.json holds the SHA-256 of every other file it
    lists (``output_sha256``), for ``workbench verify``.

    An OS error (disk full, file-size limit, permissions) becomes one
    :class:`OutputError` naming the file and what to do.

    Returns
    -------
    dict
        name -> file name, in the order written.
    """
    started = started or _dt.datetime.now(_dt.timezone.utc)
    say = progress or (lambda text: None)
    folder = Path(folder)
    base = scenario_base(scenario)
    names = []
    for name, writer in OUTPUT_STEPS + [("provenance.json", None)]:
        say(name)
        path = folder / name
        try:
            if writer is None:
                changed = changed_since_read(study, scenario)
                prov = provenance(scenario, input_paths(study, scenario), started,
                                  out=folder if out is None else out,
                                  resolution=getattr(result, "options", {}).get("resolution"),
                                  changed=changed, read=read_digests(study, scenario))
                prov["outputs"] = names + ["provenance.json"]
                prov["output_sha256"] = {n: sha256(folder / n) for n in names}
                # the sites computed: an apps' export holds one site of the scenario's
                # catalogue, which its options (prov["scenario"]) do not say
                prov["sites"] = [str(s) for s in study.inputs.catalogue.ids]
                prov["input_notes"] = [shown_text(str(n), base) for n in study.inputs.ledger.notes]
                prov["run_notes"] = ([shown_text(str(n), base)
                                      for n in getattr(result, "notes", [])]
                                     + [changed_note(p, base) for p in changed.values()])
                held = getattr(getattr(result, "options", {}).get("uncertainty"),
                               "air_vd_held", ())
                if held:        # [uncertainty] vd_follows_air: draws held at the grid's end
                    prov["air_vd_held"] = [dict(zip(AIR_VD_HELD_KEYS, h)) for h in held]
                path.write_text(json.dumps(prov, indent=2, default=str))
                got = path
            else:
                got = writer(result, study, scenario, path)
        except OSError as exc:
            raise OutputError(os_error_message(exc, path) + "; nothing was written into the "
                              "output folder") from exc
        if isinstance(got, list):        # a step that writes several files names them
            names.extend(got)
        elif got is not None:
            names.append(name)
        release_free_memory()            # the next step's arrays start from a trimmed heap
    return names


def write_run(result, study, scenario, out, overwrite=False, progress=None, folder=None) -> dict:
    """Write every output of a run into `out`, whole or not at all (see :mod:`.runfolder`).

    Parameters
    ----------
    folder : RunFolder, optional
        An entered run folder for `out` (the command line takes it before computing, so
        that a second run is refused at once); by default one is taken here.

    Returns
    -------
    dict
        name -> Path of each file written (in `out`).
    """
    started = _dt.datetime.now(_dt.timezone.utc)
    if folder is None:
        with RunFolder(out, input_paths(study, scenario), overwrite) as f:
            return write_run(result, study, scenario, out, progress=progress, folder=f)
    from .analysis.uncertainty import with_uncertainty     # quantiles when [uncertainty] draws > 0
    result = with_uncertainty(result, study, scenario)
    names = write_files(result, study, scenario, folder.path, progress, started,
                        out=folder.out)
    try:
        final = folder.commit()
    except OSError as exc:
        raise OutputError(os_error_message(exc, folder.out, "rename into place")) from exc
    return {name: final / name for name in names}
