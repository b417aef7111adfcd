"""The rows a drawn gas/particle split moves (``[uncertainty] pair_shift_<pair>``):
each pair member's samples deposited with the other member's Vd, taken from the
bracket's rows (:mod:`.pairdraws` applies them); under ``[dry] nh3_treatment =
"bidirectional"`` pNH4 moved into NH3 is deposited with the Vd of the net exchange.

Units: deposition [mol m-2 of N].
"""
from __future__ import annotations

from ..budget import PAIRS
from ..budgetstatus import bracket_velocities


def moved_pieces(rows, periods, sites, n_r, air, histories, dry_layers,
                 exchange=None) -> list:
    """The other member's rows at the Vd of each member, per site.

    Parameters
    ----------
    rows : dict
        :func:`workbench.drycomponents.dry_rows` of the run (its ``"bracket"``).
    periods, sites, n_r, air, histories
        As for :func:`workbench.analysis.layer._dry_layers`.
    dry_layers : callable
        That function (passed: the layer imports this module).
    exchange : tuple, optional
        Under the bidirectional NH3 exchange (``rows["nh3_exchange"]``): the pNH4 rows
        deposited with the exchange's Vd and that Vd's cumulative hour counts
        (:meth:`workbench.pipeline.Study.exchange_rows`).  They replace the bracket's
        pNH4 rows at the deposition-only NH3 Vd: the net flux of the compensation
        point model is linear in the air concentration, F = chi_a V_d - E with V_d
        and E set by the canopy alone (:mod:`workbench.drydep.nh3_bidirectional`), so
        NH3 raised by a share s of pNH4 adds s C V_d over each pNH4 sample and leaves
        E as it was.

    Returns
    -------
    list of dict
        Per site: pair -> species moved into -> :class:`~.layer.DryPieces` of the
        other member's samples deposited with that species' Vd [mol m-2 of N], their
        identities those of the samples' own member.  None for a pair that
        ``pair_split`` already moves (its split is set there) or without a bracket.
    """
    out = [dict() for _ in sites]
    if rows is None:
        return out
    split = rows.get("split", {})
    for pair, (gas, part) in PAIRS.items():
        if pair in split:
            continue
        for how, into in bracket_velocities((gas, part)).items():
            other = part if into == gas else gas
            r = rows["bracket"].get((pair, how), {}).get(other)
            if r is None or into not in rows["vd_cum"]:
                continue
            sub = {k: v for k, v in rows.items() if k != "nh3_exchange"}
            sub.update(split={}, species={into: r})
            if into == "NH3" and "nh3_exchange" in rows:
                if exchange is None:
                    raise ValueError("a drawn share of pNH4 moved into the bidirectional "
                                     "NH3 exchange needs its rows at the exchange's Vd")
                sub.update(species={into: exchange[0]},
                           vd_cum={**rows["vd_cum"], into: exchange[1]})
            for k, lay in enumerate(dry_layers(sub, periods, sites, n_r, air, histories)):
                p = lay.get(into)
                if p is not None:
                    p.ident = [(other,) + tuple(i[1:]) for i in p.ident]
                    out[k].setdefault(pair, {})[into] = p
    return out
