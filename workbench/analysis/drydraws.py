"""The dry side of a draw of the Monte Carlo (:mod:`.uncertainty`): a dry component's
drawn ratio to the point, and the components drawn directly rather than as a ratio,
the non-sea-salt pSO4 (the difference of two analyses, clipped at 0) and the net NH3
exchange of the bidirectional model (deposition part less emission part).

Units: deposition [mol m-2], factors and ratios [1].
"""
from __future__ import annotations

import numpy as np

from .drawratio import class_ratio, safe_ratio as _safe_ratio


def dry_ratio(pieces, vd_factor, air, vd_fill, class_factor=None):
    """Draws of a dry component over the point: (D, R, P) [1].

    Parameters
    ----------
    pieces : DryPieces
        ``contrib`` (n, P, R) [mol m-2], ``filled`` (n, P, R) [1], ``klass`` (n, R).
    vd_factor : ndarray (D, P)
        Vd factor of each draw and period [1].
    air : ndarray (D, n)
        Multiplicative error of each sample [1].
    vd_fill : ndarray (D, n)
        Relative error of each sample's filled Vd hours [1].
    class_factor : dict, optional
        Land-use class -> (D, P) Vd factor of a receptor of that class [1]
        (``vd_class_fraction`` > 0): each sample's part at each receptor takes the
        factor of the class there (a site's own surface follows its history).
    """
    a = pieces.contrib
    n, n_p, n_r = a.shape
    flat = a.reshape(n, n_p * n_r)
    total = flat.sum(0)
    dev = (air - 1.0) @ flat + (air * vd_fill) @ (pieces.filled * a).reshape(n, -1)
    # >= 0 as every factor is (1 - sum/sum can round to -1e-19 when every sample's
    # factor is cut to 0, which would read as a net emission)
    ratio = np.maximum(1.0 + _safe_ratio(dev, total), 0.0).reshape(-1, n_p, n_r)
    if not class_factor:
        return (vd_factor[:, :, None] * ratio).transpose(0, 2, 1)

    def part(of_class, r):                  # (D, P) the drawn sum of those rows [mol m-2]
        ac = a[:, :, r] * of_class[:, None]                                 # (n, P)
        return ac.sum(0) + (air - 1.0) @ ac + (air * vd_fill) @ (pieces.filled[:, :, r] * ac)
    return class_ratio(pieces, ratio, vd_factor, class_factor, part)


def nss_dry_draws(pieces, vd_factor, air, air_seasalt, vd_fill, class_factor=None):
    """Draws of a non-sea-salt pSO4 component: (D, R, P) [mol m-2], not ratios.

    Each row's contribution :math:`A_n = T_n - S_n` is its total pSO4's part
    :math:`T_n` less the sea-salt sulfate :math:`S_n` from its pNa
    (``pieces.seasalt``); the two analyses err apart, so a draw is

    .. math:: D = F\\, \\max\\Big(0, \\sum_n (\\delta^{SO4}_n T_n -
              \\delta^{Na}_n S_n)(1 + \\phi_n \\eta_n)\\Big)

    with the Vd factor :math:`F` (of the receptor's class where ``class_factor``), the
    per-sample errors :math:`\\delta` and the fill error :math:`\\eta` on the share
    :math:`\\phi` of the row's deposition its filled hours carry; the sum is clipped at 0
    as the budget clips the period's sum (docs/budget.md).  A period clipped in the
    budget thus gets draws that are 0 where the drawn sum stays below 0 and positive
    where the errors of pSO4 and pNa could make it so (before, its draws were all 0; and
    the error of the difference was taken as that of the nss value, too small where
    pSO4 and its sea salt nearly cancel).

    Parameters
    ----------
    pieces : DryPieces
        With ``seasalt`` (n, P, R) [mol m-2].
    vd_factor : ndarray (D, P)
    air, air_seasalt : ndarray (D, n)
        Errors of the pSO4 and pNa analyses of each row [1].
    vd_fill : ndarray (D, n)
    class_factor : dict, optional
        Land-use class -> (D, P) Vd factor.
    """
    a, ss = pieces.contrib, pieces.seasalt
    n, n_p, n_r = a.shape
    t = a + ss
    phi = pieces.filled

    def raw(mask):                     # (D, P, R) the drawn sum of the rows in `mask`
        m = mask[:, None, None]
        tt, sa, aa = (t * m).reshape(n, -1), (ss * m).reshape(n, -1), (a * m).reshape(n, -1)
        ph = phi.reshape(n, -1)
        out = (aa.sum(0) + (air - 1.0) @ tt - (air_seasalt - 1.0) @ sa
               + (air * vd_fill) @ (ph * tt) - (air_seasalt * vd_fill) @ (ph * sa))
        return out.reshape(-1, n_p, n_r)
    everything = np.ones(n, bool)
    if not class_factor:
        return (vd_factor[:, :, None] * np.maximum(raw(everything), 0.0)).transpose(0, 2, 1)
    klass = pieces.klass.astype(str)
    acc = np.zeros((air.shape[0], n_p, n_r))
    for r in range(n_r):
        for c in np.unique(klass[:, r]):
            acc[:, :, r] += class_factor.get(c, vd_factor) * raw(klass[:, r] == c)[:, :, r]
    return np.maximum(acc, 0.0).transpose(0, 2, 1)


def nh3_net_draws(pieces, vd_factor, air, vd_fill, class_factor=None, gamma=None):
    """Draws of the net NH3 exchange (bidirectional): (D, R, P) [mol m-2], not ratios.

    The net of a period is :math:`\\sum_n (B_n - E_n)`, with :math:`B_n` row *n*'s
    deposition part :math:`C_n\\, v_{d,bd}` and :math:`E_n` its emission part (from
    the compensation point, no concentration in it).  A draw is

    .. math:: D = F \\Big(\\sum_n B_n \\delta_n (1 + \\phi_n \\eta_n) -
              \\sum_n G_{c(n)} E_n\\Big)

    the Vd factor :math:`F` on both parts (a bias of the exchange's resistances scales
    the deposition and the emission alike), the concentration errors :math:`\\delta`
    and the fill error on the deposition part only, and the factor :math:`G_c` of the
    stomatal emission potential Gamma_s of the row's land-use class on the emission
    part only (E is proportional to Gamma_s).  The draws used to scale the net by
    the deposition-only rows' relative error, so a concentration error moved the net by
    its share of the net rather than of the deposition part (too little where emission
    and deposition nearly cancel), and turned a higher concentration into a larger net
    emission where the net was one.  Not clipped: a net emission stays negative.
    Under ``pair_split = "all_gas"`` the rows are both members' (a pNH4 row's B at the
    exchange's Vd, its E 0); under ``"all_particle"`` the NH3 samples' E alone (B 0).

    Parameters
    ----------
    pieces : DryPieces
        With ``exchange`` and ``emission`` (n, P, R) [mol m-2].
    vd_factor : ndarray (D, P)
    air, vd_fill : ndarray (D, n)
    class_factor : dict, optional
        Land-use class -> (D, P) Vd factor.
    gamma : dict, optional
        Land-use class (None where ``pieces.klass`` is None) -> (D, P) Gamma_s factor
        [1] (:func:`workbench.analysis.noise.nh3_gamma_factors`); None: not drawn.
    """
    import dataclasses
    dep = dataclasses.replace(pieces, contrib=pieces.exchange)
    n_d = air.shape[0]
    f_dep = dry_ratio(dep, vd_factor, air, vd_fill, class_factor)              # (D, R, P)
    b = pieces.exchange.sum(0).T[None]                                        # (1, R, P)
    e = pieces.emission.sum(0).T[None]
    ones, zeros = np.ones_like(air), np.zeros_like(vd_fill)
    if gamma is None:
        # F per receptor (of its class), as of the deposition part
        f_e = dry_ratio(dep, vd_factor, ones, zeros, class_factor)
    elif pieces.klass is None:
        f_e = (vd_factor * gamma[None])[:, None, :] * np.ones_like(e)
    else:
        # F G_c of each class, weighted by the emission its rows carry
        em = dataclasses.replace(pieces, contrib=pieces.emission)
        cf = {c: (class_factor or {}).get(c, vd_factor) * g for c, g in gamma.items()}
        f_e = dry_ratio(em, vd_factor, ones, zeros, cf)
    # dry_ratio gives F (1 + ...) relative to B; where B is 0 it is F alone
    return np.broadcast_to(f_dep * b - f_e * e, (n_d,) + b.shape[1:])
