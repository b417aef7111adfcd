"""Slips of a third field-data audit (docs/data_formats.md, "Field-data slips we check"):
a catalogue elevation written in feet, seen through the met's station pressure; a
precipitation column holding a cumulative counter.  Invented sites (tests/tiny_inputs.py)."""
import numpy as np
import pytest

from workbench.io import read_met, read_sites
from workbench.io.metchecks import expected_station_pressure

from tiny_inputs import SITES, ledger_reasons as _reasons, plausible_met_csv as _met


def _cat_with_beta_at(tmp_path, elevation):
    assert "elevation_m = 400.0" in SITES                 # beta's
    text = SITES.replace("elevation_m = 400.0", f"elevation_m = {elevation}")
    (tmp_path / "sites.toml").write_text(text)
    return read_sites(tmp_path / "sites.toml")


def test_elevation_in_feet_is_named_through_the_pressure(tmp_path):
    """beta stands at 400 m; its catalogue says 1312.3, the height in feet (1 ft = 0.3048
    m exactly, international yard and pound agreement of 1959). The pressure, 966 hPa,
    is the station pressure at 400 m and 1.12 x the 865 hPa expected at 1312 m (US
    Standard Atmosphere 1976 by the fluids library, the same as ICAO's below 11 km):
    flagged naming the elevation in feet, values kept. Before: 'pressure looks reduced
    to sea level' (a wrong cause)."""
    from fluids.atmosphere import ATMOSPHERE_1976
    assert ATMOSPHERE_1976(1312.3).P / 100 == pytest.approx(865.2, abs=0.05)
    assert ATMOSPHERE_1976(400.0).P / 100 == pytest.approx(966.1, abs=0.05)
    cat = _cat_with_beta_at(tmp_path, 1312.3)
    met, led = read_met(_met(tmp_path, site="beta", offset=0, **{"pressure [hPa]": 966.1}),
                        cat)
    assert np.allclose(met["pressure"].values.ravel(), 96610.0)              # kept
    reasons = _reasons(led)
    assert not [r for r in reasons if "sea level" in r], reasons
    want = [r for r in reasons if "elevation read in feet" in r]
    assert want == ["pressure median 966 hPa, 1.12x the 865 hPa expected at elevation_m = "
                    "1312.3: it fits 400 m, the elevation read in feet (1312.3 ft = 400 m)? "
                    "check elevation_m in sites.toml, expected metres (kept)"], reasons


@pytest.mark.parametrize("elevation", [0.0, 150.0, 400.0, 1200.0, 2500.0])
@pytest.mark.parametrize("bias", [-0.014, 0.0, 0.014])
def test_station_pressure_within_its_band_is_not_called_feet(tmp_path, elevation, bias):
    """False alarms: a station pressure within 1.5 % of the standard atmosphere at the
    catalogue's height (a long record's median) gets no flag at any height."""
    cat = _cat_with_beta_at(tmp_path, elevation)
    p = float(expected_station_pressure(elevation)) * (1 + bias) / 100
    _, led = read_met(_met(tmp_path, site="beta", offset=0, **{"pressure [hPa]": round(p, 1)}),
                      cat)
    assert not [r for r in _reasons(led) if "pressure" in r], _reasons(led)


@pytest.mark.parametrize("elevation", [250.0, 400.0, 1200.0, 2500.0])
def test_sea_level_pressure_is_not_called_feet(tmp_path, elevation):
    """Pressure reduced to sea level at a raised site stays 'reduced to sea level': the
    feet reading must fit the median better than the standard sea-level pressure."""
    cat = _cat_with_beta_at(tmp_path, elevation)
    _, led = read_met(_met(tmp_path, site="beta", offset=0, **{"pressure [hPa]": 1013.2}), cat)
    reasons = _reasons(led)
    assert "pressure looks reduced to sea level, not station pressure (kept)" in reasons
    assert not [r for r in reasons if "feet" in r], reasons


def _rain(n_hours):
    """An hourly record of showers: 1.2 mm every 17th hour, 0 otherwise [mm]."""
    return np.where(np.arange(n_hours) % 17 == 0, 1.2, 0.0)


def test_a_cumulative_counter_is_named(tmp_path, cat):
    """The gauge's running total written as the hourly precipitation: masked, and the
    reason names the counter (before: 'a column shifted or swapped?')."""
    total = np.round(np.cumsum(_rain(24 * 31)) + 310.4, 1)      # a counter never reset
    met, led = read_met(_met(tmp_path, n_days=31, **{"precipitation [mm]": total}), cat)
    assert np.isnan(met["precipitation"]).all()
    reasons = [r for r in _reasons(led) if "precipitation" in r]
    assert len(reasons) == 1, reasons
    assert "not an hourly precipitation (a cumulative counter? it never falls at 100% of " \
           "this site's consecutive hours: write each hour's amount, the difference of " \
           "consecutive readings), expected 0 at most hours (masked)" in reasons[0], reasons


def test_another_column_in_the_precipitation_is_not_called_a_counter(tmp_path, cat):
    """False alarm: a column of another variable (a relative humidity pasted one column
    off) rises and falls: the reason stays 'a column shifted or swapped?'."""
    rh = 70 + 20 * np.sin(np.arange(24 * 31) * 2 * np.pi / 24)
    met, led = read_met(_met(tmp_path, n_days=31, **{"precipitation [mm]": np.round(rh, 1)}),
                        cat)
    reasons = [r for r in _reasons(led) if "precipitation" in r]
    assert len(reasons) == 1 and "(a column shifted or swapped?)" in reasons[0], reasons
