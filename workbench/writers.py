"""Writers of a run folder: every file written atomically, never over an input.

``budget.csv``, ``summary.csv``, ``budget.nc``, ``samples.csv``, ``velocities.nc``,
``report.html`` and ``provenance.json`` (see docs/scenario.md).
"""
from __future__ import annotations

import datetime as _dt
import hashlib
import json
import os
import tempfile
from pathlib import Path

import numpy as np
import xarray as xr

from . import __version__
from .errors import WorkbenchError
from .tables import BUDGET_COLUMNS


class OutputError(WorkbenchError):
    """The output folder cannot be used (not empty, holds an input, ...)."""


def atomic_write(path: Path, writer) -> Path:
    """Write via a temporary file in the same folder, then rename over `path`.

    Parameters
    ----------
    path : Path
    writer : callable
        Called with the temporary path; writes the content there.
    """
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        writer(Path(tmp))
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes 0600; give the usual file mode
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def sha256(path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for chunk in iter(lambda: f.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def prepare_out_dir(out: Path, inputs: dict, overwrite: bool = False) -> Path:
    """Create or check the output folder.

    Raises
    ------
    OutputError
        When the folder holds an input file, or is not empty and `overwrite` is False.
    """
    out = Path(out).resolve()
    for role, p in inputs.items():
        p = Path(p).resolve()
        if p.parent == out or out in p.parents:
            raise OutputError(f"output folder {out} holds the {role} input {p.name}: "
                              "choose another folder (outputs never go beside or over inputs)")
    if out.exists():
        if not out.is_dir():
            raise OutputError(f"output path {out} exists and is not a folder")
        if any(out.iterdir()) and not overwrite:
            raise OutputError(f"output folder {out} is not empty: use --overwrite to replace "
                              "its files, or choose a new folder")
    out.mkdir(parents=True, exist_ok=True)
    return out


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


def write_netcdf(ds: xr.Dataset, path: Path, title: str):
    ds = _netcdf_ready(ds)
    ds.attrs.update({"Conventions": "CF-1.8", "title": title,
                     "institution": "deposition workbench user",
                     "source": f"deposition workbench {__version__}",
                     "history": f"{_dt.datetime.now(_dt.timezone.utc):%Y-%m-%dT%H:%M:%SZ} created"})
    atomic_write(path, lambda tmp: ds.to_netcdf(tmp, engine="scipy", format="NETCDF3_64BIT"))


def budget_dataset(result) -> xr.Dataset:
    """The budget as a CF-style Dataset (component coordinate kept as text)."""
    ds = result.budget.copy()
    ds["deposition"].attrs.update({"standard_name": "amount_of_element_deposited",
                                   "long_name": "deposition as amount of S or N (element basis)"})
    ds = xr.merge([ds, result.derived], compat="override")
    ds["period_start"].attrs["long_name"] = "start of the period (UTC)"
    ds["period_end"].attrs["long_name"] = "end of the period, exclusive (UTC)"
    return ds


#: Variables of velocities.nc besides ``rb_*``, ``rc_<gas>`` and ``vd_*`` (the paths of Rc
#: stay in the Python result; writing them all made the demo file near 1 GB).
VELOCITY_FILE_VARIABLES = ("friction_velocity", "obukhov_length", "ra", "roughness_length",
                           "displacement_height", "seasonal_category", "surface_wet",
                           "ustar_floor_used", "ra_cap_used", "ra_height_raised")


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
        if a.dtype.kind == "f":
            a = a.astype("float32")
        out[v] = (("surface", "time") + ds[v].dims[3:], a, dict(ds[v].attrs))
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


def provenance(scenario, inputs_paths: dict, started: _dt.datetime) -> dict:
    return {
        "package": "deposition-workbench", "version": __version__,
        "run_started_utc": started.strftime("%Y-%m-%dT%H:%M:%SZ"),
        "run_finished_utc": _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "scenario_file": str(scenario.path) if scenario is not None and scenario.path else None,
        "scenario": scenario.resolved() if scenario is not None else None,
        "inputs": {role: {"path": str(p), "sha256": sha256(p)} for role, p in inputs_paths.items()},
    }


def write_run(result, study, scenario, out, overwrite=False, progress=None) -> dict:
    """Write every output of a run into `out`.

    Returns
    -------
    dict
        name -> Path of each file written.
    """
    started = _dt.datetime.now(_dt.timezone.utc)
    say = progress or (lambda text: None)
    paths = dict(study.inputs.paths)
    if scenario is not None and scenario.path is not None:
        paths = {"scenario": scenario.path, **paths}
    out = prepare_out_dir(out, paths, overwrite)
    written = {}
    say("budget.csv")
    table = result.table
    cols = list(BUDGET_COLUMNS) + [c for c in table.columns if c not in BUDGET_COLUMNS]
    written["budget.csv"] = atomic_write(out / "budget.csv", lambda t: table[cols].to_csv(
        t, index=False, float_format="%.10g", date_format="%Y-%m-%dT%H:%M"))
    say("summary.csv")
    summ = result.derived.to_dataframe().reset_index()
    written["summary.csv"] = atomic_write(out / "summary.csv", lambda t: summ.to_csv(
        t, index=False, float_format="%.10g"))
    say("budget.nc")
    write_netcdf(budget_dataset(result), out / "budget.nc", "site budgets of S and N deposition")
    written["budget.nc"] = out / "budget.nc"
    if result.screened is not None:
        say("samples.csv")
        from .wet import samples_table
        st = samples_table(result.screened)
        written["samples.csv"] = atomic_write(out / "samples.csv", lambda t: st.to_csv(
            t, index=False, float_format="%.10g", date_format="%Y-%m-%dT%H:%M"))
    if result.velocities is not None:
        say("velocities.nc")
        write_netcdf(velocities_dataset(result.velocities), out / "velocities.nc",
                     "hourly aerodynamic, quasi-laminar and surface resistances and deposition velocities")
        written["velocities.nc"] = out / "velocities.nc"
    say("report.html")
    from .report import render_report
    html = render_report(result, study, scenario)
    written["report.html"] = atomic_write(out / "report.html",
                                          lambda t: t.write_text(html, encoding="utf-8"))
    from .analysis.outputs import write_analysis
    written.update(write_analysis(result, study, scenario, out, atomic_write))
    say("provenance.json")
    prov = provenance(scenario, paths, started)
    prov["outputs"] = sorted(written) + ["provenance.json"]
    written["provenance.json"] = atomic_write(
        out / "provenance.json", lambda t: t.write_text(json.dumps(prov, indent=2, default=str)))
    return written
