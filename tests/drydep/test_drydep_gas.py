"""Molecular diffusivities, viscosity, Schmidt number and Rb against published values."""
import numpy as np
import pytest

from workbench.drydep import gas
from workbench.drydep.wesely1989 import diffusivity_ratio
from workbench.species import diffusivity, fuller_diffusivity
from workbench.surface.air import dynamic_viscosity, mean_free_path

# Massman (1998), Atmos. Environ. 32, 1111-1127, Table 2: D at 273.15 K and
# 101.325 kPa [cm2 s-1] (from memory), with the scaling (T/T0)^1.81 (p0/p).
MASSMAN_1998 = {"H2O": 0.2178, "SO2": 0.1089, "NH3": 0.1978, "NO2": 0.1361, "O3": 0.1444}
# Wesely (1989), Table 2: D_H2O / D_x (from memory).
WESELY_1989_RATIO = {"SO2": 1.9, "O3": 1.6, "NO2": 1.6, "NH3": 1.0, "HNO3": 1.9}


@pytest.mark.parametrize("name", sorted(MASSMAN_1998))
def test_diffusivity_massman_table(name):
    d0 = MASSMAN_1998[name] * 1e-4
    assert diffusivity(name, 273.15, 101325.0) == pytest.approx(d0, rel=1e-3)
    # Massman's temperature and pressure scaling, evaluated by hand at 303.15 K, 900 hPa
    expected = d0 * (101325.0 / 90000.0) * (303.15 / 273.15) ** 1.81
    assert diffusivity(name, 303.15, 90000.0) == pytest.approx(expected, rel=1e-6)


@pytest.mark.parametrize("name", ["SO2", "NH3", "NO2", "O3"])
def test_fuller_estimate_agrees_with_massman(name):
    # the method used for HNO3 (Fuller et al. 1966) checked where Massman has data;
    # Fuller's stated accuracy is about 5-10 %, molecules with special volumes worse.
    assert fuller_diffusivity(name) == pytest.approx(MASSMAN_1998[name] * 1e-4, rel=0.2)


@pytest.mark.parametrize("name", sorted(WESELY_1989_RATIO))
def test_diffusivity_ratios_against_wesely_table2(name):
    assert diffusivity_ratio(name) == pytest.approx(WESELY_1989_RATIO[name], rel=0.15)


def test_air_viscosity_and_mean_free_path():
    # Incropera and DeWitt, Fundamentals of Heat and Mass Transfer, Table A.4: air at
    # 300 K, mu = 184.6e-7 N s m-2 (from memory).
    assert dynamic_viscosity(300.0) == pytest.approx(184.6e-7, rel=0.01)
    # Seinfeld and Pandis (2006), section 9.1: lambda = 0.0651 um at 298 K, 1 atm
    assert mean_free_path(298.15, 101325.0) == pytest.approx(0.0651e-6, rel=0.03)


def test_rb_magnitude_and_order():
    # common practice: Rb of order 10-30 s/m at u* = 0.3 m/s for SO2-like gases
    rb = {g: gas.quasi_laminar_resistance(g, 0.3, 293.15, 101325.0) for g in ("SO2", "HNO3", "NH3", "O3")}
    assert 10.0 < rb["SO2"] < 30.0
    assert rb["NH3"] < rb["O3"] < rb["SO2"]  # faster diffusion, smaller Rb
    sc = gas.schmidt_number("SO2", 293.15, 101325.0)
    assert 1.0 < sc < 1.5
    assert gas.quasi_laminar_resistance("SO2", 0.6, 293.15, 101325.0) == pytest.approx(rb["SO2"] / 2)


def test_vd_and_interface():
    assert gas.deposition_velocity(100.0, 50.0, 50.0) == pytest.approx(0.005)
    with pytest.raises(NotImplementedError):
        gas.deposition_velocity(1.0, 1.0, 1.0, compensation=1e-9)
    mod = gas.get_scheme("wesely1989")
    assert mod.NAME == "wesely1989" and "stomatal" in mod.PATHS
    with pytest.raises(ValueError, match="known"):
        gas.get_scheme("no_such_scheme")


def test_rb_of_several_gases_equal_one_by_one():
    rng = np.random.default_rng(3)
    ustar = rng.uniform(0.05, 1.0, (2, 3, 50))
    temp = rng.uniform(250.0, 310.0, (2, 1, 50))
    pres = rng.uniform(7e4, 1.03e5, (2, 1, 50))
    temp[0, 0, 7] = np.nan
    gases = ("SO2", "HNO3", "NH3", "NO2", "O3")
    together = gas.quasi_laminar_resistances(gases, ustar, temp, pres)
    assert list(together) == list(gases)
    for g in gases:
        np.testing.assert_array_equal(together[g], gas.quasi_laminar_resistance(g, ustar, temp, pres))
    assert np.isnan(together["SO2"][0, :, 7]).all()


def test_hno3_diffusivity_durham_stockburger_1986():
    # Durham and Stockburger (1986), Atmos. Environ. 20, 559: 0.118 cm2/s at 298.15 K,
    # 1 atm (from memory); Fuller's estimate is about 28 % above it
    assert diffusivity("HNO3", 298.15, 101325.0) == pytest.approx(0.118e-4, rel=1e-9)
    fuller_298 = fuller_diffusivity("HNO3") * (298.15 / 273.15) ** 1.81
    assert fuller_298 / 0.118e-4 == pytest.approx(1.28, abs=0.01)
