"""Bidirectional ammonia: a canopy compensation point (single layer, no ground).

The leaves hold an ammonia compensation point chi_s set by the apoplast's emission
potential Gamma_s = [NH4+]/[H+] and the leaf temperature; the cuticle takes NH3 up
through R_w, which falls with humidity and with the ratio of acid gases to NH3.
With the conductances g_ab = 1/(Ra + Rb), g_s = 1/R_s, g_w = 1/R_w:

.. math:: \\chi_c = \\frac{\\chi_a g_{ab} + \\chi_s g_s}{g_{ab} + g_s + g_w},\\qquad
          F = g_{ab}(\\chi_a - \\chi_c) = \\chi_a V_d - E

(F > 0 deposition), with the deposition velocity V_d = 1/(Ra + Rb + R_c),
R_c = 1/(g_s + g_w), and the emission term E = chi_s g_ab g_s/(g_ab + g_s + g_w),
which does not depend on chi_a.  The net flux is linear in the air concentration, so
the engine can return V_d and E per hour and the flux over a sampling period is
C V_d - E averaged over its hours.

References
----------
Sutton, M. A., Burkhardt, J. K., Guerin, D., Nemitz, E. and Fowler, D. (1998),
Atmos. Environ. 32, 473-480 (the single-layer canopy compensation point model).
Nemitz, E., Sutton, M. A., Schjoerring, J. K., Husted, S. and Wyers, G. P. (2000),
Agric. For. Meteorol. 105, 405-425 (chi_s from Gamma_s and temperature).
Nemitz, E., Milford, C. and Sutton, M. A. (2001), Q. J. R. Meteorol. Soc. 127,
815-833 (two-layer model; its ground layer is not used here).
Massad, R.-S., Nemitz, E. and Sutton, M. A. (2010), Atmos. Chem. Phys. 10,
10359-10386 (cuticular resistance by humidity and the acid ratio; Gamma_s by land use).
All equations and values recalled from memory.
"""
from __future__ import annotations

import numpy as np

from ..surface._array import where

#: chi_s = A / T exp(-B / T) Gamma_s in mol L-1 of air: A [K], B [K] (Nemitz et al. 2000,
#: from memory).
CHI_A = 161500.0
CHI_B = 10380.0
#: Litres per cubic metre.
L_PER_M3 = 1000.0
#: Cuticle: R_w = (R_W_ACID / AR) exp((100 - RH[%]) / R_W_RH_SCALE) [s m-1], [%]
#: (Massad et al. 2010, from memory), bounded to [R_W_MIN, R_W_MAX] (bounds ours).
R_W_ACID = 31.5
R_W_RH_SCALE = 12.0
R_W_MIN = 1.0
R_W_MAX = 5000.0
#: Acid ratio AR = (2 SO2 + HNO3) / NH3 (molar) used when none is given (a middle
#: value of rural air, our choice; from memory of Massad et al. 2010, Fig. 5) [-].
DEFAULT_ACID_RATIO = 1.0
#: Stomatal emission potential Gamma_s = [NH4+]/[H+] of each of our classes [-]:
#: orders of magnitude from the review of Massad et al. (2010) (from memory): low for
#: unfertilised semi-natural vegetation and forests, high for fertilised crops; no
#: stomata on water, bare land, snow (0).  Grass is taken as unfertilised pasture;
#: override per site or class for grazed or fertilised grass (e.g. 500-2000).
EMISSION_POTENTIAL = {
    "conifer_forest": 30.0, "deciduous_forest": 20.0, "mixed_forest": 25.0,
    "grass": 50.0, "crops": 1000.0, "moorland": 20.0, "wetland": 20.0, "urban": 20.0,
    "water": 0.0, "barren": 0.0, "snow_ice": 0.0,
}

#: Classes with a canopy (leaves, cuticles); on the others (water, bare land, snow,
#: ice) the scheme's deposition-only Vd stands and nothing is emitted.
VEGETATED = ("conifer_forest", "deciduous_forest", "mixed_forest", "grass", "crops",
             "moorland", "wetland", "urban")


def stomatal_compensation_point(emission_potential, temperature):
    """Stomatal compensation point chi_s [mol m-3].

    Parameters
    ----------
    emission_potential : array_like
        Gamma_s = [NH4+]/[H+] of the apoplast. [-]
    temperature : array_like
        Leaf (here air) temperature. [K]

    Returns
    -------
    chi_s : array_like
        [mol m-3]

    Notes
    -----
    .. math:: \\chi_s = \\frac{161500}{T}\\exp\\left(-\\frac{10380}{T}\\right)\\Gamma_s
              \\ \\text{mol L}^{-1}

    Nemitz et al. (2000) (from memory).
    """
    return CHI_A / temperature * np.exp(-CHI_B / temperature) * emission_potential * L_PER_M3


def cuticular_resistance(relative_humidity, acid_ratio=DEFAULT_ACID_RATIO):
    """Cuticular resistance of NH3, R_w = (31.5/AR) exp((100 - RH)/12) [s m-1].

    Parameters
    ----------
    relative_humidity : array_like
        Fraction. [1]
    acid_ratio : array_like
        AR = (2 SO2 + HNO3)/NH3, molar. [-]

    Returns
    -------
    r_w : array_like
        [s m-1], bounded to [R_W_MIN, R_W_MAX].

    Notes
    -----
    Massad et al. (2010), with the humidity scale of Sutton et al. (1998) (from
    memory); the bounds are ours.
    """
    r = R_W_ACID / np.maximum(acid_ratio, 1e-3) * np.exp(
        (100.0 - 100.0 * relative_humidity) / R_W_RH_SCALE)
    return np.minimum(np.maximum(r, R_W_MIN), R_W_MAX)


def exchange(ra, rb, r_s, r_w, chi_s):
    """Deposition velocity and emission term of the canopy compensation point model.

    Parameters
    ----------
    ra, rb : array_like
        Aerodynamic and quasi-laminar resistances. [s m-1]
    r_s : array_like
        Stomatal resistance of NH3 (inf: closed). [s m-1]
    r_w : array_like
        Cuticular resistance. [s m-1]
    chi_s : array_like
        Stomatal compensation point. [mol m-3]

    Returns
    -------
    vd : array_like
        1/(Ra + Rb + R_c), R_c = 1/(1/R_s + 1/R_w). [m s-1]
    emission : array_like
        E = chi_s g_ab g_s/(g_ab + g_s + g_w); net flux F = chi_a vd - E. [mol m-2 s-1]
    """
    g_ab = 1.0 / (ra + rb)
    g_s = where(np.isinf(r_s), 0.0, 1.0 / r_s)
    g_w = 1.0 / r_w
    total = g_ab + g_s + g_w
    return g_ab * (g_s + g_w) / total, chi_s * g_ab * g_s / total


def canopy_concentration(chi_a, ra, rb, r_s, r_w, chi_s):
    """Canopy compensation point chi_c [mol m-3] (units of chi_a and chi_s alike).

    .. math:: \\chi_c = (\\chi_a g_{ab} + \\chi_s g_s)/(g_{ab} + g_s + g_w)
    """
    g_ab = 1.0 / (ra + rb)
    g_s = where(np.isinf(r_s), 0.0, 1.0 / r_s)
    return (chi_a * g_ab + chi_s * g_s) / (g_ab + g_s + 1.0 / r_w)


def emission_potential(land_use, overrides=None, site=None):
    """Gamma_s of receptors: ``overrides["<site>/<class>"]``, else ``overrides[class]``,
    else :data:`EMISSION_POTENTIAL` [-].

    Parameters
    ----------
    land_use : sequence of str
        Our classes.
    overrides : dict, optional
    site : str, optional
        The site id for the ``"<site>/<class>"`` keys.
    """
    over = overrides or {}
    return np.array([over.get(f"{site}/{c}", over.get(c, EMISSION_POTENTIAL[c]))
                     for c in land_use], dtype=float)


def net_flux(concentration, vd, emission):
    """Net NH3 flux F = C vd - E, positive downward (deposition) [mol m-2 s-1].

    Parameters
    ----------
    concentration : array_like
        Air concentration chi_a. [mol m-3]
    vd : array_like
        ``vd_NH3_bidirectional``. [m s-1]
    emission : array_like
        ``nh3_emission_flux``. [mol m-2 s-1]
    """
    return concentration * vd - emission


def hourly_exchange(nh3_paths, rb, ra, temperature, relative_humidity, receptors, sites,
                    options, acid_ratio=None) -> dict:
    """The compensation point model on the engine's arrays (site, receptor, time).

    Parameters
    ----------
    nh3_paths : dict
        The gas scheme's NH3 resistances (``rc``, ``stomatal``, optionally
        ``mesophyll``). [s m-1]
    rb, ra : numpy.ndarray
        [s m-1]
    temperature : numpy.ndarray
        [K]
    relative_humidity : numpy.ndarray
        [1]
    receptors, sites : list of str
        Along the receptor and site axes.
    options : workbench.drydep.DryOptions
        ``nh3_emission_potential`` and ``nh3_acid_ratio``.
    acid_ratio : array_like, optional
        Hourly acid ratio replacing ``nh3_acid_ratio`` (e.g. from the air). [-]

    Returns
    -------
    dict
        ``vd`` [m s-1], ``emission`` [mol m-2 s-1], ``chi_s`` [mol m-3]; on receptors
        without a canopy the scheme's deposition-only Vd and no emission.
    """
    gamma = np.stack([emission_potential(receptors, options.nh3_emission_potential, s)
                      for s in sites])[:, :, None]
    chi_s = stomatal_compensation_point(gamma, temperature)
    r_w = cuticular_resistance(relative_humidity, options.nh3_acid_ratio
                               if acid_ratio is None else acid_ratio)
    r_s = nh3_paths["stomatal"] + nh3_paths.get("mesophyll", 0.0)
    vd, emission = exchange(ra, rb, r_s, r_w, chi_s)
    leaves = np.array([r in VEGETATED for r in receptors])[None, :, None]
    vd = np.where(leaves, vd, 1.0 / (ra + rb + nh3_paths["rc"]))
    return {"vd": vd, "emission": np.where(leaves, emission, 0.0), "chi_s": chi_s + 0.0 * vd}


#: Values of ``DryOptions.nh3_cuticle``.
CUTICLE_RULES = ("auto", "scheme", "humidity")


def resolve_cuticle(rule, scheme) -> str:
    """``"humidity"`` or ``"scheme"``: the NH3 non-stomatal path in force.

    ``"auto"`` takes the scheme module's ``NH3_CUTICLE`` (``"scheme"`` when it has
    none): Wesely (1989) gives NH3 no treatment of its own (its H* and f0 in the
    general formulas), so it takes the humidity-dependent cuticle; Zhang et al. (2003)
    give NH3 the humidity-dependent cuticle of SO2 (alpha = 1), so its own stands.
    """
    if rule not in CUTICLE_RULES:
        raise ValueError(f"unknown nh3_cuticle {rule!r}; use one of {CUTICLE_RULES}")
    return getattr(scheme, "NH3_CUTICLE", "scheme") if rule == "auto" else rule


def humidity_cuticle_rc(nh3_paths, relative_humidity, receptors,
                        acid_ratio=DEFAULT_ACID_RATIO):
    """Deposition-only Rc of NH3 with the humidity-dependent cuticle [s m-1].

    R_c = 1/(1/R_s + 1/R_w) on receptors with leaves (:data:`VEGETATED`): the
    scheme's stomatal (+ mesophyll) path beside the cuticle R_w of
    :func:`cuticular_resistance` (Massad et al. 2010), i.e. the deposition velocity
    of the compensation point model without its emission term; the scheme's R_c on
    other receptors.

    Parameters
    ----------
    nh3_paths : dict
        The scheme's NH3 resistances (``rc``, ``stomatal``, optionally ``mesophyll``)
        (site, receptor, time). [s m-1]
    relative_humidity : numpy.ndarray
        [1]
    receptors : list of str
        Along the receptor axis.
    acid_ratio : float
        (2 SO2 + HNO3)/NH3 molar. [-]
    """
    r_w = cuticular_resistance(relative_humidity, acid_ratio)
    r_s = nh3_paths["stomatal"] + nh3_paths.get("mesophyll", 0.0)
    with np.errstate(divide="ignore"):
        g = where(np.isinf(r_s), 0.0, 1.0 / r_s) + 1.0 / r_w
    rc = 1.0 / g
    leaves = np.array([r in VEGETATED for r in receptors])[None, :, None]
    return np.where(leaves & ~np.isnan(nh3_paths["rc"]), rc, nh3_paths["rc"])

