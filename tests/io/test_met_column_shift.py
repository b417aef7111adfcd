"""A met column inside its own hard range holding another variable, and a temperature
column pasted rows off against the others (workbench/io/metcolumns.py).

Copies of a demo site's two years: the temperature moved 4 or 6 rows (from a line in
2020) is flagged from about that line with a reason naming the column, its lag behind
the solar radiation on either side and the direction of the move; a wind speed column
holding the temperature in degC is flagged as a temperature.  Both are kept (a flag, not
a mask: the check cannot be certain).  The demo network, the long-record fixture and
invented years with a slow or quick thermal response raise none.  The daily phase is
held to numpy's discrete Fourier transform (numpy.fft.rfft), and the invented years'
sun to pvlib's SPA through tests/io/test_met_clock_offset.py.
"""
from __future__ import annotations

import re
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.io import read_met, read_sites

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_data"
SITE = "ridge"
sys.path.insert(0, str(ROOT / "benchmarks"))
from met_row_shift import invented_temperature  # noqa: E402


@pytest.fixture(scope="module")
def demo_cat():
    return read_sites(DEMO / "sites.toml")


@pytest.fixture(scope="module")
def ridge_rows():
    df = pd.read_csv(DEMO / "met.csv.gz", comment="#")
    df = df[df["site"] == SITE]
    t = pd.to_datetime(df["time"])
    return df[(t > "2019-01-01") & (t <= "2021-01-01")].reset_index(drop=True)


def _read(tmp_path, df, cat):
    p = tmp_path / "met.csv"
    with open(p, "w") as f:
        f.write("# time_label: end\n")
        df.to_csv(f, index=False)
    met, ledger = read_met(p, cat)
    return met.sel(site=SITE), ledger.reasons()


def _moved(df, k, start):
    """`df` with the temperature column moved `k` rows (down if positive) from the row
    labelled `start` on, as a paste rows off: the rows left empty or pushed out."""
    out = df.copy()
    i0 = int(np.flatnonzero(df["time"].to_numpy() == start)[0])
    col = df["temperature [degC]"].to_numpy(float)
    moved = col.copy()
    if k > 0:
        moved[i0 + k:] = col[i0:len(col) - k]
        moved[i0:i0 + k] = np.nan
    else:
        moved[i0:len(col) + k] = col[i0 - k:]
        moved[len(col) + k:] = np.nan
    out["temperature [degC]"] = moved
    return out, i0 + 3 + max(k, 0)          # file line of the first moved value


def _first_line(lines):
    return int(re.match(r"lines? (\d+)", lines).group(1))


def test_demo_network_has_no_shift_or_wind_finding(demo_cat):
    _, ledger = read_met(DEMO / "met.csv.gz", demo_cat)
    reasons = ledger.reasons()["reason"]
    assert not reasons.str.contains("pasted").any()
    assert not reasons.str.contains("as seasonal as a temperature").any()


def test_long_record_has_no_shift_or_wind_finding(tmp_path):
    from longrecord_data import make_long_record
    make_long_record(tmp_path)
    _, ledger = read_met(tmp_path / "met.csv.gz", read_sites(tmp_path / "sites.toml"))
    reasons = ledger.reasons()["reason"]
    assert not reasons.str.contains("pasted").any()
    assert not reasons.str.contains("as seasonal as a temperature").any()


def test_clean_copy_has_no_shift_finding(tmp_path, demo_cat, ridge_rows):
    _, reasons = _read(tmp_path, ridge_rows, demo_cat)
    assert not reasons["reason"].str.contains("pasted").any()


@pytest.mark.parametrize("k, way", [(4, "down"), (6, "down"), (-6, "up")])
def test_temperature_pasted_rows_off_is_flagged(tmp_path, demo_cat, ridge_rows, k, way):
    # before: read in silence (the temperature kept its range and its daily cycle)
    df, line = _moved(ridge_rows, k, "2020-07-01T01:00")
    met, reasons = _read(tmp_path, df, demo_cat)
    found = reasons[reasons["reason"].str.contains("pasted", regex=False)]
    assert len(found) == 1
    text = found["reason"].iloc[0]
    assert text.startswith("column temperature [degC]: its daily cycle lags the solar "
                           "radiation's by ")
    assert f"rows {way} against the others? (kept)" in text
    assert found["status"].iloc[0] == "flagged"
    # the flagged lines start at or before the first moved line, within 6 weeks, and
    # run to the site's last line
    first = _first_line(found["lines"].iloc[0])
    assert line - 42 * 24 <= first <= line
    assert found["lines"].iloc[0].endswith(f"-{len(df) + 2}")
    assert np.isfinite(met["temperature"]).sum() >= len(df) - 10     # kept as read


def test_wind_speed_holding_a_temperature_is_flagged(tmp_path, demo_cat, ridge_rows):
    # before: a temperature in degC under the wind speed header passed (0..75 m/s)
    df = ridge_rows.copy()
    df["wind_speed [m/s]"] = ridge_rows["temperature [degC]"]
    met, reasons = _read(tmp_path, df, demo_cat)
    found = reasons[reasons["reason"].str.contains("as seasonal as a temperature")]
    assert len(found) == 1
    assert found["reason"].iloc[0].startswith("column wind_speed [m/s] changes from hour")
    assert found["lines"].iloc[0] == f"lines 3-{len(df) + 2}"
    assert found["status"].iloc[0] == "flagged"


def test_harmonic_phase_against_numpy_fft():
    from workbench.io.metcolumns import _harmonic_phase
    # numpy.fft.rfft (the discrete Fourier transform): the first harmonic of slot
    # values x_k at the slot middles k + 0.5 peaks at -angle(X_1) * 24 / 2 pi + 0.5 h;
    # bound 1e-9 h (the same sums)
    x = np.random.default_rng(0).normal(size=(50, 24)) + 3 * np.cos(
        2 * np.pi * (np.arange(24) + 0.5 - np.linspace(0, 23, 50)[:, None]) / 24)
    phase, amp = _harmonic_phase(x)
    X1 = np.fft.rfft(x, axis=1)[:, 1]
    ref = (-np.angle(X1) * 24 / (2 * np.pi) + 0.5) % 24
    d = (phase - ref + 12) % 24 - 12
    assert np.abs(d).max() < 1e-9
    assert amp == pytest.approx(2 * np.abs(X1) / 24, rel=1e-12)


@pytest.mark.parametrize("tau", [1.5, 5.0])
def test_invented_years_no_false_alarm_and_a_paste_found(tau):
    from clock_years import SITES, radiation_year
    from workbench.io.metcolumns import _temperature_shift
    _, lat, lon = SITES[2]
    t, r = radiation_year(lat, lon, 0.0, 0.3, seed=1)
    temp = invented_temperature(r, t, tau, 1, lat)
    codes = np.zeros(len(t), np.int64)
    assert _temperature_shift(temp, r, codes, 1, t, "column temperature") == []
    moved = temp.copy()
    i0 = int(np.searchsorted(t, np.datetime64("2021-07-01T01:00")))
    k = 6 if tau == 5.0 else -6               # towards the side the lag leaves soonest
    if k > 0:
        moved[i0 + k:] = temp[i0:len(temp) - k]
    else:
        moved[i0:k] = temp[i0 - k:]
    (found,) = _temperature_shift(moved, r, codes, 1, t, "column temperature")
    assert found[1][i0 + max(k, 0)] and not found[1][: i0 - 42 * 24].any()
