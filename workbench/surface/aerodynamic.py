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
from ._array import blockwise, plain_numpy, where
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
    if plain_numpy(z, d, z0, ustar, inv_obukhov):  # large arrays in cache-sized blocks
        return blockwise(_aerodynamic_resistance, z, d, z0, ustar, inv_obukhov)
    return _aerodynamic_resistance(z, d, z0, ustar, inv_obukhov)


def _aerodynamic_resistance(z, d, z0, ustar, inv_obukhov):
    """The formula of :func:`aerodynamic_resistance` (same arguments and units) [s m-1]."""
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


#: Neutral constants A, B of the geostrophic drag law (Garratt, J. R. (1992), The
#: Atmospheric Boundary Layer, Cambridge University Press, Sect. 3.2.4; from memory:
#: published values span A 1.0-1.9, B 4.3-5.1) [-].
DRAG_LAW_A = 1.7
DRAG_LAW_B = 4.5
#: Angular velocity of the Earth [s-1] (IERS conventions, 7.292115e-5; from memory).
EARTH_ROTATION = 7.292115e-5
#: Least |latitude| of the Coriolis parameter in the drag law [degree] (the law does
#: not hold near the equator; numerical device, common practice).
DRAG_LAW_MIN_LATITUDE = 5.0
#: Fixed-point steps of the drag-law solve (u* enters its logarithm only; 6 steps
#: change u* by < 1e-6 relative for z0 1e-4 to 3 m; numerical device).
DRAG_LAW_ITERATIONS = 6


def coriolis_parameter(latitude):
    """Coriolis parameter |f| = 2 Omega |sin(latitude)|, at least that of 5 degrees [s-1].

    Parameters
    ----------
    latitude : array_like
        [degree]

    Returns
    -------
    f : array_like
        [s-1]
    """
    lat = np.maximum(np.abs(latitude), DRAG_LAW_MIN_LATITUDE)
    return 2.0 * EARTH_ROTATION * np.sin(np.deg2rad(lat))


def _drag_law_denominator(ustar, z0, coriolis):
    """sqrt((ln(u*/(f z0)) - A)^2 + B^2) of the neutral geostrophic drag law [-]."""
    return np.sqrt((np.log(ustar / (coriolis * z0)) - DRAG_LAW_A) ** 2 + DRAG_LAW_B ** 2)


def transfer_ustar_drag_law(ustar_met, z0_met, z0, coriolis):
    """Friction velocity over a receptor by the neutral geostrophic drag law [m s-1].

    The alternative to :func:`transfer_ustar` for a receptor surface that covers the
    landscape: both surfaces are taken in equilibrium with the same geostrophic wind
    G, from the top of the boundary layer down, rather than with the same wind at a
    60 m blending height.  Over a rougher surface this gives less u* (about 1.45 times
    the grass value over a 14 m conifer canopy, against about 2.1 at 60 m).

    Parameters
    ----------
    ustar_met : array_like
        u* over the surface around the wind mast. [m s-1]
    z0_met : array_like
        Its roughness length. [m]
    z0 : array_like
        Roughness length of the receptor. [m]
    coriolis : array_like
        |f| (:func:`coriolis_parameter`). [s-1]

    Returns
    -------
    ustar : array_like
        [m s-1]

    Notes
    -----
    .. math:: \\frac{\\kappa G}{u_*} = \\sqrt{\\left(\\ln\\frac{u_*}{f z_0} - A\\right)^2 + B^2}

    solved for G over the mast's surface, then for u* over the receptor by fixed-point
    steps.  Neutral; the mast's u* already carries the stability.  Tennekes, H. (1973),
    in Workshop on Micrometeorology, AMS, 177-216; Garratt (1992), Eq. (3.50) (from
    memory).
    """
    # a calm hour (u* = 0 at the mast) has no geostrophic wind to carry down: 0 here
    # (the receptor's u* floor applies later), not 0 x inf
    ustar_met = np.asarray(ustar_met, float)
    calm = ustar_met == 0.0
    u_in = np.where(calm, 1.0, ustar_met)
    kg = u_in * _drag_law_denominator(u_in, z0_met, coriolis)   # kappa G
    us = u_in
    for _ in range(DRAG_LAW_ITERATIONS):
        us = kg / _drag_law_denominator(us, z0, coriolis)
    return np.where(calm, 0.0, us)


def apply_floor(x, floor):
    """``max(x, floor)`` and the flag where the floor was used (NaN stays NaN)."""
    used = x < floor
    return where(used, floor, x), used


def apply_cap(x, cap):
    """``min(x, cap)`` and the flag where the cap was used (NaN stays NaN)."""
    used = x > cap
    return where(used, cap, x), used
