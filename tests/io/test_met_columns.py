"""A met column holding another variable (workbench/io/metcolumns.py): a column shifted
by one place, two columns swapped, a wind direction under the wind speed header.

Copies of a demo site's two years with such a slip are masked at that site with a
reason naming the column, what it looks like and what was expected (the ledger adds the
file and the lines); the demo network and the long-record fixture raise none.  The
night hours are held to pvlib's solar position (SPA), a reference outside the project.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from tiny_inputs import grass_sites
from workbench.io import read_met, read_sites
from workbench.io.metchecks import solar_elevation_deg

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
SITE = "ridge"
MARK = "(a column shifted or swapped?)"


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


def _column_reasons(reasons):
    return reasons[reasons["reason"].str.contains("column ", regex=False)]


def test_demo_network_has_no_column_finding(demo_cat):
    _, ledger = read_met(DEMO / "met.csv.gz", demo_cat)
    reasons = ledger.reasons()["reason"]
    assert not reasons.str.contains("swapped").any()
    assert not reasons.str.contains("not a station pressure").any()


def test_long_record_has_no_column_finding(tmp_path):
    from longrecord_data import make_long_record
    make_long_record(tmp_path)
    _, ledger = read_met(tmp_path / "met.csv.gz", read_sites(tmp_path / "sites.toml"))
    assert not ledger.reasons()["reason"].str.contains("swapped").any()


def test_clean_copy_has_no_column_finding(tmp_path, demo_cat, ridge_rows):
    _, reasons = _read(tmp_path, ridge_rows, demo_cat)
    assert _column_reasons(reasons).empty


def test_wind_direction_under_wind_speed_is_masked(tmp_path, demo_cat, ridge_rows):
    # before: the hours below 75 "m/s" (a fifth of a direction's) were read as wind
    df = ridge_rows.copy()
    df["wind_speed [m/s]"] = np.random.default_rng(3).uniform(0, 360, len(df)).round()
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["wind_speed"]).all()
    found = _column_reasons(reasons)
    assert len(found) == 1
    text = found["reason"].iloc[0]
    assert text.startswith("column wind_speed [m/s] is above 75 m/s at ")
    assert "a wind direction in degrees" in text and "expected a wind speed of 0..75" in text
    assert found["lines"].iloc[0] == f"lines 3-{len(df) + 2}"   # every row of the site


def test_temperature_and_humidity_swapped_are_masked(tmp_path, demo_cat, ridge_rows):
    # before: the temperature was masked as "degF" (a wrong cause) and the humidity
    # column, holding degC read as %, kept at its positive hours
    df = ridge_rows.copy()
    df["temperature [degC]"], df["relative_humidity [%]"] = (
        ridge_rows["relative_humidity [%]"], ridge_rows["temperature [degC]"])
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["temperature"]).all() and np.isnan(met["relative_humidity"]).all()
    found = _column_reasons(reasons)["reason"].tolist()
    assert len(found) == 2
    assert all("the temperature and relative humidity columns look swapped" in r for r in found)
    assert not reasons["reason"].str.contains("degF").any()


def test_humidity_in_the_temperature_column_is_masked(tmp_path, demo_cat, ridge_rows):
    df = ridge_rows.copy()
    df["temperature [degC]"] = ridge_rows["relative_humidity [%]"]
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["temperature"]).all()
    assert np.isfinite(met["relative_humidity"]).any()
    (text,) = _column_reasons(reasons)["reason"].tolist()
    assert "a relative humidity in % " + MARK in text


def test_radiation_column_holding_temperature_is_masked(tmp_path, demo_cat, ridge_rows):
    # a shift by one column: the temperature under the radiation header
    df = ridge_rows.copy()
    df["solar_radiation [W/m2]"] = ridge_rows["temperature [degC]"]
    met, reasons = _read(tmp_path, df, demo_cat)
    # flagged (kept: or a clock many hours off); here the unit check masks it too
    found = _column_reasons(reasons)["reason"].tolist()
    assert len(found) == 1 and "not a global radiation " + MARK in found[0]
    assert "expected about 0 W/m2 at night" in found[0]


def test_precipitation_column_holding_humidity_is_masked(tmp_path, demo_cat, ridge_rows):
    df = ridge_rows.copy()
    df["precipitation [mm]"] = ridge_rows["relative_humidity [%]"]
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["precipitation"]).all()
    (text,) = _column_reasons(reasons)["reason"].tolist()
    assert "not an hourly precipitation " + MARK in text


def test_hpa_under_a_kpa_header_names_the_units(tmp_path, demo_cat, ridge_rows):
    df = ridge_rows.rename(columns={"pressure [hPa]": "pressure [kPa]"})
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["pressure"]).all()
    text = reasons.loc[reasons["reason"].str.startswith("pressure median"), "reason"].iloc[0]
    assert "10x the" in text and "hPa written under a kPa header?" in text


def test_pressure_column_holding_temperature_is_named(tmp_path, demo_cat, ridge_rows):
    df = ridge_rows.copy()
    df["pressure [hPa]"] = ridge_rows["temperature [degC]"]
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["pressure"]).all()
    assert reasons["reason"].str.contains("not a station pressure " + MARK, regex=False).any()


def test_night_hours_agree_with_pvlib_and_clear_sky_passes(tmp_path):
    # pvlib (Holmgren et al. 2018): SPA solar position (Reda & Andreas 2004) and the
    # Haurwitz (1945) clear sky at the invented site "Ostvik Bog" (65 N, 25 E), where the
    # summer nights are short.  Every hour the check calls night (sun below -3 deg at
    # the hour middle) has pvlib's clear-sky hour mean under the 10 W/m2 it allows.
    pvlib = pytest.importorskip("pvlib")
    lat, lon = 65.0, 25.0
    t_end = pd.date_range("2021-01-01T01:00", "2022-01-01T00:00", freq="h")
    steps = (pd.date_range(t_end[0] - pd.Timedelta("1h"), t_end[-1], freq="5min",
                           inclusive="left") + pd.Timedelta("150s"))
    sp = pvlib.solarposition.get_solarposition(steps, lat, lon)
    ghi = pvlib.clearsky.haurwitz(sp["apparent_zenith"])["ghi"].to_numpy().reshape(-1, 12)
    ghi = ghi.mean(axis=1)
    night = solar_elevation_deg((t_end - pd.Timedelta("30min")).values, lat, lon) < -3.0
    assert night.sum() > 2000 and ghi[night].max() < 10.0
    (tmp_path / "sites.toml").write_text(grass_sites([("ostvik", "Ostvik Bog", lat, lon, 0)]))
    cat = read_sites(tmp_path / "sites.toml")
    df = pd.DataFrame({"site": "ostvik", "time": t_end.strftime("%Y-%m-%dT%H:%M"),
                       "wind_speed [m/s]": 3.0, "temperature [degC]": 5.0,
                       "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": ghi.round(1),
                       "precipitation [mm]": 0.0, "pressure [hPa]": 1010.0})
    p = tmp_path / "met.csv"
    df.to_csv(p, index=False)
    met, ledger = read_met(p, cat)
    assert np.isfinite(met["solar_radiation"]).all()
    # the same sky 2 h late (a clock error, for the clock check) is not called another
    # variable; the temperature in the radiation column is
    for shift in (2, -3):
        df["solar_radiation [W/m2]"] = np.roll(ghi, shift).round(1)
        df.to_csv(p, index=False)
        met, ledger = read_met(p, cat)
        assert np.isfinite(met["solar_radiation"]).all()
        assert not ledger.reasons()["reason"].str.contains("not a global radiation").any()
    df["solar_radiation [W/m2]"] = 5.0 + 10.0 * np.sin(np.linspace(0, 2 * np.pi, len(df)))
    df.to_csv(p, index=False)
    met, ledger = read_met(p, cat)
    assert ledger.reasons()["reason"].str.contains("not a global radiation").any()


def test_swap_in_a_winter_is_named_on_both_columns(tmp_path, demo_cat, ridge_rows):
    # January-February: the humidity column (holding degC) barely follows the short
    # days' sun, but beside a temperature column holding a humidity it is the other half
    # of the swap; before this, its positive hours were read as humidity
    df = ridge_rows.iloc[:24 * 59].copy()
    df["temperature [degC]"], df["relative_humidity [%]"] = (
        df["relative_humidity [%]"].to_numpy(), df["temperature [degC]"].to_numpy())
    met, reasons = _read(tmp_path, df, demo_cat)
    assert np.isnan(met["temperature"]).all() and np.isnan(met["relative_humidity"]).all()
    found = _column_reasons(reasons)["reason"].tolist()
    assert len(found) == 2 and all("look swapped" in r for r in found)
