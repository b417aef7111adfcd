"""Wetness and season from the surface state: the dew rules and the LAI season rule."""
import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.drydep import seasons, wetness
from workbench.drydep import wesely1989, zhang2003
from workbench.surface.air import saturation_vapour_pressure, specific_humidity_deficit


def test_surface_temperature_by_hand():
    # bulk transfer H = rho cp (Ts - Ta)/(Ra + Rb,h) (Garratt 1992, ch. 3, from memory),
    # hand-worked: Rb,h = 2/(0.41*0.41) = 11.8977 s/m; Ts = 280 - 24*51.8977/1205.604
    assert wetness.surface_temperature(280.0, -24.0, 40.0, 0.41, 1.2) == pytest.approx(
        278.96687, abs=1e-4)
    assert wetness.surface_temperature(280.0, 0.0, 40.0, 0.41, 1.2) == 280.0


def test_surface_deficit_equals_air_deficit_when_no_flux():
    t, rh, p = 283.15, np.array([0.8, 0.95]), 95000.0
    np.testing.assert_allclose(wetness.surface_humidity_deficit(t, t, rh, p),
                               specific_humidity_deficit(t, rh, p), rtol=1e-12)
    # a surface 2 K below the air at 90 % RH is below the dew point: negative deficit
    # (Magnus form: e_s(8.15 degC)/e_s(10.15 degC) = 0.872 < 0.9)
    assert saturation_vapour_pressure(t - 2.0) / saturation_vapour_pressure(t) < 0.9
    assert wetness.surface_humidity_deficit(t - 2.0, t, 0.9, p) < 0


def test_dew_rule_resolution():
    assert wetness.resolve_dew_rule("scheme", zhang2003) == "surface_temperature"
    assert wetness.resolve_dew_rule("scheme", wesely1989) == "air_temperature"
    assert wetness.resolve_dew_rule("air_temperature", zhang2003) == "air_temperature"
    with pytest.raises(ValueError, match="dew_rule"):
        DryOptions(dew_rule="damp")
    with pytest.raises(ValueError, match="season_rule"):
        DryOptions(season_rule="calendar")


@pytest.fixture(scope="module")
def synthetic():
    surf = make_surfaces()
    return surf, make_met(surf, hours=24 * 150, seed=7)


def test_surface_rule_finds_more_night_dew(synthetic):
    surf, met = synthetic
    base = dict(particles=(), gases=("SO2",))
    air = velocities(met, surf, DryOptions(dew_rule="air_temperature", **base))
    sfc = velocities(met, surf, DryOptions(dew_rule="surface_temperature", **base))
    dew_air = (air["wetness_source"] == 2).sum().item()
    dew_sfc = (sfc["wetness_source"] == 2).sum().item()
    assert dew_sfc > dew_air
    # by day (heat flux up, surface warmer than air) the surface rule finds no more dew
    day = (sfc["sensible_heat_flux"] > 0) & (sfc["wetness_source"] == 2)
    day_air = (air["sensible_heat_flux"] > 0) & (air["wetness_source"] == 2)
    assert day.sum().item() <= day_air.sum().item()
    # "scheme" resolves Wesely (no published rule) to the air rule; the default is the
    # surface rule for both schemes
    by_scheme = velocities(met, surf, DryOptions(dew_rule="scheme", **base))
    np.testing.assert_array_equal(by_scheme["vd_SO2"].values, air["vd_SO2"].values)
    default = velocities(met, surf, DryOptions(**base))
    np.testing.assert_array_equal(default["vd_SO2"].values, sfc["vd_SO2"].values)
    # SO2 deposits faster on the wetter surface
    assert float(sfc["vd_SO2"].mean()) > float(air["vd_SO2"].mean())


def test_category_from_lai_rules():
    # a deciduous cycle (ours, docs/methods_dry.md section 7): share >= 0.75 lush (1),
    # <= 0.25 dormant (3), greening 5, browning 2
    lai = np.array([1, 1, 1.5, 2.5, 3.5, 4, 4, 3.5, 2.5, 1.5, 1, 1.0])
    cat, src = seasons.category_from_lai(lai, np.full(12, 9.0))
    assert cat.tolist() == [3, 3, 3, 5, 1, 1, 1, 1, 2, 3, 3, 3]
    assert (src == 4).all()
    # evergreen (no change through the year): the month rule's category, source 0
    cat, src = seasons.category_from_lai(np.full(12, 5.0), np.arange(12.0))
    assert cat.tolist() == list(range(12)) and (src == 0).all()


@pytest.mark.parametrize("lo, hi", [(0.5, 5.0), (2.5, 5.0), (1.0, 2.5), (0.1, 3.5),
                                     (1.0, 2.0), (0.5, 3.0), (0.1, 1.0), (0.6, 2.4)])
def test_category_from_lai_on_the_seasonal_cosine_does_not_hang_on_rounding(lo, hi):
    # The seasonal cosine (landuse.seasonal_lai, peak in July) puts a month's share of
    # the year's LAI range at (1 + cos(2 pi (m - 7)/12))/2, exactly 1/4 in March and
    # November and 3/4 in May and September (cos(2 pi/3) = -1/2, cos(pi/3) = 1/2:
    # trigonometry), so the documented rule (share >= 0.75 lush, <= 0.25 dormant; ours,
    # docs/methods_dry.md section 7) gives the same twelve categories for every LAI
    # range.  The code before gave March 5 and November 2 for five of the default ranges
    # (shares of 0.2500000000000001 in floating point) and 3 for the others, and May 5
    # and September 2 for a site's 0.6-2.4 (0.7499999999999999).
    from workbench import landuse
    share = [(1 + np.cos(2 * np.pi * (m - 7) / 12)) / 2 for m in range(1, 13)]
    assert share[2] == pytest.approx(0.25) and share[4] == pytest.approx(0.75)
    lai = landuse.seasonal_lai(lo, hi, np.arange(1, 13), 54.5)
    cat, _ = seasons.category_from_lai(lai, np.full(12, 9.0))
    assert cat.astype(int).tolist() == [3, 3, 3, 5, 1, 1, 1, 1, 1, 2, 3, 3]


def test_surface_state_season_through_the_engine(synthetic):
    surf, met = synthetic
    lai = surf["lai"].copy()
    # a harvested field: green in May, bare from June on
    crop = np.array([0.3, 0.3, 0.5, 1.5, 3.5, 0.2, 0.2, 0.2, 0.2, 0.2, 0.2, 0.2])
    lai.loc[dict(site="bramble_moor", receptor="grass")] = crop
    s2 = surf.assign(lai=lai)
    opt = DryOptions(particles=(), gases=("SO2",), season_rule="surface_state")
    ds = velocities(met, s2, opt)
    cat = ds["seasonal_category"].sel(site="bramble_moor", receptor="grass")
    month = (ds["time"] - np.timedelta64(30, "m")).dt.month      # of the hour's middle
    assert (cat.where(month == 5, drop=True) == 1).all()          # green
    assert (cat.where(month == 4, drop=True) == 5).all()          # greening
    src = ds["seasonal_source"].sel(site="bramble_moor")
    assert (src.sel(receptor="grass") == 4).all()
    # each receptor by its own LAI: the deciduous stand beside the field is green in May
    # (its class range peaks in July), not dormant with the harvested field in June; the
    # evergreen conifer keeps the month rule (source 0)
    dec = ds["seasonal_category"].sel(site="bramble_moor", receptor="deciduous_forest")
    assert (dec.where(month == 5, drop=True) == 1).all()
    assert (src.sel(receptor="deciduous_forest") == 4).all()
    assert (src.sel(receptor="conifer_forest") == 0).all()
    assert (ds["seasonal_category"].sel(site="bramble_moor", receptor="conifer_forest").where(
        month == 5, drop=True) == 5).all()
    month_rule = velocities(met, s2, DryOptions(particles=(), gases=("SO2",),
                                                season_rule="month"))
    default = velocities(met, s2, DryOptions(particles=(), gases=("SO2",)))
    np.testing.assert_array_equal(default["seasonal_category"].values,
                                  ds["seasonal_category"].values)
    assert (month_rule["seasonal_category"].sel(site="bramble_moor", receptor="grass").where(
        month == 5, drop=True) == 5).all()
    # the same hours through dask blocks (the frost rule found beforehand)
    lazy = velocities(met.chunk({"time": 24 * 10}), s2, opt).compute()
    np.testing.assert_array_equal(lazy["seasonal_category"].values, ds["seasonal_category"].values)
    np.testing.assert_allclose(lazy["vd_SO2"].values, ds["vd_SO2"].values, rtol=1e-12)
