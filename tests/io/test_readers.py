"""Readers on tiny files: what is loaded, in which units, and the ledger."""
import numpy as np
import pytest

from workbench.io import load_inputs, read_air, read_met, read_precipitation, read_sites
from workbench.species import SPECIES
from workbench.units import to_amount


def test_sites_catalogue(files):
    cat = read_sites(files["sites"])
    assert cat.ids == ["alpha", "beta"]
    a = cat["alpha"]
    assert a.surfaces == ("grass", "conifer_forest")
    assert a.critical_loads == {"cl_max_s": 1200.0, "cl_nut_n": 900.0}
    b = cat["beta"]
    assert len(b.lai) == 12 and max(b.lai) == pytest.approx(5.0) and min(b.lai) == pytest.approx(0.5)
    assert b.lai.index(max(b.lai)) == 6  # July in the northern hemisphere
    surf = cat.surfaces()
    assert list(surf.receptor.values) == ["grass", "conifer_forest", "deciduous_forest"]
    assert surf["active"].sel(site="alpha").values.tolist() == [True, True, False]
    assert surf["canopy_height"].sel(site="beta", receptor="deciduous_forest") == 20.0
    assert np.isnan(surf["lai"].sel(site="alpha")).all()


def test_precipitation_units_and_times(files):
    cat = read_sites(files["sites"])
    ds, led = read_precipitation(files["precipitation"], cat)
    assert ds.sizes["sample"] == 4
    # naive local time at UTC+1 -> 08:00 UTC; an explicit +00:00 stays 09:00
    assert str(ds["start"].values[0])[:16] == "2020-01-07T08:00"
    assert str(ds["start"].values[3])[:16] == "2020-01-07T09:00"
    # 1.5 mg/L SO4 -> mol m-3 of sulfate (molar mass from the species table)
    assert ds["SO4"].values[0] == pytest.approx(1.5e-3 / SPECIES["SO4"].molar_mass)
    # NO3_as_N 0.3 mg/L -> mol of NO3 = mol of N
    assert ds["NO3"].values[0] == pytest.approx(0.3e-3 / 0.014007)
    # 25 ueq/L NH4 -> 0.025 mol m-3
    assert ds["NH4"].values[0] == pytest.approx(0.025)
    # censored SO4 kept as censored with its limit
    assert bool(ds["SO4_censored"].values[2]) and np.isnan(ds["SO4"].values[2])
    assert ds["SO4_detection_limit"].values[2] == pytest.approx(0.05e-3 / SPECIES["SO4"].molar_mass)
    # the dry week: depth 0, no chemistry
    assert ds["gauge_depth"].values[1] == 0 and np.isnan(ds["pH"].values[1])
    s = led.summary().iloc[0]
    # rows: clean, dry week, censored + flag T, clean -> 3 accepted, 1 flagged
    assert (s["read"], s["accepted"], s["flagged"], s["rejected"]) == (4, 3, 1, 0)
    assert led.check_balanced()
    assert "SO4 below detection" in led.table["reason"].iloc[2]


def test_air_reader(files):
    cat = read_sites(files["sites"])
    ds, led = read_air(files["air"], cat)
    assert ds["SO2"].attrs["quantity"] == "amount_density"
    assert ds["SO2"].values[0] == pytest.approx(2e-9 / SPECIES["SO2"].molar_mass)
    assert ds["HNO3"].values[0] == pytest.approx(0.1e-9 / 0.014007)
    assert ds["NO2"].attrs["quantity"] == "mixing_ratio"
    assert ds["NO2"].values[0] == pytest.approx(5e-9)
    assert bool(ds["SO2_censored"].values[1])
    assert ds["NH3_method"].values[0] == "filter pack"
    assert led.check_balanced()


def test_air_reference_state_becomes_mixing_ratio(files, write):
    """A mass concentration at 20 degC, 1013.25 hPa is an exact mixing ratio.

    Reference: ideal-gas law with R from CODATA 2018 (scipy.constants.R).
    """
    from scipy.constants import R
    cat = read_sites(files["sites"])
    p = write("air_ref.csv", "# reference_state: 20 degC, 1013.25 hPa\n"
              "site,start,end,SO2 [ug/m3]\nalpha,2020-01-07T09:00,2020-01-14T09:00,2.0\n")
    ds, _ = read_air(p, cat)
    c = 2e-9 / SPECIES["SO2"].molar_mass
    assert ds["SO2"].attrs["quantity"] == "mixing_ratio"
    assert ds["SO2"].values[0] == pytest.approx(c * R * 293.15 / 101325.0, rel=1e-9)


def test_met_reader_grid_and_units(files):
    cat = read_sites(files["sites"])
    met, led = read_met(files["met"], cat)
    assert met.sizes == {"site": 1, "time": 48}
    # naive local hour-ending 01:00 at UTC+1 -> 00:00 UTC
    assert str(met["time"].values[0])[:16] == "2020-01-07T00:00"
    assert met["temperature"].values[0, 0] == pytest.approx(273.15 + 5.0)
    assert met["relative_humidity"].values[0, 0] == pytest.approx(0.90)
    assert met["pressure"].values[0, 0] == pytest.approx(101000.0)
    assert led.check_balanced()


def test_met_rh_fraction_is_flagged_and_masked(files, write, met_text):
    """RH written as 0-1 under a % header: flagged with a hint and masked, not refused."""
    cat = read_sites(files["sites"])
    p = write("met_frac.csv", met_text(rh_scale=0.01))
    met, led = read_met(p, cat)
    assert np.isnan(met["relative_humidity"]).all()
    assert np.isfinite(met["temperature"]).all()
    assert led.table["status"].eq("flagged").all()
    assert led.table["reason"].str.contains("looks like a fraction").all()


def test_load_inputs_describe(files):
    inp = load_inputs(**files)
    text = inp.describe()
    assert "alpha" in text and "rows per file" in text
    summ = inp.ledger.summary()
    assert (summ["read"] == summ[["accepted", "flagged", "rejected"]].sum(axis=1)).all()


def test_met_time_label_start(files, write, met_text):
    """'# time_label: start' labels the start of the hour: stored as its end (+1 h)."""
    cat = read_sites(files["sites"])
    p = write("met_start.csv", met_text().replace("# time_label: end", "# time_label: start"))
    met, _ = read_met(p, cat)
    assert str(met["time"].values[0])[:16] == "2020-01-07T01:00"


def test_met_netcdf_round_trip(files, tmp_path):
    """The NetCDF path (dims site, time, CF units attributes) gives the same Dataset."""
    cat = read_sites(files["sites"])
    met, _ = read_met(files["met"], cat)
    nc = met.drop_vars("row_present").copy()
    nc["temperature"] = nc["temperature"] - 273.15
    nc["temperature"].attrs["units"] = "degC"
    nc["relative_humidity"] = nc["relative_humidity"] * 100
    nc["relative_humidity"].attrs["units"] = "%"
    nc.to_netcdf(tmp_path / "met.nc", engine="scipy")
    back, led = read_met(tmp_path / "met.nc", cat)
    for v in ("temperature", "relative_humidity", "wind_speed", "pressure"):
        np.testing.assert_allclose(back[v].values, met[v].values, rtol=1e-6)
    assert led.check_balanced()
