"""Bidirectional NH3: compensation point, cuticle, exchange, and through the engine."""
import dataclasses

import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.drydep import nh3_bidirectional as nh3

M_NH3 = 17.031e-3  # kg mol-1 (IUPAC atomic weights)


def test_compensation_point_against_thermodynamics():
    # chi_s of Nemitz et al. (2000) (from memory) against the equilibrium
    # NH4+ = NH3(aq) + H+ (Ka = 10^-9.245 M at 25 degC, CRC Handbook, from memory) and
    # Henry's law for NH3 (KH about 60 M/atm at 25 degC, Sander 2015 compilation, from
    # memory): chi = Gamma Ka / (KH R T)
    gamma, t = 500.0, 298.15
    ka, kh, r_atm = 10 ** -9.245, 60.0, 0.082057e-3     # M, M atm-1, m3 atm mol-1 K-1
    thermo = gamma * ka / (kh * r_atm * t)             # mol m-3
    assert nh3.stomatal_compensation_point(gamma, t) == pytest.approx(thermo, rel=0.15)
    # hand-worked from Nemitz et al. 2000: 161500/298.15 exp(-10380/298.15) = 4.1169e-13 M
    assert nh3.stomatal_compensation_point(1.0, 298.15) == pytest.approx(4.1169e-10, rel=1e-3)
    # hand-worked from the same formula, 20 -> 25 degC:
    # (293.15/298.15) exp(10380 (1/293.15 - 1/298.15)) = 0.983230 * 1.810937 = 1.78057
    ratio = (nh3.stomatal_compensation_point(1.0, 298.15)
             / nh3.stomatal_compensation_point(1.0, 293.15))
    assert ratio == pytest.approx(1.78057, rel=1e-4)


def test_cuticular_resistance_hand_worked():
    # hand-worked from Massad et al. 2010 (from memory): RH 88 %, AR 1: 31.5 exp(12/12)
    assert nh3.cuticular_resistance(0.88, 1.0) == pytest.approx(31.5 * np.e)
    assert nh3.cuticular_resistance(0.88, 2.0) == pytest.approx(31.5 * np.e / 2)
    assert nh3.cuticular_resistance(0.2, 1.0) == nh3.R_W_MAX


def test_exchange_identities():
    ra, rb, rs, rw, chi_s = 30.0, 10.0, 200.0, 100.0, 2e-7
    vd, e = nh3.exchange(ra, rb, rs, rw, chi_s)
    assert vd == pytest.approx(1.0 / (ra + rb + 1.0 / (1 / rs + 1 / rw)))
    for chi_a in (0.0, 1e-7, 5e-7):
        chi_c = nh3.canopy_concentration(chi_a, ra, rb, rs, rw, chi_s)
        assert nh3.net_flux(chi_a, vd, e) == pytest.approx((chi_a - chi_c) / (ra + rb))
    # compensation: no net flux where chi_a = chi_c
    chi_comp = e / vd
    assert nh3.net_flux(chi_comp, vd, e) == pytest.approx(0.0, abs=1e-20)
    assert nh3.net_flux(0.0, vd, e) < 0                       # clean air: emission
    vd0, e0 = nh3.exchange(ra, rb, np.inf, rw, chi_s)          # closed stomata
    assert e0 == 0.0 and vd0 == pytest.approx(1.0 / (ra + rb + rw))


@pytest.fixture(scope="module")
def summer():
    surf = make_surfaces()
    met = make_met(surf, start="2021-06-01T01:00", hours=24 * 30, seed=2)
    opt = DryOptions(nh3_treatment="bidirectional", particles=(), gases=("SO2", "NH3"),
                     nh3_emission_potential={"crops": 2000.0, "alder_hill/grass": 800.0})
    return surf, met, velocities(met, surf, opt), velocities(met, surf, DryOptions(
        particles=(), gases=("SO2", "NH3")))


def test_engine_writes_bidirectional_beside_deposition_only(summer):
    _, _, bd, dep = summer
    np.testing.assert_array_equal(bd["vd_NH3"].values, dep["vd_NH3"].values)
    for v in ("vd_NH3_bidirectional", "nh3_emission_flux", "nh3_compensation_point"):
        assert v in bd and "units" in bd[v].attrs
    water = dict(site="alder_hill", receptor="water")
    np.testing.assert_allclose(bd["vd_NH3_bidirectional"].sel(**water), bd["vd_NH3"].sel(**water))
    assert float(bd["nh3_emission_flux"].sel(**water).max()) == 0.0


def test_fertilised_crop_emits_in_clean_summer_air(summer):
    _, _, bd, _ = summer
    crops = dict(site="bramble_moor", receptor="crops")
    forest = dict(site="bramble_moor", receptor="conifer_forest")
    chi_a = 1e-6 / M_NH3 * 1e-3        # 1 ug/m3 [mol m-3]
    f_crop = nh3.net_flux(chi_a, bd["vd_NH3_bidirectional"].sel(**crops),
                          bd["nh3_emission_flux"].sel(**crops)).mean().item()
    f_forest = nh3.net_flux(chi_a, bd["vd_NH3_bidirectional"].sel(**forest),
                            bd["nh3_emission_flux"].sel(**forest)).mean().item()
    assert f_crop < 0 < f_forest           # the sign flips between the two surfaces
    # the per-site override reaches its receptor only
    g_site = bd["nh3_compensation_point"].sel(site="alder_hill", receptor="grass").mean().item()
    g_other = bd["nh3_compensation_point"].sel(site="bramble_moor", receptor="grass").mean().item()
    assert g_site > 5 * g_other


def test_options_refuse_unknown_classes():
    with pytest.raises(ValueError, match="nh3_emission_potential"):
        DryOptions(nh3_emission_potential={"orchard": 100.0})
    with pytest.raises(ValueError, match="nh3_acid_ratio"):
        DryOptions(nh3_acid_ratio=0.0)


# --- the deposition-only NH3 with the humidity-dependent cuticle (`[dry] nh3_cuticle`) ---------
def test_nh3_cuticle_auto_by_scheme():
    from workbench.drydep import gas, nh3_bidirectional as nb
    assert nb.resolve_cuticle("auto", gas.get_scheme("wesely1989")) == "humidity"
    assert nb.resolve_cuticle("auto", gas.get_scheme("zhang2003")) == "scheme"
    assert nb.resolve_cuticle("scheme", gas.get_scheme("wesely1989")) == "scheme"
    with pytest.raises(ValueError, match="nh3_cuticle"):
        DryOptions(nh3_cuticle="wet")


def test_humidity_cuticle_is_the_canopy_models_vd_without_emission():
    # Massad et al. (2010) R_w beside the scheme's stomata: vd_NH3 (deposition only)
    # equals the compensation point model's Vd on leaves; the scheme's Rc elsewhere
    from drydep.dry_synthetic import make_met, make_surfaces
    from workbench.drydep import velocities
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 10, seed=4)
    opt = DryOptions(particles=(), gases=("NH3",), nh3_treatment="bidirectional")
    hum = velocities(met, surf, opt)
    own = velocities(met, surf, dataclasses.replace(opt, nh3_cuticle="scheme"))
    assert hum.attrs["nh3_cuticle"] == "humidity" and own.attrs["nh3_cuticle"] == "scheme"
    for rec in ("grass", "conifer_forest", "crops", "wetland"):
        a = hum["vd_NH3"].sel(receptor=rec).values
        ok = np.isfinite(a)                  # NaN where the scheme's own Rc is unknown
        np.testing.assert_array_equal(~ok, np.isnan(own["rc_NH3"].sel(receptor=rec).values))
        np.testing.assert_allclose(a[ok], hum["vd_NH3_bidirectional"].sel(
            receptor=rec).values[ok], rtol=1e-12)
        if rec != "wetland":        # the single-layer model has no open-water ground
            assert float(hum["vd_NH3"].sel(receptor=rec).mean()) > \
                float(own["vd_NH3"].sel(receptor=rec).mean())
    for rec in ("water", "barren", "snow_ice"):          # no leaves: the scheme's Rc
        np.testing.assert_array_equal(hum["vd_NH3"].sel(receptor=rec).values,
                                      own["vd_NH3"].sel(receptor=rec).values)
    # the scheme rule is Wesely's own Rc: Vd = 1/(Ra + Rb + Rc_scheme)
    np.testing.assert_allclose(own["vd_NH3"].values, 1.0 / (own["ra"] + own["rb_NH3"]
                                                             + own["rc_NH3"]).values, rtol=1e-12)
    # humidity dependence: on a closed-stomata canopy Rc = R_w, falling with RH
    from workbench.drydep import nh3_bidirectional as nb
    rh = np.array([0.5, 0.7, 0.9, 1.0])[None, None, :]
    paths = {"rc": np.full((1, 1, 4), 900.0), "stomatal": np.full((1, 1, 4), np.inf)}
    rc = nb.humidity_cuticle_rc(paths, rh, ["grass"])
    np.testing.assert_allclose(rc, 31.5 * np.exp((100 - 100 * rh) / 12.0))   # Massad 2010
    assert nb.humidity_cuticle_rc(paths, rh, ["water"]).tolist() == paths["rc"].tolist()
