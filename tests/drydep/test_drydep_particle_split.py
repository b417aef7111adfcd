"""Particle size split per site, growth by the species' own law (sources beside each check)."""
import numpy as np
import pytest
import xarray as xr

from workbench.drydep import particle_fractions as pf
from workbench.drydep import particles as p
from workbench.drydep.options import (COARSE_DUST, COARSE_SEA_SALT, FINE_MODE, FINE_NITRATE,
                                      DryOptions, ParticleSpec, default_particle_modes)


# --- growth laws ---------------------------------------------------------------------------
def test_kappa_growth_of_ammonium_nitrate():
    # kappa-Koehler without the Kelvin term: GF^3 = 1 + kappa RH/(1-RH) (Petters and
    # Kreidenweis 2007, Eq. 11); kappa(NH4NO3) = 0.67 (their Table 1, from memory).
    d = 0.4e-6
    gf = p.wet_diameter(d, 0.8, "ammonium_nitrate") / d
    assert gf == pytest.approx((1 + 0.67 * 4.0) ** (1 / 3), rel=1e-12)
    # measured NH4NO3 growth factor at 80 % RH about 1.5-1.6 (Tang and Munkelwitz
    # 1994, J. Geophys. Res. 99, 18801; from memory)
    assert 1.45 < gf < 1.65
    # capped at RH 0.99 like the Gerber laws; dry air: dry size; NaN stays NaN
    assert p.wet_diameter(d, 1.0, "ammonium_nitrate") == p.wet_diameter(d, 0.99, "ammonium_nitrate")
    assert p.wet_diameter(d, 0.0, "ammonium_nitrate") == d
    assert np.isnan(p.wet_diameter(d, np.nan, "ammonium_nitrate"))


def test_kappa_and_gerber_ammonium_sulfate_close():
    # two published laws for a similar salt agree within 15 % at RH 0.6-0.95 (kappa of
    # (NH4)2SO4 0.61, Petters and Kreidenweis 2007, from memory; Gerber constants of
    # Zhang et al. 2001): a consistency check of the kappa form.
    d = 0.4e-6
    for rh in (0.6, 0.8, 0.9, 0.95):
        gerber = p.wet_diameter(d, rh, "ammonium_sulfate") / d
        kappa = (1 + 0.61 * rh / (1 - rh)) ** (1 / 3)
        assert kappa == pytest.approx(gerber, rel=0.15), rh


def test_default_modes_use_each_species_own_growth():
    m = default_particle_modes()
    assert m["pNO3"].fine.growth == "ammonium_nitrate"
    assert m["pSO4"].fine.growth == m["pNH4"].fine.growth == "ammonium_sulfate"
    assert m["pNa"].coarse.growth == m["pCl"].coarse.growth == "sea_salt"
    # sea-salt growth only for the sea-salt mode: inland coarse nitrate sits on dust
    assert m["pNO3"].coarse.growth == "none"
    assert pf.COASTAL["pNO3"][1].growth == "sea_salt"


# --- coarse fraction per site --------------------------------------------------------------
def _surf(dist_km, coarse_no3=None):
    ds = xr.Dataset({"coast_distance": ("site", 1e3 * np.asarray(dist_km, float))},
                    coords={"site": [f"s{i}" for i in range(len(dist_km))]})
    if coarse_no3 is not None:
        ds["coarse_fraction_pNO3"] = ("site", np.asarray(coarse_no3, float))
    return ds


def test_coastal_inland_rule_and_site_key():
    surf = _surf([5.0, 200.0, np.nan, 5.0], coarse_no3=[np.nan, np.nan, np.nan, 0.1])
    weights, coarse, source = pf.mode_weights(surf, "pNO3", DryOptions())
    np.testing.assert_allclose(coarse, [0.5, 0.2, 0.2, 0.1])
    assert source.tolist() == [2, 3, 4, 0]
    w = dict(weights)
    np.testing.assert_allclose(w[FINE_NITRATE], [0.5, 0.8, 0.8, 0.9])
    # a coastal site's coarse nitrate sits on sea salt, also with its own fraction
    np.testing.assert_allclose(w[COARSE_SEA_SALT], [0.5, 0, 0, 0.1])
    np.testing.assert_allclose(w[COARSE_DUST], [0, 0.2, 0.2, 0])
    np.testing.assert_allclose(sum(w.values()), 1.0)
    # fine sulfate everywhere: one mode only
    weights, coarse, _ = pf.mode_weights(surf, "pSO4", DryOptions())
    assert [m for m, _ in weights] == [FINE_MODE] and not coarse.any()


def test_option_split_applies_everywhere_but_site_key_wins():
    spec = ParticleSpec(FINE_NITRATE, COARSE_SEA_SALT, 0.3)
    opt = DryOptions(particle_modes={**default_particle_modes(), "pNO3": spec})
    weights, coarse, source = pf.mode_weights(_surf([5.0, 200.0], [np.nan, 0.0]), "pNO3", opt)
    np.testing.assert_allclose(coarse, [0.7, 0.0])
    assert source.tolist() == [1, 0]
    np.testing.assert_allclose(dict(weights)[COARSE_SEA_SALT], [0.7, 0.0])


def test_sites_key_and_scenario_override(tmp_path):
    from workbench.errors import InputError
    from workbench.io.sites import read_sites
    from workbench.pipeline import Study
    from drydep.dry_synthetic import ONE_SITE_TOML as base
    f = tmp_path / "sites.toml"
    f.write_text(base + "coast_distance_km = 12.0\ncoarse_fraction = {pNO3 = 0.35}\n")
    cat = read_sites(f)
    surf = cat.surfaces()
    assert float(surf["coast_distance"][0]) == 12e3
    assert float(surf["coarse_fraction_pNO3"][0]) == 0.35
    f.write_text(base + "coarse_fraction = {pNO3 = 1.5}\n")
    with pytest.raises(InputError, match="line 12.*coarse_fraction.*0 to 1"):
        read_sites(f)
    f.write_text(base + "coarse_fraction = {NO3 = 0.5}\n")
    with pytest.raises(InputError, match="unknown particle species"):
        read_sites(f)
    # the scenario's [sites.<id>] override reaches the surfaces
    f.write_text(base)

    class _Inputs:
        catalogue = read_sites(f)
    study = Study(_Inputs(), {"a": {"coarse_fraction": {"pNO3": 0.6}, "coast_distance_km": 3.0}})
    surf = study.surfaces()
    assert float(surf["coarse_fraction_pNO3"][0]) == 0.6 and float(surf["coast_distance"][0]) == 3e3


def test_scenario_accepts_the_site_keys():
    from workbench.scenario import SITE_OVERRIDES
    assert {"coarse_fraction", "coast_distance_km"} <= set(SITE_OVERRIDES)
