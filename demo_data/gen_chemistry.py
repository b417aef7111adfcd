"""Precipitation chemistry and air concentrations for the demo network (used by make_demo.py).

All arrays are per site, vectorized over samples or days.  Ion concentrations are
drawn in ueq/L from seasonal lognormal distributions; the free acidity then follows
from the charge balance with the bicarbonate of CO2 equilibrium, and the conductivity
from the limiting equivalent conductances of the species table, so that every
generated sample is internally consistent before analytical noise is added.

Sources
-------
* Sea-salt equivalent ratios to sodium (Cl 1.164, SO4 0.121, Mg 0.227, Ca 0.0439,
  K 0.0218): Keene, W. C. et al. (1986), Sea-salt corrections and interpretation of
  constituent ratios in marine precipitation, J. Geophys. Res. 91(D6), 6647-6658,
  Table 1 (from memory).
* CO2 equilibrium: Henry constant 3.4e-2 M atm-1 and first dissociation constant
  4.45e-7 M at 25 degC (Stumm, W. and Morgan, J. J. 1996, Aquatic Chemistry, 3rd ed.,
  Table 4.2; from memory); CO2 partial pressure 400e-6 atm (common practice for the
  2010s).
* Molar masses and limiting equivalent conductances: ``workbench/species.py`` (IUPAC
  2022 atomic weights; CRC Handbook conductances).
* Conductivity as the sum of lambda_i c_i: Kohlrausch's law of independent ion
  migration at infinite dilution (common practice in precipitation-chemistry QA).
"""
from __future__ import annotations

import numpy as np
from scipy.signal import lfilter

from workbench.species import SPECIES, formula_mass

#: Sea-salt equivalent ratios X/Na (Keene et al. 1986, from memory).
SEA_SALT_RATIO = {"Cl": 1.164, "SO4": 0.121, "Mg": 0.227, "Ca": 0.0439, "K": 0.0218}
#: K_H * K_1 * pCO2 for CO2 equilibrium at 25 degC [(ueq/L)^2] = 3.4e-2 * 4.45e-7 * 4e-4 * 1e12.
CO2_PRODUCT = 3.4e-2 * 4.45e-7 * 400e-6 * 1e12
#: Order of the generated ions.
IONS = ("SO4", "NO3", "NH4", "Cl", "Na", "K", "Ca", "Mg")
CATIONS = ("NH4", "Na", "K", "Ca", "Mg")
ANIONS = ("SO4", "NO3", "Cl")
#: Molar mass of PO4 [g mol-1]: PO4 is written as mg/L of PO4 and counted in the charge
#: balance as H2PO4- (one charge), its main form at pH 2-7 (common practice).
PO4_G_PER_MOL = formula_mass("PO4") * 1000.0

DAYS_PER_YEAR = 365.25


def seasonal_log(doy, peak_doy, amplitude):
    """amplitude * cos(2 pi (doy - peak) / 365.25), added to a log concentration."""
    return amplitude * np.cos(2 * np.pi * (doy - peak_doy) / DAYS_PER_YEAR)


def base_ions(rng, chem, doy, years, depth, wind_rel):
    """Ion concentrations of weekly samples before acidity [ueq/L].

    Parameters
    ----------
    chem : dict
        The site's ``chemistry`` configuration (medians in ueq/L at the start of the
        record, trends in fraction per year, seasonal peaks and amplitudes).
    doy, years : ndarray
        Day of year and years since the start of the record at the sample midpoint.
    depth : ndarray
        Gauge depth [mm]; dilution scales with (depth / reference)^-exponent.
    wind_rel : ndarray
        Mean wind speed of the sample week relative to the site mean [-].

    Returns
    -------
    dict name -> ndarray [ueq/L] for IONS, plus ``PO4_mgl`` [mg/L].
    """
    m = depth.size
    d_rel = np.maximum(depth, 0.5) / chem["depth_ref_mm"]
    airmass = 0.35 * rng.standard_normal(m)
    own = lambda s: s * rng.standard_normal(m)  # noqa: E731
    dil_anthro = -0.35 * np.log(d_rel)
    dil_salt = -0.2 * np.log(d_rel)
    trend = lambda r: np.log1p(r) * years  # noqa: E731

    ss_na = np.exp(np.log(chem["na"]) + seasonal_log(doy, 15.0, 0.5) + 1.3 * np.log(wind_rel)
                   + dil_salt + own(0.45))
    nss_so4 = np.exp(np.log(chem["nss_so4"]) + seasonal_log(doy, 120.0, 0.25) + trend(chem["so4_trend"])
                     + dil_anthro + airmass + own(0.2))
    no3 = np.exp(np.log(chem["no3"]) + seasonal_log(doy, 80.0, 0.25) + trend(chem["no3_trend"])
                 + dil_anthro + airmass + own(0.22))
    nh4 = np.exp(np.log(chem["nh4"]) + seasonal_log(doy, 105.0, chem["nh4_season"])
                 + dil_anthro + 0.8 * airmass + own(0.25))
    nss_ca = np.exp(np.log(chem["nss_ca"]) + seasonal_log(doy, 110.0, 0.3) + dil_anthro + own(0.4))
    nss_k = np.exp(np.log(chem["nss_k"]) + seasonal_log(doy, 200.0, 0.3) + dil_anthro + own(0.4))
    nss_mg = np.exp(np.log(chem["nss_mg"]) + dil_anthro + own(0.4))
    nss_cl = np.exp(np.log(chem["nss_cl"]) + trend(chem["so4_trend"]) + dil_anthro + own(0.4))
    po4 = np.exp(np.log(chem["po4_mgl"]) + seasonal_log(doy, 150.0, 0.3) + own(0.5))
    r = SEA_SALT_RATIO
    return {
        "SO4": nss_so4 + r["SO4"] * ss_na, "NO3": no3, "NH4": nh4,
        "Cl": r["Cl"] * ss_na + nss_cl, "Na": ss_na, "K": r["K"] * ss_na + nss_k,
        "Ca": r["Ca"] * ss_na + nss_ca, "Mg": r["Mg"] * ss_na + nss_mg, "PO4_mgl": po4,
    }


def charge_deficit(ions):
    """Anions minus the cations other than H+ [ueq/L] (PO4 counted as H2PO4-)."""
    po4_ueq = ions["PO4_mgl"] / PO4_G_PER_MOL * 1000.0
    return sum(ions[a] for a in ANIONS) + po4_ueq - sum(ions[c] for c in CATIONS)


def acidity(ions):
    """Free acidity, bicarbonate, pH and conductivity from the charge balance.

    Parameters
    ----------
    ions : dict name -> ndarray [ueq/L] (IONS and ``PO4_mgl`` [mg/L]).

    Returns
    -------
    h, hco3 : ndarray [ueq/L]
    ph : ndarray [1]
    conductivity : ndarray [uS cm-1]

    Notes
    -----
    With D = sum(anions) - sum(cations other than H+) and [HCO3-] = K/[H+] (CO2
    equilibrium), the balance [H+] - K/[H+] = D gives
    [H+] = (D + sqrt(D^2 + 4K)) / 2.  Conductivity: kappa = 1e-3 sum(lambda_i c_i)
    with c in ueq/L and lambda in S cm2 eq-1 (Kohlrausch).  PO4 counts as H2PO4-.
    """
    d = charge_deficit(ions)
    h = 0.5 * (d + np.sqrt(d * d + 4.0 * CO2_PRODUCT))
    hco3 = CO2_PRODUCT / h
    ph = 6.0 - np.log10(h)
    kappa = SPECIES["H"].conductance * h + SPECIES["HCO3"].conductance * hco3
    for name in IONS:
        kappa = kappa + SPECIES[name].conductance * ions[name]
    return h, hco3, ph, kappa * 1e-3


def ueq_to_mg(name, ueq):
    """ueq/L of an ion -> mg/L in the column basis of precipitation.csv.

    SO4, Cl, Na, K, Ca, Mg as the ion; NO3 and NH4 as N (columns ``NO3_as_N``,
    ``NH4_as_N``).
    """
    sp = SPECIES[name]
    umol = ueq / abs(sp.charge)
    if name in ("NO3", "NH4"):
        return umol * formula_mass("N")    # umol/L * kg/mol = mg/L
    return umol * sp.molar_mass


def daily_air(rng, air, days_doy, years, wind_rel_day):
    """Daily air concentrations of one site [ug m-3, NO2 in ppb].

    Parameters
    ----------
    air : dict species -> (median, trend per year, peak doy, seasonal amplitude, sigma)
    days_doy, years : ndarray (nd,)
    wind_rel_day : ndarray (nd,)
        Daily mean wind speed relative to the site mean [-]; concentrations scale
        with its power -0.5 (dilution).

    Returns
    -------
    dict species -> ndarray (nd,)
    """
    nd = days_doy.size
    phi = np.exp(-1.0 / 2.0)

    def ar(sig):
        e = rng.standard_normal(nd)
        u = sig * np.sqrt(1 - phi ** 2) * e
        u[0] = sig * e[0]
        return lfilter([1.0], [1.0, -phi], u)

    common = ar(1.0)
    out = {}
    for sp, (median, trend, peak, amp, sigma) in air.items():
        z = 0.6 * common + 0.8 * ar(1.0)
        dil = 0.0 if sp == "pNa" else -0.5 * np.log(wind_rel_day)
        salt = 1.3 * np.log(wind_rel_day) if sp == "pNa" else 0.0
        out[sp] = np.exp(np.log(median) + np.log1p(trend) * years
                         + amp * np.cos(2 * np.pi * (days_doy - peak) / DAYS_PER_YEAR)
                         + sigma * z + dil + salt - 0.5 * sigma ** 2)
    return out
