"""The dry side of the linear layer (:mod:`workbench.analysis.layer`): each air
sampling period's contribution to each reporting period and receptor, its fill share,
the land-use class of each row, the sea-salt sulfate of a non-sea-salt pSO4 row and
the deposition and emission parts of the bidirectional NH3 exchange.  Re-exported by
:mod:`workbench.analysis.layer`.
"""
from __future__ import annotations

import numpy as np

from .layer_pieces import DRY_SPECIES, DryPieces, sample_identity


def _row_classes(receptors, start, end, history):
    """(n, R) land-use class of each sample at each receptor: the receptor's own name,
    but on a site's own surface with a declared land-use history (``history`` the
    ``(land_use, changes)`` of :func:`workbench.surfacehistory.land_use_history`) the
    class in force at the middle of the sample."""
    from ..surfacehistory import _segments
    out = np.empty((len(start), len(receptors)), object)
    out[:] = np.asarray(receptors, object)[None, :]
    if history is not None and history[0] in receptors:
        instants, classes = _segments(history[1])
        mid = start + (end - start) // 2
        k = np.searchsorted(instants, mid, side="right")
        out[:, list(receptors).index(history[0])] = np.asarray(classes, object)[k]
    return out


def _seasalt_rows(pr, r, air, censored="half"):
    """(n, P, R) sea-salt sulfate deposition each nss pSO4 row had taken off [mol m-2]:
    its contribution over its nss concentration (the row's air volume at its Vd) times
    0.0605 pNa (Keene et al. 1986, :func:`workbench.wet.seasalt.seawater_ratio`); 0 where
    pNa is missing (total pSO4 used), the nss concentration is 0, or the pSO4 was below
    detection (its substitute is already non-sea-salt).  A pNa below
    detection takes the budget's substitute (`censored`, ``[budget] air_censored``).
    Also (n,) whether the row's pNa was below detection."""
    from ..dryflux import _censored_values
    from ..wet.seasalt import seawater_ratio
    na_all, cens_all = _censored_values(air, "pNa", censored)
    na = np.asarray(na_all, float)[r["air_row"]]
    cens = np.asarray(cens_all, bool)[r["air_row"]]
    conc = np.asarray(r["conc"], float)
    # a pSO4 below detection took its non-sea-salt part from the limit less the sea
    # salt (workbench.drycomponents._nss_particles): it is drawn as that substitute
    # with censored_rel_sd, no sea-salt part of its own
    so4_cens = np.asarray(r.get("censored", np.zeros(len(conc), bool)), bool)
    ok = np.isfinite(na) & np.isfinite(conc) & (conc != 0) & ~so4_cens
    per_c = np.where(ok, seawater_ratio("SO4", "Na") * np.where(ok, na, 0.0)
                     / np.where(ok, conc, 1.0), 0.0)
    return pr * per_c[:, None, None], cens & ok


def _exchange_rows(rows, parts, axes, times, n_sites):
    """Each NH3 row's deposition and emission parts of the bidirectional exchange, or None.

    Returns ``(deposition, emission)``, each (n, P, R) [mol m-2] in the order of the
    rows of the NH3 component (`parts`, :func:`workbench.drypairs.component_rows`):
    an NH3 row holds C vd_NH3_bidirectional and its emission; under ``pair_split =
    "all_gas"`` (pNH4 moved into the NH3 exchange, ``rows["nh3_exchange"]["moved"]``)
    a pNH4 row holds its C vd_NH3_bidirectional (as mol of NH3) and no emission, as
    :func:`workbench.drycomponents.dry_components` sums the net.  None where the
    exchange's rows cannot be matched to the component's (the draws then scale the
    net as a whole).
    """
    from ..dryflux import share_to_periods
    ex = rows.get("nh3_exchange")
    if ex is None or not parts:
        return None
    moved = ex.get("moved")
    split = rows.get("split", {}).get("ammonium")

    def same(x, r):
        return (len(x["a"]) == len(r["a"]) and np.array_equal(x["site_index"], r["site_index"])
                and np.array_equal(x["a"], r["a"]) and np.array_equal(x["b"], r["b"]))

    def per_row(x):
        *_, pr = share_to_periods(x["site_index"], x["a"], x["b"], x["deposition"], x["cs"],
                                  n_sites, axes, times, x["start"], x["end"], per_row=True,
                                  cn=x.get("cn"))
        return np.where(np.isfinite(pr), pr, 0.0)
    dep, emi = [], []
    for name, r, factor in parts:
        member = name if isinstance(name, str) else name[-1]
        if member == "NH3" and same(ex["deposition"], r) and same(ex["emission"], r):
            dep.append(factor * per_row(ex["deposition"]))
            emi.append(per_row(ex["emission"]))
        elif (moved is not None and split is not None and split[0] == "NH3"
              and member == split[1] and same(moved, r)):
            dep.append(factor * per_row(moved))           # pNH4 at the exchange's Vd
            emi.append(np.zeros_like(dep[-1]))              # emits nothing of its own
        else:
            return None
    return np.concatenate(dep), np.concatenate(emi)


def _emission_only_rows(rows, axes, times, n_sites):
    """The NH3 rows of a net exchange that is the emission alone, or None.

    Under ``pair_split = "all_particle"`` the NH3 component has no rows of its own
    (:func:`workbench.drypairs.component_rows`: the pair is pNH4's) but the net
    exchange stands with C(NH3) = 0: -E over the NH3 samples.  Returns ``(rows piece,
    emission (n, P, R) [mol m-2])`` of those samples so that the draws hold E with its
    factors (the Vd factor, Gamma_s); None otherwise.
    """
    from ..dryflux import share_to_periods
    ex = rows.get("nh3_exchange")
    split = rows.get("split", {}).get("ammonium")
    if ex is None or split is None or split[0] == "NH3" or split[1] != "NH3":
        return None
    e = ex["emission"]
    *_, pr = share_to_periods(e["site_index"], e["a"], e["b"], e["deposition"], e["cs"],
                              n_sites, axes, times, e["start"], e["end"], per_row=True,
                              cn=e.get("cn"))
    return ex["deposition"], np.where(np.isfinite(pr), pr, 0.0)


def _dry_layers(rows, periods, sites, n_r, air, histories=None, nss=False, censored="half"):
    from ..drycomponents import row_filled_deposition_share
    from ..drypairs import component_rows
    from ..dryflux import period_axes, share_to_periods
    from ..periods import hour_bounds
    out = [dict() for _ in sites]
    if rows is None:
        return out
    axes = period_axes(periods)
    times = rows["times"]
    pa, pb = hour_bounds(times, axes.start, axes.end)
    row_sites = list(rows["sites"])
    for sp in DRY_SPECIES:
        # the rows behind the component: its own, or under pair_split both members'
        # rows with its Vd (each shared by its own coverage) or none (a 0 component)
        parts = component_rows(rows, sp)
        if not parts:
            eo = (_emission_only_rows(rows, axes, times, len(row_sites)) if sp == "NH3"
                  else None)
            if eo is not None:
                _emission_pieces(out, eo, sites, row_sites, rows, air, n_r, histories)
            continue
        _, c_fill = rows["vd_cum"][sp]          # the Vd of `sp` in every part
        per_row, si, filled, cens, member, sampler, start, end = ([] for _ in range(8))
        air_row = []
        ss = [] if (nss and sp == "pSO4" and "pNa" in air) else None
        ss_cens = []
        samplers = air["sampler_id"].values.astype(str)
        for name, r, factor in parts:
            *_, pr = share_to_periods(r["site_index"], r["a"], r["b"], r["deposition"],
                                      r["cs"], len(row_sites), axes, times, r["start"],
                                      r["end"], per_row=True, cn=r.get("cn"))
            a, b = r["a"], r["b"]
            per_row.append(factor * np.where(np.isfinite(pr), pr, 0.0))
            if ss is not None:
                s_rows, s_cens = _seasalt_rows(per_row[-1], r, air, censored)
                ss.append(s_rows)
                ss_cens.append(s_cens)
            si.append(r["site_index"])
            # the share of the deposition that the hours not modelled (filled, or
            # without any Vd: the budget's reckoning of them) carry, per sampling period
            # and reporting period: a gap of day hours weighs more than one of nights
            filled.append(row_filled_deposition_share(r["site_index"], a, b, r["cs"],
                                                      c_fill, pa, pb, r.get("cn")))
            cens.append(np.asarray(r.get("censored", np.zeros(len(a), bool)), bool))
            # the sample behind each row: the member species (a bracket's rows are
            # both members'), its sampler and start
            member.append(np.full(len(a), name if isinstance(name, str) else name[-1]))
            sampler.append(samplers[r["air_row"]])
            air_row.append(np.asarray(r["air_row"]))
            start.append(np.asarray(r["start"]))
            end.append(np.asarray(r["end"]))
        exch = (_exchange_rows(rows, parts, axes, times, len(row_sites))
                if sp == "NH3" else None)
        per_row, si = np.concatenate(per_row), np.concatenate(si)
        ss = None if ss is None else np.concatenate(ss)
        ss_cens = np.concatenate(ss_cens) if ss is not None else None
        filled, cens = np.concatenate(filled), np.concatenate(cens)
        member, sampler = np.concatenate(member), np.concatenate(sampler)
        air_row = np.concatenate(air_row)
        start = np.concatenate(start).astype("datetime64[ns]")
        end = np.concatenate(end).astype("datetime64[ns]")
        for k, s in enumerate(sites):
            if s not in row_sites:
                continue
            # the site's rows that reach a reporting period (the others add nothing)
            sel = np.flatnonzero((si == row_sites.index(s))
                                 & (per_row != 0).any(axis=(1, 2)))
            if not len(sel):
                continue
            recs = list(rows["receptors"])[:n_r]
            out[k][sp] = DryPieces(per_row[sel][:, :, :n_r], cens[sel], filled[sel], sel,
                                   sample_identity(sampler[sel], start[sel], member[sel]),
                                   start[sel], end[sel],
                                   _row_classes(recs, start[sel], end[sel],
                                                (histories or {}).get(s)),
                                   None if ss is None else ss[sel][:, :, :n_r],
                                   None if ss is None or not ss_cens[sel].any()
                                   else ss_cens[sel],
                                   None if exch is None else exch[0][sel][:, :, :n_r],
                                   None if exch is None else exch[1][sel][:, :, :n_r],
                                   air_row[sel])
    return out


def _emission_pieces(out, eo, sites, row_sites, rows, air, n_r, histories):
    """NH3 pieces holding the emission alone (``pair_split = "all_particle"`` under the
    bidirectional exchange): no deposition part, no fill share (the fill error acts on
    the deposition part), each NH3 sample's emission (:func:`_emission_only_rows`)."""
    r, emission = eo
    si = np.asarray(r["site_index"])
    samplers = air["sampler_id"].values.astype(str)[r["air_row"]]
    start = np.asarray(r["start"]).astype("datetime64[ns]")
    end = np.asarray(r["end"]).astype("datetime64[ns]")
    cens = np.asarray(r.get("censored", np.zeros(len(si), bool)), bool)
    recs = list(rows["receptors"])[:n_r]
    for k, s in enumerate(sites):
        if s not in row_sites:
            continue
        sel = np.flatnonzero((si == row_sites.index(s)) & (emission != 0).any(axis=(1, 2)))
        if not len(sel):
            continue
        e = emission[sel][:, :, :n_r]
        zero = np.zeros_like(e)
        out[k]["NH3"] = DryPieces(zero, cens[sel], zero, sel,
                                  sample_identity(samplers[sel], start[sel],
                                                  np.full(len(sel), "NH3")),
                                  start[sel], end[sel],
                                  _row_classes(recs, start[sel], end[sel],
                                               (histories or {}).get(s)),
                                  exchange=zero, emission=e)
