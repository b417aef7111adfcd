"""The linear layer of a budget: each component as a sum of per-sample contributions.

The budget's components are computed from period sums (:mod:`workbench.budget`).  For
a Monte Carlo draw the errors that are random per sample (an analysis, a gauge depth)
must act on each sample before the sum, not on the sum, or the variance comes out
wrong.  This module takes the computed pieces of a run once and keeps, per site:

* dry: each air-sampling period's contribution to each reporting period and receptor
  ``A[n, P, R]`` [mol m-2] (:func:`workbench.dryflux.share_to_periods` with
  ``per_row``), whether its concentration was below detection, and the share of its
  deposition in each reporting period that its hours without a modelled Vd carry
  ``phi[n, P, R]`` [1] (the budget's reckoning of those hours,
  :func:`workbench.drycomponents.row_filled_deposition_share`); under
  ``pair_split`` the species a pair is moved into holds both members' sampling periods
  with its Vd, the other none (:func:`workbench.drypairs.component_rows`);
* wet: each (sample, period) piece's precipitation weight ``w`` [mm], the sample's
  concentrations [mol m-3] and whether they were valid or below detection, and which
  periods had their PWM filled from the multi-year seasonal means.

:func:`linear_layer` is the only function that reads a :class:`~workbench.pipeline.Study`;
everything downstream takes these arrays only, so a draw never re-runs the engine.
Units: deposition [mol m-2 of element], weights [mm], concentrations [mol m-3].

Where the parts are: the pieces and layers (:class:`DryPieces`, :class:`WetPieces`,
:class:`SiteLayer`, :class:`LinearLayer`), :func:`sample_identity`,
:func:`period_years` and :func:`change_instants` in
:mod:`workbench.analysis.layer_pieces`; the dry pieces in
:mod:`workbench.analysis.layer_dry`.  This module keeps the wet pieces and
:func:`linear_layer` and re-exports the others, so that
``workbench.analysis.layer.<name>`` keeps working.
"""
from __future__ import annotations

import numpy as np

from ..budget import COMPONENTS
from .bulk import bulk_parts, piece_betas  # noqa: F401  (bulk_parts moved there)
# the dry pieces (defined here before)
from .layer_dry import (_dry_layers, _emission_only_rows, _emission_pieces,  # noqa: F401
                        _exchange_rows, _row_classes, _seasalt_rows)
# the pieces, the layers and the names of the samples (defined here before)
from .layer_pieces import (DRY_SPECIES, WET_IONS, DryPieces, LinearLayer,  # noqa: F401
                           SiteLayer, WetPieces, change_instants, period_years,
                           sample_identity)


def _wet_layers(screened, wet, periods, wet_options, met, sites, ions):
    from ..wet.deposition import sample_weights
    out = [None] * len(sites)
    fills = [None] * len(sites)
    pwms = [dict() for _ in sites]
    if screened is None or wet is None:
        return out, fills, pwms
    ptable = periods.reset_index(drop=True)
    table, weight, *_ = sample_weights(screened, ptable, wet_options, met)
    i = table["interval"].to_numpy()
    p = table["period"].to_numpy()
    site_of = screened.variables["site"].values.astype(str)
    used = screened.variables["used"].values.astype(bool)
    wet_sites = [str(s) for s in wet["site"].values]
    for k, s in enumerate(sites):
        sel = np.flatnonzero(site_of[i] == s)
        if s in wet_sites:
            w = wet.sel(site=s)
            fills[k] = np.asarray(w["filled"].values, bool)
            pwms[k] = {ion: np.asarray(w[f"pwm_{ion}"].values, float)
                       for ion in ions if f"pwm_{ion}" in w}
        if not len(sel):
            continue
        local, inverse = np.unique(i[sel], return_inverse=True)
        conc, valid, cens = {}, {}, {}
        for ion in ions:
            if ion not in screened:
                continue
            c = np.asarray(screened.variables[ion].values, float)[i[sel]]
            ok = used[i[sel]] & np.isfinite(c)
            conc[ion], valid[ion] = np.where(ok, c, 0.0), ok
            cn = f"{ion}_censored"
            cens[ion] = (np.asarray(screened.variables[cn].values, bool)[i[sel]]
                         if cn in screened else np.zeros(len(sel), bool))
        ident = sample_identity(screened.variables["sampler_id"].values[local]
                                if "sampler_id" in screened.variables else np.full(len(local), ""),
                                screened.variables["start"].values[local])
        out[k] = WetPieces(inverse, p[sel], np.where(np.isfinite(weight[sel]), weight[sel], 0.0),
                           conc, valid, cens, len(local), ident,
                           np.asarray(screened.variables["start"].values[local], "datetime64[ns]"),
                           np.asarray(screened.variables["end"].values[local], "datetime64[ns]"),
                           sel)
    return out, fills, pwms


def linear_layer(result, study, which: str = "budget", overrides=None,
                 pair_shift=False, air_vd=False) -> LinearLayer:
    """The per-sample pieces of a run's budget (``which="budget"``) or of its years.

    Parameters
    ----------
    result : workbench.pipeline.Result
    study : workbench.pipeline.Study
        The study that computed `result` (its stages are cached: nothing is re-run).
    which : {"budget", "years"}
    overrides : dict, optional
        The site overrides `result` was run with (``Study.run(overrides=...)``).
    pair_shift : bool
        Also the pair members' rows at the other member's Vd (``SiteLayer.pair_moved``),
        for a drawn gas/particle split (``[uncertainty] pair_shift_<pair>``).
    air_vd : bool
        Also the parts of the species whose Vd follows the air on a grid of the air
        ratio (``SiteLayer.air_vd``, ``[uncertainty] vd_follows_air``,
        :mod:`workbench.analysis.airvd`): a few runs of the velocities on scaled air,
        stages of the study's graph.

    Returns
    -------
    LinearLayer
    """
    opts = result.options
    ds = result.budget if which == "budget" else result.years
    wet_opt, dry_opt, bud_opt = opts["wet"], opts["dry"], opts["budget"]
    if which == "budget":
        periods = result.periods
    else:
        labels = list(ds["period"].values)
        periods = study.periods("year", None, None, wet_opt.hydro_start_month)
        if list(periods["label"]) != labels:       # a run with start / end
            periods = study.periods("year", str(ds["period_start"].values[0]),
                                    str(ds["period_end"].values[-1]), wet_opt.hydro_start_month)
    sites = [str(s) for s in ds["site"].values]
    receptors = opts.get("receptors")
    rows = study.dry_rows(dry_opt, bud_opt, opts.get("fixed_velocity"), overrides, receptors)
    if rows is not None and list(rows["receptors"]) != list(ds["receptor"].values):
        raise ValueError("the dry rows' receptors differ from the budget's")
    from ..surfacehistory import land_use_history
    catalogue = study.catalogue(overrides)
    histories = {sid: (own, ch) for sid, own, ch in land_use_history(catalogue)}
    dry = _dry_layers(rows, periods, sites, ds.sizes["receptor"], study.inputs.air, histories,
                      nss=bud_opt.sulfate_basis == "nss", censored=bud_opt.air_censored)
    wet = study.wet(wet_opt, periods) if result.screened is not None else None
    tracer = wet_opt.seasalt_tracer
    nss = (bud_opt.sulfate_basis == "nss" and wet is not None and "dep_nssSO4" in wet)
    ions = list(WET_IONS) + ([tracer] if nss and tracer not in WET_IONS else [])
    wet_pieces, fills, pwms = _wet_layers(result.screened, wet, periods, wet_opt,
                                          study.inputs.met, sites, ions)
    from ..io.sitechanges import laboratory_ids
    by_id = {c.id: c for c in catalogue}
    wet_component = {j: ("nssSO4" if (sp == "SO4" and nss) else sp)
                     for j, (_, path, sp) in enumerate(COMPONENTS) if path == "wet"}
    bulk, raw = bulk_parts(result, study, wet, catalogue, periods, sites, overrides)
    layers = [SiteLayer(dry[k], wet_pieces[k], fills[k], pwms[k],
                        change_instants(by_id.get(s), "gauge"),
                        change_instants(by_id.get(s), "laboratory"),
                        laboratory_ids(by_id.get(s)), laboratory_ids(by_id.get(s), air=True),
                        bulk[k], piece_betas(raw, wet_pieces[k]) if bulk[k] else None)
              for k, s in enumerate(sites)]
    if air_vd and rows is not None:
        from .airvd import grid_pieces
        for lay, grid in zip(layers, grid_pieces(
                study, result, dry, periods, sites, ds.sizes["receptor"], histories,
                bud_opt.sulfate_basis == "nss", bud_opt.air_censored, overrides)):
            lay.air_vd = grid
    if pair_shift:
        from .pairlayer import moved_pieces
        # under the bidirectional NH3 exchange, pNH4 moved into NH3 takes its Vd
        exchange = (study.exchange_rows(dry_opt, bud_opt, "pNH4", opts.get("fixed_velocity"),
                                        overrides, receptors)
                    if rows is not None and "nh3_exchange" in rows else None)
        for lay, moved in zip(layers, moved_pieces(rows, periods, sites, ds.sizes["receptor"],
                                                   study.inputs.air, histories, _dry_layers,
                                                   exchange)):
            lay.pair_moved = moved
    return LinearLayer(ds, layers, period_years(periods), wet_component, tracer,
                       bool(air_vd))
