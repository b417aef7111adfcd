"""One table of species used everywhere in the workbench.

Each entry states the molar mass, the element it is counted as in a budget (S or N)
and how many atoms of it one formula unit holds, the ionic charge, the number of
equivalents per mole used for acidity budgets, and the fields that the dry-
deposition schemes need (effective Henry constant, reactivity factor, molecular
diffusivity) and that precipitation QA needs (limiting equivalent conductance).

Inside the package an amount of a species is always an amount of its own formula
unit in mol (1 mol of ``NO3`` is 1 mol of N; 1 mol of ``SO4`` is 1 mol of S), so that
the ``_as_S`` / ``_as_N`` bases of input columns disappear at the I/O boundary.

Sources
-------
* Atomic weights: IUPAC standard atomic weights, abridged to five significant
  figures (Prohaska et al. 2022, Pure Appl. Chem. 94, 573), conventional values for
  elements given as intervals (H 1.008, C 12.011, N 14.007, O 15.999, Mg 24.305,
  S 32.06, Cl 35.45).
* Effective Henry constants H* [M atm-1] and reactivity factors f0 [-]: Wesely
  (1989), Atmos. Environ. 23, 1293-1304, Table 2 (values recalled from memory;
  checked for internal consistency only). The diffusivity ratios D_H2O/D_x that
  scale the stomatal resistance are computed from the measured diffusivities below
  (SO2 2.00, O3 1.51, NO2 1.60, HNO3 2.16, NH3 1.10), not taken from Wesely's
  Table 2 (1.9, 1.6, 1.6, 1.9, 0.97, close to sqrt(M/M_H2O)); docs/methods_dry.md
  9.2 gives the difference this makes (a few thousandths of a cm/s).
* Molecular diffusivities in air at 273.15 K and 101.325 kPa: Massman (1998),
  Atmos. Environ. 32, 1111-1127, Table 2 (SO2, NH3, NO2, O3, H2O; recalled from
  memory). Massman gives no HNO3 value: for HNO3 we use the measured value of
  Durham and Stockburger (1986), Atmos. Environ. 20, 559-563: 0.118 cm2 s-1 at
  298.15 K and 1 atm (from memory), taken to 273.15 K with Massman's exponent 1.81.
  The estimation method of Fuller, Schettler and Giddings (1966), Ind. Eng. Chem.
  58(5), 18-27 (:func:`fuller_diffusivity`, used before) gives 28 % more.
* Limiting equivalent ionic conductances at 25 degC [S cm2 eq-1]: CRC Handbook of
  Chemistry and Physics, "Ionic conductivity and diffusion at infinite dilution"
  (values per equivalent, i.e. for 1/2 Ca2+, 1/2 SO4 2-; recalled from memory).
"""
from __future__ import annotations

from dataclasses import dataclass, field
import re

from .constants import STANDARD_PRESSURE, ZERO_CELSIUS

#: Standard atomic weights [g mol-1]; IUPAC (Prohaska et al. 2022), abridged.
ATOMIC_WEIGHT = {
    "H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Na": 22.990,
    "Mg": 24.305, "P": 30.974, "S": 32.06, "Cl": 35.45, "K": 39.098, "Ca": 40.078,
}

#: Molar mass of air used with Fuller's diffusion volume of air [g mol-1] (Fuller,
#: Schettler and Giddings 1966; Poling et al. 2001, Table 11-1).
FULLER_AIR_MOLAR_MASS = 28.96
#: Atomic diffusion volumes of Fuller, Schettler and Giddings (1966), Table 1 [-].
FULLER_VOLUME = {"C": 15.9, "H": 2.31, "O": 6.11, "N": 4.54, "S": 22.9, "air": 19.7}


def formula_mass(formula: str) -> float:
    """Molar mass of a simple formula such as ``"SO4"`` or ``"NH4"`` [kg mol-1].

    >>> round(formula_mass("SO4") * 1000, 3)
    96.056
    """
    total = 0.0
    for element, count in re.findall(r"([A-Z][a-z]?)(\d*)", formula):
        total += ATOMIC_WEIGHT[element] * (int(count) if count else 1)
    return total / 1000.0


def fuller_diffusivity(formula: str, temperature=ZERO_CELSIUS, pressure=STANDARD_PRESSURE):
    """Binary diffusivity of a gas in air by Fuller et al. (1966) [m2 s-1].

    Parameters
    ----------
    formula : str
        Formula of the diffusing gas (C, H, O, N, S atoms only).
    temperature : float
        Air temperature. [K]
    pressure : float
        Air pressure. [Pa]

    Notes
    -----
    .. math:: D = \\frac{1.43\\times10^{-3}\\,T^{1.75}}{p\\,M_{AB}^{1/2}
              (V_A^{1/3}+V_B^{1/3})^2}\\ \\mathrm{cm^2\\,s^{-1}}

    with p in bar and :math:`M_{AB} = 2/(1/M_A + 1/M_B)` in g/mol (Fuller, Schettler
    and Giddings 1966, Eq. 10, in the form of Poling, Prausnitz and O'Connell 2001,
    The Properties of Gases and Liquids, Eq. 11-4.4).

    >>> round(fuller_diffusivity("HNO3") * 1e4, 3)
    0.13
    """
    volume = 0.0
    for element, count in re.findall(r"([A-Z][a-z]?)(\d*)", formula):
        volume += FULLER_VOLUME[element] * (int(count) if count else 1)
    m_a = formula_mass(formula) * 1000.0
    m_ab = 2.0 / (1.0 / m_a + 1.0 / FULLER_AIR_MOLAR_MASS)
    p_bar = pressure / 1e5
    d_cm2 = 1.43e-3 * temperature ** 1.75 / (
        p_bar * m_ab ** 0.5 * (volume ** (1 / 3) + FULLER_VOLUME["air"] ** (1 / 3)) ** 2)
    return d_cm2 * 1e-4


@dataclass(frozen=True)
class Species:
    """Properties of one species. Units are given beside each field."""

    name: str                 #: our name, as in the input columns
    formula: str              #: formula used for the molar mass
    phase: str                #: "ion" (precipitation), "gas" or "particle"
    long_name: str
    element: str | None = None  #: "S" or "N" for budget species, else None
    atoms: int = 0            #: atoms of `element` per formula unit [-]
    charge: int = 0           #: ionic charge [-]
    eq_per_mol: float = 0.0   #: equivalents per mole of formula unit [eq mol-1]
    ion: str | None = None    #: for particles, the ion they carry
    henry_eff: float | None = None   #: effective Henry constant H* [M atm-1]
    reactivity: float | None = None  #: reactivity factor f0 [-]
    diffusivity_0: float | None = None  #: D at 273.15 K, 101325 Pa [m2 s-1]
    diffusivity_source: str | None = None
    conductance: float | None = None  #: limiting equivalent conductance, 25 degC [S cm2 eq-1]
    aliases: tuple = field(default_factory=tuple)

    @property
    def molar_mass(self) -> float:
        """Molar mass of the formula unit [kg mol-1]."""
        return formula_mass(self.formula)


_DIFF_MASSMAN = "Massman (1998), Atmos. Environ. 32, 1111, Table 2 (from memory)"
_DIFF_FULLER = "Fuller, Schettler and Giddings (1966) estimation method"
_DIFF_DURHAM = ("Durham and Stockburger (1986), Atmos. Environ. 20, 559: 0.118 cm2/s at "
                "298.15 K (from memory), scaled to 273.15 K by (T/T0)^1.81")
#: Measured HNO3 diffusivity in air at 298.15 K, 1 atm [m2 s-1] (Durham and
#: Stockburger 1986, from memory).
HNO3_DIFFUSIVITY_298 = 0.118e-4
#: Temperature exponent of gas diffusivities (Massman 1998) [-].
DIFFUSIVITY_T_EXPONENT = 1.81

_TABLE = [
    # --- ions in precipitation (conductances: CRC Handbook, from memory) ------------
    Species("H", "H", "ion", "free acidity (hydrogen ion)", charge=1, eq_per_mol=1,
            conductance=349.65),
    Species("SO4", "SO4", "ion", "sulfate", "S", 1, -2, 2, conductance=80.0),
    Species("NO3", "NO3", "ion", "nitrate", "N", 1, -1, 1, conductance=71.42),
    Species("NH4", "NH4", "ion", "ammonium", "N", 1, 1, 1, conductance=73.5),
    Species("Cl", "Cl", "ion", "chloride", charge=-1, eq_per_mol=1, conductance=76.31),
    Species("Na", "Na", "ion", "sodium", charge=1, eq_per_mol=1, conductance=50.08),
    Species("K", "K", "ion", "potassium", charge=1, eq_per_mol=1, conductance=73.48),
    Species("Ca", "Ca", "ion", "calcium", charge=2, eq_per_mol=2, conductance=59.47),
    Species("Mg", "Mg", "ion", "magnesium", charge=2, eq_per_mol=2, conductance=53.0),
    Species("PO4", "PO4", "ion", "phosphate", charge=-3, eq_per_mol=3),
    Species("HCO3", "HCO3", "ion", "bicarbonate (estimated from pH and CO2)", charge=-1,
            eq_per_mol=1, conductance=44.5),
    # --- gases (H*, f0: Wesely 1989 Table 2; diffusivities as stated) -------
    Species("SO2", "SO2", "gas", "sulfur dioxide", "S", 1, 0, 2, henry_eff=1e5,
            reactivity=0.0, diffusivity_0=0.1089e-4, diffusivity_source=_DIFF_MASSMAN),
    Species("HNO3", "HNO3", "gas", "nitric acid", "N", 1, 0, 1, henry_eff=1e14,
            reactivity=0.0,
            diffusivity_0=HNO3_DIFFUSIVITY_298 * (ZERO_CELSIUS / 298.15) ** DIFFUSIVITY_T_EXPONENT,
            diffusivity_source=_DIFF_DURHAM),
    Species("NH3", "NH3", "gas", "ammonia", "N", 1, 0, 1, henry_eff=2e4,
            reactivity=0.0, diffusivity_0=0.1978e-4, diffusivity_source=_DIFF_MASSMAN),
    Species("NO2", "NO2", "gas", "nitrogen dioxide", "N", 1, 0, 1, henry_eff=0.01,
            reactivity=0.1, diffusivity_0=0.1361e-4, diffusivity_source=_DIFF_MASSMAN),
    Species("O3", "O3", "gas", "ozone (check gas)", None, 0, 0, 0, henry_eff=0.01,
            reactivity=1.0, diffusivity_0=0.1444e-4, diffusivity_source=_DIFF_MASSMAN),
    Species("H2O", "H2O", "gas", "water vapour", None, 0, 0, 0,
            diffusivity_0=0.2178e-4, diffusivity_source=_DIFF_MASSMAN),
    # --- particles --------------------------------------------------------------------
    Species("pSO4", "SO4", "particle", "particulate sulfate", "S", 1, -2, 2, ion="SO4"),
    Species("pNO3", "NO3", "particle", "particulate nitrate", "N", 1, -1, 1, ion="NO3"),
    Species("pNH4", "NH4", "particle", "particulate ammonium", "N", 1, 1, 1, ion="NH4"),
    Species("pNa", "Na", "particle", "particulate sodium", None, 0, 1, 1, ion="Na"),
    Species("pCl", "Cl", "particle", "particulate chloride", None, 0, -1, 1, ion="Cl"),
    Species("pCa", "Ca", "particle", "particulate calcium", None, 0, 2, 2, ion="Ca"),
]

#: All species by name.
SPECIES: dict[str, Species] = {s.name: s for s in _TABLE}

#: Ions that a precipitation file may carry.
PRECIP_IONS = ("SO4", "NO3", "NH4", "Cl", "Na", "K", "Ca", "Mg", "PO4")
#: Gases that an air-concentration file may carry.
AIR_GASES = ("SO2", "HNO3", "NH3", "NO2", "O3")
#: Particles that an air-concentration file may carry.
AIR_PARTICLES = ("pSO4", "pNO3", "pNH4", "pNa", "pCl", "pCa")
#: Equivalents per mole of element for acidity budgets [eq mol-1] (common practice:
#: 2 eq per mol S as sulfate, 1 eq per mol N).
EQ_PER_MOL_ELEMENT = {"S": 2.0, "N": 1.0}


def get(name: str) -> Species:
    """Return the species called `name`.

    Raises
    ------
    KeyError
        With the list of known species.
    """
    try:
        return SPECIES[name]
    except KeyError:
        raise KeyError(f"unknown species {name!r}; known: {', '.join(SPECIES)}") from None


def element_molar_mass(element: str) -> float:
    """Molar mass of an element [kg mol-1]."""
    return ATOMIC_WEIGHT[element] / 1000.0


def diffusivity(name: str, temperature, pressure):
    """Molecular diffusivity of a gas in air [m2 s-1].

    Parameters
    ----------
    name : str
        Gas species name (``"SO2"``, ``"HNO3"``, ...).
    temperature : array_like
        Air temperature. [K]
    pressure : array_like
        Air pressure. [Pa]

    Notes
    -----
    .. math:: D(T, p) = D_0 \\frac{p_0}{p} \\left(\\frac{T}{T_0}\\right)^{1.81}

    Massman (1998), Eq. (1) with the exponent 1.81 of his Table 2 fit (from memory),
    applied to all gases including HNO3.
    """
    sp = get(name)
    if sp.diffusivity_0 is None:
        raise ValueError(f"no molecular diffusivity for {name}")
    return (sp.diffusivity_0 * (STANDARD_PRESSURE / pressure)
            * (temperature / ZERO_CELSIUS) ** DIFFUSIVITY_T_EXPONENT)
