"""The bulk collector's part of the wet deposition in the Monte Carlo (``scale_wet``).

Under ``[budget] bulk_correction = "scale_wet"`` the budget writes a wet component
(docs/budget.md, "Bulk collectors")

.. math:: D = D_0 \\,(1 - s\\,(1 - f))

with :math:`D_0` the unscaled wet deposition, :math:`s` the share of it that the bulk
samples carry (1 in a period wholly under bulk, 0 under wet-only; in a period holding a
collector change, :math:`s = \\sum_{valid} \\beta_i w_i C_i / \\sum_{valid} w_i C_i`, the
bulk samples' part of the PWM's numerator, :math:`\\beta_i` the bulk share of piece
*i*) and :math:`f` the ion's ``bulk_wet_factor``.  A draw takes

.. math:: D' = D_0' \\,(1 - s'\\,(1 - f u))

with :math:`D_0'` the drawn unscaled deposition (:func:`~.wetdraws.wet_ratios`),
:math:`u` the drawn factor over :math:`f` (``bulk_factor_rel_sd``, one per site and
ion, correlated among the ions by ``bulk_factor_ion_correlation``) and
:math:`s'` the share recomputed from the same draw's depth and analysis errors of each
sample (:func:`drawn_shares`): the errors of the bulk samples are scaled by :math:`f`,
those of the wet-only samples are not.  Where :math:`s` is 0 or 1 (a period under one
collector) :math:`s' = s` and the draw is :math:`D (1 + b (u - 1))`, b the bulk part of
D, exactly as before.  Units: shares and factors [1].
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..budget import COMPONENTS

#: How a period's share s is drawn: held at the point (a period under one collector,
#: or the share of its hours), from the samples' contributions, from their precipitation
#: (a period whose PWM was filled from the climatology).
HELD, SAMPLES, PRECIP = 0, 1, 2


@dataclass
class BulkPart:
    """The bulk samples' part of one wet component at one site (``scale_wet``).

    Attributes
    ----------
    b : ndarray (P,)
        Share of the budget's D that the bulk samples carry after the factor [1],
        b = s f / (1 - s (1 - f)).
    s : ndarray (P,)
        Share of the unscaled D0 that the bulk samples carry [1] (the budget's).
    f : float
        The component's wet-only / bulk ratio (``BudgetOptions.bulk_factor``) [1].
    redraw : ndarray (P,) of int
        :data:`HELD`, :data:`SAMPLES` or :data:`PRECIP`: how s is drawn.
    """

    b: np.ndarray
    s: np.ndarray
    f: float
    redraw: np.ndarray


def bulk_parts(result, study, wet, catalogue, periods, sites, overrides=None):
    """Per site: wet component index -> :class:`BulkPart` (empty dicts under another
    correction or without precipitation), and per site the ``collector_split`` rows'
    bulk share of each piece (None where no collector changed).

    The shares are those of the budget (:func:`workbench.budget.assemble`), from the same
    functions; a component's factor is its ion's (``bulk_wet_factor_ion``, else
    ``bulk_wet_factor``).
    """
    bud = result.options["budget"]
    out = [dict() for _ in sites]
    if bud.bulk_correction != "scale_wet" or wet is None:
        return out, None
    from ..budget_axes import _collector_split_on, _wet_bulk_share
    from ..surfacehistory import collector_shares
    labels = periods["label"].values
    n_p = len(labels)
    share, _ = collector_shares(catalogue, sites, periods)
    raw = study.collector_split(result.options["wet"], periods, overrides)
    split = _collector_split_on(raw, sites, n_p)
    if split is not None:
        share = np.where(np.isfinite(split["hour_share"]), split["hour_share"], share)
    if not (share > 0).any():
        return out, None
    w = wet.reindex(site=sites, period=labels)
    whole = share >= 1.0
    straddle = (share > 0) & ~whole
    filled = (w["filled"].values.astype(bool) if "filled" in w
              else np.zeros(share.shape, bool))
    for j, (_, path, sp) in enumerate(COMPONENTS):
        if path != "wet":
            continue
        f = bud.bulk_factor(sp)
        dep_share = _wet_bulk_share(split, w, sp, bud)[0] if split is not None else share
        s = np.where(whole, 1.0, np.where(straddle, dep_share, 0.0))
        den = 1.0 - s * (1.0 - f)
        b = np.where(den > 0, s * f / np.where(den > 0, den, 1.0), 0.0)
        redraw = np.full(s.shape, HELD, np.int8)
        if split is not None:
            nss = sp == "SO4" and bud.sulfate_basis == "nss" and "dep_nssSO4" in w
            by_samples = np.isfinite(split["share"].get(f"nss{sp}" if nss else sp,
                                                        np.full(s.shape, np.nan)))
            by_precip = np.isfinite(split["precip_share"])
            redraw = np.where(filled, np.where(by_precip, PRECIP, HELD),
                              np.where(by_samples, SAMPLES,
                                       np.where(by_precip, PRECIP, HELD))).astype(np.int8)
            redraw = np.where(straddle & (den > 0), redraw, HELD).astype(np.int8)
        for k in range(len(sites)):
            if b[k].any():
                out[k][j] = BulkPart(b[k], s[k], f, redraw[k])
    return out, raw


def piece_betas(raw, wet_pieces) -> np.ndarray | None:
    """The bulk share of each (sample, period) piece of one site's :class:`WetPieces`
    (their ``row`` in the sample-weights table that ``collector_split`` read), or None
    when the tables differ (then no share is redrawn)."""
    if raw is None or wet_pieces is None or getattr(wet_pieces, "row", None) is None:
        return None
    beta = raw.get("beta")
    if beta is None or len(raw.get("interval", ())) != len(beta):
        return None
    row = wet_pieces.row
    if len(row) and (row.max() >= len(beta)
                     or not np.array_equal(raw["period"][row], wet_pieces.period)):
        return None
    return np.asarray(beta, float)[row]


def drawn_shares(conc, valid, w, eps, pconc_piece, beta, keys, tracer):
    """The bulk samples' share of the unscaled wet deposition in each draw: key -> (D, P)
    [1] (NaN where it cannot be formed: the point's is used there).

    Parameters
    ----------
    conc, valid : dict
        ion -> (m,) concentration [mol m-3] and validity of each piece.
    w : ndarray (m, P)
        Each piece's precipitation weight in its period [mm].
    eps : ndarray (D, m)
        The drawn depth factor of each piece (the gauge catch in it) [1].
    pconc_piece : dict
        ion -> (D, m) the drawn analysis factor of each piece [1].
    beta : ndarray (m,)
        Bulk share of each piece [1].
    keys : iterable of str
        Ions and ``"nssSO4"`` and ``"precip"`` (the share of the precipitation).
    tracer : str
        Sea-salt tracer of the non-sea-salt sulfate.
    """
    from ..wet.seasalt import non_seasalt
    bw = beta[:, None] * w
    out = {}

    def sums(ion):                   # (PWM, bulk part of it) per draw [mol m-3]
        ok = valid[ion][:, None] * w
        cw = conc[ion][:, None] * ok
        x = eps * pconc_piece[ion]
        den = eps @ ok
        with np.errstate(invalid="ignore", divide="ignore"):
            return (x @ cw) / den, (x @ (beta[:, None] * cw)) / den
    with np.errstate(invalid="ignore", divide="ignore"):
        for key in keys:
            if key == "precip":
                out[key] = (eps @ bw) / (eps @ w)
            elif key == "nssSO4":
                if "SO4" not in conc or tracer not in conc:
                    continue
                (p_s, b_s), (p_t, b_t) = sums("SO4"), sums(tracer)
                out[key] = np.clip(non_seasalt(b_s, b_t, "SO4", tracer)
                                   / non_seasalt(p_s, p_t, "SO4", tracer), 0.0, 1.0)
            elif key in conc:
                p, b = sums(key)
                out[key] = np.clip(b / p, 0.0, 1.0)
    return out


def apply_bulk(r, part: BulkPart, u, share=None):
    """Draws of a wet component over its point with its bulk part: (D, P) [1].

    Parameters
    ----------
    r : ndarray (D, P)
        The drawn unscaled deposition over its point, D0'/D0 [1].
    part : BulkPart
    u : ndarray (D, P) or None
        The drawn factor over ``bulk_wet_factor`` (None: not drawn, 1).
    share : ndarray (D, P), optional
        The drawn share s' (:func:`drawn_shares`) for the periods of ``part.redraw``.
    """
    b = part.b[None, :]
    old = r if u is None else r * (1.0 + b * (u - 1.0))
    if share is None or not np.any(part.redraw != HELD):
        return old
    uu = 1.0 if u is None else u
    s_d = np.where(np.isfinite(share), share, part.s[None, :])
    new = r * (1.0 - s_d * (1.0 - part.f * uu)) / (1.0 - part.s * (1.0 - part.f))[None, :]
    return np.where((part.redraw != HELD)[None, :], new, old)
