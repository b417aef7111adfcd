"""Fixtures writing tiny input files per test (invented sites)."""
import textwrap

import pytest

from tiny_inputs import AIR, PRECIP, SITES, met_text


@pytest.fixture(name="met_text")
def _met_text_fixture():
    """The met file builder, as a fixture."""
    return met_text


@pytest.fixture
def files(tmp_path):
    """Write the tiny catalogue, precipitation, air and met files; return their paths."""
    (tmp_path / "sites.toml").write_text(SITES)
    (tmp_path / "precip.csv").write_text(PRECIP)
    (tmp_path / "air.csv").write_text(AIR)
    (tmp_path / "met.csv").write_text(met_text())
    return {k: tmp_path / v for k, v in
            dict(sites="sites.toml", precipitation="precip.csv", air="air.csv", met="met.csv").items()}


@pytest.fixture
def write(tmp_path):
    """Write a text file in tmp_path and return its path."""
    def _write(name, text):
        p = tmp_path / name
        p.write_text(textwrap.dedent(text) if text.startswith("\n") else text)
        return p
    return _write


@pytest.fixture
def cat(tmp_path):
    """The tiny site catalogue, read."""
    from workbench.io import read_sites
    (tmp_path / "sites.toml").write_text(SITES)
    return read_sites(tmp_path / "sites.toml")


@pytest.fixture(params=["fast", "line"])
def met_reader(request, monkeypatch):
    """``read_met`` through each CSV reader: the chunked one, and the line-by-line one
    (the chunked reader declined) it hands odd files to."""
    import workbench.io.metfast as metfast
    from workbench.io import read_met
    if request.param == "line":
        monkeypatch.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
    return read_met
