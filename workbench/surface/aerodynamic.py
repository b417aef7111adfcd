"""Wind profile, friction velocity transfer and aerodynamic resistance Ra.

Ra is taken from the sampler (reference) height down to the surface with the
momentum roughness length z0 in both logarithms; the excess resistance of heat
and gases over momentum belongs to the quasi-laminar resistance Rb
(:func:`workbench.drydep.gas.quasi_laminar_resistance`).  Stability enters
through the inverse Obukhov length 1/L [m-1] (0 = neutral), which has no
singularity at neutral.
"""
from __future__ import annotations

import numpy as np

from ..constants import VON_KARMAN
from ._array import where
from .stability import psi_h, psi_m


def wind_profile_factor(z, z0, inv_obukhov, log_z_z0=None):
    """The profile integral ln(z/z0) - psi_m(z/L) + psi_m(z0/L) [-].

    Parameters
    ----------
    z : array_like
        Height above the displacement height, z - d. [m]
    z0 : array_like
        Roughness length for momentum. [m]
    inv_obukhov : array_like
        1/L. [m-1]
    log_z_z0 : array_like, optional
        ln(z/z0) when the caller has it already (an iteration over 1/L) [-].

    Returns
    -------
    phi : array_like
        [-]; the wind at z is u = u* phi / k.

    References
    ----------
    Monin-Obukhov similarity; e.g. Stull (1988), An Introduction to Boundary Layer
    Meteorology, Eq. (9.7.5c).
    """
    log_ratio = np.log(z / z0) if log_z_z0 is None else log_z_z0
    return log_ratio - psi_m(z * inv_obukhov) + psi_m(z0 * inv_obukhov)


def aerodynamic_resistance(z, d, z0, ustar, inv_obukhov=0.0):
    """Aerodynamic resistance from height z to the surface [s m-1].

    Parameters
    ----------
    z : array_like
        Reference (sampler) height above ground. [m]
    d : array_like
        Displacement height. [m]
    z0 : array_like
        Roughness length for momentum, used in both logarithms. [m]
    ustar : array_like
        Friction velocity. [m s-1]
    inv_obukhov : array_like
        1/L; 0 for neutral. [m-1]

    Returns
    -------
    ra : array_like
        [s m-1]

    Notes
    -----
    .. math:: R_a = \\frac{\\ln\\frac{z-d}{z_0} - \\psi_h\\left(\\frac{z-d}{L}\\right)
              + \\psi_h\\left(\\frac{z_0}{L}\\right)}{\\kappa u_*}

    References
    ----------
    Wesely, M. L. and Hicks, B. B. (1977), J. Air Pollut. Control Assoc. 27,
    1110-1116, Eq. (5); in neutral air with z0 in both logarithms this is the
    FAO-56 form (Allen et al. 1998, Eq. 4) with z_oh = z_om.

    >>> u2 = 2.0
    >>> ustar = 0.41 * u2 / np.log((2.0 - 0.08) / 0.01476)
    >>> round(float(aerodynamic_resistance(2.0, 0.08, 0.01476, ustar)) * u2)
    141
    """
    zd = z - d
    return (np.log(zd / z0) - psi_h(zd * inv_obukhov) + psi_h(z0 * inv_obukhov)) / (
        VON_KARMAN * ustar)


def reference_height(z, d, z0, min_z0_multiple):
    """Height at which Ra is evaluated: the sampler height, or higher [m].

    When the sampler is not above the receptor canopy's inertial sublayer,
    z - d < m z0, Ra is evaluated at d + m z0 instead and the case is flagged.

    Parameters
    ----------
    z : array_like
        Sampler height above ground. [m]
    d : array_like
        Displacement height of the receptor. [m]
    z0 : array_like
        Roughness length of the receptor. [m]
    min_z0_multiple : float
        m, the least height above d in units of z0. [-]

    Returns
    -------
    z_ref : array_like
        [m]
    raised : array_like of bool
        True where z_ref > z.
    """
    z_min = d + min_z0_multiple * z0
    raised = z < z_min
    return where(raised, z_min, z), raised


def transfer_ustar(ustar_met, z0_met, d_met, z0, d, blending_height):
    """Friction velocity over a receptor from that over the wind mast's surface [m s-1].

    The two neutral logarithmic wind profiles are matched at the blending height,
    where the flow no longer feels the local surface.

    Parameters
    ----------
    ustar_met : array_like
        u* over the surface around the wind mast. [m s-1]
    z0_met, d_met : array_like
        Roughness length and displacement height of that surface. [m]
    z0, d : array_like
        Of the receptor surface. [m]
    blending_height : float
        z_b above ground. [m]

    Returns
    -------
    ustar : array_like
        [m s-1]

    Notes
    -----
    .. math:: u_* = u_{*,met}\\,\\frac{\\ln((z_b - d_{met})/z_{0,met})}{\\ln((z_b - d)/z_0)}

    References
    ----------
    Wieringa, J. (1986), Q. J. R. Meteorol. Soc. 112, 867-889 (blending height of
    about 60 m; from memory); Mason, P. J. (1988), Q. J. R. Meteorol. Soc. 114, 399.
    """
    return ustar_met * np.log((blending_height - d_met) / z0_met) / np.log(
        (blending_height - d) / z0)


def apply_floor(x, floor):
    """``max(x, floor)`` and the flag where the floor was used (NaN stays NaN)."""
    used = x < floor
    return where(used, floor, x), used


def apply_cap(x, cap):
    """``min(x, cap)`` and the flag where the cap was used (NaN stays NaN)."""
    used = x > cap
    return where(used, cap, x), used
