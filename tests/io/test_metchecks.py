"""Meteorology plausibility checks: flagged with a hint (and masked where a value cannot
be right), never refused. Thresholds are common practice (workbench/io/metchecks.py)."""
import numpy as np
import pandas as pd
import pytest

from workbench.io import load_inputs, read_met
from workbench.io.metchecks import expected_station_pressure

from tiny_inputs import ledger_reasons as _reasons, plausible_met_csv


_met = plausible_met_csv


def test_clean_record_has_no_flags(tmp_path, cat):
    met, led = read_met(_met(tmp_path), cat)
    assert _reasons(led) == set()
    assert led.summary()["accepted"].iloc[0] == 72


def test_pressure_in_kpa_under_hpa_header_is_masked(tmp_path, cat):
    met, led = read_met(_met(tmp_path, **{"pressure [hPa]": 101.0}), cat)
    assert np.isnan(met["pressure"]).all()
    assert any("kPa written under a hPa header?" in r for r in _reasons(led))


def test_sea_level_pressure_at_elevated_site_is_kept_and_flagged(tmp_path, cat):
    """beta stands at 400 m: station pressure 966.1 hPa in the ICAO standard atmosphere
    (ICAO Doc 7488 tables, 400 m: 966.11 hPa; from memory)."""
    assert expected_station_pressure(400.0) == pytest.approx(96611, rel=1e-4)
    met, led = read_met(_met(tmp_path, site="beta", offset=0, **{"pressure [hPa]": 1013.0}), cat)
    assert np.isfinite(met["pressure"]).all()
    assert "pressure looks reduced to sea level, not station pressure (kept)" in _reasons(led)


def test_solar_radiation_in_other_units_is_masked(tmp_path, cat):
    p = _met(tmp_path)
    df = pd.read_csv(p)
    df["solar_radiation [W/m2]"] *= 3.6  # kJ/m2 per hour written under a W/m2 header
    df.to_csv(p, index=False)
    met, led = read_met(p, cat)
    assert np.isnan(met["solar_radiation"]).all()
    assert any("unit likely not W/m2" in r for r in _reasons(led))


def test_cumulative_precipitation_is_masked(tmp_path, cat):
    p = _met(tmp_path)
    df = pd.read_csv(p)
    rain = np.where(np.arange(len(df)) % 3 == 0, 1.0, 0.0)
    df["precipitation [mm]"] = np.cumsum(rain) + 0.2
    df.to_csv(p, index=False)
    met, led = read_met(p, cat)
    assert np.isnan(met["precipitation"]).all()
    assert "precipitation looks cumulative, not hourly (masked)" in _reasons(led)


def test_radiation_at_night_points_at_the_time_base(tmp_path, cat):
    """Times written in UTC while the site says UTC+1 shift the sun by an hour; written
    with a 6 h error the sun shines at night: the hint names utc_offset_h."""
    met, led = read_met(_met(tmp_path, offset=-5), cat)
    assert any("check utc_offset_h" in r for r in _reasons(led))
    assert np.isfinite(met["solar_radiation"]).all()  # kept


def test_gauge_comparison_and_gaps(tmp_path, cat):
    p = _met(tmp_path, n_days=10)
    df = pd.read_csv(p)
    df = df.drop(index=range(100, 110))  # a 10-hour gap
    df.to_csv(p, index=False)
    precip = tmp_path / "p.csv"
    precip.write_text("site,start,end,gauge_depth [mm]\n"
                      "alpha,2020-06-01T09:00,2020-06-03T09:00,3.0\n"     # met gives ~3 mm
                      "alpha,2020-06-06T09:00,2020-06-08T09:00,40.0\n")   # far from met
    inp = load_inputs(tmp_path / "sites.toml", precipitation=precip, met=p)
    gc = inp.gauge_check
    assert list(gc["suspicious"]) == [False, True]
    t = inp.ledger.table
    flagged = t[(t["file"] == str(precip)) & t["reason"].str.contains("far from the gauge")]
    assert list(flagged["line"]) == [3]
    assert any("10 missing hours in 1 gap;" in n for n in inp.ledger.notes)
