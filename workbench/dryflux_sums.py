"""The cumulative sums along time of the dry flux and the deposition over each sampling
period from them (:func:`deposition_rows`, the numpy core of
:func:`~workbench.dryflux.period_deposition`); the samples shorter than an hour that
hold no hour's middle (split from :mod:`workbench.dryflux`, which re-exports every
name).
"""
from __future__ import annotations

import numpy as np

from .periods import hour_bounds


HOUR_S = 3600.0


def _cumulative(x, finite=None):
    """Cumulative sum along the last axis with a leading zero (NaN counted as 0).

    `finite` is ``np.isfinite(x)`` when the caller has it already; where every value is
    finite the sum runs on `x` itself (the same additions, no cleaned copy)."""
    if finite is None:
        finite = np.isfinite(x)
    clean = x if finite.all() else np.where(finite, x, 0.0)
    if clean.dtype != np.float64:            # (the sum in its own dtype, then float64)
        z = np.zeros(x.shape[:-1] + (1,))
        return np.concatenate([z, np.cumsum(clean, axis=-1)], axis=-1)
    out = np.empty(clean.shape[:-1] + (clean.shape[-1] + 1,))
    out[..., 0] = 0.0
    np.cumsum(clean, axis=-1, out=out[..., 1:])      # the same additions, no second copy
    return out


def _count_cumulative(mask):
    """Cumulative count of the true elements along the last axis, with a leading zero.

    Parameters
    ----------
    mask : ndarray of bool (..., T)

    Returns
    -------
    ndarray of float64 (..., T + 1)
        Element k is the number of true elements among the first k [1]: the same
        numbers as :func:`_cumulative` of ``mask.astype(float)`` (whole numbers, exact in
        float64), in one pass and without the float copy of the mask.

    >>> _count_cumulative(np.array([True, False, True])).tolist()
    [0.0, 1.0, 1.0, 2.0]
    """
    mask = np.asarray(mask, dtype=bool)
    out = np.empty(mask.shape[:-1] + (mask.shape[-1] + 1,))
    out[..., 0] = 0.0
    np.cumsum(mask, axis=-1, dtype=np.float64, out=out[..., 1:])
    return out


def effective_sums(vd, quantity, n_air=None, weight=None):
    """The cumulative effective Vd along time and the mask of its finite hours.

    Parameters
    ----------
    vd, quantity, n_air, weight :
        As for :func:`deposition_rows`.

    Returns
    -------
    cs : ndarray (S, R, T + 1)
        Cumulative effective Vd (``vd * weight``, times the molar density of air for a
        mixing ratio) [m or mol m-2], NaN hours counted as 0.
    finite : ndarray of bool (S, R, T) or None
        The finite hours of the effective Vd; None when every hour is.
    """
    eff = vd if weight is None else vd * weight
    if quantity == "mixing_ratio":
        if n_air is None:
            raise ValueError("a mixing ratio needs the hourly molar density of air")
        eff = eff * n_air[:, None, :]
    finite = np.isfinite(eff)
    cs = _cumulative(eff, finite)
    return cs, (None if finite.all() else finite)


def deposition_rows(conc, quantity, site_index, starts, ends, times, vd, n_air=None, weight=None,
                    sums=None):
    """Deposition over each sampling period (numpy core of :func:`period_deposition`).

    Parameters
    ----------
    conc : ndarray (n,)
        Concentrations [mol m-3] or mixing ratios [mol mol-1].
    quantity : {"amount_density", "mixing_ratio"}
    site_index : ndarray of int (n,)
        Row of each period in the site axis of `vd`.
    starts, ends : ndarray of datetime64 (n,)
    times : ndarray of datetime64 (T,)
        End-of-hour labels of `vd`.
    vd : ndarray (S, R, T)
        Hourly deposition velocity [m s-1] (gap-filled).
    n_air : ndarray (S, T), optional
        Molar density of air [mol m-3]; needed for mixing ratios.
    weight : ndarray (T,), optional
        Relative concentration by hour (diurnal profile), mean 1.
    sums : (ndarray, ndarray or None), optional
        ``(cs, cn)`` of these `vd`, `quantity`, `n_air` and `weight` when the caller has
        them (:func:`effective_sums`, and :func:`_count_cumulative` of its mask; the
        stages of :mod:`workbench.dryrows` share them among the species that read the
        same Vd); computed here when None.

    Returns
    -------
    dict
        ``deposition`` (n, R) [mol m-2], ``mean_eff`` (n, R) [m s-1 or mol m-2 s-1],
        ``n_valid`` (n, R), ``hours`` (n,), ``a``, ``b`` (hour index bounds),
        ``cs`` (S, R, T + 1) cumulative effective Vd, ``cn`` (S, R, T + 1) cumulative
        count of its finite hours (None when every hour is finite), for
        :func:`share_to_periods`.
    """
    if sums is None:
        cs, finite = effective_sums(vd, quantity, n_air, weight)
        cn = None if finite is None else _count_cumulative(finite)
    else:
        cs, cn = sums
    a, b = hour_bounds(times, starts, ends)
    total = cs[site_index, :, b] - cs[site_index, :, a]
    if cn is None:          # every hour counts: the count of [a, b) is b - a
        n_valid = np.repeat((b - a).astype(float)[:, None], cs.shape[1], axis=1)
    else:
        n_valid = cn[site_index, :, b] - cn[site_index, :, a]
    hours = (ends - starts) / np.timedelta64(1, "h")
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_eff = np.where(n_valid > 0, total / n_valid, np.nan)
    dep = conc[:, None] * mean_eff * hours[:, None] * HOUR_S
    return {"deposition": dep, "mean_eff": mean_eff, "n_valid": n_valid, "hours": hours,
            "a": a, "b": b, "cs": cs, "cn": cn, "start": starts, "end": ends}


def no_hour_inside(starts, ends, a, b):
    """The samples shorter than an hour whose interval holds no hour's middle [bool].

    Such a sample has no hour of Vd (:func:`~workbench.periods.hour_bounds`), so no
    flux, and adds no covered hours either (:func:`share_to_periods`).

    Parameters
    ----------
    starts, ends : ndarray of datetime64 (n,)
    a, b : ndarray of int (n,)
        Their hour bounds on the hour axis.
    """
    return (b <= a) & ((ends - starts) < np.timedelta64(1, "h"))
