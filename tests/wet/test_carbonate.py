"""Carbonate equilibrium: the pH of clean rain and the bicarbonate term.

References named beside each check:
* "pH 5.6 of pure water in equilibrium with atmospheric CO2": common practice
  (textbook value; e.g. Seinfeld and Pandis 2006, Section 7.3.1, from memory).
* Independent constants for the cross-check: Henry constant of CO2
  H^cp = 3.3e-4 mol m-3 Pa-1 at 298.15 K (Sander 2015, Atmos. Chem. Phys. 15,
  4399, compilation version 4.0, from memory) and pK1 = 6.35 at 25 degC
  (Harned and Davis 1943, J. Am. Chem. Soc. 65, 2030, from memory); the standard
  atmosphere from scipy.constants.
"""
import numpy as np
import pytest
import scipy.constants as sc
import xarray as xr

from workbench.wet import carbonate as C

SANDER_2015_HCP_CO2 = 3.3e-4      # mol m-3 Pa-1 (from memory)
HARNED_DAVIS_1943_PK1 = 6.35      # (from memory)
CO2_TODAY = 420e-6                # mol mol-1, early-2020s global mean (from memory)


def test_pure_water_pH_near_5_6_with_todays_co2():
    # common practice: clean rain in equilibrium with CO2 has pH about 5.6
    pH = C.pure_water_pH(CO2_TODAY)
    assert abs(pH - 5.6) < 0.05


def test_pure_water_pH_against_independent_constants():
    # Henry's law with Sander (2015), K1 from Harned and Davis (1943):
    # [H+]^2 = K_H K1 pCO2 (+ Kw, negligible), pCO2 in Pa.
    p_co2 = CO2_TODAY * sc.atm                                   # Pa
    co2_aq = SANDER_2015_HCP_CO2 * p_co2 / 1000.0                # mol/L
    h = np.sqrt(co2_aq * 10 ** -HARNED_DAVIS_1943_PK1)
    assert C.pure_water_pH(CO2_TODAY) == pytest.approx(-np.log10(h), abs=0.02)


def test_pH_falls_as_co2_rises():
    # pre-industrial 280 ppm gives a higher pH than today's 420 ppm, by
    # 0.5 log10(420/280) from the square-root law
    d = C.pure_water_pH(280e-6) - C.pure_water_pH(420e-6)
    assert d == pytest.approx(0.5 * np.log10(420 / 280), abs=1e-3)


def test_bicarbonate_matches_henry_and_k1():
    # [HCO3-] = K_H K1 pCO2 / [H+] at pH 5 (Seinfeld and Pandis 2006 constants)
    h_mol_m3 = 1e-5 * 1000.0
    kh, k1 = C.CARBONATE_CONSTANTS["henry_co2"][0], C.CARBONATE_CONSTANTS["k1"][0]
    expected = kh * k1 * CO2_TODAY / 1e-5 * 1000.0                # mol m-3
    assert C.bicarbonate(h_mol_m3, CO2_TODAY) == pytest.approx(expected, rel=1e-12)
    # it only matters above pH ~5: below 0.1 ueq/L at pH 4.2
    assert C.bicarbonate(10 ** -4.2 * 1000, CO2_TODAY) * 1000 < 0.1


def test_van_t_hoff_temperature_dependence():
    # CO2 is more soluble in cold water; K1 smaller (Seinfeld and Pandis 2006 signs)
    assert C.equilibrium_constant("henry_co2", 278.15) > C.equilibrium_constant("henry_co2")
    assert C.equilibrium_constant("k1", 278.15) < C.equilibrium_constant("k1")
    assert C.equilibrium_constant("kw") == pytest.approx(1.0e-14)


@pytest.mark.parametrize("kind", ["scalar", "ndarray", "dataarray", "dask", "nan"])
def test_input_types(kind):
    import dask.array as da
    base = np.array([280e-6, 420e-6])
    x = {"scalar": 420e-6, "ndarray": base, "dataarray": xr.DataArray(base, dims="t"),
         "dask": xr.DataArray(da.from_array(base, chunks=1), dims="t"),
         "nan": np.nan}[kind]
    out = C.pure_water_pH(x)
    if kind == "scalar":
        assert isinstance(out, float)
    elif kind == "nan":
        assert np.isnan(out)
    elif kind in ("dataarray", "dask"):
        assert isinstance(out, xr.DataArray)
        np.testing.assert_allclose(out.values, C.pure_water_pH(base))
    else:
        assert isinstance(out, np.ndarray)
