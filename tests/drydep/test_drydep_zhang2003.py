"""The Zhang, Brook and Vet (2003) gas scheme: its equations by hand, limits, input types.

Hand-worked values follow the formulas of Zhang et al. (2003), Atmos. Chem. Phys. 3,
2067-2082, as recalled (from memory) in workbench/drydep/zhang2003.py; each number
below was worked out by hand (calculator) from the formula named beside it.
"""
import dask.array as dsa
import numpy as np
import pytest
import xarray as xr

from workbench.drydep import gas
from workbench.drydep import zhang2003 as z


def state(land_use="grass", sr=500.0, t=293.15, kind=0.0, us=0.4, lai=3.0, rh=0.7,
          cosz=0.7, snow=None, floor=True):
    return gas.CanopyState(land_use, np.nan, sr, t, kind, 0.0, us, lai=lai,
                           relative_humidity=rh, cos_zenith=cosz, snow_cover=snow,
                           hno3_rc_floor=floor)


def test_temperature_factor_hand_worked():
    # hand-worked from Zhang et al. 2003 eq. for f(T): T 20 degC, Tmin -5, Tmax 40, Topt 15:
    # b_t = 25/20 = 1.25; f = 25/20 * (20/25)^1.25 = 1.25 * 0.756593 = 0.945742
    assert z.temperature_factor(293.15, -5.0, 40.0, 15.0) == pytest.approx(0.945742, rel=1e-5)
    assert z.temperature_factor(288.15, -5.0, 40.0, 15.0) == pytest.approx(1.0)
    assert z.temperature_factor(273.15 - 6.0, -5.0, 40.0, 15.0) == 0.0
    assert z.temperature_factor(273.15 + 41.0, -5.0, 40.0, 15.0) == 0.0


def test_vpd_and_water_stress_factors_hand_worked():
    # hand-worked from Zhang et al. 2003 eq. for f(D): 1 - 0.31 * 1 kPa = 0.69
    assert z.vpd_factor(1000.0, 0.31) == pytest.approx(0.69)
    assert z.vpd_factor(5000.0, 0.31) == 0.0
    # hand-worked from Zhang et al. 2003 eq. for f(psi): SR 1000 W/m2 -> psi = -2.02 MPa;
    # (psi - psi_c2)/(psi_c1 - psi_c2) = (-2.02 + 2.5)/(-1.5 + 2.5) = 0.48
    assert z.water_stress_factor(1000.0, -1.5, -2.5) == pytest.approx(0.48)
    assert z.water_stress_factor(100.0, -1.5, -2.5) == 1.0


def test_cuticle_resistances_hand_worked():
    # hand-worked from Zhang et al. 2003 eq. for R_cutd: 2000/(exp(0.03*80) 4^0.25 0.5)
    # = 2000/(11.02318 * 1.414214 * 0.5) = 256.59 s/m
    assert z.dry_cuticle_resistance(2000.0, 0.8, 4.0, 0.5) == pytest.approx(256.59, rel=1e-4)
    # hand-worked from Zhang et al. 2003 eq. for R_cutw: 100/(4^0.5 * 0.5) = 100 s/m
    assert z.wet_cuticle_resistance(100.0, 4.0, 0.5) == pytest.approx(100.0)
    # more humid, more LAI, more u*: smaller dry cuticle resistance
    r = z.dry_cuticle_resistance(2000.0, np.array([0.5, 0.9]), 4.0, 0.5)
    assert r[1] < r[0]


def test_canopy_transfer_hand_worked():
    # hand-worked from Zhang et al. 2003 eq. for R_ac: deciduous (Rac0 100-250, LAI
    # 0.1-5): LAI 2.55 sits half way -> Rac0 175; 175 * 2.55^0.25 / 0.5^2 = 175*1.263668*4
    tab = z.table_values("deciduous_forest")
    assert (tab["lai_min"], tab["lai_max"]) == (0.1, 5.0)
    lai = 0.1 + 0.5 * (5.0 - 0.1)   # 2.55
    expected = 175.0 * lai ** 0.25 / 0.25
    assert expected == pytest.approx(884.58, rel=1e-4)   # 175 * 1.263668 * 4
    assert z.canopy_transfer_resistance(lai, 0.5, tab) == pytest.approx(expected)


def test_sunlit_fraction_and_blocking_hand_worked():
    # hand-worked from Zhang et al. 2003 eq. for F_sun: 2*0.5*(1 - exp(-0.5*3/0.5)) = 0.950213
    assert z.sunlit_leaf_area(3.0, 0.5) == pytest.approx(0.950213, rel=1e-6)
    assert z.sunlit_leaf_area(3.0, -0.1) == 0.0
    # hand-worked from Zhang et al. 2003 rule for W_st: (400 - 200)/800 = 0.25; capped 0.5
    assert z.stomatal_blocking(400.0, 2.0) == pytest.approx(0.25)
    assert z.stomatal_blocking(900.0, 1.0) == pytest.approx(0.5)
    assert z.stomatal_blocking(900.0, 0.0) == 0.0
    assert z.stomatal_blocking(150.0, 2.0) == 0.0


def test_scaling_and_cold_hand_worked():
    # hand-worked from Zhang et al. 2003 alpha/beta scaling: HNO3 (10, 10), R_SO2 100,
    # R_O3 1000 -> 1/(0.1 + 0.01) = 9.0909 s/m
    a, b = z.SCALING["HNO3"]
    assert z.scaled(a, b, 100.0, 1000.0) == pytest.approx(9.0909, rel=1e-4)
    assert z.scaled(*z.SCALING["SO2"], 100.0, 1000.0) == pytest.approx(100.0)
    assert z.scaled(*z.SCALING["NO2"], 100.0, 1000.0) == pytest.approx(1250.0)
    # hand-worked from Zhang et al. 2003 low-temperature rule: -3 degC -> exp(0.4) = 1.49182
    assert z.cold_factor(273.15 - 3.0) == pytest.approx(1.491825, rel=1e-6)
    assert z.cold_factor(273.15 - 10.0) == 2.0
    assert z.cold_factor(273.15 + 5.0) == 1.0


def test_erbs_diffuse_fraction():
    # Erbs, Klein and Duffie (1982), Solar Energy 28, 293 (from memory): overcast 1 - 0.09 kt,
    # clear sky 0.165; hand-worked at kt = 0.5: 0.9511 - 0.0802 + 1.097 - 2.07975 + 0.771 = 0.65915
    assert z.diffuse_fraction(0.0, 0.5) == pytest.approx(1.0)
    assert z.diffuse_fraction(0.9 * 1361.0 * 0.5, 0.5) == pytest.approx(0.165)
    assert z.diffuse_fraction(0.5 * 1361.0 * 0.5, 0.5) == pytest.approx(0.65915, rel=1e-4)


def test_rc_is_the_sum_of_its_paths():
    # Zhang et al. 2003 eq. for Rc: 1/Rc = (1 - Wst)/(Rst + Rm) + 1/(Rac + Rg) + 1/Rcut
    for kind in (0.0, 1.0, 2.0):
        out = z.surface_resistances(("SO2", "O3", "NO2", "NH3"), state(sr=700.0, kind=kind))
        for g, p in out.items():
            inv = ((1 - p["stomatal_blocking"]) / (p["stomatal"] + p["mesophyll"])
                   + 1 / (p["canopy_transfer"] + p["ground"]) + 1 / p["cuticle"])
            assert p["rc"] == pytest.approx(1 / inv, rel=1e-9), (g, kind)


def test_dark_closes_stomata_and_lai_zero_removes_leaves():
    night = z.surface_resistance("O3", state(sr=0.0, cosz=-0.2))
    assert np.isinf(night["stomatal"])
    day = z.surface_resistance("O3", state())
    assert np.isfinite(day["stomatal"]) and day["rc"] < night["rc"]
    bare = z.surface_resistance("SO2", state(lai=0.0))
    assert np.isinf(bare["stomatal"]) and np.isinf(bare["cuticle"])
    assert bare["canopy_transfer"] == 0.0
    assert bare["rc"] == pytest.approx(bare["ground"])      # only the ground is left
    assert z.surface_resistance("O3", state(t=273.15 - 10.0))["stomatal"] == np.inf


def test_wet_canopy_so2_small_and_o3_not():
    dry = z.surface_resistance("SO2", state(kind=0.0, rh=0.7))
    dew = z.surface_resistance("SO2", state(kind=1.0, rh=0.97))
    rain = z.surface_resistance("SO2", state(kind=2.0, rh=0.97))
    assert rain["rc"] < dew["rc"] < dry["rc"]
    assert rain["rc"] < 50.0            # common practice: wet leaves take SO2 up fast
    o3_dry = z.surface_resistance("O3", state(kind=0.0, rh=0.7, sr=0.0, cosz=-0.1))
    assert o3_dry["rc"] > 100.0


def test_snow_covers_the_ground():
    bare = z.surface_resistance("SO2", state(t=268.15, snow=0.0))
    snowy = z.surface_resistance("SO2", state(t=268.15, snow=1.0))
    # hand-worked from Zhang et al. 2003 snow rule: R_snow(SO2) = 70 (2 - (-5)) = 490 s/m
    # (its own temperature law; the cold factor 2 acts on the bare ground: 200*2 = 400)
    assert snowy["ground"] == pytest.approx(490.0)
    assert bare["ground"] == pytest.approx(400.0)
    assert snowy["rc"] > bare["rc"]
    assert z.snow_resistance_so2(273.15 + 1.0) == pytest.approx(70.0)
    # NaN snow is "unknown": taken as no snow
    assert z.surface_resistance("SO2", state(t=268.15, snow=np.nan))["rc"] == pytest.approx(
        bare["rc"])


def test_hno3_floor_option():
    on = z.surface_resistance("HNO3", state(kind=2.0))
    off = z.surface_resistance("HNO3", state(kind=2.0, floor=False))
    assert on["rc"] == pytest.approx(10.0) and bool(on["floor_used"])
    assert off["rc"] < 10.0 and not bool(off["floor_used"])


def test_every_class_finite_and_unknown_gas():
    for lu in z.ZHANG_CLASS:
        lai = z.table_values(lu)["lai_max"]
        out = z.surface_resistances(tuple(z.SCALING), state(lu, lai=lai))
        for g, p in out.items():
            assert np.isfinite(p["rc"]) and p["rc"] > 0, (lu, g)
    with pytest.raises(ValueError, match="no alpha/beta"):
        z.surface_resistance("CO", state())
    with pytest.raises(ValueError, match="lai"):
        z.surface_resistance("SO2", state(lai=None))


def test_registered_behind_the_interface():
    mod = gas.get_scheme("zhang2003")
    assert mod.NAME == "zhang2003" and set(mod.SHARED_PATHS) <= set(mod.PATHS)
    alone = gas.surface_resistances(mod, ("SO2",), state())
    assert set(alone["SO2"]) == {"rc", "floor_used", *mod.PATHS}


def _arrays(kind):
    sr = np.array([[0.0, 300.0, 800.0], [0.0, 300.0, 800.0]])
    t = np.full((2, 3), 290.0)
    us = np.array([[0.2, 0.4, 0.6], [0.3, 0.5, 0.9]])
    wet = np.array([[0.0, 1.0, 2.0], [2.0, 0.0, 1.0]])
    lai = np.array([[2.0, 2.0, 2.0], [5.0, 5.0, 5.0]])
    rh = np.full((2, 3), 0.8)
    cz = np.array([[-0.1, 0.4, 0.8], [-0.1, 0.4, 0.8]])
    names = ["grass", "conifer_forest"]
    if kind == "ndarray":
        return np.array(names, dtype=object)[:, None], sr, t, us, wet, lai, rh, cz
    das = [xr.DataArray(a, dims=("receptor", "time")) for a in (sr, t, us, wet, lai, rh, cz)]
    if kind == "dask":
        das = [d.copy(data=dsa.from_array(d.values, chunks=(1, 2))) for d in das]
    return (names, *das)


@pytest.mark.parametrize("kind", ["ndarray", "DataArray", "dask"])
def test_input_types_agree(kind):
    lu, sr, t, us, wet, lai, rh, cz = _arrays(kind)
    st = gas.CanopyState(lu, np.nan, sr, t, wet, 0.0, us, lai=lai, relative_humidity=rh,
                         cos_zenith=cz)
    got = z.surface_resistances(("SO2", "HNO3", "O3"), st)
    ref = z.surface_resistances(("SO2", "HNO3", "O3"), gas.CanopyState(
        *(_arrays("ndarray")[:1]), np.nan, *_arrays("ndarray")[1:3], _arrays("ndarray")[4], 0.0,
        _arrays("ndarray")[3], lai=_arrays("ndarray")[5], relative_humidity=_arrays("ndarray")[6],
        cos_zenith=_arrays("ndarray")[7]))
    for g in got:
        rc = got[g]["rc"]
        if kind != "ndarray":
            assert isinstance(rc, xr.DataArray)
            assert (rc.chunks is not None) == (kind == "dask")
            rc = rc.values
        np.testing.assert_allclose(rc, ref[g]["rc"], rtol=1e-12)
    # floats: one element of the arrays
    one = z.surface_resistance("SO2", gas.CanopyState(
        "conifer_forest", np.nan, 300.0, 290.0, 0.0, 0.0, 0.5, lai=5.0, relative_humidity=0.8,
        cos_zenith=0.4))
    assert float(one["rc"]) == pytest.approx(ref["SO2"]["rc"][1, 1])
