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
