"""Reasons of the met range checks name their unit, and kelvin typed under a degC header
gets its own hint (seen by a user: 'temperature outside 183.15..333.15 (masked)' for
values of 270-300 written under 'temperature [degC]', which read as inside the range)."""
import numpy as np
import pandas as pd
import pytest

from workbench.io import read_met, read_sites
from workbench.io.metchecks import solar_elevation_deg

from tiny_inputs import SITES


def met_file(tmp_path, n_days=3, site="alpha", offset=1, **cols):
    """met.csv of `n_days` plausible hours at alpha (lat 52, lon 5, UTC+1); `cols`
    replace columns (a scalar or one value per hour)."""
    t_local = pd.date_range("2020-06-01T01:00", periods=24 * n_days, freq="h")
    t_utc = t_local - pd.Timedelta(hours=offset)
    elev = solar_elevation_deg((t_utc - pd.Timedelta("30min")).values, 52.0, 5.0)
    df = pd.DataFrame({
        "site": site, "time": t_local.strftime("%Y-%m-%dT%H:%M"),
        "wind_speed [m/s]": 3.0, "temperature [degC]": 15.0, "relative_humidity [%]": 70.0,
        "solar_radiation [W/m2]": np.round(np.clip(900 * np.sin(np.deg2rad(elev)), 0, None), 1),
        "precipitation [mm]": np.where(np.arange(len(t_local)) % 17 == 0, 1.0, 0.0),
        "pressure [hPa]": 1010.0})
    for k, v in cols.items():
        df[k] = v
    p = tmp_path / "met.csv"
    df.to_csv(p, index=False)
    return p


@pytest.fixture
def cat(tmp_path):
    (tmp_path / "sites.toml").write_text(SITES)
    return read_sites(tmp_path / "sites.toml")


def _reasons(led):
    return set(led.table["reason"].str.split("; ").explode()) - {""}


def test_kelvin_under_degc_header_is_named(tmp_path, cat):
    met, led = read_met(met_file(tmp_path, **{"temperature [degC]": 288.15}), cat)
    assert np.isnan(met["temperature"]).all()
    assert _reasons(led) == {"temperature looks like kelvin although the header says degC (masked)"}


def test_kelvin_under_kelvin_header_is_fine(tmp_path, cat):
    p = met_file(tmp_path, **{"temperature [degC]": 288.15})
    p.write_text(p.read_text().replace("temperature [degC]", "temperature [K]"))
    met, led = read_met(p, cat)
    assert np.allclose(met["temperature"], 288.15) and _reasons(led) == set()


def test_range_reason_carries_units(tmp_path, cat):
    temp = np.full(72, 15.0)
    temp[5] = -999.0                               # a missing-value code in one hour
    wind = np.full(72, 3.0)
    wind[7] = 99.0
    met, led = read_met(met_file(tmp_path, **{"temperature [degC]": temp,
                                              "wind_speed [m/s]": wind}), cat)
    r = _reasons(led)
    assert "temperature outside 183.15..333.15 K (-90..60 degC) (masked)" in r
    assert "wind_speed outside 0..75 m/s (masked)" in r
    assert np.isnan(met["temperature"]).sum() == 1
