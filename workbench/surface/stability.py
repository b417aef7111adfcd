"""Integrated flux-profile (stability) functions of the surface layer.

Unstable air (z/L < 0): the Businger-Dyer forms as integrated by Paulson (1970).
Stable air (z/L >= 0): Beljaars and Holtslag (1991), which stay bounded in very
stable air (the log-linear form would make the wind profile grow without limit).
All coefficients are in :mod:`workbench.constants`.

The functions take the stability parameter zeta = z/L [-] and return psi [-];
they are pure ufunc compositions, so floats, arrays, DataArrays and dask arrays
pass through with their type.
"""
from __future__ import annotations

import numpy as np

from ..constants import (BELJAARS_HOLTSLAG_A as _A, BELJAARS_HOLTSLAG_B as _B,
                         BELJAARS_HOLTSLAG_C as _C, BELJAARS_HOLTSLAG_D as _D,
                         BUSINGER_DYER_GAMMA as _GAMMA)
from ._array import where


def psi_m_paulson(zeta):
    """Integrated stability function for momentum, unstable air [-].

    Parameters
    ----------
    zeta : array_like
        Stability parameter z/L, <= 0. [-]

    Returns
    -------
    psi_m : array_like
        [-]

    Notes
    -----
    .. math:: x = (1 - \\gamma\\zeta)^{1/4},\\quad
              \\psi_m = 2\\ln\\frac{1+x}{2} + \\ln\\frac{1+x^2}{2} - 2\\arctan x + \\frac{\\pi}{2}

    with :math:`\\gamma = 16`.

    References
    ----------
    Paulson, C. A. (1970), J. Appl. Meteorol. 9, 857-861, Eq. (12); coefficient from
    Dyer, A. J. (1974), Boundary-Layer Meteorol. 7, 363-372.

    >>> round(float(psi_m_paulson(0.0)), 12)
    0.0
    """
    x = (1.0 - _GAMMA * zeta) ** 0.25
    return (2.0 * np.log((1.0 + x) / 2.0) + np.log((1.0 + x * x) / 2.0)
            - 2.0 * np.arctan(x) + np.pi / 2.0)


def psi_h_paulson(zeta):
    """Integrated stability function for heat and scalars, unstable air [-].

    Parameters
    ----------
    zeta : array_like
        Stability parameter z/L, <= 0. [-]

    Returns
    -------
    psi_h : array_like
        [-]

    Notes
    -----
    .. math:: \\psi_h = 2\\ln\\frac{1+(1-\\gamma\\zeta)^{1/2}}{2}

    References
    ----------
    Paulson (1970), J. Appl. Meteorol. 9, 857-861, Eq. (13); Dyer (1974).
    """
    y = (1.0 - _GAMMA * zeta) ** 0.5
    return 2.0 * np.log((1.0 + y) / 2.0)


def psi_m_beljaars_holtslag(zeta):
    """Integrated stability function for momentum, stable air [-].

    Parameters
    ----------
    zeta : array_like
        Stability parameter z/L, >= 0. [-]

    Returns
    -------
    psi_m : array_like
        [-] (negative in stable air)

    Notes
    -----
    .. math:: -\\psi_m = a\\zeta + b\\left(\\zeta - \\frac{c}{d}\\right)e^{-d\\zeta} + \\frac{bc}{d}

    with a = 1, b = 2/3, c = 5, d = 0.35.

    References
    ----------
    Beljaars, A. C. M. and Holtslag, A. A. M. (1991), J. Appl. Meteorol. 30, 327-341,
    Eq. (28) (from memory).
    """
    return -(_A * zeta + _B * (zeta - _C / _D) * np.exp(-_D * zeta) + _B * _C / _D)


def psi_h_beljaars_holtslag(zeta):
    """Integrated stability function for heat and scalars, stable air [-].

    Parameters
    ----------
    zeta : array_like
        Stability parameter z/L, >= 0. [-]

    Returns
    -------
    psi_h : array_like
        [-]

    Notes
    -----
    .. math:: -\\psi_h = \\left(1 + \\frac{2a}{3}\\zeta\\right)^{3/2}
              + b\\left(\\zeta - \\frac{c}{d}\\right)e^{-d\\zeta} + \\frac{bc}{d} - 1

    References
    ----------
    Beljaars and Holtslag (1991), J. Appl. Meteorol. 30, 327-341, Eq. (32) (from memory).
    """
    return -((1.0 + 2.0 * _A * zeta / 3.0) ** 1.5 + _B * (zeta - _C / _D) * np.exp(-_D * zeta)
             + _B * _C / _D - 1.0)


def psi_m(zeta):
    """Momentum stability function for any stability [-].

    Paulson (1970) for zeta < 0, Beljaars and Holtslag (1991) for zeta >= 0; both
    branches vanish at zeta = 0, so psi_m is continuous.

    Parameters
    ----------
    zeta : array_like
        z/L. [-]

    Returns
    -------
    psi_m : array_like
        [-]; NaN where zeta is NaN.
    """
    return _joined_branches(zeta, psi_m_paulson, psi_m_beljaars_holtslag)


def psi_h(zeta):
    """Heat/scalar stability function for any stability [-].

    Paulson (1970) for zeta < 0, Beljaars and Holtslag (1991) for zeta >= 0.

    Parameters
    ----------
    zeta : array_like
        z/L. [-]

    Returns
    -------
    psi_h : array_like
        [-]; NaN where zeta is NaN.
    """
    return _joined_branches(zeta, psi_h_paulson, psi_h_beljaars_holtslag)


def _joined_branches(zeta, unstable, stable):
    """``unstable(min(zeta, 0))`` where zeta < 0, else ``stable(max(zeta, 0))`` [-].

    The joining of an unstable and a stable branch that :func:`psi_m` and
    :func:`psi_h` share: a numpy array with dimensions goes through :func:`_by_sign`
    (each branch evaluated where it is used; the same values), anything else (float,
    0-d array, DataArray, dask array) through the element-wise ``where`` form, which
    keeps its type.  Each branch is given zeta clipped to its own sign, so it is
    never evaluated outside its domain.

    Parameters
    ----------
    zeta : array_like
        z/L. [-]
    unstable, stable : callable
        The branch functions, zeta [-] -> psi [-].

    Returns
    -------
    psi : array_like
        [-]; NaN where zeta is NaN.
    """
    if isinstance(zeta, np.ndarray) and zeta.ndim:
        return _by_sign(zeta, unstable, stable)
    neg = np.minimum(zeta, 0.0)
    pos = np.maximum(zeta, 0.0)
    return where(zeta < 0.0, unstable(neg), stable(pos))


def _by_sign(zeta, unstable, stable):
    """``unstable(zeta)`` where zeta < 0, else ``stable(max(zeta, 0))``, for a numpy array [-].

    Each branch is evaluated only where it is used (the unstable one on the whole
    array, which is cheaper than selecting); the values are those of the
    ``where`` form of :func:`_joined_branches`.

    Parameters
    ----------
    zeta : numpy.ndarray
        z/L. [-]
    unstable, stable : callable
        The branch functions, zeta [-] -> psi [-].

    Returns
    -------
    psi : numpy.ndarray
        [-]; NaN where zeta is NaN.
    """
    neg = zeta < 0.0
    if neg.all():  # min(zeta, 0) = zeta
        return np.asarray(unstable(zeta), dtype=float)
    out = np.asarray(unstable(np.minimum(zeta, 0.0)), dtype=float)
    rest = ~neg
    out[rest] = stable(np.maximum(zeta[rest], 0.0))
    return out
