"""Constants, land-use table and size nodes of the Zhang et al. (2001) particle scheme.

Shared by :mod:`workbench.drydep.particles` (the public functions, which re-export
these names) and :mod:`workbench.drydep.particles_numpy` (the implementation), so
that both import from here and neither imports the other's module at import time
in a cycle.  Sources of every value are given beside it (several from memory).
Units: SI unless stated (Gerber's radii in cm, A in mm in :data:`ZHANG_LUC`).
"""
from __future__ import annotations

import functools

import numpy as np

#: Cunningham slip correction coefficients 1.257, 0.4, 1.1 (Seinfeld and Pandis 2006,
#: Eq. 9.34; Allen and Raabe 1982) [-].
SLIP_A = 1.257
SLIP_B = 0.4
SLIP_C = 1.1
#: Empirical constant epsilon_0 of Zhang et al. (2001), Eq. (5) [-].
EPSILON_0 = 3.0
#: Gerber (1985) growth constants C1..C4 (radii in cm), as quoted by Zhang et al.
#: (2001), Table 1 (from memory).
GERBER = {
    "sea_salt": (0.7674, 3.079, 2.572e-11, -1.424),
    "urban": (0.3926, 3.101, 4.190e-11, -1.404),
    "rural": (0.2789, 3.115, 5.415e-11, -0.9636),
    "ammonium_sulfate": (0.4809, 3.082, 3.110e-11, -1.428),
}
#: Hygroscopicity parameter kappa of kappa-Koehler growth (Petters, M. D. and
#: Kreidenweis, S. M. (2007), Atmos. Chem. Phys. 7, 1961-1971, Table 1: ammonium
#: nitrate 0.67 from its growth factors; from memory) [-].  Growth factor
#: (1 + kappa RH/(1 - RH))^(1/3), the Kelvin term neglected (it is under 5 % above
#: 0.2 um dry diameter at RH 0.9; Petters and Kreidenweis 2007, Fig. 1, from memory).
KAPPA = {
    "ammonium_nitrate": 0.67,
}
#: Highest relative humidity used in the growth law [1]: Gerber's fit grows large
#: particles without bound as RH -> 1 (common practice; cf. the RH cap of 0.99 in
#: many aerosol models, from memory).
GROWTH_RH_MAX = 0.99
#: Least argument of the exponential of the slip correction in ZhangSurface [-]
#: (numerical device): below it 0.4 exp(x) < 1e-17 is lost in 1.257 + 0.4 exp(x), so
#: C_c is the same to the last bit, and exp avoids its slow subnormal range.
_SLIP_EXP_MIN = -40.0
#: Metres per centimetre (Gerber's radii are in cm) and metres per millimetre (A).
M_PER_CM = 1e-2
M_PER_MM = 1e-3

#: Zhang et al. (2001) Table 3 for the land-use categories our classes map to:
#: LUC number, characteristic collector radius A [mm] by seasonal category 1-5 (NaN
#: where the scheme has none: smooth surfaces), alpha [-], gamma [-] (from memory).
ZHANG_LUC = {
    "conifer_forest": (1, (2.0, 2.0, 2.0, 2.0, 2.0), 1.0, 0.56),   # evergreen needleleaf
    "deciduous_forest": (4, (5.0, 5.0, 10.0, 10.0, 5.0), 0.8, 0.56),  # deciduous broadleaf
    "mixed_forest": (5, (5.0, 5.0, 5.0, 5.0, 5.0), 0.8, 0.56),     # mixed broadleaf/needleleaf
    "grass": (6, (2.0, 2.0, 5.0, 5.0, 2.0), 1.2, 0.54),
    "crops": (7, (2.0, 2.0, 5.0, 5.0, 2.0), 1.2, 0.54),            # crops, mixed farming
    "moorland": (10, (10.0,) * 5, 1.3, 0.54),                     # shrubs, interrupted woodland
    "wetland": (11, (10.0,) * 5, 2.0, 0.54),                      # wetland with plants
    "water": (13, (np.nan,) * 5, 100.0, 0.50),                    # inland water
    "urban": (15, (10.0,) * 5, 1.5, 0.56),
    "barren": (8, (np.nan,) * 5, 50.0, 0.54),                     # desert
    "snow_ice": (12, (np.nan,) * 5, 50.0, 0.54),                  # ice cap and glacier
}


def _luc_table():
    """Columns of :data:`ZHANG_LUC` as arrays by row.

    Returns
    -------
    a : numpy.ndarray
        A by row and seasonal category, shape (rows, 5), NaN on smooth surfaces. [m]
    alpha, gamma : numpy.ndarray
        [-]
    smooth : numpy.ndarray of bool
        No collector radius A.
    """
    names = list(ZHANG_LUC)
    a_tab = np.array([ZHANG_LUC[n][1] for n in names]) * M_PER_MM
    alpha = np.array([ZHANG_LUC[n][2] for n in names])
    gamma = np.array([ZHANG_LUC[n][3] for n in names])
    return a_tab, alpha, gamma, np.isnan(a_tab[:, 0])


#: Row of each class in :data:`ZHANG_LUC`.
_ROW = {n: i for i, n in enumerate(ZHANG_LUC)}


def _rows(land_use):
    """Row of :data:`ZHANG_LUC` for each of our class names (any array shape).

    Parameters
    ----------
    land_use : str or array_like of str
        Our land-use classes.

    Returns
    -------
    rows : int or numpy.ndarray of int
        Same shape as `land_use`. [-]
    """
    if isinstance(land_use, str):
        return _ROW[land_use]
    names = np.asarray(land_use, dtype=object)
    return np.array([_ROW[str(n)] for n in names.ravel()], dtype=int).reshape(names.shape)


def lognormal_nodes(mmd, gsd, n):
    """Gauss-Hermite nodes (diameters [m]) and weights [-] of a log-normal distribution.

    The weights sum to 1; sum_i w_i f(d_i) approximates the mean of f over the
    distribution whose ln d is normal with mean ln(mmd) and sd ln(gsd).

    >>> d, w = lognormal_nodes(1e-6, 1.0, 4)
    >>> bool(np.allclose(d, 1e-6)), round(float(w.sum()), 12)
    (True, 1.0)
    """
    x, w = _hermgauss(int(n))
    return mmd * np.exp(np.sqrt(2.0) * np.log(gsd) * x), w / np.sqrt(np.pi)


@functools.lru_cache(maxsize=16)
def _hermgauss(n):
    """Gauss-Hermite abscissas [-] and weights [-] of order `n` (cached, read-only)."""
    x, w = np.polynomial.hermite.hermgauss(n)
    x.flags.writeable = False
    w.flags.writeable = False
    return x, w
