"""The drawn gas/particle split of a filter pack's pairs in the Monte Carlo
(``[uncertainty] pair_shift_nitrate``, ``pair_shift_ammonium``).

A filter pack's split of nitrate between HNO3 and pNO3 (and of ammonium between NH3
and pNH4) is not exact: ammonium nitrate caught on the front filter volatilises in
warm weather and is caught again as gas on the back filters.  Under ``[budget]
pair_split = "measured"`` the budget takes the split as measured; here a share
:math:`s` of the pair is drawn per site (uniform on ``[low, high]``, shared by its
years, or per calendar year under ``systematic_errors = "each_year"``) and moved:

.. math:: s \\ge 0: \\quad D_p' = \\sum_n (1 - s) A^{p}_n, \\quad
          D_g' = D_g + s \\sum_n A^{p \\to g}_n

.. math:: s < 0: \\quad D_g' = \\sum_n (1 + s) A^{g}_n, \\quad
          D_p' = D_p - s \\sum_n A^{g \\to p}_n

with :math:`A^{p}_n` a particle sample's contribution at its own Vd and
:math:`A^{p \\to g}_n` the same sample deposited with the gas's Vd (the rows of the
``all_gas`` bracket, as ``pair_split`` uses them: :func:`workbench.drypairs.
component_rows`); each moved sample keeps its own analytical errors (its
member's, by its identity), the moved part takes the Vd factor and the fill error of
the Vd it is deposited with.  Both members are in mol of N (one N atom each).  The
shift is applied where both members of the pair have a deposition at the site and
period; elsewhere the components stay as drawn without it.  A draw whose share is 0
in every year keeps its draws bit for bit.

Under ``[dry] nh3_treatment = "bidirectional"`` the NH3 component is the net exchange
:math:`F = \\chi_a V_d - E` of the compensation point model, linear in the air
concentration :math:`\\chi_a` for a fixed canopy state (:math:`V_d` and :math:`E`
do not depend on it, :mod:`workbench.drydep.nh3_bidirectional`).  So the pNH4 moved
into NH3 (:math:`A^{p \\to g}_n`) is deposited with the exchange's :math:`V_d`
(:func:`.pairlayer.moved_pieces`) and adds no emission; the NH3 moved out scales the
deposition part of its rows only (:func:`workbench.analysis.drydraws.nh3_net_draws`).

The shares are drawn in :mod:`.pairnoise`, the moved rows built in :mod:`.pairlayer`.
Units: deposition [mol m-2], shares and factors [1].
"""
from __future__ import annotations

import numpy as np

from ..budget import COMPONENTS, PAIRS
from .drydraws import dry_ratio

#: Dry species of the budget (:data:`workbench.analysis.layer.DRY_SPECIES`, not
#: imported: the layer imports :mod:`.pairlayer`, the noise the layer).
DRY_SPECIES = tuple(c[2] for c in COMPONENTS if c[1] == "dry")

def row_shares(share, start, end, year0) -> np.ndarray:
    """(D, n) the share of each row's sample [1] from `share` (D, Y): that of the
    calendar year of the sample's middle (within the run's years)."""
    t0 = np.asarray(start, "datetime64[ns]")
    t1 = np.asarray(end, "datetime64[ns]")
    mid = t0 + (t1 - t0) // 2
    yi = np.clip(mid.astype("datetime64[Y]").astype(int) + 1970 - int(year0), 0,
                 share.shape[1] - 1)
    return share[:, yi]


def apply_pair_shift(layer, site, noise, year0, out, draw):
    """Move the drawn share of each pair in the component draws `out` (D, R, P, C)
    [mol m-2] of one site (in place; returned).

    `draw(species, air)` gives the draws (D, R, P) [mol m-2] of a dry component with
    the air errors `air` (species -> (D, n)) in place of the site's
    (:func:`workbench.analysis.sitedraws.dry_draws`): the source member's are scaled by
    1 - |s| sample by sample, so its every path (a net NH3 exchange's deposition part
    too) loses the share."""
    shifts = getattr(noise, "pair_shift", None)
    if not shifts:
        return out
    ls = layer.sites[site]
    point = layer.budget["deposition"].values[site]                    # (R, P, C)
    yi = layer.period_year - year0
    index = {sp: j for j, (_, path, sp) in enumerate(COMPONENTS) if path == "dry"}
    for pair, ps in shifts.items():
        gas, part = PAIRS[pair]
        kept, add = {}, {}
        for src, into, sign in ((part, gas, 1.0), (gas, part, -1.0)):
            mv = ls.pair_moved.get(pair, {}).get(into)
            s = np.clip(sign * ps.share, 0.0, 1.0)                        # (D, Y)
            if mv is None or not s.any():
                continue
            own = ls.dry[src]
            air = dict(noise.air)
            air[src] = noise.air[src] * (1.0 - row_shares(s, own.start, own.end, year0))
            kept[src] = draw(src, air)
            # the moved samples keep their own analytical errors (by identity)
            col = {i: c for c, i in enumerate(own.ident)}
            pairs = [(c, col[i]) for c, i in enumerate(mv.ident) if i in col]
            a_mv = np.ones((s.shape[0], len(mv.ident)))
            if pairs:
                to, frm = map(list, zip(*pairs))
                a_mv[:, to] = noise.air[src][:, frm]
            a_mv = a_mv * row_shares(s, mv.start, mv.end, year0)
            k = DRY_SPECIES.index(into)
            cf = ({c: f[:, yi, k] for c, f in noise.vd_class.items()}
                  if noise.vd_class and mv.klass is not None else None)
            add[into] = (dry_ratio(mv, noise.vd[:, yi, k], a_mv, ps.fill[into], cf)
                         * mv.contrib.sum(0).T[None])
        both = np.isfinite(point[..., index[gas]]) & np.isfinite(point[..., index[part]])
        # a draw whose share is 0 in every year keeps its draws as they were, bit for bit
        # (the moved part at a share of 0 sums to 0 only to within rounding)
        moves = (ps.share != 0).any(axis=1)[:, None, None] & both[None]
        for sp in (gas, part):
            if sp not in kept and sp not in add:
                continue
            j = index[sp]
            v = kept.get(sp, out[..., j]) + add.get(sp, 0.0)
            out[..., j] = np.where(moves, v, out[..., j])
    return out
