"""The wet side of a draw of the Monte Carlo (:mod:`.uncertainty`): the drawn PWMs and
precipitation of each period, a gauge change's catch per piece, and the bulk
collector's share redrawn with them (:mod:`.bulk`).

Units: weights [mm], concentrations [mol m-3], factors and ratios [1].
"""
from __future__ import annotations

import numpy as np

from .drawratio import safe_ratio as _safe_ratio


def wet_ratios(wet, pwm_point, filled, gauge, depth, pconc, pwm_fill, n_periods, wanted,
               tracer="Na", gauge_piece=None, bulk=None):
    """Draws of the wet deposition of each ion over the point: ion -> (D, P) [1].

    Parameters
    ----------
    wet : WetPieces
    pwm_point : dict
        ion -> (P,) point PWM [mol m-3] (for the non-sea-salt sulfate).
    filled : ndarray (P,) of bool or None
        PWM filled from the multi-year seasonal means.
    gauge : ndarray (D, P)
        Gauge catch factor per draw and period [1].
    depth : ndarray (D, n_samples)
    pconc, pwm_fill : dict
        ion -> (D, n_samples) and (D, P) factors [1].
    wanted : iterable of str
        Ions (``SO4``, ``NO3``, ``NH4``) and ``nssSO4``.
    gauge_piece : tuple of ndarray, optional
        ``(catch (D, Y G), onto (Y G, m))``: their product is the gauge catch of each
        (sample, period) piece when the site changed its gauge [1]
        (:func:`_gauge_by_piece`); it multiplies the piece's depth (in the precipitation and in the PWM's
        weights alike), so a period under two gauges takes each one's catch by the
        share of its depth under it; `gauge` is then used for a period without
        samples only.  None: one catch per period (`gauge`).
    bulk : tuple, optional
        ``(beta (m,), keys)``: the bulk share of each piece [1] and the keys (ions,
        ``nssSO4``, ``precip``) whose bulk share to draw with the same errors
        (:func:`workbench.analysis.bulk.drawn_shares`).

    Returns
    -------
    dict
        ion -> (D, P) [1]; with `bulk`, ``(that dict, key -> (D, P) drawn shares)``.
    """
    onehot = np.zeros((len(wet.sample), n_periods))
    onehot[np.arange(len(wet.sample)), wet.period] = 1.0
    w = wet.weight[:, None] * onehot                                 # (m, P) [mm]
    eps = depth[:, wet.sample]                                       # (D, m), a copy
    if gauge_piece is not None:
        # (gauge catch per draw and year-gauge (D, Y G), onto the pieces (Y G, m)):
        # made here and multiplied in place, so that no second (D, m) array stays
        g, onto = gauge_piece
        eps *= g @ onto
    precip = np.maximum(1.0 + _safe_ratio((eps - 1.0) @ w, w.sum(0)), 0.0)
    if gauge_piece is not None:            # the catch is in the depths already
        precip = np.where(w.sum(0) > 0, precip, gauge)
        gauge = 1.0
    pwm = {}
    for ion in set(wanted) | ({"SO4", tracer} if "nssSO4" in wanted else set()):
        if ion not in wet.conc:
            continue
        ok = wet.valid[ion][:, None] * w
        cw = wet.conc[ion][:, None] * ok
        num = 1.0 + _safe_ratio((eps * pconc[ion][:, wet.sample] - 1.0) @ cw, cw.sum(0))
        den = 1.0 + _safe_ratio((eps - 1.0) @ ok, ok.sum(0))
        with np.errstate(invalid="ignore", divide="ignore"):   # den 0: every valid
            r = np.where(den > 0, np.maximum(num, 0.0) / np.where(den > 0, den, 1.0),
                         1.0)                  # sample without depth: the point PWM
        if filled is not None and filled.any():
            r = np.where(filled[None, :], pwm_fill[ion], r)
        pwm[ion] = r
    out = {}
    for ion in wanted:
        if ion == "nssSO4":
            from ..wet.seasalt import non_seasalt
            if "SO4" not in pwm or tracer not in pwm:
                continue
            so4, tr = pwm_point["SO4"], pwm_point[tracer]
            point = non_seasalt(so4, tr, "SO4", tracer)
            drawn = non_seasalt(so4 * pwm["SO4"], tr * pwm[tracer], "SO4", tracer)
            r = np.where(np.isfinite(point) & (point != 0), _safe_ratio(drawn, point), 1.0)
        elif ion in pwm:
            r = pwm[ion]
        else:
            continue
        out[ion] = gauge * precip * r
    if bulk is None:
        return out
    from .bulk import drawn_shares
    beta, keys = bulk
    need = {ion for k in keys for ion in ((("SO4", tracer) if k == "nssSO4" else (k,)))
            if ion in wet.conc}
    shares = drawn_shares({i: wet.conc[i] for i in need}, {i: wet.valid[i] for i in need}, w,
                          eps, {i: pconc[i][:, wet.sample] for i in need}, beta, keys, tracer)
    return out, shares


def _gauge_by_piece(ls, gauge_periods, yi, ds):
    """The gauge catch of a site that changed its gauge: ((D, P) of the gauge in force at
    the middle of each period, for a period without samples; the factors of each
    (sample, period) piece as ``(catch (D, Y G), onto (Y G, m))``, whose product gives
    each piece the catch of each gauge by the share of the sample's hours under it).  Each piece takes the factors of its period's year (``"each_year"``)."""
    from .noise import hour_shares
    wet = ls.wet
    changes = ls.gauge_changes
    n_y, n_g = gauge_periods.shape[1], gauge_periods.shape[2]
    share = hour_shares(changes, wet.start, wet.end)                  # (n_samples, G)
    m = len(wet.sample)
    onto = np.zeros((n_y, n_g, m))
    onto[yi[wet.period], :, np.arange(m)] = share[wet.sample]
    piece = (np.ascontiguousarray(gauge_periods).reshape(gauge_periods.shape[0], -1),
             onto.reshape(n_y * n_g, m))
    p0 = np.asarray(ds["period_start"].values, "datetime64[ns]")
    p1 = np.asarray(ds["period_end"].values, "datetime64[ns]")
    g_of_p = np.searchsorted(changes, p0 + (p1 - p0) // 2, side="right")
    return gauge_periods[:, yi, g_of_p], piece
