"""Missing-value codes typed in a met file: masked with their reason, in every reader.

The codes are those of the other input files (workbench.io.plausible.SENTINELS, common
practice in station data exchange).  A negative code is always a code; a positive code
only outside the variable's hard range (999.9 hPa and 999.9 W/m2 can be real).  One code
must not make a whole site's record look like another unit.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from workbench.io import read_met
from workbench.io.metchecks import missing_codes
from tiny_inputs import ledger_reasons, plausible_met_csv

N = 72          # hours of the tiny record (3 days in June at 52 N)


def _edit(tmp_path, column, value, hour=12, **cols):
    p = plausible_met_csv(tmp_path, **cols)
    df = pd.read_csv(p)
    df.loc[hour, column] = value
    df.to_csv(p, index=False)
    return p


@pytest.mark.parametrize("column, value, text", [
    ("solar_radiation [W/m2]", 9999, "solar radiation 9999 W/m2"),
    ("temperature [degC]", -999.0, "temperature -999 degC"),
    ("relative_humidity [%]", -99.9, "relative humidity -99.9 %"),
    ("pressure [hPa]", 9999.0, "pressure 9999 hPa"),
    ("wind_speed [m/s]", 999.9, "wind speed 999.9 m/s"),
    ("precipitation [mm]", -9999.0, "precipitation -9999 mm"),
])
def test_one_code_masks_one_hour_with_its_reason(tmp_path, cat, met_reader, column, value, text):
    met, led = met_reader(_edit(tmp_path, column, value), cat)
    name = column.split(" [")[0]
    v = met[name].values.ravel()
    assert np.isnan(v).sum() == 1 and np.isnan(v[12])
    assert ledger_reasons(led) == {f"{text} looks like a missing-value code (masked)"}
    assert led.summary()["accepted"].iloc[0] + led.summary()["flagged"].iloc[0] == N


def test_one_radiation_code_leaves_the_rest_of_the_site(tmp_path, cat, met_reader):
    """Before, one 9999 raised the site's maximum above 1500 W/m2 and masked its whole
    radiation record as a unit slip."""
    met, _ = met_reader(_edit(tmp_path, "solar_radiation [W/m2]", 9999), cat)
    assert np.isfinite(met["solar_radiation"].values).sum() == N - 1


def test_one_radiation_spike_is_one_masked_hour(tmp_path, cat, met_reader):
    met, led = met_reader(_edit(tmp_path, "solar_radiation [W/m2]", 1600.0), cat)
    assert np.isfinite(met["solar_radiation"].values).sum() == N - 1
    assert ledger_reasons(led) == {"solar_radiation outside -20..1500 W/m2 (masked)"}


def test_radiation_in_another_unit_still_masks_the_site(tmp_path, cat, met_reader):
    p = plausible_met_csv(tmp_path)
    df = pd.read_csv(p)
    df["solar_radiation [W/m2]"] *= 3.6      # kJ/m2 per hour under a W/m2 header
    df.to_csv(p, index=False)
    met, led = met_reader(p, cat)
    assert np.isnan(met["solar_radiation"].values).all()
    assert any("at many hours of this site: unit likely not W/m2" in r
               for r in ledger_reasons(led))


def test_sensible_heat_code_inside_the_range_is_masked(tmp_path, cat, met_reader):
    """-99 W/m2 lies inside the hard range (-600..1200): before, it entered as data."""
    p = _edit(tmp_path, "sensible_heat_flux [W/m2]", -99.0, **{"sensible_heat_flux [W/m2]": -45.0})
    met, led = met_reader(p, cat)
    h = met["sensible_heat_flux"].values.ravel()
    assert np.isnan(h[12]) and np.isnan(h).sum() == 1 and np.nanmax(h) == -45.0
    assert ledger_reasons(led) == {
        "sensible heat flux -99 W/m2 looks like a missing-value code (masked)"}


@pytest.mark.parametrize("column, value", [("pressure [hPa]", 999.9),
                                           ("solar_radiation [W/m2]", 999.9)])
def test_positive_code_inside_the_range_is_data(tmp_path, cat, met_reader, column, value):
    met, led = met_reader(_edit(tmp_path, column, value), cat)
    v = met[column.split(" [")[0]].values.ravel()
    assert v[12] == pytest.approx(value * (100.0 if "hPa" in column else 1.0))
    assert not any("missing-value code" in r for r in ledger_reasons(led))


def test_fraction_humidity_code_masks_one_hour_not_the_month(tmp_path, cat, met_reader):
    """A fraction column with one 999.9: before, the month's maximum said "looks like %"
    and masked the whole month."""
    p = plausible_met_csv(tmp_path)
    df = pd.read_csv(p).rename(columns={"relative_humidity [%]": "relative_humidity [1]"})
    df["relative_humidity [1]"] = 0.7
    df.loc[12, "relative_humidity [1]"] = 999.9
    df.to_csv(p, index=False)
    met, led = met_reader(p, cat)
    assert np.isfinite(met["relative_humidity"].values).sum() == N - 1
    assert ledger_reasons(led) == {
        "relative humidity 999.9 1 looks like a missing-value code (masked)"}


def test_codes_in_kelvin_and_fahrenheit_are_recognised():
    """The codes are compared in the file's own unit, after the same conversion."""
    from workbench.io.metvars import convert_met
    for unit in ("degF", "K", "degC"):
        raw = np.array([-999.0, 60.0 if unit == "degF" else 15.0, -9999.0])
        if unit == "K":
            raw[1] = 288.15
        v = convert_met(raw, unit, "temperature", "K")
        masked, reasons = missing_codes({"temperature": v}, {"temperature": unit})
        assert masked["temperature"].tolist() == [True, False, True]
        assert reasons[0][2] == f"temperature -9999 {unit} looks like a missing-value code (masked)"


def test_netcdf_codes_are_masked(tmp_path, cat):
    p = plausible_met_csv(tmp_path, **{"sensible_heat_flux [W/m2]": -45.0})
    met, _ = read_met(p, cat)
    nc = met.drop_vars("row_present")
    h = nc["sensible_heat_flux"].values.copy()
    h[0, 12] = -99.0
    nc["sensible_heat_flux"] = (("site", "time"), h, {"units": "W m-2"})
    sr = nc["solar_radiation"].values.copy()
    sr[0, 13] = 9999.0
    nc["solar_radiation"] = (("site", "time"), sr, {"units": "W m-2"})
    nc.to_netcdf(tmp_path / "met.nc", engine="scipy")
    got, led = read_met(tmp_path / "met.nc", cat)
    assert np.isnan(got["sensible_heat_flux"].values[0, 12])
    assert np.isfinite(got["solar_radiation"].values).sum() == N - 1
    assert {"sensible heat flux -99 W m-2 looks like a missing-value code (masked)",
            "solar radiation 9999 W m-2 looks like a missing-value code (masked)"} \
        <= ledger_reasons(led)
