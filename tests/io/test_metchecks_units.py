"""Reasons of the met range checks name their unit, and kelvin typed under a degC header
gets its own hint (seen by a user: 'temperature outside 183.15..333.15 (masked)' for
values of 270-300 written under 'temperature [degC]', which read as inside the range)."""
import numpy as np

from workbench.io import read_met

from tiny_inputs import ledger_reasons as _reasons, plausible_met_csv as met_file




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
    temp[5] = -120.0                               # out of range, not a missing-value code
    temp[9] = -999.0                               # a missing-value code in one hour
    wind = np.full(72, 3.0)
    wind[7] = 99.0
    met, led = read_met(met_file(tmp_path, **{"temperature [degC]": temp,
                                              "wind_speed [m/s]": wind}), cat)
    r = _reasons(led)
    assert "temperature outside 183.15..333.15 K (-90..60 degC) (masked)" in r
    assert "wind_speed outside 0..75 m/s (masked)" in r
    assert "temperature -999 degC looks like a missing-value code (masked)" in r
    assert np.isnan(met["temperature"]).sum() == 2


# degF and km/h under SI headers: the values of a mid-latitude summer month (invented)
def _summer(n_days=31):
    hours = np.arange(24 * n_days)
    temp_c = 15.0 + 6.0 * np.sin(2 * np.pi * (hours % 24 - 9) / 24)        # 9-21 degC
    wind = 2.0 + 2.0 * np.abs(np.sin(hours / 7.0))                          # 2-4 m/s
    return temp_c, wind


def test_fahrenheit_under_degc_header_is_named_and_masked(tmp_path, cat):
    # 9-21 degC is 48-70 degF: every hour lies in the hard range (-90..60 degC) but for
    # the warmest; before, 70 % of the month was kept as 48-60 degC air
    temp_c, _ = _summer()
    met, led = read_met(met_file(tmp_path, n_days=31,
                                 **{"temperature [degC]": np.round(temp_c * 1.8 + 32, 1)}), cat)
    assert np.isnan(met["temperature"]).all()
    assert "temperature looks like degF although the header says degC (masked)" in _reasons(led)


def test_fahrenheit_of_a_cold_site_is_found_by_its_hot_hours(tmp_path, cat):
    # a median of 30 degF (-1 degC) passes the median rule; its 'hot' hours (above 60,
    # over 1 % of the hours) give it away
    temp_f = np.full(24 * 31, 30.0)
    temp_f[::40] = 65.0
    met, led = read_met(met_file(tmp_path, n_days=31, **{"temperature [degC]": temp_f}), cat)
    assert np.isnan(met["temperature"]).all()
    assert "temperature looks like degF although the header says degC (masked)" in _reasons(led)


def test_a_hot_month_in_degc_stays(tmp_path, cat):
    # a desert summer month, 30-46 degC (median 38): read as it is
    temp_c, _ = _summer()
    hot = np.round(38 + (temp_c - 15) * 8 / 6, 1)
    met, led = read_met(met_file(tmp_path, n_days=31, **{"temperature [degC]": hot}), cat)
    assert not np.isnan(met["temperature"]).any()
    assert not [r for r in _reasons(led) if "temperature" in r]


def test_kmh_under_ms_header_is_flagged_and_kept(tmp_path, cat):
    _, wind = _summer()
    met, led = read_met(met_file(tmp_path, n_days=31, **{"wind_speed [m/s]": wind * 3.6}), cat)
    assert np.allclose(met["wind_speed"].values.ravel(), wind * 3.6)          # kept
    # named by the potential wind (workbench/io/metwind.py), km/h among the readings
    named = [r for r in _reasons(led) if "wind" in r]
    assert len(named) == 1 and "or km/h (x 3.6: 3.5 m/s) under an m/s header?" in named[0]
    met, led = read_met(met_file(tmp_path, n_days=31, **{"wind_speed [m/s]": wind}), cat)
    assert not [r for r in _reasons(led) if "wind" in r]
