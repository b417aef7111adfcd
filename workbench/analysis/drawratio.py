"""Ratios of drawn sums to the point's for the Monte Carlo's draws
(:mod:`.wetdraws`, :mod:`.drydraws`, :mod:`.airvd`): a division that gives 0 where the
point is 0, and a dry component's ratio with each receptor's land-use-class Vd factor.

Units: deposition [mol m-2], factors and ratios [1].
"""
from __future__ import annotations

import numpy as np


def safe_ratio(num, den):
    """``num / den`` where ``den != 0``, else 0 (same units as ``num / den``)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(den != 0, num / np.where(den != 0, den, 1.0), 0.0)


def class_ratio(pieces, ratio, vd_factor, class_factor, part):
    """Draws of a dry component over the point, each receptor with the Vd factor of its
    land-use class: (D, R, P) [1].

    A receptor whose class changes among its samples (a site's own surface with a
    land-use history) sums F_c times the drawn part of the samples of class c.

    Parameters
    ----------
    pieces : DryPieces
        ``contrib`` (n, P, R) [mol m-2], ``klass`` (n, R).
    ratio : ndarray (D, P, R)
        The drawn sum over the point's [1].
    vd_factor : ndarray (D, P)
        The Vd factor of a class not in `class_factor` [1].
    class_factor : dict
        Land-use class -> (D, P) Vd factor [1].
    part : callable
        ``part(of_class, r)``: (D, P) the drawn sum [mol m-2] of the rows of receptor
        ``r`` where the boolean (n,) `of_class` holds.
    """
    a = pieces.contrib
    n_r = a.shape[2]
    klass = pieces.klass.astype(str)
    out = np.stack([class_factor.get(klass[0, r], vd_factor) for r in range(n_r)], -1) * ratio
    for r in np.flatnonzero(~(klass == klass[:1]).all(0)):
        acc = np.zeros(ratio.shape[:2])
        for c in np.unique(klass[:, r]):
            acc += class_factor.get(c, vd_factor) * part(klass[:, r] == c, r)
        out[:, :, r] = np.maximum(safe_ratio(acc, a[:, :, r].sum(0)), 0.0)
    return out.transpose(0, 2, 1)
