"""The aerodynamic limit of a particle Vd, checked at run time.

Zhang et al. (2001), Eq. 1: V_d = v_s + 1/(R_a + R_s) with R_a, R_s > 0, so

.. math:: v_s \\le V_d \\le v_s + 1/R_a

for every size and so for a mass-weighted V_d whose mode weights sum to 1 (v_s the
mass-weighted settling velocity).  :func:`check_aerodynamic_limit` holds each particle
species' V_d of the engine (:func:`workbench.drydep.core.velocities`) to it; a value
outside is a defect of the model code (a negative R_s, a settling or a weight that
does not belong to the V_d), raised as :class:`workbench.errors.ModelDefectError`.
Units: SI (m s-1, s m-1).
"""
from __future__ import annotations

import numpy as np

from ..errors import ModelDefectError

#: Relative tolerance of the bound [-] (numerical: a V_d is a sum of a few dozen
#: terms in double precision, whose rounding is some 1e-15 relative; 1e-9 leaves
#: room for that and for nothing a defect would make).
LIMIT_RTOL = 1e-9


def outside_limit(vd, vs, ra, rtol=LIMIT_RTOL):
    """Where V_d lies outside [v_s, v_s + 1/R_a] beyond the tolerance [bool].

    Parameters
    ----------
    vd : numpy.ndarray
        Mass-weighted deposition velocity. [m s-1]
    vs : numpy.ndarray
        Mass-weighted settling velocity (broadcastable to `vd`). [m s-1]
    ra : numpy.ndarray
        Aerodynamic resistance (broadcastable to `vd`). [s m-1]
    rtol : float
        Relative tolerance. [-]

    Returns
    -------
    numpy.ndarray of bool
        True where V_d > (v_s + 1/R_a)(1 + rtol) or V_d < v_s (1 - rtol); False where
        any of the three is NaN (comparisons with NaN are false) and where R_a = 0
        (1/R_a = inf: no upper bound).
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        upper = 1.0 / ra
        upper += vs
        upper *= 1.0 + rtol
        bad = vd > upper
        bad |= vd < vs * (1.0 - rtol)
    return bad


def check_aerodynamic_limit(vd, vs, ra, species, sites, receptors, times,
                            rtol=LIMIT_RTOL):
    """`vd` when it lies within [v_s, v_s + 1/R_a] wherever finite, else a located error.

    Parameters
    ----------
    vd : numpy.ndarray or dask.array.Array
        Mass-weighted V_d of `species`, dims (site, receptor, time). [m s-1]
    vs : array_like
        Mass-weighted settling velocity, broadcastable to `vd` (site, 1, time). [m s-1]
    ra : array_like
        Aerodynamic resistance, broadcastable to `vd`. [s m-1]
    species : str
    sites, receptors, times : sequence
        Labels of the three axes of `vd`.
    rtol : float
        Relative tolerance (:data:`LIMIT_RTOL`). [-]

    Returns
    -------
    numpy.ndarray or dask.array.Array
        `vd` itself (numpy: checked now); for a dask array the same values, checked
        inside each chunk's computation (``dask.array.map_blocks``), so that nothing
        is computed twice.

    Raises
    ------
    workbench.errors.ModelDefectError
        Naming the species, the site, the receptor and the first hour where V_d lies
        outside, with V_d, v_s and 1/R_a there.
    """
    if hasattr(vd, "dask"):
        import dask.array as dsa
        vs_l = dsa.broadcast_to(dsa.asarray(vs), vd.shape).rechunk(vd.chunks)
        ra_l = dsa.broadcast_to(dsa.asarray(ra), vd.shape).rechunk(vd.chunks)

        def block(v, s, r, block_info=None):
            start = [lo for lo, _ in block_info[0]["array-location"]]
            _raise_outside(v, s, r, species, sites[start[0]:], receptors[start[1]:],
                           times[start[2]:], rtol)
            return v
        return dsa.map_blocks(block, vd, vs_l, ra_l, dtype=vd.dtype)
    _raise_outside(vd, vs, ra, species, sites, receptors, times, rtol)
    return vd


def _raise_outside(vd, vs, ra, species, sites, receptors, times, rtol):
    """The :class:`ModelDefectError` of :func:`check_aerodynamic_limit`, if any (numpy)."""
    bad = outside_limit(vd, vs, ra, rtol)
    if not bad.any():
        return
    hours = np.flatnonzero(bad.any(axis=(0, 1)))
    t = hours[0]                              # the first hour, then its first site
    i, j = np.argwhere(bad[:, :, t])[0]
    v = float(vd[i, j, t])
    s = float(np.broadcast_to(vs, vd.shape)[i, j, t])
    r = float(np.broadcast_to(ra, vd.shape)[i, j, t])
    when = np.datetime_as_string(times[t], unit="m") if isinstance(
        times[t], np.datetime64) else str(times[t])
    raise ModelDefectError(
        f"internal error, a defect of the model code (not of the input): please report it. "
        f"The particle deposition velocity of {species} at site {str(sites[i])!r}, receptor "
        f"{str(receptors[j])!r}, first at {when} ({int(bad.sum())} values in all), is "
        f"Vd = {v:.6g} m/s, outside [v_s, v_s + 1/Ra] with v_s = {s:.6g} m/s (mass-weighted "
        f"settling) and 1/Ra = {1.0 / r if r else float('inf'):.6g} m/s (Zhang et al. 2001, "
        f"Eq. 1 with Rs > 0; relative tolerance {rtol:g})")
