"""Gridded fields (workbench.grid): a cell is a site.

The grid is built from the inputs of the demo site ``ridge`` (two months of 2021): cell
(0, 0) holds exactly its met, concentrations, class, canopy height, elevation and
position, so it must give the site pipeline's numbers (Study.velocities, Study.dry) to
1e-9 relative.  The other cells differ (other classes, scaled met, a cell without a
class) so that a mix-up of cells would show.  CF attributes are checked with the IOOS
compliance-checker (cf:1.8 suite, a general-purpose reference library of the CF
conventions, run offline with its bundled standard-name table).
"""
from __future__ import annotations

import dataclasses
import json
from pathlib import Path
import sys

import numpy as np
import pytest
import xarray as xr

from ui.demo_subset import write_demo_subset
from workbench.budget import BudgetOptions
from workbench.grid_demo import write_grid_files
from workbench.drydep import DryOptions, velocities
from workbench.grid import DRY_SPECIES, compute_grid, dry_for_sites, make_periods
from workbench.grid_io import GridError, block_catalogue, open_grid, read_block
from workbench.grid_output import grid_dataset
from workbench.io.inputs import Inputs
from workbench.io.sites import SiteCatalogue
from workbench.periods import make_periods as site_periods
from workbench.pipeline import Study
from workbench.scenario import load_scenario, load_scenario_inputs
from workbench.units import element_deposition_in

T0, T1 = np.datetime64("2021-03-01T00:00", "ns"), np.datetime64("2021-05-01T00:00", "ns")
MET = {"wind_speed": "m s-1", "temperature": "K", "relative_humidity": "1",
       "solar_radiation": "W m-2", "precipitation": "mm", "pressure": "Pa",
       "cloud_cover": "1", "friction_velocity": "m s-1"}
RTOL = 1e-9


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    """The site side: ridge's inputs of March-April 2021 and its Study, the site
    stripped of what a grid cell cannot say (monthly LAI, slope, another class under
    the wind mast, further receptors, coast distance)."""
    base = tmp_path_factory.mktemp("grid_site")
    inputs = load_scenario_inputs(load_scenario(write_demo_subset(base / "sub", ("ridge",),
                                                                  2021, 2021)))
    ridge = dataclasses.replace(inputs.catalogue["ridge"], lai=None, terrain_slope_deg=0.0,
                                met_land_use=None, receptors=(), coast_distance_km=None,
                                coarse_fraction={})
    t = inputs.met["time"].values
    met = inputs.met.isel(time=np.flatnonzero((t > T0) & (t <= T1)))
    a = inputs.air
    air = a.isel(period=np.flatnonzero((a["start"].values >= T0) & (a["end"].values <= T1)))
    study = Study(Inputs(catalogue=SiteCatalogue([ridge]), air=air, met=met))
    return {"ridge": ridge, "met": met, "air": air, "study": study, "base": base}


def _write(folder, site, classes=None, **change):
    """The grid files: 2 x 3 cells, cell (0, 0) = the site."""
    ridge, met, air = site["ridge"], site["met"], site["air"]
    ny, nx = 2, 3
    scale = np.array([[1.0, 1.3, 0.8], [1.1, 1.0, 0.9]])
    fields = {k: (met[k].values[0][:, None, None] * (scale if k == "wind_speed" else 1.0)
                  * np.ones((1, ny, nx)), u) for k, u in MET.items() if k in met}
    conc = {}
    for sp in ("SO2", "HNO3", "NH3", "pSO4", "pNO3", "pNH4", "NO2", "pNa"):
        unit = "mol m-3" if air[sp].attrs["quantity"] == "amount_density" else "mol mol-1"
        conc[sp] = (air[sp].values[:, None, None] * scale[None], unit)
    classes = classes if classes is not None else np.array(
        [[ridge.land_use, "grass", "moorland"], [None, "water", ridge.land_use]], object)
    kw = dict(lat=np.full((ny, nx), ridge.latitude), lon=np.full((ny, nx), ridge.longitude),
              wind_height=ridge.wind_height_m, sampler_height=ridge.sampler_height_m,
              elevation=np.full((ny, nx), ridge.elevation_m),
              canopy_height=np.where(classes == ridge.land_use, ridge.canopy_height_m, np.nan),
              dtype="float64")
    kw.update(change)
    return write_grid_files(folder, met["time"].values, fields,
                            (air["start"].values, air["end"].values), conc, classes, **kw)


@pytest.fixture(scope="module")
def grid(site):
    paths = _write(site["base"] / "grid", site)
    return open_grid(paths["met"], paths["air"], paths["land_use"])


def test_cell_equals_site_hourly_vd(site, grid):
    """Hourly Vd of every species of cell (0, 0) = the site's, to 1e-9 relative."""
    cat = block_catalogue(grid, slice(0, 1), slice(0, 1))
    met, air, _ = read_block(grid, slice(0, 1), slice(0, 1), cat)
    periods = site_periods(T0, T1, "month")
    vd_cell, _, dry_cell = dry_for_sites(met, air, cat, DryOptions(), BudgetOptions(), periods)
    vd_site = site["study"].velocities(DryOptions())
    r = site["ridge"].land_use
    compared = 0
    assert {n for n in vd_cell.data_vars if n.startswith("vd_")} == \
        {f"vd_{sp}" for sp in grid.species if sp in DRY_SPECIES}   # the air grid's only
    for name in vd_cell.data_vars:
        if name.startswith("vd_"):
            a = vd_cell[name].values[0, 0]
            b = vd_site[name].sel(site="ridge", receptor=r).values
            np.testing.assert_allclose(a, b, rtol=RTOL, atol=0, equal_nan=True, err_msg=name)
            compared += int(np.isfinite(b).sum() > 0)
    assert compared >= 7
    dry_site, _ = site["study"].dry(DryOptions(), BudgetOptions(), periods)
    np.testing.assert_allclose(dry_cell["deposition"].values[0, 0],
                               dry_site["deposition"].sel(site="ridge", receptor=r).values,
                               rtol=RTOL, equal_nan=True)


def test_grid_maps_equal_site(site, grid):
    """The written maps of cell (0, 0): period-mean Vd and dry flux per species (kg/ha of
    the element) equal the site pipeline's; totals are the sums of the species."""
    periods = make_periods(grid, "month")
    names, arr = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=2)
    ds = grid_dataset(names, arr, grid, periods, "test")
    dry_site, _ = site["study"].dry(DryOptions(), BudgetOptions(), periods)
    vel = site["study"]._velocity_sets(DryOptions(), BudgetOptions(), {}, None)
    r = site["ridge"].land_use
    total = {"S": 0.0, "N": 0.0}
    for sp, element in DRY_SPECIES.items():
        dep = dry_site["deposition"].sel(site="ridge", receptor=r, species=sp).values
        want = element_deposition_in(dep, element, "kg_ha")
        np.testing.assert_allclose(ds[f"dry_{sp}"].values[:, 0, 0], want, rtol=RTOL)
        total[element] = total[element] + want
        vd = vel[sp][0].sel(site="ridge", receptor=r)
        t = vd["time"].values
        means = [float(vd.isel(time=np.flatnonzero((t > s) & (t <= e))).mean())
                 for s, e in zip(periods["start"].values, periods["end"].values)]
        np.testing.assert_allclose(ds[f"vd_{sp}"].values[:, 0, 0], means, rtol=RTOL)
    for element in ("S", "N"):
        np.testing.assert_allclose(ds[f"dry_{element}"].values[:, 0, 0], total[element],
                                   rtol=RTOL)
    assert np.all(np.isnan(ds["dry_N"].values[:, 1, 0]))          # the cell without a class
    # cell (1, 2): same class, other wind and concentrations -> other numbers
    assert not np.allclose(ds["dry_N"].values[:, 1, 2], ds["dry_N"].values[:, 0, 0])
    assert np.all(ds["dry_N"].values[:, 0, :] > 0)
    # the caution travels with grid.nc (CF global comment; tests/test_caution_outputs.py)
    from workbench.report import CAUTION
    assert ds.attrs["comment"] == CAUTION


def test_dask_blocks_equal_in_memory(grid):
    dask = pytest.importorskip("dask")
    periods = make_periods(grid, "month")
    names, whole = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=10)
    names2, lazy = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=(1, 2),
                                use_dask=True)
    assert names == names2 and isinstance(lazy, dask.array.Array)
    assert lazy.numblocks[2:] == (2, 2)
    got = lazy.compute(scheduler="threads")
    # the same blocks in process: identical bits
    np.testing.assert_array_equal(got, compute_grid(grid, DryOptions(), BudgetOptions(),
                                                    periods, block=(1, 2))[1])
    # other blocks group other cells in one vectorized call: sums in another order, so
    # equal to rounding (seen: 2e-15 relative)
    np.testing.assert_allclose(got, whole, rtol=1e-12, atol=0, equal_nan=True)


def test_gridded_met_in_the_site_engine_says_where_to_go(site, grid):
    """A (time, y, x) met reaching the site engine: a plain message, not KeyError 'site'."""
    met = xr.open_dataset(grid.paths["met"])
    with pytest.raises(ValueError, match="workbench grid"):
        velocities(met, site["study"].surfaces(), DryOptions())


@pytest.mark.filterwarnings("ignore:The ioos_sos checker is deprecated")
def test_run_folder_cf_compliant(site, tmp_path):
    """`workbench grid`: a whole run folder; grid.nc passes the IOOS compliance-checker
    cf:1.8 suite with no error or warning (reference: CF conventions 1.8 as coded there)."""
    cc = pytest.importorskip("compliance_checker.runner")
    paths = _write(tmp_path / "in", site)
    (tmp_path / "in" / "scenario.toml").write_text(
        '[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n'
        '[period]\nresolution = "month"\n')
    from workbench.cli import main
    assert main(["grid", str(tmp_path / "in" / "scenario.toml"), "--out",
                 str(tmp_path / "out"), "--quiet", "--block", "2"]) == 0
    out = tmp_path / "out"
    assert sorted(p.name for p in out.iterdir()) == ["grid.nc", "provenance.json"]
    prov = json.loads((out / "provenance.json").read_text())
    assert set(prov["inputs"]) == {"scenario", "met", "air", "land_use"}
    ds = xr.open_dataset(out / "grid.nc", decode_times=False)
    for name in ds.data_vars:
        if name.startswith(("vd_", "dry_", "flux_")):
            a = ds[name].attrs
            assert a["units"] and a["long_name"] and a["grid_mapping"] == "crs"
            assert a["cell_methods"] in ("time: mean", "time: sum")
    assert "sha256" in ds.attrs["history"] and ds.attrs["Conventions"] == "CF-1.8"
    assert ds["crs"].attrs["grid_mapping_name"] == "lambert_azimuthal_equal_area"
    assert ds["time"].attrs["bounds"] == "time_bnds"
    for f in (out / "grid.nc", paths["met"], paths["air"], paths["land_use"]):
        report = tmp_path / f"{f.stem}.json"
        cc.CheckSuite.load_all_available_checkers()
        ok, _ = cc.ComplianceChecker.run_checker(str(f), ["cf:1.8"], 0, "normal",
                                                 output_filename=str(report),
                                                 output_format="json")
        res = json.loads(report.read_text())["cf:1.8"]
        msgs = [m for p in ("high_priorities", "medium_priorities")
                for item in res[p] for m in item["msgs"]]
        assert not msgs, (f.name, msgs)


# ------------------------------------------------------------------ bad grid inputs
def _broken(tmp_path, site, role, change):
    paths = _write(tmp_path, site)
    with xr.open_dataset(paths[role]) as ds:
        ds = change(ds.load())
    paths[role].unlink()
    ds.to_netcdf(paths[role], engine="scipy")
    return paths


def _open(paths):
    return open_grid(paths["met"], paths["air"], paths["land_use"])


def test_bad_wrong_dims(site, tmp_path):
    paths = _broken(tmp_path, site, "met",
                    lambda ds: ds.assign(temperature=ds["temperature"].isel(x=0)))
    with pytest.raises(GridError) as e:
        _open(paths)
    msg = str(e.value)
    assert "met.nc" in msg and "'temperature'" in msg and "other dimensions" in msg
    assert "(time, y)" in msg and "expected dims (time, y, x)" in msg


def test_bad_missing_units(site, tmp_path):
    def drop(ds):
        ds["SO2"].attrs.pop("units")
        return ds
    paths = _broken(tmp_path, site, "air", drop)
    with pytest.raises(GridError, match=r"air.nc, column 'SO2': variable has no units "
                                        r"attribute, expected a CF 'units'"):
        _open(paths)


def test_bad_land_use_code(site, tmp_path):
    def code(ds):
        v = ds["land_use"].values.copy()
        v[1, 2] = 7
        return ds.assign(land_use=ds["land_use"].copy(data=v))
    paths = _broken(tmp_path, site, "land_use", code)
    with pytest.raises(GridError) as e:
        _open(paths)
    msg = str(e.value)
    assert "land_use.nc" in msg and "land-use code not a class (cell y=1, x=2)" in msg
    assert "got '7'" in msg and "flag_values" in msg


def test_bad_flag_meaning_and_missing_bounds(site, tmp_path):
    def meaning(ds):
        ds["land_use"].attrs["flag_meanings"] = ds["land_use"].attrs["flag_meanings"].replace(
            "grass", "gras")
        return ds
    with pytest.raises(GridError, match=r"flag meaning is not one of our land-use classes: "
                                        r"got 'gras'.*did you mean 'grass'"):
        _open(_broken(tmp_path / "a", site, "land_use", meaning))

    def no_bounds(ds):
        ds["time"].attrs.pop("bounds", None)
        return ds.drop_vars("time_bnds")
    with pytest.raises(GridError, match=r"air.nc, column 'time': time without bounds"):
        _open(_broken(tmp_path / "b", site, "air", no_bounds))


def test_scenario_grid_section_located(tmp_path):
    from workbench.errors import ScenarioError
    p = tmp_path / "scenario.toml"
    p.write_text('[grid]\nmet = "met.nc"\nair = "air.nc"\n')
    with pytest.raises(ScenarioError, match=r"line 1, column 'grid.land_use': missing "
                                            r"required key, expected the path of the "
                                            r"land-use grid of our classes \(CF NetCDF"):
        load_scenario(p)
    p.write_text('[grid]\nmet = "met.nc"\n')
    with pytest.raises(ScenarioError, match=r"expected the path of the air concentrations "
                                            r"on \(time, y, x\) \(CF NetCDF"):
        load_scenario(p)
    p.write_text('[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "lu.nc"\n')
    with pytest.raises(ScenarioError, match=r"line 2, column 'grid.met': input file does "
                                            r"not exist"):
        load_scenario(p)


def test_site_commands_on_a_grid_scenario(tmp_path, site):
    """`workbench run` on a [grid]-only scenario: one located line, no traceback."""
    from workbench.cli import main
    _write(tmp_path, site)
    p = tmp_path / "scenario.toml"
    p.write_text('[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n')
    assert main(["run", str(p), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    assert not (tmp_path / "out").exists()


def test_lat_lon_grid(site, grid, tmp_path):
    """The same inputs on a regular latitude/longitude grid (1-D lat, lon dims): cell
    (0, 0) gives the numbers of the projected grid's cell (0, 0)."""
    paths = _write(tmp_path, site)
    r = site["ridge"]
    lat1, lon1 = r.latitude + np.array([0.0, 0.01]), r.longitude + np.array([0.0, 0.01, 0.02])
    for role, p in paths.items():
        with xr.open_dataset(p) as ds:
            ds = ds.load()
        ds = ds.drop_vars(["lat", "lon", "x", "y"]).rename({"y": "lat", "x": "lon"})
        ds = ds.assign_coords(lat=("lat", lat1, {"standard_name": "latitude",
                                                 "units": "degrees_north"}),
                              lon=("lon", lon1, {"standard_name": "longitude",
                                                 "units": "degrees_east"}))
        ds["crs"].attrs = {"grid_mapping_name": "latitude_longitude"}
        p.unlink()
        ds.to_netcdf(p, engine="scipy")
    g = open_grid(paths["met"], paths["air"], paths["land_use"])
    assert g.dims == ("lat", "lon")
    np.testing.assert_allclose(g.latitude[:, 0], lat1)
    periods = make_periods(grid, "month")
    _, a = compute_grid(g, DryOptions(), BudgetOptions(), periods)
    names, b = compute_grid(grid, DryOptions(), BudgetOptions(), periods)
    np.testing.assert_allclose(a[:, :, 0, 0], b[:, :, 0, 0], rtol=RTOL)
    ds = grid_dataset(names, a, g, periods, "test")
    assert ds["dry_N"].dims == ("time", "lat", "lon")
    assert ds["crs"].attrs["grid_mapping_name"] == "latitude_longitude"


def test_met_flags_counted_per_cell(site, grid, tmp_path):
    """Nothing lost: an implausible met value (temperature 400 K, outside the hard range
    of the site reader's checks) is masked and counted in met_flagged_hours of its
    cell and period."""
    def hot(ds):
        v = ds["temperature"].values.copy()
        v[10:15, 0, 1] = 400.0
        return ds.assign(temperature=ds["temperature"].copy(data=v))
    g = _open(_broken(tmp_path, site, "met", hot))
    periods = make_periods(grid, "month")
    names, a = compute_grid(g, DryOptions(), BudgetOptions(), periods)
    _, b = compute_grid(grid, DryOptions(), BudgetOptions(), periods)
    k = names.index("met_flagged_hours")
    diff = np.nan_to_num(a[k] - b[k])
    assert diff[0, 0, 1] == 5 and np.count_nonzero(diff) == 1
    assert np.all(np.isnan(a[k][:, 1, 0]))                         # the cell without a class


def _attr(var, key, value=None):
    def f(ds):
        if value is None:
            ds[var].attrs.pop(key, None)
        else:
            ds[var].attrs[key] = value
        return ds
    return f


def _overlap(ds):
    b = ds["time_bnds"].values.copy()
    b[1, 0] = b[0, 1] - np.timedelta64(1, "h")
    return ds.assign(time_bnds=ds["time_bnds"].copy(data=b))


def _off_hour(ds):
    b = ds["time_bnds"].values.copy()
    b[3, 1] = b[3, 1] + np.timedelta64(30, "m")
    return ds.assign(time_bnds=ds["time_bnds"].copy(data=b))


@pytest.mark.parametrize("role,change,message", [
    ("met", lambda ds: ds.drop_vars("height"),
     r"met.nc, column 'wind_speed': no height coordinate, expected a scalar coordinate"),
    ("met", lambda ds: ds.drop_vars("pressure"),
     r"met.nc, column 'pressure': missing required variable"),
    ("met", _attr("temperature", "units", "m"),
     r"met.nc, column 'temperature': unknown or dimensionally wrong unit.*got 'm'"),
    ("met", _off_hour, r"met.nc, column 'time_bnds': time bounds not one hour \(time index 3\)"),
    ("air", _overlap, r"air.nc, column 'time_bnds': sampling interval empty or overlapping "
                      r"the one before \(time index 1\)"),
    ("air", lambda ds: ds.assign(SO3=ds["SO2"]),
     r"air.nc, column 'SO3': unknown species, expected one of SO2, HNO3"),
    ("air", lambda ds: ds.assign_attrs(reference_state="warm"),
     r"air.nc, column 'reference_state': unknown reference state: got 'warm'"),
    ("air", _attr("SO2", "units", "mg L-1"),
     r"air.nc, column 'SO2': a liquid concentration unit in an air file: got 'mg L-1'"),
    ("air", _attr("NH3", "units", "m s-1"),
     r"air.nc, column 'NH3': not a concentration unit"),
    ("land_use", lambda ds: ds.drop_vars(["lat", "lon"]), None),
])
def test_bad_grid_inputs_located(site, tmp_path, role, change, message):
    paths = _broken(tmp_path, site, role, change)
    if message is None:       # lat/lon also in the met and air files: taken from there
        assert _open(paths).latitude.shape == (2, 3)
        return
    with pytest.raises(GridError, match=message):
        _open(paths)


def test_fixed_velocity_on_the_grid(grid):
    """[dry.fixed_velocity] applies to every cell as to a site: the species' Vd is the
    fixed value in every cell with a class, its flux changes, the other species' do not."""
    periods = make_periods(grid, "month")
    names, a = compute_grid(grid, DryOptions(), BudgetOptions(), periods,
                            fixed_velocity={"SO2": 0.5})
    _, b = compute_grid(grid, DryOptions(), BudgetOptions(), periods)
    vd = a[names.index("vd_SO2")]
    has = ~np.isnan(vd)
    assert has.sum() == 2 * 5 and np.allclose(vd[has], 0.005)          # 5 cells, 2 months
    np.testing.assert_array_equal(a[names.index("dry_NH3")], b[names.index("dry_NH3")])
    assert not np.allclose(a[names.index("dry_SO2")][has], b[names.index("dry_SO2")][has])


# ------------------------------------------------------------------ grid on a dask cluster
def _grid_scenario(tmp_path, site):
    _write(tmp_path / "in", site)
    path = tmp_path / "in" / "scenario.toml"
    path.write_text('[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n'
                    '[period]\nresolution = "month"\n')
    return path


def _maps(folder):
    with xr.open_dataset(folder / "grid.nc", decode_times=False) as ds:
        ds = ds.load()
    history = ds.attrs.pop("history")
    return ds, history


def test_grid_on_two_workers_equals_in_process(site, tmp_path):
    """`workbench grid --workers 2` (a local cluster of 2 processes, started by the same
    function as `workbench run --workers`): the same maps, bit for bit, as the blocks
    run in process (same blocks, same sums)."""
    pytest.importorskip("distributed")
    from workbench.cli import main
    sc = _grid_scenario(tmp_path, site)
    assert main(["grid", str(sc), "--out", str(tmp_path / "a"), "--quiet", "--block", "1",
                 "--in-process"]) == 0
    assert main(["grid", str(sc), "--out", str(tmp_path / "b"), "--quiet", "--block", "1",
                 "--workers", "2"]) == 0
    (a, ha), (b, hb) = _maps(tmp_path / "a"), _maps(tmp_path / "b")
    assert any(np.isfinite(b[n].values).any() for n in b.data_vars if n.startswith("vd_"))
    xr.testing.assert_identical(a, b)
    assert "local dask cluster of 2 workers" in hb and "dask" not in ha


def test_grid_on_a_running_scheduler(site, tmp_path):
    """`--scheduler ADDRESS`: the blocks run on an existing cluster (here a threaded one
    in this process); same maps as in process."""
    distributed = pytest.importorskip("distributed")
    from workbench.cli import main
    sc = _grid_scenario(tmp_path, site)
    assert main(["grid", str(sc), "--out", str(tmp_path / "a"), "--quiet", "--block", "2",
                 "--in-process"]) == 0
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster:
        assert main(["grid", str(sc), "--out", str(tmp_path / "b"), "--quiet", "--block",
                     "2", "--scheduler", cluster.scheduler_address]) == 0
        assert cluster.status.name == "running"        # not closed by the command
    (a, _), (b, hb) = _maps(tmp_path / "a"), _maps(tmp_path / "b")
    xr.testing.assert_identical(a, b)
    assert f"scheduler at {cluster.scheduler_address}" in hb


def test_grid_workers_without_distributed_names_the_extra(site, tmp_path, monkeypatch,
                                                          capsys):
    from workbench.cli import build_parser, main
    monkeypatch.setitem(sys.modules, "distributed", None)       # import fails
    sc = _grid_scenario(tmp_path, site)
    assert main(["grid", str(sc), "--out", str(tmp_path / "c"), "--quiet",
                 "--workers", "2"]) == 2
    err = capsys.readouterr().err
    assert "distributed is not installed" in err and "deposition-workbench[scale]" in err
    assert not (tmp_path / "c").exists() or not any((tmp_path / "c").iterdir())
    with pytest.raises(SystemExit):                   # in process and on workers: one only
        build_parser().parse_args(["grid", str(sc), "--out", "o", "--in-process",
                                   "--workers", "2"])


def test_default_block_follows_the_record_length(grid):
    """Without a block side, a block holds about 100 cell-years of hours (a 32-cell block
    of a year of hours peaked at 4.0 GB, docs/performance.md): 32 cells for a month, 10
    for a year, never below 4; the demo month gets the side it always had."""
    from workbench.grid import BLOCK_CELL_HOURS, default_block
    assert default_block(744) == 32
    assert default_block(8760) == 10
    assert default_block(10 * 8760) == 4
    assert default_block(0) == 32
    for hours in (744, 2000, 8760, 30000):
        side = default_block(hours)
        if 4 < side < 32:
            assert side ** 2 * hours <= BLOCK_CELL_HOURS < (side + 1) ** 2 * hours
    periods = make_periods(grid, "month")
    side = default_block(len(grid.times))
    names, auto = compute_grid(grid, DryOptions(), BudgetOptions(), periods)
    names2, given = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=side)
    assert names == names2
    np.testing.assert_array_equal(auto, given)


def test_a_class_goes_through_the_engine_in_slices(grid, monkeypatch):
    """A block's peak followed its largest land-use class; a class now goes through the
    dry engine CELLS_PER_CALL cells at a time, with the same maps (cells are
    independent: equal to rounding, the order of sums in a vectorized call)."""
    import workbench.grid as G
    periods = make_periods(grid, "month")
    _, whole = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=10)
    calls = []
    real = G.dry_for_sites

    def spy(met, air, cat, *a, **k):
        calls.append(len(cat))
        return real(met, air, cat, *a, **k)
    monkeypatch.setattr(G, "dry_for_sites", spy)
    monkeypatch.setattr(G, "CELLS_PER_CALL", 1)
    _, sliced = compute_grid(grid, DryOptions(), BudgetOptions(), periods, block=10)
    assert calls == [1] * 5                    # 5 cells with a class, one call each
    np.testing.assert_allclose(sliced, whole, rtol=1e-12, atol=0, equal_nan=True)


def test_grid_input_edited_keeping_size_and_mtime_is_named(site, tmp_path, monkeypatch, capsys):
    """Old code: provenance.json of `workbench grid` took the inputs' checksums at the
    end, so an input edited while the maps were computed was recorded as the file the
    maps came from.  Now each input is hashed before it is opened and again at the end;
    an edit that keeps the size and the modification time is caught by content."""
    import hashlib
    import os

    from workbench import grid_output
    from workbench.cli import main
    paths = _write(tmp_path / "in", site)
    (tmp_path / "in" / "scenario.toml").write_text(
        '[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n'
        '[period]\nresolution = "month"\n')
    lu = Path(paths["land_use"])
    before = hashlib.sha256(lu.read_bytes()).hexdigest()     # hashlib, FIPS 180-4
    real = grid_output.store_grid

    def edit_then_compute(*args, **kw):
        st = os.stat(lu)
        raw = lu.read_bytes()
        k = raw.index(b"invented land-use grid")            # the title: same length
        lu.write_bytes(raw[:k] + b"Invented" + raw[k + 8:])
        os.utime(lu, ns=(st.st_atime_ns, st.st_mtime_ns))
        assert (os.stat(lu).st_size, os.stat(lu).st_mtime_ns) == (st.st_size, st.st_mtime_ns)
        return real(*args, **kw)
    monkeypatch.setattr(grid_output, "store_grid", edit_then_compute)
    assert main(["grid", str(tmp_path / "in" / "scenario.toml"), "--out",
                 str(tmp_path / "out"), "--quiet", "--block", "6"]) == 0
    prov = json.loads((tmp_path / "out" / "provenance.json").read_text())
    rec = prov["inputs"]["land_use"]
    assert rec.get("changed_after_read") is True
    assert rec["sha256"] == before != hashlib.sha256(lu.read_bytes()).hexdigest()
    assert not any(prov["inputs"][r].get("changed_after_read") for r in ("met", "air"))
    assert f"warning: {lu} changed after the run read it" in capsys.readouterr().err


@pytest.mark.parametrize("role", ["met", "air"])
def test_grid_input_edited_while_the_blocks_read_it_refuses_the_run(site, tmp_path,
                                                                    monkeypatch, capsys, role):
    """Old code: the met and air grids, read block by block until grid.nc is written,
    were hashed again before the maps were written (with dask, before they were
    computed): an edit saved then gave maps of the new content, or of both, under the
    old checksum, and the run was written.  Now the check follows the last read and a
    changed met or air grid refuses the run: no output folder."""
    import os

    from workbench import grid_output
    from workbench.cli import main
    paths = _write(tmp_path / "in", site)
    (tmp_path / "in" / "scenario.toml").write_text(
        '[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n'
        '[period]\nresolution = "month"\n')
    target = Path(paths[role])
    real = grid_output.store_grid         # the blocks read and write grid.nc together

    def edit_then_write(*args, **kw):
        st = os.stat(target)
        raw = bytearray(target.read_bytes())
        raw[-1] ^= 0x01                                   # one byte, size and time kept
        target.write_bytes(bytes(raw))
        os.utime(target, ns=(st.st_atime_ns, st.st_mtime_ns))
        return real(*args, **kw)
    monkeypatch.setattr(grid_output, "store_grid", edit_then_write)
    assert main(["grid", str(tmp_path / "in" / "scenario.toml"), "--out",
                 str(tmp_path / "out"), "--quiet", "--block", "6"]) != 0
    err = capsys.readouterr().err
    assert f"{target}: changed while it was read" in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()
