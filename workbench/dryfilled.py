"""The share of the dry deposition whose Vd is not modelled (gap-filled from the mean
diurnal cycle, or missing and taken as the sampling period's mean): per reporting
period for the budget's ``vd_filled_share`` (:func:`covered_filled_share`), and per
sampling period and reporting period for the Monte Carlo's gap-fill error
(:func:`row_filled_hours`, :func:`row_filled_deposition_share`, read by
:mod:`workbench.analysis.layer`), from the same reckoning of hours.
Units: hours [h], shares [1], cumulative Vd [m s-1 h, or mol m-2 s-1 h].
"""
from __future__ import annotations

import numpy as np


def covered_filled_share(site_index, a, b, c_fill, pa, pb, cn=None, known=None):
    """Share of the hours behind each reporting period's flux whose Vd is not modelled.

    The hours behind the flux are those of the period (on the hour axis) inside a
    sampling period whose deposition is known: only they enter it.  Of these, an hour
    counts as not modelled when its Vd was filled from the diurnal cycle or, without
    any Vd (nor air density, for a mixing ratio), took the sampling period's mean Vd
    (:func:`.dryflux.deposition_rows`).  A fill outside them changes nothing, and a fill inside
    them weighs by their number, not by the period's (docs/budget.md, "Gaps in Vd").

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds of each sampling period (:func:`.dryflux.deposition_rows`).
    c_fill : ndarray (S, R, T + 1)
        Cumulative count of filled hours [1].
    pa, pb : ndarray of int (P,)
        Hour bounds of the reporting periods.
    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (``deposition_rows``'
        ``cn``; None: every hour has one).
    known : ndarray of bool (n, R), optional
        The sampling period's deposition is known (default: every one).

    Returns
    -------
    ndarray (S, R, P)
        Not-modelled hours / hours behind the flux [1]; NaN where there are none.
    """
    n_s, n_r, n_p = c_fill.shape[0], c_fill.shape[1], len(pa)
    imputed = np.zeros((n_s, n_p, n_r))
    behind = np.zeros((n_s, n_p, n_r))
    if len(a):
        part, hours = row_filled_hours(site_index, a, b, c_fill, pa, pb, cn)
        hours = hours[:, :, None]                         # (row, period, 1)
        w = (np.ones((len(a), 1, n_r)) if known is None
             else np.asarray(known, float)[:, None, :])
        np.add.at(imputed, site_index, part * w)
        np.add.at(behind, site_index, hours * w)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(behind > 0, imputed / behind, np.nan)
    return share.transpose(0, 2, 1)


def _overlap_bounds(a, b, pa, pb):
    """Hour bounds of the overlap of each sampling period with each reporting period.

    The one reckoning of the overlap that :func:`row_filled_hours` counts hours in
    and :func:`row_filled_deposition_share` sums Vd over, on the cumulative arrays'
    hour axis (an overlap [lo, hi) holds hi - lo hours).

    Parameters
    ----------
    a, b : ndarray of int (n,)
        Hour bounds [start, end) of each sampling period [h, index on the hour axis].
    pa, pb : ndarray of int (P,)
        Hour bounds [start, end) of the reporting periods [h, index on the hour axis].

    Returns
    -------
    lo, hi : ndarray of int (n, P)
        Start and end of each overlap [h, index on the hour axis]; hi = lo where the
        two do not overlap (no hours).

    >>> lo, hi = _overlap_bounds(np.array([2]), np.array([9]), np.array([0, 5]), np.array([5, 12]))
    >>> lo.tolist(), hi.tolist()
    ([[2, 5]], [[5, 9]])
    """
    lo = np.maximum(a[:, None], pa[None, :])
    hi = np.maximum(np.minimum(b[:, None], pb[None, :]), lo)
    return lo, hi


def row_filled_hours(site_index, a, b, c_fill, pa, pb, cn=None):
    """Each sampling period's hours in each reporting period, and those not modelled.

    The per-row parts of :func:`covered_filled_share` (which sums them over a site's
    rows), so that the Monte Carlo's share of gap-filled Vd per sampling period
    (:mod:`workbench.analysis.layer`) is the budget's, not a second reckoning.

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds of each sampling period (:func:`.dryflux.deposition_rows`).
    c_fill : ndarray (S, R, T + 1)
        Cumulative count of filled hours [1].
    pa, pb : ndarray of int (P,)
        Hour bounds of the reporting periods.
    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (None: every hour).

    Returns
    -------
    imputed : ndarray (n, P, R) [h]
        Hours of the overlap whose Vd was filled or, missing, took the sampling
        period's mean Vd.
    hours : ndarray (n, P) [h]
        Hours of the overlap on the hour axis.
    """
    si = site_index[:, None]
    lo, hi = _overlap_bounds(a, b, pa, pb)                # (row, period)
    hours = (hi - lo).astype(float)
    part = c_fill[si, :, hi] - c_fill[si, :, lo]          # (row, period, R)
    if cn is not None:
        part = part + hours[:, :, None] - (cn[si, :, hi] - cn[si, :, lo])
    return part, hours


def row_filled_deposition_share(site_index, a, b, cs, c_fill, pa, pb, cn=None):
    """The share of each sampling period's deposition in each reporting period that its
    hours without a modelled Vd carry [1] (for the gap-fill error of the Monte Carlo).

    A sampling period deposits C x (sum of its hourly effective Vd) (C constant over
    it), so the part its filled hours carry is the sum of their filled Vd over the sum
    of all, and an hour without any Vd carries the sampling period's mean effective Vd
    (as in :func:`workbench.dryflux.share_to_periods`).  A gap of day hours (high Vd)
    weighs more than as many night hours.  The hours and counts are those of
    :func:`row_filled_hours` (the budget's reckoning); where the overlap carries no Vd
    at all the share of hours is returned.

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds of each sampling period.
    cs : ndarray (S, R, T + 1)
        Cumulative effective Vd [m s-1, or mol m-2 s-1 for a mixing ratio].
    c_fill : ndarray (S, R, T + 1)
        Cumulative count of filled hours [1].
    pa, pb : ndarray of int (P,)
        Hour bounds of the reporting periods.
    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (None: every hour).

    Returns
    -------
    ndarray (n, P, R) [1]
    """
    imputed, hours = row_filled_hours(site_index, a, b, c_fill, pa, pb, cn)
    filled_h = np.diff(c_fill, axis=-1) > 0                    # (S, R, T)
    c_vf = np.zeros(cs.shape)
    np.cumsum(np.where(filled_h, np.diff(cs, axis=-1), 0.0), axis=-1, out=c_vf[..., 1:])
    si = site_index[:, None]
    lo, hi = _overlap_bounds(a, b, pa, pb)                # (row, period)
    v_fill = c_vf[si, :, hi] - c_vf[si, :, lo]            # (row, period, R)
    v_all = cs[si, :, hi] - cs[si, :, lo]
    if cn is not None:         # an hour without Vd carries the row's mean Vd
        n_miss = hours[:, :, None] - (cn[si, :, hi] - cn[si, :, lo])
        whole = (cs[site_index, :, b] - cs[site_index, :, a])[:, None, :]
        n_whole = (cn[site_index, :, b] - cn[site_index, :, a])[:, None, :]
        with np.errstate(invalid="ignore", divide="ignore"):
            mean_v = np.where(n_whole > 0, whole / n_whole, 0.0)
        v_fill = v_fill + n_miss * mean_v
        v_all = v_all + n_miss * mean_v
    with np.errstate(invalid="ignore", divide="ignore"):
        by_hours = imputed / np.maximum(hours, 1.0)[:, :, None]
        share = np.where(v_all > 0, v_fill / np.where(v_all > 0, v_all, 1.0), by_hours)
    return np.clip(share, 0.0, 1.0)
