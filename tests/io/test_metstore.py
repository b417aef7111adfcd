"""Hourly met from NetCDF, read a group of sites at a time into the on-disk store.

The reference of the group-wise NetCDF reader is the whole-file path it replaced: every
record of the file converted at once and handed to ``workbench.io.met._assemble`` (the
checks, the ledger and the grid of the line reader).  Values, ledger and notes must be
the same, whatever the group size and whether the grid stays on disk.
"""
from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

import workbench.io.met as met_mod
import workbench.io.metstore as metstore
from workbench.errors import InputError
from workbench.io.met import MET_VARIABLES, _assemble, convert_met, read_met
from workbench.io.metstore import is_lazy
from workbench.io.sites import read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


def assert_same(a, b):
    """Same Dataset (NaN where NaN), ledger rows, counts, reasons and notes."""
    (ds1, l1), (ds2, l2) = a, b
    xr.testing.assert_identical(ds1, ds2)
    pd.testing.assert_frame_equal(l1.table, l2.table)
    pd.testing.assert_frame_equal(l1.summary(), l2.summary())
    pd.testing.assert_frame_equal(l1.reasons(), l2.reasons(), check_dtype=False)
    assert l1.notes == l2.notes


def _whole_file_reference(path, catalogue):
    """The records of a NetCDF met file converted at once, through ``_assemble``."""
    with xr.open_dataset(path) as raw:
        raw.load()
    ids = raw["site"].values.astype(str)
    times = raw["time"].values.astype("datetime64[ns]")
    sites, t = np.repeat(ids.astype(object), len(times)), np.tile(times, len(ids))
    values, units = {}, {}
    for name, (target, _, _) in MET_VARIABLES.items():
        if name in raw:
            units[name] = raw[name].attrs.get("units", "1")
            values[name] = convert_met(raw[name].transpose("site", "time").values
                                       .astype(float).reshape(-1), units[name], name, target)
    return _assemble(values, sites, t, np.arange(len(sites)) + 1, path, catalogue, units,
                     empty_reason="all variables missing (NaN) in the record")


@pytest.fixture(scope="module")
def demo_nc(tmp_path_factory):
    """The demo met as NetCDF3 (CF units), sites in another order than the catalogue,
    one site's last week all NaN and one site without any value."""
    cat = read_sites(DEMO / "sites.toml")
    ds, _ = read_met(DEMO / "met.csv.gz", cat)
    nc = ds.drop_vars("row_present").isel(site=[2, 0, 3, 1])
    nc["temperature"].values[0, -24 * 7:] = np.nan
    for v in nc.data_vars:
        nc[v].values[3] = np.nan
    nc["temperature"].attrs["units"] = "K"
    p = tmp_path_factory.mktemp("nc") / "met.nc"
    nc.to_netcdf(p, engine="scipy")
    return p, cat


@pytest.mark.parametrize("group, on_disk", [(400_000, False), (20_000, True), (1, True)])
def test_netcdf_by_groups_as_the_whole_file(demo_nc, monkeypatch, group, on_disk):
    p, cat = demo_nc
    monkeypatch.setattr(met_mod, "NETCDF_GROUP_RECORDS", group)
    if on_disk:
        monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    got = read_met(p, cat)
    assert is_lazy(got[0]) == on_disk
    ref = _whole_file_reference(p, cat)
    assert_same(got, ref)
    assert got[0].sizes["site"] == 3                       # the all-NaN site has no row
    assert "all variables missing (NaN) in the record" in set(got[1].reasons()["reason"])


def test_netcdf_copy_of_the_demo_gives_the_csv_budget(tmp_path):
    """The demo scenario with its met as NetCDF (what the CSV reader made of it) writes
    the budget.csv and summary.csv of the CSV scenario, byte for byte."""
    from ui.demo_subset import write_demo_subset
    from workbench.cli import main
    sc = write_demo_subset(tmp_path / "in", ("ridge", "mere"), 2021, 2021)
    csv = next(Path(sc).parent.glob("met.csv*"))
    cat = read_sites(Path(sc).parent / "sites.toml")
    ds, _ = read_met(csv, cat)
    ds.drop_vars("row_present").to_netcdf(Path(sc).parent / "met.nc", engine="scipy")
    nc_sc = Path(sc).parent / "scenario_nc.toml"
    nc_sc.write_text(Path(sc).read_text().replace(f'"{csv.name}"', '"met.nc"'))
    assert '"met.nc"' in nc_sc.read_text()
    assert main(["run", str(sc), "--out", str(tmp_path / "csv"), "--quiet"]) == 0
    assert main(["run", str(nc_sc), "--out", str(tmp_path / "nc"), "--quiet"]) == 0
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        assert (tmp_path / "csv" / name).read_bytes() == (tmp_path / "nc" / name).read_bytes()


def test_netcdf4_file_reads_as_netcdf3(demo_nc, tmp_path):
    pytest.importorskip("netCDF4")
    p, cat = demo_nc
    with xr.open_dataset(p) as raw:
        raw.load().to_netcdf(tmp_path / "met4.nc", engine="netcdf4", format="NETCDF4")
    a, b = read_met(p, cat), read_met(tmp_path / "met4.nc", cat)
    xr.testing.assert_identical(a[0].drop_attrs(), b[0].drop_attrs())
    pd.testing.assert_frame_equal(a[1].summary().drop(columns="file"),
                                  b[1].summary().drop(columns="file"))


def test_netcdf4_without_a_reader_names_the_extra(tmp_path, monkeypatch):
    import importlib.util
    (tmp_path / "s.toml").write_text((DEMO / "sites.toml").read_text())
    cat = read_sites(tmp_path / "s.toml")
    p = tmp_path / "met.nc"
    p.write_bytes(b"\x89HDF\r\n\x1a\n" + bytes(64))
    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec",
                        lambda name, *a: None if name in ("netCDF4", "h5netcdf") else real(name, *a))
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert re.fullmatch(re.escape(f"{p}: a NetCDF4 (HDF5) file, and no reader of that format "
                                  "is installed, expected a NetCDF3 file, or the netCDF4 package: "
                                  'python -m pip install "deposition-workbench[netcdf4]"'),
                        str(exc.value)), str(exc.value)


def test_gauge_check_on_the_store_as_in_memory(monkeypatch):
    """The gauge check reads a store a group of sites at a time: the same table and
    ledger as on the met in memory."""
    import workbench.io.inputs as inputs_mod
    from workbench.io.inputs import load_inputs
    files = {k: DEMO / v for k, v in (("sites", "sites.toml"), ("precipitation",
             "precipitation.csv"), ("air", "air.csv"), ("met", "met.csv.gz"))}
    ref = load_inputs(**files)
    monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    monkeypatch.setattr(inputs_mod, "GAUGE_SITES", 3)
    got = load_inputs(**files)
    assert is_lazy(got.met) and not is_lazy(ref.met)
    assert len(ref.gauge_check) > 100 and ref.gauge_check["met_depth"].notna().all()
    pd.testing.assert_frame_equal(ref.gauge_check, got.gauge_check)
    pd.testing.assert_frame_equal(ref.ledger.table, got.ledger.table)
    xr.testing.assert_identical(ref.met, got.met)
