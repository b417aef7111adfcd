"""A small invented demo grid: 20 x 20 cells of 1 km, one month of hourly met.

Everything is invented.  The grid lies over the invented Vellmoor Uplands of the demo
network: the hourly weather and the weekly concentrations of the demo site ``ridge``
are spread over the cells with invented patterns (a valley and a hill, a lake, forest,
moorland and farmland, and a plume of the demo power station that raises SO2 to the
east).  The files are made on the fly rather than shipped: three NetCDF3 files of a
month are ~10 MB (NetCDF3 cannot compress, and the workbench reads NetCDF with scipy
alone), while this script makes them in about a second from the shipped site data.

    python demo_data/make_grid.py --out DIR      # writes met.nc, air.nc, land_use.nc,
                                                 # scenario.toml into DIR
From Python: ``workbench.grid_demo.make_demo_grid(DIR)`` (the notebook
``grid_maps.ipynb`` does this in a temporary folder).
:func:`write_grid_files` writes any such grid in the format of docs/data_formats.md.
"""
from __future__ import annotations

import argparse
import gzip
from pathlib import Path

import numpy as np
import xarray as xr


def _demo() -> Path:
    """The shipped demo folder (installed or in the source tree)."""
    from .cli import demo_folder
    return demo_folder()

#: Cells per side, cell size [m], the month of the demo (UTC) and the base site.
N_CELLS, CELL_M, MONTH, BASE_SITE = 20, 1000.0, "2021-07", "ridge"
#: Centre of the grid (the base site's invented position) [degree].
CENTRE = (54.512, 7.236)
SCENARIO = """# Invented demo grid over the Vellmoor Uplands (made by make_grid.py).
# Paths are relative to this file.
[grid]
met = "met.nc"
air = "air.nc"
land_use = "land_use.nc"

[period]
resolution = "month"
"""
CLASS_CODES = {"conifer_forest": 1, "deciduous_forest": 2, "grass": 4, "crops": 5,
               "moorland": 6, "water": 8, "urban": 9}


#: CF standard names of the met variables whose units fit them (CF standard name table).
STANDARD_NAMES = {"temperature": {"standard_name": "air_temperature"},
                  "wind_speed": {"standard_name": "wind_speed"},
                  "relative_humidity": {"standard_name": "relative_humidity"},
                  "solar_radiation": {"standard_name": "surface_downwelling_shortwave_flux_in_air"},
                  "pressure": {"standard_name": "surface_air_pressure"},
                  "cloud_cover": {"standard_name": "cloud_area_fraction"}}


def _no_fill(ds):
    """No _FillValue on coordinates (CF 2.5.1)."""
    return {n: {"_FillValue": None} for n in ds.coords}


def _cf_time(name="time"):
    return {"standard_name": "time", "axis": "T", "long_name": name}


def write_grid_files(folder, times, met: dict, air_bounds, air: dict, classes, lat, lon,
                     y=None, x=None, wind_height=10.0, sampler_height=1.5, elevation=None,
                     canopy_height=None, reference_state="ambient", dtype="float32"):
    """Write met.nc, air.nc and land_use.nc of a grid (docs/data_formats.md).

    Parameters
    ----------
    folder : path
    times : array of datetime64
        End of each met hour (UTC); written with hourly CF time bounds.
    met : dict
        name -> (array (time, y, x), units) of the met variables.
    air_bounds : (start, end)
        Arrays of datetime64: the sampling intervals (UTC).
    air : dict
        species -> (array (time, y, x), units).
    classes : array (y, x) of str or None
    lat, lon : array (y, x) [degree]
    y, x : array, optional
        Projected coordinates [m] (a Lambert azimuthal equal-area grid mapping centred
        on the grid is written); default: 0, 1000, 2000 ...
    wind_height, sampler_height : float
        Heights of the wind and of the concentrations [m].
    elevation, canopy_height : array (y, x), optional
        [m]
    reference_state : str
        Of mass concentrations.
    dtype : str
        Of the hourly and interval arrays (float32 keeps the demo small; float64
        keeps a site's numbers exactly).

    Returns
    -------
    dict
        role -> Path.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    ny, nx = np.shape(classes)
    y = np.arange(ny) * CELL_M if y is None else np.asarray(y, float)
    x = np.arange(nx) * CELL_M if x is None else np.asarray(x, float)
    crs = xr.DataArray(np.int32(0), attrs={
        "grid_mapping_name": "lambert_azimuthal_equal_area",
        "latitude_of_projection_origin": float(np.mean(lat)),
        "longitude_of_projection_origin": float(np.mean(lon)),
        "false_easting": float(x.mean()), "false_northing": float(y.mean())})
    coords = {"y": ("y", y, {"standard_name": "projection_y_coordinate", "units": "m",
                             "axis": "Y"}),
              "x": ("x", x, {"standard_name": "projection_x_coordinate", "units": "m",
                             "axis": "X"}),
              "lat": (("y", "x"), np.asarray(lat, float), {"standard_name": "latitude",
                                                           "units": "degrees_north"}),
              "lon": (("y", "x"), np.asarray(lon, float), {"standard_name": "longitude",
                                                           "units": "degrees_east"})}
    enc_t = {"units": "hours since 2000-01-01 00:00:00", "calendar": "standard",
             "dtype": "float64", "_FillValue": None}
    t = np.asarray(times).astype("datetime64[ns]")
    hour = np.timedelta64(1, "h")

    def grid_var(a, units, extra=None):
        return (("time", "y", "x"), np.asarray(a, dtype),
                {"units": units, "grid_mapping": "crs", **(extra or {})})

    from .io.met import MET_VARIABLES
    from .species import get
    history = "made by make_grid.write_grid_files (invented data)"
    mds = xr.Dataset({k: grid_var(a, u, {"long_name": MET_VARIABLES[k][2],
                                         **STANDARD_NAMES.get(k, {})})
                      for k, (a, u) in met.items()}, coords=coords)
    mds = mds.assign_coords(time=("time", t, _cf_time("end of the hour (UTC)")),
                            height=((), float(wind_height), {"standard_name": "height",
                                                             "units": "m", "positive": "up"}))
    mds["time"].attrs["bounds"] = "time_bnds"
    mds["time_bnds"] = (("time", "nv"), np.stack([t - hour, t], 1))
    mds["crs"] = crs
    mds.attrs = {"Conventions": "CF-1.8", "title": "invented hourly met grid",
                 "history": history}
    mds["wind_speed"].attrs["coordinates"] = "height lat lon"
    paths = {"met": folder / "met.nc", "air": folder / "air.nc",
             "land_use": folder / "land_use.nc"}
    mds.to_netcdf(paths["met"], engine="scipy",
                  encoding={**_no_fill(mds), "time": enc_t, "time_bnds": enc_t})
    s, e = (np.asarray(v).astype("datetime64[ns]") for v in air_bounds)
    ads = xr.Dataset({k: grid_var(a, u, {"long_name": get(k).long_name})
                      for k, (a, u) in air.items()}, coords=coords)
    ads = ads.assign_coords(time=("time", s, _cf_time("start of the sampling interval (UTC)")),
                            height=((), float(sampler_height), {"standard_name": "height",
                                                                "units": "m", "positive": "up"}))
    ads["time"].attrs["bounds"] = "time_bnds"
    ads["time_bnds"] = (("time", "nv"), np.stack([s, e], 1))
    ads["crs"] = crs
    ads.attrs = {"Conventions": "CF-1.8", "title": "invented air concentration grid",
                 "history": history,
                 "reference_state": reference_state}
    ads.to_netcdf(paths["air"], engine="scipy",
                  encoding={**_no_fill(ads), "time": enc_t, "time_bnds": enc_t})
    names = sorted({c for c in np.asarray(classes, object).reshape(-1) if c is not None})
    codes = {c: k + 1 for k, c in enumerate(names)}
    arr = np.array([codes.get(c, -1) for c in np.asarray(classes, object).reshape(-1)],
                   "int16").reshape(ny, nx)
    lds = xr.Dataset({"land_use": (("y", "x"), arr, {
        "long_name": "land-use class", "flag_values": np.array(list(codes.values()), "int16"),
        "flag_meanings": " ".join(codes), "grid_mapping": "crs", "_FillValue": np.int16(-1)})},
        coords=coords)
    if elevation is not None:
        lds["surface_altitude"] = (("y", "x"), np.asarray(elevation, float), {
            "standard_name": "surface_altitude", "units": "m", "grid_mapping": "crs"})
    if canopy_height is not None:
        lds["canopy_height"] = (("y", "x"), np.asarray(canopy_height, float), {
            "standard_name": "canopy_height", "units": "m", "grid_mapping": "crs"})
    lds["crs"] = crs
    lds.attrs = {"Conventions": "CF-1.8", "title": "invented land-use grid",
                 "history": history}
    lds.to_netcdf(paths["land_use"], engine="scipy", encoding=_no_fill(lds))
    return paths


def _base_site(folder: Path, months=1):
    """The base site's met (site, time) and air (period) of `months` demo months from
    :data:`MONTH`, read with the workbench's own readers from the shipped demo files."""
    from .io import load_inputs
    here = _demo()
    lo, hi = MONTH, str(np.datetime64(MONTH, "M") + np.timedelta64(months, "M"))
    last = str(np.datetime64(MONTH, "M") + np.timedelta64(months - 1, "M"))
    tmp = folder / "_base"
    tmp.mkdir(parents=True, exist_ok=True)
    with gzip.open(here / "met.csv.gz", "rt", encoding="utf-8") as f:
        met = [ln for ln in f if ln.startswith(("#", "site,")) or
               (ln.startswith(BASE_SITE + ",") and lo <= ln.split(",")[1][:7] <= last)]
    (tmp / "met.csv").write_text("".join(met), encoding="utf-8")
    air = [ln for ln in (here / "air.csv").read_text(encoding="utf-8").splitlines(True)
           if ln.startswith(("#", "site,")) or (ln.startswith(BASE_SITE + ",")
                                                and lo <= ln.split(",")[1][:7] < hi)]
    (tmp / "air.csv").write_text("".join(air), encoding="utf-8")
    inputs = load_inputs(here / "sites.toml", air=tmp / "air.csv", met=tmp / "met.csv")
    for p in tmp.iterdir():
        p.unlink()
    tmp.rmdir()
    return inputs.met.sel(site=BASE_SITE), inputs.air


def make_demo_grid(folder, n=N_CELLS, months=1) -> Path:
    """Write the demo grid and its scenario into `folder`; returns the scenario path.

    Parameters
    ----------
    folder : path
    n : int
        Cells per side.
    months : int
        Months of hourly met from :data:`MONTH` (the demo has one; a year, 12, makes
        the large time-chunked grids of benchmarks/grid_chunks.py).
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    met, air = _base_site(folder, months)
    rng = np.random.default_rng(20210701)
    j, i = np.meshgrid(np.arange(n), np.arange(n), indexing="ij")
    yy, xx = (j - n / 2 + 0.5) * CELL_M, (i - n / 2 + 0.5) * CELL_M
    lat = CENTRE[0] + yy / 111_195.0
    lon = CENTRE[1] + xx / (111_195.0 * np.cos(np.deg2rad(CENTRE[0])))
    # relief: a valley running north-south with a hill in the north-east [m]
    elev = 420.0 + 180.0 * (np.abs(xx) / (n * CELL_M / 2)) ** 1.5 \
        + 150.0 * np.exp(-((xx - 5e3) ** 2 + (yy - 5e3) ** 2) / 8e6) - 120.0
    lake = (xx + 4e3) ** 2 + (yy + 5e3) ** 2 < 5e6
    field = rng.random((n, n))
    classes = np.where(elev > 500, "moorland", np.where(field < 0.45, "conifer_forest",
                       np.where(field < 0.6, "deciduous_forest",
                                np.where(field < 0.85, "grass", "crops")))).astype(object)
    classes[lake] = "water"
    classes[(np.abs(xx - 2.5e3) < 1.1e3) & (np.abs(yy + 1.5e3) < 1.1e3)] = "urban"
    dz = (elev - 420.0)[None]
    t = met["time"].values
    base = {k: met[k].values[:, None, None] for k in met.data_vars if k != "row_present"}
    shape = (len(t), n, n)
    wind = base["wind_speed"] * (1 + dz / 600.0) * np.ones(shape)
    fields = {"wind_speed": (wind, "m s-1"),
              "temperature": (base["temperature"] - 0.0065 * dz + 0 * wind, "K"),
              "relative_humidity": (np.clip(base["relative_humidity"] + 0.0002 * dz, 0, 1)
                                    * np.ones(shape), "1"),
              "solar_radiation": (base["solar_radiation"] * np.ones(shape), "W m-2"),
              "precipitation": (base["precipitation"] * (1 + dz / 800.0) * np.ones(shape), "mm"),
              "pressure": (base["pressure"] * np.exp(-dz / 8400.0) * np.ones(shape), "Pa")}
    if "cloud_cover" in base:
        fields["cloud_cover"] = (base["cloud_cover"] * np.ones(shape), "1")
    # an invented plume from the west edge, drifting east: more SO2 and sulfate there
    plume = 1.0 + 2.5 * np.exp(-(yy + 2e3) ** 2 / 6e6) * (1 - np.exp(-(xx + 1.1e4) / 6e3))
    local_nh3 = np.where(classes == "crops", 3.0, np.where(classes == "grass", 1.6, 1.0))
    factors = {"SO2": plume, "pSO4": 0.5 + 0.5 * plume, "NH3": local_nh3}
    inside = (air["start"].values >= t[0] - np.timedelta64(1, "h")) & (air["end"].values <= t[-1])
    air = air.isel(period=np.flatnonzero(inside))
    conc = {}
    for sp in ("SO2", "HNO3", "NH3", "pSO4", "pNO3", "pNH4", "NO2", "pNa"):
        if sp not in air:
            continue
        unit = "mol m-3" if air[sp].attrs.get("quantity") == "amount_density" else "mol mol-1"
        f = factors.get(sp, 1.0 + 0.1 * (field - 0.5))
        conc[sp] = (air[sp].values[:, None, None] * f[None], unit)
    write_grid_files(folder, t, fields, (air["start"].values, air["end"].values), conc,
                     classes, lat, lon, y=yy[:, 0], x=xx[0], wind_height=10.0,
                     sampler_height=1.5, elevation=elev)
    (folder / "scenario.toml").write_text(SCENARIO, encoding="utf-8")
    return folder / "scenario.toml"


def main(argv=None) -> int:
    """``python demo_data/make_grid.py --out DIR``: prints what it wrote, where, and the
    command that maps it (before, the scenario path alone)."""
    import sys
    from .cli_status import console_lines
    from .errors import WorkbenchError
    from .runfolder import RunFolder
    p = argparse.ArgumentParser(description="write the invented demo grid and its scenario")
    p.add_argument("--out", type=Path, required=True, help="folder for the grid files and "
                   "their scenario.toml (created; a folder that is not empty is refused)")
    p.add_argument("--overwrite", action="store_true",
                   help="replace a non-empty --out folder whole (as `workbench run "
                        "--overwrite`)")
    args = p.parse_args(argv)
    # the output folder as `workbench run` treats it (workbench/runfolder.py): a folder
    # that is not empty is refused unless --overwrite, the files are written into a
    # sibling and renamed into place, so no file of another run is written over or mixed
    # with these, and an interrupted run leaves nothing that looks like a grid
    try:
        with RunFolder(args.out, {}, args.overwrite) as run:
            make_demo_grid(run.path)
            folder = run.commit()
    except WorkbenchError as exc:
        print("\n".join(console_lines([f"error: {exc}"])), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"error: interrupted; nothing was written into {Path(args.out).resolve()}",
              file=sys.stderr)
        return 130
    scenario = folder / "scenario.toml"
    names = [scenario.name] + [n for n in ("met.nc", "air.nc", "land_use.nc")
                               if (folder / n).is_file()]
    print(f"wrote the invented demo grid ({N_CELLS} x {N_CELLS} cells) and its scenario "
          "into")
    print(f"  {folder}:")
    for name in names:
        print(f"    {name}")
    print("to map it (grid.nc into a new folder):")
    command = f"  workbench grid {folder / scenario.name} --out {folder.parent / 'grid-maps'}"
    if len(command) > 79:         # an 80-column terminal: a path to a line, as a shell reads
        command = (f"  workbench grid \\\n    {folder / scenario.name} \\\n"
                   f"    --out {folder.parent / 'grid-maps'}")
    print(command)
    return 0


def open_run(scenario=None, out=None, block=10):
    """Run ``workbench grid`` for a notebook and open its maps.

    Parameters
    ----------
    scenario : path, optional
        A scenario with a ``[grid]`` section.  None, or a scenario without one (the
        site demo): the invented demo grid is made in a temporary folder and run (and
        a line says so).  A finished run folder of ``workbench grid`` (or its
        ``grid.nc``) is opened as it is, without running anything.
    out : path, optional
        The run folder (default: a new temporary folder).
    block : int
        Cells per block side.

    Returns
    -------
    xarray.Dataset
        ``grid.nc``, loaded (the file is closed).
    """
    import tempfile
    from .grid_output import GRID_FILE, run_grid
    from .scenario import load_scenario
    done = Path(scenario) / GRID_FILE if scenario is not None and Path(scenario).is_dir() \
        else Path(scenario) if scenario is not None and str(scenario).endswith(".nc") else None
    if done is not None:
        if not done.is_file():
            raise FileNotFoundError(f"{done}: no such file; expected the grid.nc of a "
                                    "finished `workbench grid` run (or a scenario.toml to run)")
        with xr.open_dataset(done) as ds:
            return ds.load()
    tmp = Path(tempfile.mkdtemp(prefix="workbench-grid-"))
    if scenario is not None and load_scenario(scenario).given.get("grid") is None:
        print(f"{scenario} has no [grid] section: showing the invented demo grid instead")
        scenario = None
    if scenario is None:
        scenario = make_demo_grid(tmp / "demo_grid")
    out = Path(out) if out is not None else tmp / "run"
    run_grid(scenario, out, quiet=True, block=block)
    with xr.open_dataset(out / GRID_FILE) as ds:
        return ds.load()
