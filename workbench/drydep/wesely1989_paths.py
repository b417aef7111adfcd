"""The resistances of the paths of Wesely (1989): stomatal, mesophyll, upper canopy
(dry and wet), in-canopy convection, exposed lower-canopy and ground surfaces, the
low-temperature increment, and the reciprocals and NaN masks they are summed with.

Part of :mod:`workbench.drydep.wesely1989` (which re-exports every name here); the
constants of the equations are in :mod:`workbench.drydep.wesely1989_table`.

References
----------
Wesely, M. L. (1989), Atmos. Environ. 23, 1293-1304, Eqs. (3)-(9).
Walmsley, J. L. and Wesely, M. L. (1996), Atmos. Environ. 30, 1181-1188.
"""
from __future__ import annotations

import numpy as np

from ..constants import ZERO_CELSIUS
from ..species import get as _species
from ..surface._array import where
from .wesely1989_table import (COLD_OFFSET, COLD_SCALE, HENRY_SCALE, HENRY_SCALE_WET,
                               RDC_LIGHT, RDC_LIGHT_OFFSET, RDC_SCALE, RDC_SLOPE, RLU_O3_DEW,
                               RLU_O3_RAIN, RLU_SO2_DEW, RLU_SO2_RAIN, RM_F0, RM_HENRY,
                               RS_LIGHT, RS_LIGHT_OFFSET, RS_T_FACTOR, RS_T_MAX,
                               WET_CUTICLE_FACTOR, ZERO_TABLE_RESISTANCE, _R_TINY)


def _recip(r):
    """1/r with 1/0 = inf and 1/inf = 0, without warnings.

    Parameters
    ----------
    r : array_like
        Resistance, >= 0 or NaN. [s m-1]

    Returns
    -------
    g : array_like
        Conductance. [m s-1]
    """
    if isinstance(r, np.ndarray) and r.ndim:
        return _recip_array(r)
    return where(r == 0, np.inf, 1.0 / np.maximum(r, _R_TINY))


def _recip_array(r, out=None):
    """:func:`_recip` of a numpy array, into `out` when given (`out` may be `r`).

    When no value is below :data:`_R_TINY` (NaN aside), 1/max(r, tiny) is 1/r: one
    division and a minimum instead of a maximum, a division and a zero mask.

    Parameters
    ----------
    r : numpy.ndarray
        Resistance, >= 0 or NaN. [s m-1]
    out : numpy.ndarray, optional

    Returns
    -------
    numpy.ndarray
        Conductance. [m s-1]
    """
    if r.size and np.fmin.reduce(r, axis=None) >= _R_TINY:  # fmin skips NaN
        return np.divide(1.0, r, out=out)
    zero = r == 0
    out = np.divide(1.0, np.maximum(r, _R_TINY, out=out), out=out)
    out[zero] = np.inf
    return out


def _nan_where(*inputs):
    """NaN wherever one of `inputs` is NaN, else 0 (to be added) [same units as the sum].

    Parameters
    ----------
    *inputs : array_like

    Returns
    -------
    mask : array_like
        0.0 or NaN, broadcast over the inputs.
    """
    bad = np.isnan(inputs[0])
    for a in inputs[1:]:
        bad = bad | np.isnan(a)
    return where(bad, np.nan, 0.0)


def _keep_nan(x, *inputs):
    """x, but NaN wherever one of `inputs` is NaN (x + 0 elsewhere).

    Parameters
    ----------
    x : array_like
    *inputs : array_like

    Returns
    -------
    array_like
        Units of `x`.
    """
    return x + _nan_where(*inputs)


def stomatal_resistance(ri, solar_radiation, temperature):
    """Bulk canopy stomatal resistance for water vapour [s m-1].

    Parameters
    ----------
    ri : array_like
        Minimum stomatal resistance r_i (Table 1); inf = no stomata. [s m-1]
    solar_radiation : array_like
        G. [W m-2]
    temperature : array_like
        Surface (here air) temperature. [K]

    Returns
    -------
    rs : array_like
        [s m-1]; inf (closed) outside 0 < Ts < 40 degC.

    Notes
    -----
    .. math:: r_s = r_i\\left[1 + \\left(\\frac{200}{G + 0.1}\\right)^2\\right]
              \\frac{400}{T_s(40 - T_s)}

    References
    ----------
    Wesely (1989), Eq. (3).
    """
    ts = temperature - ZERO_CELSIUS
    open_ = (ts > 0.0) & (ts < RS_T_MAX)
    # Eq. (3) as published over the whole open range 0 < Ts < 40 degC (finite there):
    # closed hours take a stand-in temperature only to keep the arithmetic quiet.
    # (It clipped Ts to 1-39 degC before, which opened the stomata up to 5 times
    # wider than Eq. (3) between 0 and 1 degC.)
    ts_in = where(open_, ts, RS_T_MAX / 2.0)
    rs = ri * (1.0 + (RS_LIGHT / (solar_radiation + RS_LIGHT_OFFSET)) ** 2) * (
        RS_T_FACTOR / (ts_in * (RS_T_MAX - ts_in)))
    rs = where(open_, rs, np.inf)
    return _keep_nan(rs, temperature, solar_radiation)


def diffusivity_ratio(gas: str) -> float:
    """D_H2O / D_x, the stomatal scaling of Wesely (1989), Eq. (4) [-].

    Both diffusivities scale alike with T and p (Massman 1998), so the ratio is
    taken at 273.15 K from :mod:`workbench.species`.
    """
    return _species("H2O").diffusivity_0 / _species(gas).diffusivity_0


def mesophyll_resistance(henry, reactivity):
    """Mesophyll resistance r_m = 1/(H*/3000 + 100 f0) [s m-1]; Wesely (1989), Eq. (6).

    Parameters
    ----------
    henry : float
        Effective Henry constant H*. [M atm-1]
    reactivity : float
        f0. [-]

    >>> round(mesophyll_resistance(1e5, 0.0), 3)
    0.03
    """
    return 1.0 / (henry / RM_HENRY + RM_F0 * reactivity)


def convection_resistance(solar_radiation, terrain_slope):
    """In-canopy buoyant-convection resistance r_dc [s m-1]; Wesely (1989), Eq. (5).

    Parameters
    ----------
    solar_radiation : array_like
        G. [W m-2]
    terrain_slope : array_like
        [degree]

    Returns
    -------
    rdc : array_like
        [s m-1]

    Notes
    -----
    .. math:: r_{dc} = 100\\left[1 + \\frac{1000}{G + 10}\\right](1 + 1000\\,\\theta)^{-1}

    with the slope theta in radians.
    """
    return RDC_SCALE * (1.0 + RDC_LIGHT / (solar_radiation + RDC_LIGHT_OFFSET)) / (
        1.0 + RDC_SLOPE * np.deg2rad(terrain_slope))


def upper_canopy_resistance(rlu, henry, reactivity):
    """Dry upper-canopy (cuticle) resistance r_lu/(1e-5 H* + f0) [s m-1]; Eq. (7)."""
    return rlu / (HENRY_SCALE * henry + reactivity)


def wet_upper_canopy_resistance(gas, rlu, henry, reactivity, wet_kind):
    """Upper-canopy resistance of a wet canopy (dew: 1, rain: 2) [s m-1].

    Parameters
    ----------
    gas : str
    rlu : array_like
        Table value r_lu; inf where there is no canopy (no wet rule then). [s m-1]
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    wet_kind : array_like
        1 dew, 2 rain. [-]

    Notes
    -----
    .. math:: r_{lu,O}^{wet} = [1/r_O + 1/(3 r_{lu})]^{-1},\\quad
              r_{lu,x}^{wet} = [1/(3 r_{lu}) + 10^{-7} H^* + f_0/r_{lu,O}^{wet}]^{-1}

    with r_O = 3000 s/m (dew) or 1000 s/m (rain); SO2 takes 100 s/m (dew) and
    50 s/m (rain). Wesely (1989) p. 1296 and Walmsley and Wesely (1996) (from memory).
    """
    return _wet_upper_canopy(gas, henry, reactivity, _wet_cuticle(rlu, wet_kind))


def _wet_cuticle(rlu, wet_kind):
    """The parts of :func:`wet_upper_canopy_resistance` common to all gases.

    Parameters
    ----------
    rlu : array_like
        Table value r_lu. [s m-1]
    wet_kind : array_like
        1 dew, 2 rain. [-]

    Returns
    -------
    tuple
        dew (bool), the wet cuticle's conductance 1/(3 r_lu) [m s-1], the wet
        upper-canopy resistance of O3 [s m-1], and the mask of no canopy (r_lu inf).
    """
    dew = wet_kind == 1
    g_cut = _recip(WET_CUTICLE_FACTOR * rlu)
    r_o = _recip(1.0 / where(dew, RLU_O3_DEW, RLU_O3_RAIN) + g_cut)
    return dew, g_cut, r_o, np.isinf(rlu)


def _wet_upper_canopy(gas, henry, reactivity, cuticle):
    """Wet upper-canopy resistance of `gas` from :func:`_wet_cuticle` [s m-1].

    Parameters
    ----------
    gas : str
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    cuticle : tuple
        Output of :func:`_wet_cuticle`.
    """
    dew, g_cut, r_o, no_canopy = cuticle
    if gas == "SO2":
        r = where(dew, RLU_SO2_DEW, RLU_SO2_RAIN) + 0.0 * r_o
    elif gas == "O3":
        r = r_o
    else:
        r = _recip(g_cut + HENRY_SCALE_WET * henry + reactivity * _recip(r_o))
    return where(no_canopy, np.inf, r)


def exposed_surface_resistance(r_s, r_o, henry, reactivity):
    """Lower-canopy or ground resistance [1e-5 H*/r_S + f0/r_O]^-1 [s m-1]; Eqs. (8)-(9).

    Parameters
    ----------
    r_s, r_o : array_like
        The SO2 and O3 table values (rclS, rclO or rgsS, rgsO). [s m-1]
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    """
    return _exposed(henry, reactivity, _exposed_conductances(r_s, r_o))


def _exposed_conductances(r_s, r_o):
    """The SO2 and O3 conductances of an exposed surface, 1/max(r, 1 s/m) [m s-1].

    Parameters
    ----------
    r_s, r_o : array_like
        Table values. [s m-1]
    """
    return (_recip(np.maximum(r_s, ZERO_TABLE_RESISTANCE)),
            _recip(np.maximum(r_o, ZERO_TABLE_RESISTANCE)))


def _exposed(henry, reactivity, conductances):
    """Resistance [1e-5 H* g_S + f0 g_O]^-1 of an exposed surface [s m-1].

    Parameters
    ----------
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    conductances : tuple
        g_S, g_O from :func:`_exposed_conductances`. [m s-1]
    """
    g_s, g_o = conductances
    return _recip(HENRY_SCALE * henry * g_s + reactivity * g_o)


def cold_increment(temperature):
    """Low-temperature increment 1000 exp(-Ts - 4) [s m-1]; Wesely (1989) p. 1297.

    Parameters
    ----------
    temperature : array_like
        [K]
    """
    return COLD_SCALE * np.exp(-(temperature - ZERO_CELSIUS) - COLD_OFFSET)
