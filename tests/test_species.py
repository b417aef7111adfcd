"""The species table against outside references."""
import molmass
import numpy as np
import periodictable
import pytest

from workbench import species


@pytest.mark.parametrize("name", [n for n, s in species.SPECIES.items()])
def test_molar_mass_against_periodictable(name):
    """Molar masses against periodictable's formula masses (NIST/IUPAC atomic weights).

    Our atomic weights are IUPAC abridged values, so agreement is to ~1e-4 relative.
    """
    sp = species.SPECIES[name]
    ref = periodictable.formula(sp.formula).mass / 1000.0
    assert sp.molar_mass == pytest.approx(ref, rel=2e-4)


@pytest.mark.parametrize("formula", ["SO4", "NO3", "NH4", "SO2", "HNO3", "NH3", "NO2", "O3"])
def test_molar_mass_against_molmass(formula):
    """Second reference: molmass's average formula mass (IUPAC standard atomic weights)."""
    ref = molmass.Formula(formula).mass / 1000.0
    assert species.formula_mass(formula) == pytest.approx(ref, rel=2e-4)


def test_element_counts_and_equivalents():
    """Budget bookkeeping (common practice): 2 eq per mol S as sulfate, 1 eq per mol N."""
    for name in ("SO4", "pSO4", "SO2"):
        s = species.SPECIES[name]
        assert (s.element, s.atoms, s.eq_per_mol) == ("S", 1, 2)
    for name in ("NO3", "NH4", "HNO3", "NH3", "NO2", "pNO3", "pNH4"):
        s = species.SPECIES[name]
        assert (s.element, s.atoms, s.eq_per_mol) == ("N", 1, 1)
    # ionic charges of the precipitation ions (chemistry, common knowledge)
    charges = {k: species.SPECIES[k].charge for k in ("SO4", "NO3", "NH4", "Ca", "Mg", "Na", "K", "Cl")}
    assert charges == {"SO4": -2, "NO3": -1, "NH4": 1, "Ca": 2, "Mg": 2, "Na": 1, "K": 1, "Cl": -1}


def test_diffusivity_scaling_massman():
    """Massman (1998) T^1.81/p scaling: at 298.15 K the SO2 diffusivity rises by
    (298.15/273.15)^1.81 = 1.172 (arithmetic check of the published exponent)."""
    d0 = species.diffusivity("SO2", 273.15, 101325.0)
    d1 = species.diffusivity("SO2", 298.15, 101325.0)
    assert d1 / d0 == pytest.approx((298.15 / 273.15) ** 1.81)
    assert species.diffusivity("SO2", 273.15, 50662.5) == pytest.approx(2 * d0)


def test_hno3_diffusivity_fuller_against_wesely_ratio():
    """HNO3 by Fuller et al. (1966) against Wesely (1989, Table 2) D_H2O/D_HNO3 = 1.9
    (from memory): the two agree within 15 %."""
    ratio = species.SPECIES["H2O"].diffusivity_0 / species.SPECIES["HNO3"].diffusivity_0
    assert ratio == pytest.approx(1.9, rel=0.15)


def test_fuller_method_against_massman_for_so2():
    """The Fuller estimate reproduces Massman's SO2 value within 10 % (Poling et al. 2001
    quote ~5 % typical error for the method)."""
    assert species.fuller_diffusivity("SO2") == pytest.approx(0.1089e-4, rel=0.10)
