"""Roughness length z0 and displacement height d of our land-use classes.

Rules (each class uses one):

* short vegetated canopies (grass, crops, moorland, wetland): d = 2/3 h and
  z0 = 0.123 h, the rule of Brutsaert (1982) adopted by FAO-56 (Allen et al. 1998,
  Box 4 and Eq. 4) for the reference crop and for canopies in general;
* forests: the rule of Raupach (1994), Boundary-Layer Meteorol. 71, 211-216, for a
  canopy of frontal area index 2.5 (a leaf-area index of 5; from memory), which gives
  d = 0.77 h and z0 = 0.073 h, close to the forest values d = 0.78 h, z0 = 0.075 h
  collected by Jarvis, James and Landsberg (1976, in Monteith (ed.), Vegetation and
  the Atmosphere 2; from memory); the grass rule below (z0 = 0.123 h) holds for short
  dense crops, not for forests;
* urban: d = 0.5 h, z0 = 0.1 h, the rule of thumb of Grimmond and Oke (1999),
  J. Appl. Meteorol. 38, 1262-1292 (from memory);
* barren land and snow or ice: z0 = 0.005 m, d = 0, the "smooth" class of the
  Davenport-Wieringa roughness classification (WMO 2008, Guide to Meteorological
  Instruments and Methods of Observation, WMO-No. 8, Annex 5.B; from memory);
* open water: z0 from the Charnock (1955) relation with the smooth-flow term of
  Smith (1988), which depends on u* and is solved with it.

A site's explicit z0 or d overrides the rule. Vegetated z0 is never below the
Davenport "smooth" value, so that a canopy of height 0 still has a rough surface.
"""
from __future__ import annotations

import numpy as np

from ..constants import CHARNOCK_ALPHA, GRAVITY, SMOOTH_FLOW_COEFFICIENT
from ..landuse import LAND_USE
from ._array import where

#: Fractions (z0/h, d/h) of the canopy rules [-] (sources in the module docstring).
CANOPY_RULE = (0.123, 2.0 / 3.0)          # Brutsaert (1982); Allen et al. (1998)
URBAN_RULE = (0.1, 0.5)                   # Grimmond and Oke (1999), from memory
#: Constants of Raupach (1994), Eqs. (8)-(9) (from memory): c_d1, C_S, C_R, psi_h and
#: the largest u*/U [-].
RAUPACH_CD1 = 7.5
RAUPACH_CS = 0.003
RAUPACH_CR = 0.3
RAUPACH_PSI_H = 0.193
RAUPACH_USTAR_U_MAX = 0.3
#: Frontal area index of a forest taken for the forest rule: half of a leaf-area index
#: of 5 (common practice, from memory) [-].
FOREST_FRONTAL_AREA = 2.5


def raupach_roughness(frontal_area_index):
    """Fractions z0/h and d/h of a canopy by Raupach (1994) [-].

    Parameters
    ----------
    frontal_area_index : array_like
        Lambda, frontal area of the roughness elements per unit ground area. [-]

    Returns
    -------
    z0_h, d_h : array_like
        [-]

    Notes
    -----
    .. math:: \\frac{d}{h} = 1 - \\frac{1 - e^{-\\sqrt{c_{d1}\\Lambda}}}{\\sqrt{c_{d1}\\Lambda}},\\quad
              \\frac{z_0}{h} = \\left(1 - \\frac{d}{h}\\right)\\exp\\left(-\\kappa\\frac{U}{u_*}
              + \\psi_h\\right),\\quad \\frac{u_*}{U} = \\min\\left(\\sqrt{C_S + C_R\\Lambda},
              0.3\\right)

    with kappa = 0.4 as in the paper. Raupach, M. R. (1994), Boundary-Layer Meteorol.
    71, 211-216, Eqs. (8) and (9) (from memory).

    >>> z0_h, d_h = raupach_roughness(2.5)
    >>> round(float(z0_h), 3), round(float(d_h), 3)
    (0.073, 0.772)
    """
    x = np.sqrt(RAUPACH_CD1 * np.asarray(frontal_area_index, dtype=float))
    d_h = 1.0 - (1.0 - np.exp(-x)) / x
    us_u = np.minimum(np.sqrt(RAUPACH_CS + RAUPACH_CR * frontal_area_index), RAUPACH_USTAR_U_MAX)
    z0_h = (1.0 - d_h) * np.exp(-0.4 / us_u + RAUPACH_PSI_H)
    return z0_h, d_h


FOREST_RULE = tuple(float(v) for v in raupach_roughness(FOREST_FRONTAL_AREA))
#: Davenport-Wieringa "smooth" class roughness [m] (WMO-No. 8, 2008; from memory).
SMOOTH_Z0 = 0.005

#: The rule each of our classes uses: "canopy", "forest", "urban", "smooth" or "charnock".
RULE = {
    "conifer_forest": "forest", "deciduous_forest": "forest", "mixed_forest": "forest",
    "grass": "canopy", "crops": "canopy", "moorland": "canopy", "wetland": "canopy",
    "water": "charnock", "urban": "urban", "barren": "smooth", "snow_ice": "smooth",
}
assert set(RULE) == set(LAND_USE)


def canopy_roughness(canopy_height, rule="canopy"):
    """Roughness length and displacement height of a canopy [m].

    Parameters
    ----------
    canopy_height : array_like
        Mean canopy (or building) height h. [m]
    rule : {"canopy", "forest", "urban"}
        Which rule (see the module docstring).

    Returns
    -------
    z0 : array_like
        Roughness length for momentum. [m]
    d : array_like
        Displacement height. [m]

    Notes
    -----
    .. math:: z_0 = 0.123\\,h,\\quad d = \\tfrac{2}{3}h \\quad\\text{(canopy)};\\qquad
              z_0 = 0.1\\,h,\\quad d = 0.5\\,h \\quad\\text{(urban)}

    References
    ----------
    Brutsaert, W. (1982), Evaporation into the Atmosphere, Reidel, Ch. 5; Allen, R. G.,
    Pereira, L. S., Raes, D. and Smith, M. (1998), FAO Irrigation and Drainage Paper 56,
    Eq. (4). Grimmond, C. S. B. and Oke, T. R. (1999), J. Appl. Meteorol. 38, 1262.

    >>> z0, d = canopy_roughness(0.12)
    >>> round(float(z0), 5), round(float(d), 2)
    (0.01476, 0.08)
    """
    f_z0, f_d = {"canopy": CANOPY_RULE, "forest": FOREST_RULE, "urban": URBAN_RULE}[rule]
    z0 = np.maximum(f_z0 * canopy_height, SMOOTH_Z0)
    return z0, f_d * canopy_height


def charnock_roughness(ustar, kinematic_viscosity):
    """Roughness length of open water from the Charnock relation [m].

    Parameters
    ----------
    ustar : array_like
        Friction velocity over the water. [m s-1]
    kinematic_viscosity : array_like
        Of air. [m2 s-1]

    Returns
    -------
    z0 : array_like
        [m]

    Notes
    -----
    .. math:: z_0 = \\alpha\\,u_*^2/g + 0.11\\,\\nu/u_*,\\quad \\alpha = 0.011

    References
    ----------
    Charnock, H. (1955), Q. J. R. Meteorol. Soc. 81, 639-640; Smith, S. D. (1988),
    J. Geophys. Res. 93, 15467-15472, Eq. (8) (from memory).
    """
    return CHARNOCK_ALPHA * ustar ** 2 / GRAVITY + SMOOTH_FLOW_COEFFICIENT * kinematic_viscosity / ustar


def land_use_roughness(land_use, canopy_height, z0_override=np.nan, d_override=np.nan,
                       table_override=None):
    """Static z0 and d of our classes, with overrides; NaN z0 for open water.

    Parameters
    ----------
    land_use : str or sequence of str
        Our land-use class names (one per element of `canopy_height` along its
        last axis, or broadcastable).
    canopy_height : array_like
        [m]
    z0_override, d_override : array_like
        The site's explicit values; NaN means none. [m]
    table_override : dict, optional
        ``{class: (z0, d)}`` replacing the rule for a whole class (either may be
        None to keep the rule's value). [m]

    Returns
    -------
    z0 : array_like
        [m]; NaN for water (Charnock, solved with u*) unless overridden.
    d : array_like
        [m]
    """
    names = [land_use] if isinstance(land_use, str) else list(land_use)
    table_override = table_override or {}
    fractions = {"canopy": CANOPY_RULE, "urban": URBAN_RULE, "forest": FOREST_RULE}
    f_z0 = np.array([fractions.get(RULE[n], (0.0, 0.0))[0] for n in names])
    f_d = np.array([fractions.get(RULE[n], (0.0, 0.0))[1] for n in names])
    fixed = np.array([SMOOTH_Z0 if RULE[n] == "smooth" else
                      np.nan if RULE[n] == "charnock" else 0.0 for n in names])
    tab_z0 = np.array([np.nan if (table_override.get(n) or (None, None))[0] is None
                       else table_override[n][0] for n in names], dtype=float)
    tab_d = np.array([np.nan if (table_override.get(n) or (None, None))[1] is None
                      else table_override[n][1] for n in names], dtype=float)
    if isinstance(land_use, str):
        f_z0, f_d, fixed, tab_z0, tab_d = (a[0] for a in (f_z0, f_d, fixed, tab_z0, tab_d))
    rough = where(f_z0 > 0, np.maximum(f_z0 * canopy_height, SMOOTH_Z0), fixed + 0.0 * canopy_height)
    z0 = where(np.isnan(tab_z0), rough, tab_z0)
    z0 = where(np.isnan(z0_override), z0, z0_override)
    d = where(np.isnan(tab_d), f_d * canopy_height, tab_d)
    d = where(np.isnan(d_override), d, d_override)
    return z0, d
