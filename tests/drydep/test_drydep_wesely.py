"""Wesely (1989) surface resistances: limits and shapes, by hand where possible."""
import dask.array as da
import numpy as np
import pytest
import xarray as xr

from workbench.drydep import wesely1989 as w
from workbench.drydep.gas import CanopyState
from workbench.landuse import LAND_USE

VEGETATED = ("conifer_forest", "deciduous_forest", "mixed_forest", "grass", "crops", "moorland", "wetland")


def rc(gas, land_use, cat=1.0, solar=600.0, temp=293.15, kind=0.0, slope=0.0):
    return w.surface_resistance(gas, CanopyState(land_use, cat, solar, temp, kind, slope))


def test_mesophyll_by_hand():
    # Wesely (1989), Eq. 6: SO2 1/(1e5/3000) = 0.03 s/m; O3 1/(0.01/3000 + 100) ~ 0.01
    assert w.mesophyll_resistance(1e5, 0.0) == pytest.approx(0.03)
    assert w.mesophyll_resistance(0.01, 1.0) == pytest.approx(0.01, rel=1e-5)


def test_stomatal_response_by_hand():
    # Eq. 3 at G = 200 W/m2, Ts = 20 degC, ri = 100: 100 * (1 + (200/200.1)^2) * 400/400
    assert w.stomatal_resistance(100.0, 200.0, 293.15) == pytest.approx(
        100 * (1 + (200 / 200.1) ** 2), rel=1e-12)


@pytest.mark.parametrize("tc", [0.2, 0.5, 0.9, 39.5])
def test_stomatal_response_near_the_temperature_limits_by_hand(tc):
    # Wesely (1989), Eq. 3, written out by hand: r_s = r_i [1 + (200/(G + 0.1))^2]
    # [400/(Ts (40 - Ts))] for 0 < Ts < 40 degC, with no other bound on Ts (from memory).
    # At Ts = 0.5 degC, G = 200 W/m2, r_i = 250 s/m (Table 1, conifer, category 3):
    # 250 * 1.9990 * 400/(0.5 * 39.5) = 10 121 s/m.  The code clipped Ts to 1-39 degC
    # before and gave 5 125 s/m there (stomata twice as open as the equation's).
    ri, g = 250.0, 200.0
    want = ri * (1 + (200 / (g + 0.1)) ** 2) * 400 / (tc * (40 - tc))
    assert w.stomatal_resistance(ri, g, 273.15 + tc) == pytest.approx(want, rel=1e-9)
    assert 250 * 1.999 * 400 / (0.5 * 39.5) == pytest.approx(10121, rel=1e-4)  # the hour above


@pytest.mark.parametrize("land_use", VEGETATED)
def test_stomata_closed_at_night_and_in_frost(land_use):
    day = rc("O3", land_use, solar=600.0)["stomatal"]
    night = rc("O3", land_use, solar=0.0)["stomatal"]
    frost = rc("O3", land_use, solar=600.0, temp=271.15)["stomatal"]
    hot = rc("O3", land_use, solar=600.0, temp=315.15)["stomatal"]
    assert night > 1e5 * day  # 1/(rs) is effectively 0 at night
    assert np.isinf(frost) and np.isinf(hot)


@pytest.mark.parametrize("land_use", VEGETATED)
def test_so2_wet_versus_dry(land_use):
    # Wesely (1989): wet leaves cut SO2's upper-canopy resistance from ~2000 to ~100 s/m.
    # At night (no stomata) Rc over forests falls about tenfold (here: at least
    # fivefold); over short vegetation the ground path (rac + rgsS) already bounds the
    # dry value, so the fall is smaller (here: at least twofold).
    dry = rc("SO2", land_use, solar=0.0)["rc"]
    dew = rc("SO2", land_use, solar=0.0, kind=1.0)["rc"]
    rain = rc("SO2", land_use, solar=0.0, kind=2.0)["rc"]
    factor = 5.0 if land_use.endswith("forest") else 2.0
    assert dry > factor * dew and dew >= rain


def test_so2_over_water_tiny():
    assert rc("SO2", "water")["rc"] < 2.0
    assert rc("SO2", "water")["rc"] < rc("SO2", "grass")["rc"] / 50


def test_hno3_floor_and_cold_increase():
    # Erisman et al. (1994): Rc(HNO3) = max(10, -2 Ts) s/m (from memory)
    r = rc("HNO3", "conifer_forest", temp=293.15)
    assert r["rc"] == pytest.approx(10.0) and r["floor_used"]
    r = rc("HNO3", "conifer_forest", temp=263.15)
    assert r["rc"] >= 20.0 - 1e-9


def test_terrain_slope_lowers_convection_path():
    assert rc("SO2", "grass", slope=10.0)["convection"] < rc("SO2", "grass", slope=0.0)["convection"]


def test_reactive_and_soluble_order():
    # Without stomata (night) the non-stomatal paths rank the gases by solubility and
    # reactivity. (By day NO2 may pass SO2 through the stomata, where the diffusivity
    # ratio favours NO2; the daily means are checked in test_drydep_velocities.)
    for lu in VEGETATED:
        r = {g: rc(g, lu, solar=0.0)["rc"] for g in ("HNO3", "SO2", "NO2", "O3")}
        assert r["HNO3"] <= r["SO2"] < r["NO2"]


@pytest.mark.parametrize("cat", [1, 2, 3, 4, 5])
def test_all_classes_all_categories_finite(cat):
    for lu in LAND_USE:
        for g in ("SO2", "HNO3", "NH3", "NO2", "O3"):
            v = rc(g, lu, cat=float(cat))["rc"]
            assert np.isfinite(v) and v >= 0


def test_nan_propagates():
    st = CanopyState(("grass",), np.array([1.0, np.nan, 1.0, 1.0]), np.array([600.0, 600, np.nan, 600]),
                     np.array([293.0, 293, 293, np.nan]), 0.0)
    out = w.surface_resistance("SO2", st)["rc"]
    assert np.isfinite(out[0]) and np.isnan(out[1:]).all()


def test_dataarray_and_dask_lookup_match_numpy():
    cats = np.array([1.0, 2.0, 3.0, 4.0, 5.0, np.nan])
    rec = ("conifer_forest", "water", "crops")
    expect = np.array([[rc("O3", lu, cat=c)["rc"] for c in cats] for lu in rec])
    for arr in (cats, da.from_array(cats, chunks=2)):
        cat = xr.DataArray(arr, dims="time")
        st = CanopyState(rec, cat, 600.0, 293.15, 0.0)
        out = w.surface_resistance("O3", st)["rc"].transpose("receptor", "time")
        np.testing.assert_allclose(out.values, expect)


def test_several_gases_at_once_equal_one_by_one():
    # surface_resistances shares the gas-independent work; nothing may leak between gases
    rng = np.random.default_rng(2)
    n = 300
    rec = np.array(["conifer_forest", "water", "crops", "urban", "snow_ice", "wetland"],
                   dtype=object)[None, :, None]
    cat = rng.integers(1, 6, (2, 1, n)).astype(float)
    solar = rng.uniform(0.0, 900.0, (2, 1, n))
    temp = rng.uniform(255.0, 310.0, (2, 1, n))
    kind = rng.integers(0, 3, (2, 6, n)).astype(float)
    for a, step in ((cat, 31), (solar, 37), (temp, 41), (kind, 43)):
        a.flat[::step] = np.nan
    st = CanopyState(rec, cat, solar, temp, kind, np.array([0.0, 4.0])[:, None, None])
    gases = ("SO2", "HNO3", "NH3", "NO2", "O3")
    together = w.surface_resistances(gases, st)
    for g in gases:
        alone = w.surface_resistance(g, st)
        assert set(alone) == set(together[g]) == {"rc", "floor_used", *w.PATHS}
        for k in alone:
            np.testing.assert_array_equal(together[g][k], alone[k], err_msg=f"{g} {k}")
    assert np.isnan(together["SO2"]["rc"]).any() and np.isfinite(together["SO2"]["rc"]).any()


def test_reciprocal_array_path_equals_where_form():
    r = np.array([0.0, 1e-12, 1e-9, 2.0, 1e30, np.inf, np.nan])
    where_form = np.where(r == 0, np.inf, 1.0 / np.maximum(r, w._R_TINY))
    np.testing.assert_array_equal(w._recip(r), where_form)
    np.testing.assert_array_equal(w._recip(r.reshape(1, -1, 1)).ravel(), where_form)
    assert where_form[0] == np.inf and where_form[5] == 0.0 and where_form[1] == where_form[2]


def test_reciprocal_in_place_and_fast_branch_equal_the_where_form():
    # _recip_array: 1/r when no value is below the tiny resistance, else the masked form
    for r in (np.array([2.0, 1e30, np.inf, np.nan, 1e-9]),
              np.array([0.0, 1e-12, 3.0, np.nan]), np.array([np.nan, np.nan])):
        want = np.where(r == 0, np.inf, 1.0 / np.maximum(r, w._R_TINY))
        np.testing.assert_array_equal(w._recip_array(r), want)
        buf = r.copy()
        np.testing.assert_array_equal(w._recip_array(buf, out=buf), want)


def _random_state(seed, n=400, bad_category=False):
    rng = np.random.default_rng(seed)
    rec = np.array(sorted(w.WESELY_CLASS), dtype=object)[None, :, None]
    cat = rng.integers(1, 6, (3, 1, n)).astype(float)
    if bad_category:
        cat[0, 0, :5] = np.inf
    solar = rng.uniform(0.0, 900.0, (3, 1, n))
    temp = rng.uniform(250.0, 318.0, (3, 1, n))  # below 0 and above 40 degC included
    kind = rng.integers(0, 3, (3, len(rec.ravel()), n)).astype(float)
    for a, step in ((cat, 29), (solar, 37), (temp, 41), (kind, 43)):
        a.flat[::step] = np.nan
    return CanopyState(rec, cat, solar, temp, kind, np.array([0.0, 4.0, 10.0])[:, None, None])


@pytest.mark.parametrize("seed,block", [(3, None), (4, None), (4, 500)])
def test_numpy_path_equals_the_general_path(seed, block, monkeypatch):
    """wesely1989_numpy (what the engine runs on numpy) against the general path, every path.

    With ``block`` the numpy path runs in blocks of that many elements (as on large arrays).
    """
    from workbench.drydep import wesely1989_numpy as fast
    from workbench.surface import _array
    if block:
        monkeypatch.setattr(_array, "BLOCK_ELEMENTS", block)
    st = _random_state(seed, bad_category=seed == 4)
    gases = ("SO2", "HNO3", "NH3", "NO2", "O3")
    want = w.surface_resistances(gases, st)
    got = fast.surface_resistances(gases, st)
    for g in gases:
        assert set(got[g]) == set(want[g])
        for k in want[g]:
            a, b = np.broadcast_arrays(got[g][k], want[g][k])
            np.testing.assert_array_equal(np.isnan(a), np.isnan(b), err_msg=f"{g} {k}")
            np.testing.assert_allclose(a, b, rtol=1e-14, atol=0.0, err_msg=f"{g} {k}")
    rc = got["SO2"]["rc"]
    assert np.isnan(rc).any() and np.isfinite(rc).any() and got["HNO3"]["floor_used"].any()


def test_scheme_registry_takes_the_numpy_path_for_numpy_only():
    from workbench.drydep import gas
    st = _random_state(5, n=20)
    via = gas.surface_resistances(w, ("SO2",), st)["SO2"]["rc"]
    np.testing.assert_allclose(via, w.surface_resistances(("SO2",), st)["SO2"]["rc"],
                               rtol=1e-14)
    assert gas._plain_numpy(st)
    for one in (CanopyState("grass", 1.0, 500.0, 290.0, 0.0),  # scalars and 1-d input
                CanopyState(("grass", "water"), np.array([1.0, np.nan]), 10.0, 260.0,
                            np.array([2.0, 1.0]))):
        got = gas.surface_resistances(w, ("SO2", "HNO3"), one)
        want = w.surface_resistances(("SO2", "HNO3"), one)
        for g in got:
            assert np.shape(got[g]["rc"]) == np.shape(want[g]["rc"])
            np.testing.assert_allclose(got[g]["rc"], want[g]["rc"], rtol=1e-14)
    assert not gas._plain_numpy(CanopyState(("grass",), xr.DataArray([1.0]), 500.0, 290.0, 0.0))


def test_numpy_path_applies_the_codeposition_option_as_the_general_path():
    """The SO2-NH3 co-deposition hook runs on the numpy path too (what the engine runs),
    with the same Rc and the same hours marked as the general path."""
    import dataclasses

    from workbench.drydep import wesely1989_numpy as fast
    st = _random_state(7)
    rng = np.random.default_rng(7)
    shape = (3, len(w.WESELY_CLASS), 400)
    st = dataclasses.replace(st, nh3_so2_ratio=rng.uniform(0.1, 5.0, shape),
                             relative_humidity=rng.uniform(0.4, 1.0, shape))
    want = w.surface_resistances(("SO2",), st)["SO2"]
    got = fast.surface_resistances(("SO2",), st)["SO2"]
    assert want["codeposition_used"].any()
    np.testing.assert_array_equal(got["codeposition_used"], want["codeposition_used"])
    np.testing.assert_allclose(got["rc"], want["rc"], rtol=1e-14, atol=0.0)
