"""Carbonate equilibrium of precipitation with atmospheric CO2.

Used for the bicarbonate term of the ion balance and for the pH of pure water in
equilibrium with the atmosphere (the reference "clean rain" pH near 5.6).

Data table
----------
``CARBONATE_CONSTANTS`` holds, for each equilibrium, the constant at 298.15 K and
the temperature coefficient :math:`-\\Delta H/R` [K] of the van 't Hoff form

.. math:: K(T) = K(298.15) \\exp\\left[-\\frac{\\Delta H}{R}
          \\left(\\frac{1}{T} - \\frac{1}{298.15}\\right)\\right]

Source: Seinfeld and Pandis (2006), *Atmospheric Chemistry and Physics*, 2nd ed.,
Wiley, Chapter 7, Table 7.2 (Henry's law coefficient of CO2) and Table 7.4
(aqueous equilibria: CO2.H2O, HCO3-, H2O) -- values recalled from memory:
K_H = 3.4e-2 M atm-1 (-dH/R = 2420 K), K1 = 4.3e-7 M (-1000 K),
K2 = 4.68e-11 M (-1760 K), Kw = 1.0e-14 M2 (-6710 K).
"""
from __future__ import annotations

import numpy as np

from ..constants import STANDARD_PRESSURE
from ..units import ureg

#: Reference temperature of the tabulated constants [K] (25 degC, that of the tables
#: of Seinfeld and Pandis 2006 below).
REFERENCE_TEMPERATURE = 298.15

#: name -> (K at 298.15 K, -dH/R [K], unit, meaning); Seinfeld and Pandis (2006),
#: Tables 7.2 and 7.4 (from memory).
CARBONATE_CONSTANTS = {
    "henry_co2": (3.4e-2, 2420.0, "M atm-1", "CO2(g) = CO2.H2O"),
    "k1": (4.3e-7, -1000.0, "M", "CO2.H2O = H+ + HCO3-"),
    "k2": (4.68e-11, -1760.0, "M", "HCO3- = H+ + CO3 2-"),
    "kw": (1.0e-14, -6710.0, "M2", "H2O = H+ + OH-"),
}

#: mol m-3 per mol L-1 (= 1000), from the unit registry.
MOL_M3_PER_MOLAR = ureg.Quantity(1.0, "mol/L").to("mol/m**3").magnitude


def equilibrium_constant(name: str, temperature=REFERENCE_TEMPERATURE):
    """Equilibrium constant at a temperature by the van 't Hoff form.

    Parameters
    ----------
    name : {"henry_co2", "k1", "k2", "kw"}
        Which constant (see ``CARBONATE_CONSTANTS``).
    temperature : array_like
        Water temperature. [K]

    Returns
    -------
    array_like
        [M atm-1] for ``henry_co2``, [M] for ``k1`` and ``k2``, [M2] for ``kw``.

    Notes
    -----
    .. math:: K(T) = K_{298} \\exp\\left[c\\left(\\frac{1}{T} - \\frac{1}{298.15}\\right)\\right],
              \\quad c = -\\Delta H/R

    References
    ----------
    Seinfeld, J. H. and Pandis, S. N. (2006), Atmospheric Chemistry and Physics,
    2nd ed., Wiley, Tables 7.2 and 7.4 (from memory).

    >>> float(equilibrium_constant("k1"))
    4.3e-07
    """
    k298, coeff, _, _ = CARBONATE_CONSTANTS[name]
    return k298 * np.exp(coeff * (1.0 / temperature - 1.0 / REFERENCE_TEMPERATURE))


def co2_partial_pressure_atm(co2_mixing_ratio, pressure=STANDARD_PRESSURE):
    """Partial pressure of CO2 [atm] from its dry mixing ratio [mol mol-1] and pressure [Pa]."""
    return co2_mixing_ratio * pressure / STANDARD_PRESSURE


def bicarbonate(hydrogen, co2_mixing_ratio, temperature=REFERENCE_TEMPERATURE,
                pressure=STANDARD_PRESSURE):
    """Bicarbonate in equilibrium with atmospheric CO2 at a given acidity [mol m-3].

    Parameters
    ----------
    hydrogen : array_like
        Free hydrogen ion, amount of H+. [mol m-3]
    co2_mixing_ratio : float
        Atmospheric CO2 dry mixing ratio. [mol mol-1]
    temperature : array_like
        Temperature of the solution (the laboratory's, for a measured pH). [K]
    pressure : array_like
        Air pressure. [Pa]

    Returns
    -------
    array_like
        Amount of HCO3-. [mol m-3]

    Notes
    -----
    .. math:: [\\mathrm{HCO_3^-}] = \\frac{K_H K_1 p_{CO_2}}{[\\mathrm{H^+}]}

    with concentrations in mol/L and :math:`p_{CO_2}` in atm (Seinfeld and Pandis
    2006, Eq. 7.51 in the 2nd edition, from memory).

    >>> round(float(bicarbonate(1e-2, 420e-6)) * 1000, 4)  # umol/L at pH 5
    0.614
    """
    p = co2_partial_pressure_atm(co2_mixing_ratio, pressure)
    h_molar = hydrogen / MOL_M3_PER_MOLAR
    hco3_molar = (equilibrium_constant("henry_co2", temperature) *
                  equilibrium_constant("k1", temperature) * p / h_molar)
    return hco3_molar * MOL_M3_PER_MOLAR


def pure_water_pH(co2_mixing_ratio, temperature=REFERENCE_TEMPERATURE,
                  pressure=STANDARD_PRESSURE):
    """pH of pure water in equilibrium with atmospheric CO2 [1].

    Parameters
    ----------
    co2_mixing_ratio : array_like
        CO2 dry mixing ratio. [mol mol-1]
    temperature : array_like
        Water temperature. [K]
    pressure : array_like
        Air pressure. [Pa]

    Returns
    -------
    array_like
        pH. [1]

    Notes
    -----
    Charge balance :math:`[H^+] = [HCO_3^-] + [OH^-]` (carbonate neglected: at pH
    near 5.6 the term :math:`2K_2/[H^+]` is of order 1e-5), so

    .. math:: [H^+] = \\sqrt{K_H K_1 p_{CO_2} + K_w}

    (Seinfeld and Pandis 2006, Section 7.3.1, from memory).

    >>> round(float(pure_water_pH(420e-6)), 2)
    5.61
    """
    p = co2_partial_pressure_atm(co2_mixing_ratio, pressure)
    h = np.sqrt(equilibrium_constant("henry_co2", temperature) *
                equilibrium_constant("k1", temperature) * p +
                equilibrium_constant("kw", temperature))
    return -np.log10(h)
