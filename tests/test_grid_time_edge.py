"""A gridded met chunked along time: the hour after a chunk boundary must see the true
previous hour's rain (the surface wetness rule, docs/methods_dry.md section 8), so a
cell's hourly velocities and the maps equal those of the unchunked grid bit for bit."""
from __future__ import annotations

import warnings

import numpy as np
import pytest
import xarray as xr

from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.grid import cell_velocities, compute_grid, make_periods
from workbench.grid_demo import make_demo_grid
from workbench.grid_io import open_grid

zarr = pytest.importorskip("zarr", reason="zarr stores need the zarr extra")

CHUNK = 24
ROLES = ("met", "air", "land_use")


@pytest.fixture(scope="module")
def grids(tmp_path_factory):
    base = tmp_path_factory.mktemp("grid_time_edge")
    sc = make_demo_grid(base / "nc3", n=3)
    met_path = base / "nc3" / "met.nc"
    with xr.open_dataset(met_path) as ds:
        ds = ds.load()
    p = ds["precipitation"].values
    p[CHUNK - 1] = 1.0          # rain in the last hour of the first chunk ...
    p[CHUNK] = 0.0              # ... none in the first hour of the next
    ds["precipitation"] = (ds["precipitation"].dims, p, ds["precipitation"].attrs)
    met_path.unlink()
    ds.to_netcdf(met_path)
    zdir = base / "zarr"
    zdir.mkdir()
    for role in ROLES:
        with xr.open_dataset(base / "nc3" / f"{role}.nc") as d:
            d = d.load()
        if role == "met":
            d = d.chunk({"time": CHUNK})
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")          # zarr's note on consolidated metadata
            d.to_zarr(zdir / f"{role}.zarr", mode="w")
    return (open_grid(*(base / "nc3" / f"{r}.nc" for r in ROLES)),
            open_grid(*(zdir / f"{r}.zarr" for r in ROLES)))


def test_cell_hours_at_the_chunk_boundary_equal(grids):
    whole, chunked = grids
    a = cell_velocities(whole, 1, 1, outputs=("surface_wet", "vd_SO2", "vd_pSO4"))
    b = cell_velocities(chunked, 1, 1, outputs=("surface_wet", "vd_SO2", "vd_pSO4"))
    assert (a["surface_wet"].values[..., CHUNK] == 1).all()   # the rain of the hour before
    xr.testing.assert_identical(a, b)


def test_maps_equal(grids):
    whole, chunked = grids
    out = []
    for g in (whole, chunked):
        names, arr = compute_grid(g, DryOptions(), BudgetOptions(), make_periods(g), block=2)
        out.append(np.asarray(arr))
    np.testing.assert_array_equal(out[0], out[1])
