"""The drawn shares of the gas/particle pairs (``[uncertainty] pair_shift_<pair>``) of
one site, beside its other factors (:mod:`.noise`); applied in :mod:`.pairdraws`.

Units: shares and factors [1].
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..budget import PAIRS
from .noise import _site_factor, _stream_key, keyed_normal_factor

#: Tag of a site's drawn gas/particle share (after the site's key, with the pair), next
#: to the tags of :mod:`.noise`.
PAIR_SHIFT = 12


@dataclass
class PairShift:
    """The drawn share of one pair at one site.

    ``share`` (D, Y) the signed share s [1] (> 0: of the particle to the gas; < 0: of
    the gas to the particle); ``fill`` species moved into -> (D, n) relative errors of
    the filled Vd hours of the moved rows (the stream ``vd_fill:<species>`` of each
    sample, as under ``pair_split``) [1]."""

    share: np.ndarray
    fill: dict


def pair_shift_draws(layer_site, opt, key, d, n_years, year0):
    """The site's drawn shares: pair -> :class:`PairShift`, or None (none drawn).

    A pair is drawn where its range is not [0, 0], both members have rows at the site
    and the moved rows were built (:func:`moved_pieces`; not under ``pair_split``
    other than ``"measured"``).  The share is uniform on the range, from the stream of
    the site, tag :data:`PAIR_SHIFT` and the pair (one per calendar year under
    ``"each_year"``, :func:`workbench.analysis.noise._site_factor`)."""
    moved = getattr(layer_site, "pair_moved", None) or {}
    out = {}
    for pair, (gas, part) in PAIRS.items():
        lo, hi = opt.pair_shift(pair) if hasattr(opt, "pair_shift") else (0.0, 0.0)
        m = moved.get(pair, {})
        if (lo, hi) == (0.0, 0.0) or not m or gas not in layer_site.dry \
                or part not in layer_site.dry:
            continue
        share = _site_factor(opt, key, [PAIR_SHIFT] + _stream_key((pair,)), d, n_years,
                             year0, lambda r: r.uniform(lo, hi, d))
        fill = {}
        for into, p in m.items():
            sd = np.where((p.filled > 0).any(axis=(1, 2)), opt.vd_fill_rel_sd, 0.0)
            fill[into] = keyed_normal_factor(key, f"vd_fill:{into}", p.ident, sd, d) - 1.0
        out[pair] = PairShift(share, fill)
    return out or None




def with_pair_shift(noise, layer_site, opt, seed_key, n_years, year0):
    """`noise` (:class:`.noise.SiteNoise`) with its ``pair_shift`` drawn
    (:func:`pair_shift_draws`; None where none is drawn); returned."""
    noise.pair_shift = pair_shift_draws(layer_site, opt, _stream_key(seed_key),
                                        noise.vd.shape[0], n_years, year0)
    return noise
