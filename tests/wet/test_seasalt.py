"""Sea-salt correction at the PWM level.

Reference composition of seawater: Millero, Feistel, Wright and McDougall (2008),
"The composition of Standard Seawater and the definition of the Reference-
Composition Salinity Scale", Deep-Sea Res. I 55, 50-72, Table 4 (mol kg-1 of
solution at S = 35; values from memory).  The ratios under test are those of
Keene et al. (1986), J. Geophys. Res. 91, 6647, Table 1 (from memory).
"""
import numpy as np
import pytest
from wet.wet_samples import make_samples, week

from workbench import species
from workbench.wet import WetOptions, screen, wet_deposition
from workbench.wet.seasalt import SEAWATER_EQ_RATIO_TO_NA, non_seasalt, seawater_ratio

MILLERO_2008_MOL_KG = {"Na": 0.4689674, "Mg": 0.0528171, "Ca": 0.0102821, "K": 0.0102077,
                       "Cl": 0.5458696, "SO4": 0.0282352}


@pytest.mark.parametrize("ion", ["Cl", "SO4", "Mg", "Ca", "K"])
def test_keene_ratios_agree_with_reference_seawater(ion):
    # equivalent ratio X/Na of Millero et al. (2008) vs Keene et al. (1986), within 1.5 %
    m = MILLERO_2008_MOL_KG
    eq = (m[ion] * species.get(ion).eq_per_mol) / (m["Na"] * species.get("Na").eq_per_mol)
    assert SEAWATER_EQ_RATIO_TO_NA[ion] == pytest.approx(eq, rel=0.015)


def test_sulfate_ratio_is_0121_in_equivalents():
    # the stated value, Keene et al. (1986): SO4/Na = 0.121 eq/eq
    assert seawater_ratio("SO4") * 2 == pytest.approx(0.121)


def _seawater_samples(dilution, n=4):
    rows = []
    for k in range(n):
        s, e = week(np.datetime64("2021-03-01") + np.timedelta64(7 * k, "D"))
        umol = {ion: MILLERO_2008_MOL_KG[ion] * 1e6 / dilution * (1 + 0.5 * k)
                for ion in MILLERO_2008_MOL_KG}
        rows.append(dict(start=s, end=e, gauge_depth=5.0 + 3 * k, pH=5.6, **umol))
    return make_samples(rows, ions=("SO4", "Na", "Cl", "Mg", "Ca", "K"))


@pytest.mark.parametrize("tracer", ["Na", "Mg", "Cl"])
def test_seawater_composition_leaves_nss_sulfate_near_zero(tracer):
    ds = _seawater_samples(dilution=5000)
    wet = wet_deposition(screen(ds), "month", WetOptions(seasalt_tracer=tracer))
    total = wet["pwm_SO4"].isel(site=0, period=0).item()
    nss = wet["pwm_nssSO4"].isel(site=0, period=0).item()
    assert abs(nss) < 0.02 * total
    assert wet["pwm_nssSO4"].attrs["seasalt_tracer"] == tracer
    for ion in ("Ca", "K"):
        v = wet[f"pwm_nss{ion}"].isel(site=0, period=0).item()
        assert abs(v) < 0.02 * wet[f"pwm_{ion}"].isel(site=0, period=0).item()


def test_nss_is_not_clipped_and_is_linear():
    # a slightly sulfate-poor sample gives a negative nss value, kept as it is
    assert non_seasalt(0.9 * seawater_ratio("SO4"), 1.0, "SO4") < 0
    # linear: nss of the PWM equals the PWM of per-sample nss (same weights)
    c = np.array([0.02, 0.05]); na = np.array([0.1, 0.3]); p = np.array([4.0, 9.0])
    pwm = lambda x: np.sum(x * p) / np.sum(p)
    assert non_seasalt(pwm(c), pwm(na), "SO4") == pytest.approx(pwm(non_seasalt(c, na, "SO4")))


def test_nss_added_to_polluted_rain():
    # 20 umol/L SO4 with 10 umol/L Na: nss = 20 - 0.0605 * 10 umol/L
    s, e = week("2021-05-03")
    ds = make_samples([dict(start=s, end=e, gauge_depth=10, pH=4.5, SO4=20, Na=10)],
                      ions=("SO4", "Na"))
    wet = wet_deposition(screen(ds), "month")
    expected = (20 - 0.121 / 2 * 10) / 1000          # mol m-3
    assert wet["pwm_nssSO4"].item() == pytest.approx(expected)
    assert wet["dep_nssSO4_kg_ha"].item() < wet["dep_SO4_kg_ha"].item()


def test_unknown_tracer_is_refused():
    with pytest.raises(ValueError, match="seasalt_tracer"):
        WetOptions(seasalt_tracer="K")
    with pytest.raises(ValueError, match="unknown sea-salt tracer"):
        seawater_ratio("SO4", "K")


def test_sulfate_to_sodium_mass_ratio_of_seawater():
    # SO4/Na by mass in seawater: 2.7124 / 10.7810 g/kg = 0.2516 (Millero et al. 2008,
    # Table 4, from memory); our 0.0605 mol/mol (Keene et al. 1986) with the molar
    # masses of periodictable gives 0.2528, within 1 %.
    import periodictable as pt
    m_so4 = pt.formula("SO4").mass
    assert seawater_ratio("SO4") * m_so4 / pt.Na.mass == pytest.approx(0.2516, rel=0.01)
