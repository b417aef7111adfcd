"""Station numbers as site ids and spreadsheet serial dates in a met file.

pandas reads a column of numbers as numeric categories: the chunked reader then lost
"0101" (read as 101) and declined every chunk of a network numbered by station, leaving
the whole file to the line reader; a column of spreadsheet serial dates (43983.04)
ended in a traceback instead of the located message.
"""
from __future__ import annotations

import pandas as pd
import pytest
import xarray as xr

import workbench.io.metfast as metfast
from workbench.errors import InputError
from workbench.io import read_met, read_sites
from tiny_inputs import SITES, plausible_met_csv


def _numbered(tmp_path, ids):
    text = SITES
    for old, new in zip(('"alpha"', '"beta"'), ids):
        text = text.replace(old, f'"{new}"')
    (tmp_path / "sites.toml").write_text(text)
    cat = read_sites(tmp_path / "sites.toml")
    a = pd.read_csv(plausible_met_csv(tmp_path, site=ids[0], n_days=4), dtype={"site": str})
    b = pd.read_csv(plausible_met_csv(tmp_path, site=ids[1], offset=0, n_days=4),
                    dtype={"site": str})
    pd.concat([a, b]).to_csv(tmp_path / "met.csv", index=False)
    return tmp_path / "met.csv", cat


@pytest.mark.parametrize("ids", [("0101", "0102"), ("101", "7"), ("12", "alpha")])
def test_station_numbers_keep_the_fast_reader_and_their_text(tmp_path, monkeypatch, ids):
    path, cat = _numbered(tmp_path, ids)
    fast = metfast.read_met_csv_fast(path, cat)
    assert fast is not None                             # before: declined (None)
    with monkeypatch.context() as m:
        m.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
        line = read_met(path, cat)
    xr.testing.assert_identical(fast[0], line[0])
    pd.testing.assert_frame_equal(fast[1].table, line[1].table)
    assert list(fast[0]["site"].values) == list(ids)     # "0101" stays "0101"
    assert int(fast[1].summary()[["accepted", "flagged"]].to_numpy().sum()) == 2 * 96


def test_spreadsheet_serial_dates_get_the_located_message(tmp_path, cat):
    p = plausible_met_csv(tmp_path)
    df = pd.read_csv(p)
    serial = (pd.to_datetime(df["time"]) - pd.Timestamp("1899-12-30")) / pd.Timedelta(days=1)
    df["time"] = serial.round(6)
    df.to_csv(p, index=False)
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    msg = str(exc.value)
    assert "line 2, column 'time'" in msg and "serial number" in msg and "43983.041667" in msg
