"""Provenance of the inputs read lazily (NetCDF and zarr met) and of the scenario file.

A NetCDF or zarr met is read by xarray or zarr in pieces, a group of sites at a time;
its SHA-256 is taken before it is opened.  An edit saved while the pieces are read may
give the numbers some pieces of the old content and some of the new: no checksum then
names what they come from, so the reader hashes the file again after its last read and
refuses a file that changed (workbench.io.readbytes.changed_while_read).  The scenario
file is parsed from the bytes hashed, like every other input.
"""
from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

import workbench.io.met as met_mod
from workbench.cli import main
from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.readbytes import file_sha256
from workbench.io.sites import read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


def _flip_last_byte(path: Path) -> None:
    """Save a one-byte edit at the end of a file, size and modification time kept."""
    st = os.stat(path)
    raw = bytearray(path.read_bytes())
    raw[-1] ^= 0x01
    path.write_bytes(bytes(raw))
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns))


@pytest.fixture(scope="module")
def met_nc(tmp_path_factory):
    cat = read_sites(DEMO / "sites.toml")
    ds, _ = read_met(DEMO / "met.csv.gz", cat)
    p = tmp_path_factory.mktemp("lazy") / "met.nc"
    ds.drop_vars("row_present").isel(time=slice(0, 24 * 60)).to_netcdf(p, engine="scipy")
    return p, cat


def test_netcdf_met_edited_while_read_is_refused(met_nc, tmp_path, monkeypatch):
    """Old code: the NetCDF met was hashed before it was opened and read lazily after;
    an edit saved between the two gave numbers of the new content (or of both) under
    the checksum of the old one, and the run went on."""
    src, cat = met_nc
    p = tmp_path / "met.nc"
    p.write_bytes(src.read_bytes())
    real = met_mod._netcdf_body

    def edit_while_reading(raw, path, catalogue, *a, **k):
        out = real(raw, path, catalogue, *a, **k)
        _flip_last_byte(p)                      # saved in another program meanwhile
        return out
    monkeypatch.setattr(met_mod, "_netcdf_body", edit_while_reading)
    with pytest.raises(InputError) as e:
        read_met(p, cat)
    msg = str(e.value)
    assert msg.startswith(f"{p}: changed while it was read")
    assert "before the first read" in msg and "run again once it is saved" in msg


def test_netcdf_met_left_alone_reads_and_records_its_content(met_nc):
    """The second hash does not refuse a file left as it is (a check that could not
    pass would refuse every NetCDF met)."""
    from workbench.io.readbytes import path_key, recording
    p, cat = met_nc
    with recording() as seen:
        ds, ledger = read_met(p, cat)
    assert seen[path_key(p)] == file_sha256(p)
    assert ds.sizes["time"] == 24 * 60


def test_zarr_met_edited_while_read_is_refused(met_nc, tmp_path, monkeypatch):
    """Old code: the zarr store was hashed after it was opened and never again."""
    pytest.importorskip("zarr", reason='zarr stores need the zarr extra: python -m pip '
                        'install "deposition-workbench[zarr]"')
    import warnings
    import xarray as xr
    src, cat = met_nc
    store = tmp_path / "met.zarr"
    with xr.open_dataset(src) as ds, warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ds.load().to_zarr(store, mode="w")
    chunk = max((f for f in store.rglob("*") if f.is_file()), key=lambda f: f.stat().st_size)
    real = met_mod._netcdf_body

    def edit_while_reading(raw, path, catalogue, *a, **k):
        out = real(raw, path, catalogue, *a, **k)
        _flip_last_byte(chunk)
        return out
    monkeypatch.setattr(met_mod, "_netcdf_body", edit_while_reading)
    with pytest.raises(InputError, match="changed while it was read"):
        read_met(store, cat)


def _project(folder: Path) -> Path:
    import test_budget as tb      # tests/ is on the path (pyproject pythonpath)
    folder.mkdir(parents=True)
    return tb._write(folder)


def test_scenario_is_recorded_from_the_bytes_parsed(tmp_path, monkeypatch, capsys):
    """Old code: the scenario file was hashed at the end of the run, so a scenario saved
    while the run went on was recorded as the one the options came from, with no
    `changed_after_read`.  Now it is parsed from the bytes hashed, as every input."""
    from workbench import writers
    scen = _project(tmp_path / "p")
    before = file_sha256(scen)
    first_name, first_writer = writers.OUTPUT_STEPS[0]

    def edit_then_write(result, study, scenario, path):
        scen.write_text(scen.read_text() + "\n# saved again by the analyst\n")
        return first_writer(result, study, scenario, path)
    monkeypatch.setattr(writers, "OUTPUT_STEPS",
                        [(first_name, edit_then_write)] + writers.OUTPUT_STEPS[1:])
    assert main(["run", str(scen), "--out", str(tmp_path / "run"), "--quiet"]) == 0
    assert f"warning: {scen} changed after the run read it" in capsys.readouterr().err
    rec = json.loads((tmp_path / "run" / "provenance.json").read_text())["inputs"]["scenario"]
    assert rec["sha256"] == before != rec["sha256_now"] == file_sha256(scen)
    assert rec.get("changed_after_read") is True


def test_scenario_digest_is_of_the_parsed_bytes(tmp_path):
    from workbench.scenario import load_scenario
    scen = _project(tmp_path / "p")
    assert load_scenario(scen).sha256 == file_sha256(scen)
