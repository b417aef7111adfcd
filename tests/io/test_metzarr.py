"""Hourly met from a zarr store (workbench.io.metzarr, workbench.io.zarrstore).

The reference is the NetCDF reader (tests/io/test_metstore.py holds it to the CSV
reader): the same values written as a zarr store, chunked in any way, must give the
NetCDF reader's Dataset, ledger and notes.  That the store is read a group of sites at a
time is shown by counting the chunks read before each group is checked, and by the peak
of traced allocations, which grows with the network by the ledger, not by the values.
"""
from __future__ import annotations

import dataclasses
import re
import shutil
import tracemalloc
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

import workbench.io.met as met_mod
import workbench.io.metchecks as metchecks
import workbench.io.metstore as metstore
import workbench.io.zarrstore as zarrstore
from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.sites import SiteCatalogue, read_sites

zarr = pytest.importorskip("zarr", reason="zarr stores need the zarr extra: "
                           'python -m pip install "deposition-workbench[zarr]"')

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
YEAR = 8760


def to_zarr(ds, path, **kw):
    """Write `ds` as a zarr store (zarr's own warnings on text coordinates silenced)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ds.to_zarr(path, mode="w", **kw)
    return path


@pytest.fixture(scope="module")
def demo_met(tmp_path_factory):
    """One year of the demo met as NetCDF3: sites in another order than the catalogue,
    one site's last week of temperature NaN, one site without any value."""
    cat = read_sites(DEMO / "sites.toml")
    ds, _ = read_met(DEMO / "met.csv.gz", cat)
    met = ds.drop_vars("row_present").isel(site=[2, 0, 3, 1], time=slice(0, YEAR)).load()
    met["temperature"].values[0, -24 * 7:] = np.nan
    for v in met.data_vars:
        met[v].values[3] = np.nan
    met["temperature"].attrs["units"] = "K"
    folder = tmp_path_factory.mktemp("zarr")
    met.to_netcdf(folder / "met.nc", engine="scipy")
    return met, folder, cat


def _same_as_netcdf(got, ref, zarr_notes=0):
    """The zarr read equals the NetCDF read but for the file name and the zarr notes."""
    (ds1, l1), (ds2, l2) = got, ref
    xr.testing.assert_identical(ds1.drop_attrs(), ds2.drop_attrs())
    pd.testing.assert_frame_equal(l1.table.drop(columns="file"), l2.table.drop(columns="file"))
    pd.testing.assert_frame_equal(l1.reasons().drop(columns="file"),
                                  l2.reasons().drop(columns="file"), check_dtype=False)
    assert l1.notes[:len(l1.notes) - zarr_notes] == l2.notes


@pytest.mark.parametrize("chunks, order, group, direct", [
    ({"site": 1, "time": -1}, ("site", "time"), 400_000, True),
    ({"site": 1, "time": 1000}, ("site", "time"), YEAR, True),      # one site a group
    ({"site": 3, "time": 500}, ("site", "time"), 2 * YEAR, False),  # 3 sites > a group
    ({"site": -1, "time": 24}, ("time", "site"), YEAR, False),      # time-major, by day
    ({"site": 2, "time": 777}, ("time", "site"), 2 * YEAR, True),
])
@pytest.mark.parametrize("on_disk", [False, True])
def test_zarr_as_netcdf_whatever_the_chunks(demo_met, tmp_path, monkeypatch, chunks, order,
                                            group, direct, on_disk):
    met, folder, cat = demo_met
    monkeypatch.setattr(met_mod, "NETCDF_GROUP_RECORDS", group)
    if on_disk:
        monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    p = to_zarr(met.transpose(*order).chunk(chunks), tmp_path / "met.zarr")
    got = read_met(p, cat)
    assert metstore.is_lazy(got[0]) == on_disk
    notes = [n for n in got[1].notes if "chunks of more sites than a group" in n]
    assert len(notes) == (0 if direct else 1), got[1].notes
    _same_as_netcdf(got, read_met(folder / "met.nc", cat), zarr_notes=len(notes))
    assert got[0].attrs["source_file"] == str(p)


def test_format_2_store_and_a_single_level_dimension(demo_met, tmp_path):
    """A zarr format 2 store (consolidated, .zmetadata) whose wind has a height
    dimension of one level: read as the NetCDF file of the same content."""
    met, _, cat = demo_met
    met = met.copy()
    met["wind_speed"] = met["wind_speed"].expand_dims(height=[10.0], axis=1)
    met.to_netcdf(tmp_path / "met.nc", engine="scipy")
    p = to_zarr(met.chunk({"site": 2}), tmp_path / "met.zarr", zarr_format=2)
    assert (p / ".zmetadata").is_file() and not (p / "zarr.json").exists()
    got = read_met(p, cat)
    assert got[1].notes[-1] == "met.zarr: single-level dimension dropped from wind_speed (height)"
    ref = read_met(tmp_path / "met.nc", cat)
    ref[1].notes[-1] = ref[1].notes[-1].replace("met.nc", "met.zarr")
    _same_as_netcdf(got, ref)


@pytest.mark.parametrize("inside_folder", [False, True])
def test_zipped_store_as_the_folder(demo_met, tmp_path, inside_folder):
    met, folder, cat = demo_met
    store = to_zarr(met.chunk({"site": 1}), tmp_path / "met.zarr")
    zipped = tmp_path / "met.zarr.zip"
    if inside_folder:         # `zip -r met.zarr.zip met.zarr`: the store in a folder
        shutil.make_archive(str(tmp_path / "met.zarr"), "zip", tmp_path, "met.zarr")
    else:                     # the store's content at the zip's root
        shutil.make_archive(str(tmp_path / "met.zarr"), "zip", store)
    shutil.rmtree(store)
    with warnings.catch_warnings():
        warnings.simplefilter("error")        # no warning, no unclosed zip file
        got = read_met(zipped, cat)
    _same_as_netcdf(got, read_met(folder / "met.nc", cat))


def test_demo_as_zarr_gives_the_csv_budget(tmp_path):
    """The demo scenario with its met as a zarr store writes the budget.csv,
    summary.csv and samples.csv of the CSV scenario, byte for byte."""
    from ui.demo_subset import write_demo_subset
    from workbench.cli import main
    sc = write_demo_subset(tmp_path / "in", ("ridge", "mere"), 2021, 2021)
    csv = next(Path(sc).parent.glob("met.csv*"))
    ds, _ = read_met(csv, read_sites(Path(sc).parent / "sites.toml"))
    to_zarr(ds.drop_vars("row_present").chunk({"site": 1, "time": 2000}),
            Path(sc).parent / "met.zarr")
    z_sc = Path(sc).parent / "scenario_zarr.toml"
    z_sc.write_text(Path(sc).read_text().replace(f'"{csv.name}"', '"met.zarr"'))
    assert '"met.zarr"' in z_sc.read_text()
    assert main(["run", str(sc), "--out", str(tmp_path / "csv"), "--quiet"]) == 0
    assert main(["run", str(z_sc), "--out", str(tmp_path / "zarr"), "--quiet"]) == 0
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        assert (tmp_path / "csv" / name).read_bytes() == (tmp_path / "zarr" / name).read_bytes()


# ------------------------------------------------------------ read a group at a time
def _network(n_sites):
    """A catalogue of `n_sites` copies of the demo sites and their met (one year)."""
    cat = read_sites(DEMO / "sites.toml")
    ds, _ = read_met(DEMO / "met.csv.gz", cat)
    base = ds.drop_vars("row_present").isel(time=slice(0, YEAR)).load()
    ids = [f"n{k:03d}" for k in range(n_sites)]
    sites = [dataclasses.replace(cat[str(base["site"].values[k % 4])], id=i, name=i)
             for k, i in enumerate(ids)]
    met = base.isel(site=[k % 4 for k in range(n_sites)]).assign_coords(site=ids)
    return SiteCatalogue(sites), met


class _Counting:
    """Wraps the store of a folder and records every key read."""

    def __init__(self):
        self.keys = []

    def store(self, path, files):
        from zarr.storage import LocalStore
        keys = self.keys

        class Store(LocalStore):
            async def get(self, key, prototype=None, byte_range=None):
                keys.append(key)
                return await super().get(key, prototype, byte_range)
        return Store(str(path), read_only=True)


@pytest.mark.parametrize("chunks, direct", [({"site": 2, "time": -1}, True),
                                            ({"site": 2, "time": 2000}, True),
                                            ({"site": -1, "time": 720}, False)])
def test_each_chunk_read_once_and_a_group_at_a_time(tmp_path, monkeypatch, chunks, direct):
    cat, met = _network(24)
    p = to_zarr(met.chunk(chunks), tmp_path / "met.zarr")
    counting = _Counting()
    monkeypatch.setattr(zarrstore, "_zarr_store", counting.store)
    monkeypatch.setattr(met_mod, "NETCDF_GROUP_RECORDS", 4 * YEAR)     # 4 sites a group
    monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    seen = []                                   # chunks read when each group is checked
    real = metchecks.run_row_checks

    def spy(values, sites, *a, **k):
        seen.append((sorted(set(np.asarray(sites).tolist())), list(counting.keys)))
        return real(values, sites, *a, **k)
    monkeypatch.setattr(metchecks, "run_row_checks", spy)
    ds, _ = read_met(p, cat)
    names = [n for n in met.data_vars]
    data = [k for k in counting.keys if k.split("/")[0] in names and "/c/" in k]
    assert len(data) == len(set(data)), "a chunk was read twice"
    n_site_chunks = 1 if chunks["site"] == -1 else 24 // chunks["site"]
    n_time_chunks = 1 if chunks["time"] == -1 else -(-YEAR // chunks["time"])
    assert len(data) == len(names) * n_site_chunks * n_time_chunks    # every chunk, once
    assert len(seen) == 6 and all(len(s) == 4 for s, _ in seen)      # groups of 4 sites
    if direct:      # before the checks of a group, only the chunks of its sites and before
        for g, (sites, keys) in enumerate(seen):
            rows = {int(k.split("/c/")[1].split("/")[0]) for k in keys
                    if k.split("/")[0] in names and "/c/" in k}
            assert rows == set(range((g + 1) * 4 // chunks["site"])), (g, sorted(rows))
    else:           # copied first (each chunk once), then checked group by group
        assert all(len(keys) == len(counting.keys) for _, keys in seen)
    xr.testing.assert_identical(ds.drop_vars("row_present").drop_attrs(), met.drop_attrs())


def _traced_peak(tmp_path, n_sites, chunks):
    """Peak of traced allocations [byte] while reading `n_sites` site-years from a
    store chunked as `chunks`, and the bytes of its values."""
    cat, met = _network(n_sites)
    p = to_zarr(met.chunk(chunks), tmp_path / f"met{n_sites}.zarr")
    values = sum(met[v].nbytes for v in met.data_vars)
    del met
    tracemalloc.start()
    try:
        ds, _ = read_met(p, cat)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert metstore.is_lazy(ds) and ds.sizes["site"] == n_sites
    return peak, values


@pytest.mark.parametrize("chunks", [{"site": 4, "time": -1}, {"site": -1, "time": 240}])
def test_peak_memory_grows_by_the_ledger_not_the_values(tmp_path, monkeypatch, chunks):
    """Read in groups of 4 sites, 72 site-years peak higher than 24 by the ledger (17
    bytes a record, docs/data_formats.md), not by the values (64 bytes a record, eight
    variables): the growth stays under half the added values, where reading the store
    whole would add all of them."""
    monkeypatch.setattr(met_mod, "NETCDF_GROUP_RECORDS", 4 * YEAR)
    monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    small, v_small = _traced_peak(tmp_path, 24, chunks)
    big, v_big = _traced_peak(tmp_path, 72, chunks)
    assert big - small < (v_big - v_small) / 2, ((big - small) / 2**20,
                                                 (v_big - v_small) / 2**20)


# ------------------------------------------------------------ mistakes, located
def _message(exc_info):
    return str(exc_info.value)


def test_folder_of_csv_files_named_zarr(tmp_path):
    cat = read_sites(DEMO / "sites.toml")
    p = tmp_path / "met.zarr"
    p.mkdir()
    for name in ("ridge.csv", "mere.csv", "fell.csv", "farm.csv"):
        (p / name).write_text("site,time\n")
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert _message(exc) == (
        f"{p}: a folder of CSV files, not a zarr store: got 'farm.csv, fell.csv, mere.csv "
        "and 1 more', expected a zarr store (zarr.json or .zgroup at its root, as xarray's "
        "Dataset.to_zarr writes it), or the path of one CSV file (e.g. met = "
        "\"folder/met.csv\")")


def test_missing_units_attribute(demo_met, tmp_path):
    met, _, cat = demo_met
    bad = met.copy()
    bad["pressure"] = bad["pressure"].copy()
    bad["pressure"].attrs.pop("units")
    p = to_zarr(bad, tmp_path / "met.zarr")
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert _message(exc) == (f"{p}, column 'pressure': variable has no units attribute, "
                             "expected a CF 'units' attribute convertible to Pa")


@pytest.mark.parametrize("fmt", [2, 3])
def test_units_added_after_consolidation_are_read(demo_met, tmp_path, fmt):
    """Units written into the array after the store was consolidated: the array's own
    metadata are read (not the stale copy), and a note says the copy is out of date."""
    met, folder, cat = demo_met
    bad = met.copy()
    bad["pressure"] = bad["pressure"].copy()
    bad["pressure"].attrs.pop("units")
    p = to_zarr(bad, tmp_path / "met.zarr", consolidated=True, zarr_format=fmt)
    zarr.open_array(str(p / "pressure"), mode="r+").attrs["units"] = "Pa"
    got = read_met(p, cat)
    assert got[1].notes[-1] == ("met.zarr: consolidated metadata out of date for pressure; "
                                "the arrays' own metadata read (zarr.consolidate_metadata "
                                "refreshes them)")
    _same_as_netcdf(got, read_met(folder / "met.nc", cat), zarr_notes=1)


@pytest.mark.parametrize("attrs, got", [
    ({"units": "hours after the start"}, "float64 hours after the start"),
    ({"units": "fortnights since 2020-01-01"}, "fortnights since 2020-01-01"),
    ({"units": "hours since 2020-13-45"}, "hours since 2020-13-45"),
    ({"units": "hours since 2020-01-01 00:00", "calendar": "noleap"},
     "object hours since 2020-01-01 00:00 (calendar noleap)"),
])
def test_time_not_decoded(demo_met, tmp_path, attrs, got):
    """Time as numbers of unknown units, units xarray cannot decode, or a calendar
    that gives no dates of the standard calendar: one located message each."""
    if "calendar" in attrs:
        pytest.importorskip("cftime", reason="cftime decodes a noleap calendar")
    met, _, cat = demo_met
    bad = met.assign_coords(time=("time", np.arange(met.sizes["time"], dtype=float), attrs))
    p = to_zarr(bad, tmp_path / "met.zarr")
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert _message(exc) == (f"{p}, column 'time': time not decoded as dates: got '{got}', "
                             "expected a CF time coordinate ('hours since 2020-01-01 00:00', "
                             "standard calendar)")


def test_oddly_chunked_variable_is_read_with_a_note(demo_met, tmp_path, monkeypatch):
    """One variable chunked across all sites (the others by site): read whole chunks
    once through the scratch copy, the same values, one note naming the variable."""
    met, folder, cat = demo_met
    odd = met.chunk({"site": 1, "time": -1})
    odd["precipitation"] = odd["precipitation"].chunk({"site": -1, "time": 100})
    p = to_zarr(odd, tmp_path / "met.zarr")
    monkeypatch.setattr(met_mod, "NETCDF_GROUP_RECORDS", YEAR)
    got = read_met(p, cat)
    notes = [n for n in got[1].notes if "chunks of more sites" in n]
    assert notes == ["met.zarr: chunks of more sites than a group of 1 (precipitation 4 "
                     "sites x 100 hours): copied chunk by chunk to a site-major scratch "
                     "file before the checks (chunks of whole sites, e.g. {'site': 10, "
                     "'time': -1}, are read without the copy)"]
    _same_as_netcdf(got, read_met(folder / "met.nc", cat), zarr_notes=1)


@pytest.mark.parametrize("fmt", [2, 3])
def test_store_without_consolidated_metadata(demo_met, tmp_path, fmt):
    met, folder, cat = demo_met
    p = to_zarr(met, tmp_path / "met.zarr", consolidated=False, zarr_format=fmt)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        got = read_met(p, cat)
    assert got[1].notes[-1] == ("met.zarr: no consolidated metadata; each array's own "
                                "metadata read (as fast on a local disk; "
                                "zarr.consolidate_metadata adds them)")
    _same_as_netcdf(got, read_met(folder / "met.nc", cat), zarr_notes=1)


@pytest.mark.parametrize("make, message", [
    (lambda p: None, "{p}: zarr store not found, expected an existing zarr store (folder "
     "or .zarr.zip) of met"),
    (lambda p: p.write_text("site,time\n"), "{p}: neither a zarr store folder nor a zip "
     "file, expected a folder written by xarray's Dataset.to_zarr, or that folder's "
     "content zipped (.zarr.zip)"),
    (lambda p: p.mkdir(), "{p}: a folder that is not a zarr store (no zarr.json or .zgroup "
     "at its root): got 'nothing', expected a zarr store as xarray's Dataset.to_zarr "
     "writes it"),
    (lambda p: zarr.create_array(str(p), shape=(2, 3), dtype="f8"), "{p}: a single zarr "
     "array, not a store of variables, expected a zarr group holding the met variables "
     "(as xarray's Dataset.to_zarr writes it)"),
])
def test_not_a_store(tmp_path, make, message):
    cat = read_sites(DEMO / "sites.toml")
    p = tmp_path / "met.zarr"
    make(p)
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert _message(exc) == message.format(p=p)


def test_damaged_chunk_is_located(demo_met, tmp_path):
    met, _, cat = demo_met
    p = to_zarr(met.chunk({"site": 1}), tmp_path / "met.zarr")
    chunk = next((p / "wind_speed").rglob("c/*/*"))
    chunk.write_bytes(b"not compressed data")
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert re.fullmatch(re.escape(f"{p}, column 'wind_speed': cannot read the values (")
                        + r".+" + re.escape("), expected values the format can decode (the "
                                            "file or store may be damaged or half-copied)"),
                        _message(exc)), _message(exc)


def test_without_zarr_names_the_extra(demo_met, tmp_path, monkeypatch):
    import importlib.util
    met, _, cat = demo_met
    p = to_zarr(met, tmp_path / "met.zarr")
    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec",
                        lambda name, *a: None if name == "zarr" else real(name, *a))
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert _message(exc) == (f"{p}: a zarr store, and the zarr package is not installed, "
                             'expected the zarr package: python -m pip install '
                             '"deposition-workbench[zarr]"')


def test_zarr_2_names_the_extra(demo_met, tmp_path, monkeypatch):
    """xarray reads zarr stores with zarr 3: an older zarr is named, not a TypeError."""
    import importlib.metadata
    met, _, cat = demo_met
    p = to_zarr(met, tmp_path / "met.zarr")
    real = importlib.metadata.version
    monkeypatch.setattr(importlib.metadata, "version",
                        lambda name: "2.18.7" if name == "zarr" else real(name))
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert _message(exc) == (f"{p}: a zarr store, and zarr 2.18.7 is installed, expected "
                             "zarr 3 or later (Python 3.11 or later): python -m pip install "
                             '"deposition-workbench[zarr]"')
