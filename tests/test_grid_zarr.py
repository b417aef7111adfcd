"""Gridded inputs from zarr stores (workbench.grid_io through workbench.io.zarrstore).

The reference is the NetCDF grid: the invented demo grid (4 x 4 cells, a month) written
by workbench.grid_demo as NetCDF, copied into zarr stores (a folder chunked along time,
a folder chunked by blocks of cells, a zipped store), must give the same grid.nc maps.
"""
from __future__ import annotations

import json
import shutil
import warnings

import pytest
import xarray as xr

from workbench.cli import main
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import GridError, open_grid

zarr = pytest.importorskip("zarr", reason="zarr stores need the zarr extra: "
                           'python -m pip install "deposition-workbench[zarr]"')

ROLES = ("met", "air", "land_use")


def _to_zarr(nc, target, chunks=None, zipped=False):
    with xr.open_dataset(nc) as ds:
        ds = ds.load()
    if chunks:
        ds = ds.chunk({k: v for k, v in chunks.items() if k in ds.dims})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")          # zarr's note on text attributes
        ds.to_zarr(target, mode="w")
    if zipped:
        shutil.make_archive(str(target), "zip", target)
        shutil.rmtree(target)
        return target.with_name(target.name + ".zip")
    return target


@pytest.fixture(scope="module")
def demo_grid(tmp_path_factory):
    base = tmp_path_factory.mktemp("grid_zarr")
    sc = make_demo_grid(base / "in", n=4)
    assert main(["grid", str(sc), "--out", str(base / "nc"), "--quiet", "--block", "2"]) == 0
    return base, sc


def _maps(folder):
    with xr.open_dataset(folder / "grid.nc", decode_times=False) as ds:
        ds = ds.load()
    for key in ("history", "workbench_options"):     # name the input paths
        ds.attrs.pop(key)
    return ds


@pytest.mark.parametrize("layout", ["by_time", "by_cells", "zipped"])
def test_zarr_grid_gives_the_netcdf_maps(demo_grid, tmp_path, layout):
    base, sc = demo_grid
    chunks = {"by_time": {"time": 100}, "by_cells": {"y": 2, "x": 3}, "zipped": {}}[layout]
    names = {r: _to_zarr(base / "in" / f"{r}.nc", tmp_path / f"{r}.zarr", chunks,
                         zipped=layout == "zipped").name for r in ROLES}
    text = sc.read_text()
    for r in ROLES:
        text = text.replace(f'"{r}.nc"', f'"{names[r]}"')
    assert all(f'"{n}"' in text for n in names.values())
    z_sc = tmp_path / "scenario.toml"
    z_sc.write_text(text)
    assert main(["grid", str(z_sc), "--out", str(tmp_path / "out"), "--quiet",
                 "--block", "2"]) == 0
    xr.testing.assert_identical(_maps(tmp_path / "out"), _maps(base / "nc"))
    prov = json.loads((tmp_path / "out" / "provenance.json").read_text())
    assert all(len(prov["inputs"][r]["sha256"]) == 64 for r in ROLES)


def test_zarr_grid_mistakes_are_located(demo_grid, tmp_path):
    base, _ = demo_grid
    paths = {r: base / "in" / f"{r}.nc" for r in ROLES}
    csvs = tmp_path / "met.zarr"                       # a folder of CSV files
    csvs.mkdir()
    (csvs / "cells.csv").write_text("y,x\n")
    with pytest.raises(GridError) as exc:
        open_grid(csvs, paths["air"], paths["land_use"])
    assert str(exc.value).startswith(f"{csvs}: a folder of CSV files, not a zarr store: "
                                     "got 'cells.csv', expected a zarr store")
    with xr.open_dataset(paths["met"]) as ds:          # units dropped
        ds = ds.load()
    ds["temperature"].attrs.pop("units")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ds.to_zarr(tmp_path / "bad.zarr", mode="w", consolidated=False)
    with pytest.raises(GridError) as exc:
        open_grid(tmp_path / "bad.zarr", paths["air"], paths["land_use"])
    assert str(exc.value) == (f"{tmp_path / 'bad.zarr'}, column 'temperature': variable has "
                              "no units attribute, expected a CF 'units' attribute "
                              "convertible to K")


def test_zarr_grid_without_consolidated_metadata_notes_it(demo_grid, tmp_path):
    base, _ = demo_grid
    with xr.open_dataset(base / "in" / "met.nc") as ds:
        ds = ds.load()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ds.to_zarr(tmp_path / "met.zarr", mode="w", consolidated=False)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        grid = open_grid(tmp_path / "met.zarr", base / "in" / "air.nc",
                         base / "in" / "land_use.nc")
    assert grid.notes[-1] == ("met.zarr: no consolidated metadata; each array's own metadata "
                              "read (as fast on a local disk; zarr.consolidate_metadata adds "
                              "them)")
