"""The assembly of a site budget: wet + dry components per site, receptor and period,
their completeness, status and notes, and the per-element totals (:func:`assemble`);
re-exported by :mod:`workbench.budget`.
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import xarray as xr

from .budget_axes import (_collector_split_on, _dry_on_receptors, _same_axis, _season_ok,
                          _wet_bulk_share, annual_factor)
from .budget_components import (BULK_CAUGHT_IN, COMPONENTS, FRACTIONS, OMISSIONS, PAIRS,
                                PARTICLES)
from .budget_options import BudgetError, BudgetOptions
from .budget_totals import _totals, text_variable
from .budgetstatus import (NO_PNA_AT_SITE, as_flag, bracket_outputs, bulk_caught_brackets,
                           dry_failure_words, dry_status, join_notes, nh3_net_component,
                           sampling_gap_note,
                           wet_component, wet_outputs, wet_sulfate_total)
from .budgetstatus_dry import _met_gap_hours, _met_gaps, _met_without
from .surfacehistory import collector_shares, period_notes
from .wet.deposition import COVERAGE_SHORT


def wet_on_axes(wet: xr.Dataset, sites, labels):
    """The wet chain's Dataset on the budget's (site, period) axes, its period status
    (NaN read as ``missing``) and its completeness failure [bool]."""
    w = wet if _same_axis(wet, "site", sites) and _same_axis(wet, "period", labels) else \
        wet.reindex(site=sites, period=labels)
    w_status = w.variables["status"].values.astype(object)
    w_status = np.where(pd.isna(w_status), "missing", w_status)
    w_fail = (as_flag(w.variables["completeness_failed"].values)
              if "completeness_failed" in w.variables else w_status == "flagged")
    return w, w_status, w_fail


def wet_parts(wet: xr.Dataset, sites, labels, options) -> dict:
    """:func:`workbench.budgetstatus.wet_component` (with its failure words) of each wet
    component of the budget (``SO4``, ``NO3``, ``NH4``), on the budget's (site, period)
    axes: what :func:`assemble` starts each wet component from.  It reads
    ``options.sulfate_basis`` only (the ``wet_components`` stage keeps it across the
    changes of the other options).

    Returns
    -------
    dict
        species -> (status, note, deposition [mol m-2] or None, fails, share [1],
        failure), each (site, period).
    """
    return _wet_parts(*wet_on_axes(wet, list(sites), list(labels)), options)


def _wet_parts(w, w_status, w_fail, options) -> dict:
    return {sp: wet_component(w, sp, options, w_status, w_fail, with_failure=True)
            for _, path, sp in COMPONENTS if path == "wet"}


def _dry_judged(dr, d_species, wanted, shape, d_cov, d_vdc, d_fs, d_fc, d_meas, d_sok,
                d_ratio, hours_p, options) -> dict:
    """The status, completeness failure, failure words and note of every dry component
    of the budget found in `dr` (:func:`workbench.budgetstatus.dry_status` in one call,
    the species on a last axis: its steps, the gap notes' and the failure words' are
    element by element, so each species gets what a call of its own gave it).

    Returns
    -------
    dict
        ``species`` (those of `wanted` in `d_species`, in that order) and ``status``,
        ``fails``, ``note``, ``failure``, ``coverage``, ``flux_coverage`` and
        ``vd_coverage`` [1], each (site, receptor, period, species).
    """
    found = [sp for sp in wanted if sp in d_species]
    ks = [d_species.index(sp) for sp in found]
    shape = tuple(shape) + (len(ks),)
    cov = np.broadcast_to(d_cov[:, None, :, ks], shape)
    vdc, fs, fc = d_vdc[..., ks], d_fs[..., ks], d_fc[..., ks]
    meas = np.broadcast_to(d_meas[:, None, None, ks], shape)
    sok = d_sok[:, None, :, ks]
    n_s, n_p = shape[0], shape[2]
    mk = (dr.variables["masked_note"].values[:, ks].astype(object)
          if "masked_note" in dr.variables else np.full((n_s, len(ks)), "", object))
    pm = (dr.variables["period_masked_note"].values[:, :, ks].astype(object)
          if "period_masked_note" in dr.variables
          else np.full((n_s, n_p, len(ks)), "", object))
    st, fl, why = dry_status(cov, vdc, fs, fc, meas, sok, np.asarray(d_ratio, bool)[ks],
                             options, masked=mk[:, None, None, :], period_masked=pm[:, None],
                             met_without=_met_without(dr)[:, None, None, None],
                             met_gaps=_met_gaps(dr)[:, None, :, None],
                             met_gap_h=_met_gap_hours(dr)[:, None, :, None])
    why = sampling_gap_note(why, st, cov, hours_p[None, None, :, None], "air")
    if "species_gap_note" in dr.variables:   # the sampler and dates of the gap
        spg = dr.variables["species_gap_note"].values[:, None, :, ks]
        why = np.where(st != "missing", join_notes(why, spg), why).astype(object)
    failure = np.where(fl, dry_failure_words(cov, fc, sok, options), "")
    return {"species": found, "status": st, "fails": fl, "note": why, "failure": failure,
            "coverage": cov, "flux_coverage": fc, "vd_coverage": vdc}


def budget_layout(catalogue, periods: pd.DataFrame, receptors, collector=None) -> dict:
    """What of a budget reads no option: its sites, the receptors each site has
    (``active``), the collector in force over each period (the bulk share of its hours,
    the words of a change, the sample split of `collector`:
    :func:`workbench.surfacecollectors.collector_shares`,
    :func:`workbench.surfacehistory.collector_split`), the land-use notes of its dry
    rows (:func:`workbench.surfacehistory.period_notes`), the hours and yearly factor of
    each period and the coordinates of the result (the ``budget_layout`` stage: kept
    across every option change; :func:`assemble` computes it without it).

    Returns
    -------
    dict
        ``sites``, ``receptors``, ``active`` (site, receptor), ``bulk_share`` [1],
        ``coll_words``, ``estimated``, ``bulk_p``, ``straddle`` (site, period),
        ``bulk`` (site), ``split`` (or None), ``lu`` (site, receptor, period),
        ``labels``, ``hours_p`` [h] and ``coords`` (the result's, ``total`` and the
        species axes of the air and wet variables aside).
    """
    sites = catalogue.ids
    receptors = list(receptors)
    n_p = len(periods)
    comps = list(COMPONENTS)
    active = np.array([[r in catalogue[s].surfaces for r in receptors] for s in sites])
    # the collector in force over each period (docs/budget.md, "Bulk collectors": a
    # declared collector change is followed): share of the period's hours under bulk
    bulk_share, coll_words = collector_shares(catalogue, sites, periods)
    # sample by sample where the samples are known (workbench/surfacecollectors.py,
    # collector_split): the hours sampled under bulk; `estimated` where a sample that
    # holds a change's day was split between the collectors
    split = _collector_split_on(collector, sites, n_p)
    if split is not None:
        bulk_share = np.where(np.isfinite(split["hour_share"]), split["hour_share"], bulk_share)
        mixed = (bulk_share > 0) & (bulk_share < 1)
        # a period whose samples hold both collectors names both (even if its dates do not)
        dated = np.char.find(coll_words.astype(str), " until ") >= 0
        coll_words = np.where(mixed & ~dated, split["both_words"], coll_words).astype(object)
        estimated = split["estimated"] & mixed
    else:
        estimated = (bulk_share > 0) & (bulk_share < 1)
    bulk_p = bulk_share >= 1.0                       # (site, period) wholly bulk
    labels = periods["label"].values
    elements = np.array([c[0] for c in comps])
    pathways = np.array([c[1] for c in comps])
    species = np.array([c[2] for c in comps])
    coords = {"site": sites, "receptor": receptors, "period": labels,
              "component": [f"{e}/{p}/{s}" for e, p, s in comps],
              "element": ("component", elements), "pathway": ("component", pathways),
              "species": ("component", species),
              "period_start": ("period", periods["start"].values),
              "period_end": ("period", periods["end"].values),
              "period_hours": ("period", periods["hours"].to_numpy(dtype=float)),
              "annual_factor": ("period", annual_factor(periods))}
    return {"sites": sites, "receptors": receptors, "active": active,
            "bulk_share": bulk_share, "coll_words": coll_words, "estimated": estimated,
            "split": split, "bulk_p": bulk_p,
            "straddle": (bulk_share > 0) & ~bulk_p,  # a collector change inside
            "bulk": bulk_share.max(axis=1) > 0,      # (site,) bulk in some period
            # a site's own surface under a land-use class other than its land_use in
            # the period (workbench/surfacehistory.py): its dry rows say which
            "lu": period_notes(catalogue, sites, receptors, periods),
            "labels": labels, "hours_p": periods["hours"].to_numpy(dtype=float),   # [h]
            "elements": elements, "pathways": pathways, "species": species,
            "coords": coords}


def wet_columns(wet: xr.Dataset, layout: dict, options, wet_from=None) -> dict:
    """The budget's wet components on its (site, period) axes, after the bulk
    collectors (the ``wet_assembled`` stage: it reads ``sulfate_basis`` and the bulk
    options only, so a change of a completeness option keeps it), and the wet
    variables the budget carries.

    Parameters
    ----------
    wet : xarray.Dataset
        :func:`workbench.wet.wet_deposition` on the budget's periods.
    layout : dict
        :func:`budget_layout`.
    options : BudgetOptions
    wet_from : dict, optional
        :func:`wet_parts` (computed here without it).

    Returns
    -------
    dict
        ``components``: species -> the note of a component without a number (str), or
        a dict of (site, period) arrays: ``deposition`` [mol m-2], ``status``,
        ``fails``, ``failure``, ``note``, ``completeness`` [1] and the wet
        ``fractions`` [1]; ``variables`` (xarray Variables) and ``wet_ion``.
    """
    sites, labels, hours_p = layout["sites"], layout["labels"], layout["hours_p"]
    bulk_p, straddle, split = layout["bulk_p"], layout["straddle"], layout["split"]
    bulk_share, coll_words, estimated = (layout["bulk_share"], layout["coll_words"],
                                         layout["estimated"])
    w, w_status, w_fail = wet_on_axes(wet, sites, labels)
    if wet_from is None:
        wet_from = _wet_parts(w, w_status, w_fail, options)
    w_frac = np.fmin(np.fmin(w.variables["gauge_fraction"].values,
                             w.variables["coverage_fraction"].values),
                     w.variables["valid_precip_fraction"].values)
    components = {}
    for _, path, sp in COMPONENTS:
        if path != "wet":
            continue
        st, note, d, fl, ion_share, why_fail = wet_from[sp]
        if d is None:
            components[sp] = f"no {sp} column in the precipitation chemistry"
            continue
        if "coverage_fraction" in w.variables:        # a gap within the thresholds
            note = sampling_gap_note(note, st, w.variables["coverage_fraction"].values,
                                     hours_p[None, :], "precipitation",
                                     stated_by=COVERAGE_SHORT)
        if options.bulk_correction == "scale_wet":
            f = options.bulk_factor(sp)
            d = np.where(bulk_p, d * f, d)
            note = np.where(bulk_p, join_notes(note, f"bulk deposition x {f:g} "
                                                     "(bulk_correction scale_wet)"), note)
            # a period holding both collectors: the factor on the bulk samples' part of
            # its deposition (their share of the hours without the samples)
            dep_share, how = (_wet_bulk_share(split, w, sp, options) if split is not None
                              else (bulk_share, "bulk share of the period's hours"))
            d = np.where(straddle, d * (1.0 - dep_share * (1.0 - f)), d)
            note = np.where(straddle, join_notes(note, np.char.add(
                coll_words.astype(str), f": bulk deposition x {f:g} on the {how} "
                "(bulk_correction scale_wet)")), note)
            st = np.where(estimated & (st == "complete"), "flagged", st)
        if (coll_words != "").any():
            # (a period holding both collectors under scale_wet says it above)
            said = straddle if options.bulk_correction == "scale_wet" else False
            note = np.where((coll_words != "") & ~said, join_notes(note, coll_words), note)
        components[sp] = {
            "deposition": d, "status": st, "fails": fl, "failure": why_fail, "note": note,
            # the smallest of the period's fractions and the share of its rain with a
            # value of this ion (and tracer), the criterion the row is judged by
            "completeness": np.fmin(w_frac, ion_share),
            "fractions": {name: w.variables[var].values for name, var in (
                ("wet_gauge_fraction", "gauge_fraction"),
                ("wet_coverage_fraction", "coverage_fraction"),
                ("wet_valid_precip_fraction", "valid_precip_fraction"),
                ("wet_flagged_precip_fraction", "flagged_precip_fraction"))
                if var in w.variables}}
    variables, wet_ions = wet_outputs(w)
    variables = dict(variables)
    variables["wet_sulfate_total"] = xr.Variable(("site", "period"), wet_sulfate_total(
        w, options), {"long_name": "the wet S component (SO4) holds total SO4, sea salt "
                      "included: sulfate_basis total, or the non-sea-salt mean fell back "
                      "for want of the sea-salt tracer"})
    return {"components": components, "variables": variables, "wet_ion": wet_ions}


def assemble(wet: xr.Dataset | None, dry: xr.Dataset | None, catalogue, periods: pd.DataFrame,
             options: BudgetOptions, receptors, season_cov=None, collector=None,
             wet_from=None, layout=None, wet_cols=None):
    """Wet + dry components per site, receptor and period, with totals and status.

    Parameters
    ----------
    wet : xarray.Dataset or None
        Output of :func:`workbench.wet.wet_deposition` on the same periods.
    dry : xarray.Dataset or None
        Output of :func:`dry_components`.
    catalogue : SiteCatalogue
    periods : pandas.DataFrame
    options : BudgetOptions
    receptors : sequence of str
        Receptor surfaces (coordinate of the result).
    season_cov : ndarray, optional
        (site, period, species) bool: every season covered (for years).
    collector : dict, optional
        :func:`workbench.surfacehistory.collector_split` of the samples on the same
        periods, at sites whose collector changed: each sample's part of the wet
        deposition is taken under its own collector's rules (without it: the share of
        the period's hours under each collector by the change's date).
    wet_from : dict, optional
        :func:`wet_parts` of `wet` on these sites and periods with these options (the
        ``wet_components`` stage); computed here without it.
    layout : dict, optional
        :func:`budget_layout` of `catalogue`, `periods`, `receptors` and `collector`
        (the ``budget_layout`` stage); computed here without it.
    wet_cols : dict, optional
        :func:`wet_columns` of `wet` on that layout with these options (the
        ``wet_assembled`` stage); computed here without it.

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, period, component); ``deposition`` [mol m-2 of element],
        ``completeness`` [1], ``status`` (str), the wet and dry completeness fractions,
        and per-element totals with their status; ``nh3_deposition_only`` and
        ``nh3_net`` [mol m-2] (site, receptor, period) and the attribute ``nh3_figure``
        (the NH3 figure of the component and the totals: ``net`` when `dry` holds
        ``nh3_net``, else ``deposition_only``).
    """
    L = layout if layout is not None else budget_layout(catalogue, periods, receptors,
                                                         collector)
    sites = L["sites"]
    n_s, n_r, n_p = len(sites), len(receptors), len(periods)
    comps = list(COMPONENTS)
    n_c = len(comps)
    dep = np.full((n_s, n_r, n_p, n_c), np.nan)
    status = np.full((n_s, n_r, n_p, n_c), "missing", dtype=object)
    compl = np.full((n_s, n_r, n_p, n_c), np.nan)
    #: the fractions behind `completeness`, per component (NaN where not applicable)
    fractions = {name: np.full((n_s, n_r, n_p, n_c), np.nan) for name in FRACTIONS}
    comp_note = np.full((n_s, n_r, n_p, n_c), "", dtype=object)
    #: a present component fails completeness (flagged for coverage, not for a flag)
    fails = np.zeros((n_s, n_r, n_p, n_c), bool)
    #: where it fails: the first criterion failed, in words with its share and minimum
    failure = np.full((n_s, n_r, n_p, n_c), "", dtype=object)
    active = L["active"]
    bulk_share, coll_words, estimated, split = (L["bulk_share"], L["coll_words"],
                                                L["estimated"], L["split"])
    bulk_p, straddle, bulk = L["bulk_p"], L["straddle"], L["bulk"]
    notes = []
    labels = L["labels"]
    hours_p = L["hours_p"]                                  # [h]
    if wet is not None:
        wc = wet_cols if wet_cols is not None else wet_columns(wet, L, options, wet_from)
    if dry is not None:
        dr = dry if _same_axis(dry, "receptor", receptors) else _dry_on_receptors(dry, receptors)
        d_species = list(dr.variables["species"].values)
        d_dep, d_cov = dr.variables["deposition"].values, dr.variables["coverage"].values
        d_vdc, d_fs, d_meas = dr.variables["vd_coverage"].values, dr.variables["vd_filled_share"].values, dr.variables["measured"].values
        d_fc = (dr.variables["flux_coverage"].values if "flux_coverage" in dr.variables
                else np.where(np.isfinite(d_dep), d_cov[:, None], 0.0))
        d_ratio = (dr.variables["mixing_ratio"].values if "mixing_ratio" in dr.variables
                   else np.zeros(len(d_species), bool))
        d_sok = _season_ok(dry, season_cov, periods, options)
        judged = _dry_judged(dr, d_species, [sp for _, path, sp in comps if path == "dry"],
                             (n_s, n_r, n_p), d_cov, d_vdc, d_fs, d_fc, d_meas, d_sok,
                             d_ratio, hours_p, options)
    for j, (el, path, sp) in enumerate(comps):
        if path == "wet":
            if wet is None:
                comp_note[..., j] = "no precipitation chemistry input"
                continue
            col = wc["components"][sp]
            if isinstance(col, str):                  # no column of the species
                comp_note[..., j] = col
                continue
            dep[:, :, :, j] = col["deposition"][:, None, :]
            status[:, :, :, j] = col["status"][:, None, :]
            fails[:, :, :, j] = col["fails"][:, None, :]
            failure[:, :, :, j] = col["failure"][:, None, :]
            comp_note[:, :, :, j] = col["note"][:, None, :]
            compl[:, :, :, j] = col["completeness"][:, None, :]
            for name, v in col["fractions"].items():
                fractions[name][:, :, :, j] = v[:, None, :]
        else:
            if dry is None or sp not in d_species:
                comp_note[..., j] = f"no air concentrations of {sp}"
                continue
            k = d_species.index(sp)
            if sp in PARTICLES and bulk.any():
                if options.bulk_correction == "none" and bool(d_meas[bulk, k].any()):
                    bad = [s for s, b in zip(sites, bulk) if b]
                    raise BudgetError(
                        f"site {bad[0]!r} has a bulk collector: its 'wet' deposition already "
                        f"holds some dry deposition, so particle dry deposition ({sp}) is not "
                        "added; name a correction in [budget] bulk_correction "
                        "('exclude_particles' or 'scale_wet', see docs/budget.md)")
            d = d_dep[..., k]
            i = judged["species"].index(sp)
            st, fl, why, cov, fc, vdc = (judged[v][..., i] for v in (
                "status", "fails", "note", "coverage", "flux_coverage", "vd_coverage"))
            fails[..., j] = fl
            failure[..., j] = judged["failure"][..., i]
            comp_note[..., j] = why
            c = np.fmin(np.fmin(cov, fc), vdc)
            if sp in PARTICLES and options.bulk_correction == "exclude_particles":
                # taken as caught: the bulk "wet" ion holds it, so it adds 0 here and
                # shares that wet component's status (docs/budget.md, bulk collectors)
                excl = bulk_p[:, None, :] & np.ones((1, n_r, n_p), bool)
                ion = BULK_CAUGHT_IN[sp]
                jw = [x[2] for x in comps].index(ion)
                # a period holding both collectors: the particle dry deposition of its
                # wet-only share of hours is added, the bulk share is taken as caught
                part = straddle[:, None, :] & np.ones((1, n_r, n_p), bool)
                d = np.where(part, d * (1.0 - bulk_share[:, None, :]), d)
                st = np.where(estimated[:, None, :] & part & (st == "complete"), "flagged", st)
                hours = ("hours sampled by the bulk collector" if split is not None
                         else "bulk share of the period's hours")
                comp_note[..., j] = np.where(part, join_notes(comp_note[..., j], np.char.add(
                    (coll_words[:, None, :] * np.ones((1, n_r, 1), object)).astype(str),
                    f": the {hours} taken as caught (in its wet {ion}),"
                    " the rest added")), comp_note[..., j])
                d = np.where(excl, np.where(status[..., jw] == "missing", np.nan, 0.0), d)
                st = np.where(excl, status[..., jw], st)
                c = np.where(excl, compl[..., jw], c)
                fails[..., j] = np.where(excl, False, fails[..., j])
                failure[..., j] = np.where(excl, "", failure[..., j])
                comp_note[..., j] = np.where(excl, f"caught by the bulk collector: counted in "
                                             f"its wet {ion} deposition, 0 here (the scenario's "
                                             "bulk_correction = \"exclude_particles\")",
                                             comp_note[..., j])
                if excl.any():
                    notes.append(f"{sp}: particle dry deposition at bulk-collector sites taken "
                                 f"as caught by the collector (in its wet {ion}; 0 in the dry "
                                 "pathway)")
            dep[:, :, :, j] = d
            status[:, :, :, j] = st
            compl[:, :, :, j] = c
            fractions["air_coverage"][:, :, :, j] = cov
            fractions["flux_coverage"][:, :, :, j] = fc
            fractions["vd_coverage"][:, :, :, j] = vdc
    # non-sea-salt pSO4 below 0 over a period (more sea-salt sulfate from pNa than pSO4
    # itself): clipped at 0 and flagged, as the wet chain's nss SO4 (docs/budget.md,
    # "Components and units"); the samples stay linear, the period's sum is clipped
    if options.sulfate_basis == "nss" and dry is not None and "pSO4" in d_species:
        j = [c[2] for c in comps].index("pSO4")
        neg = (status[..., j] != "missing") & np.isfinite(dep[..., j]) & (dep[..., j] < 0)
        if neg.any():
            dep[..., j] = np.where(neg, 0.0, dep[..., j])
            status[..., j] = np.where(neg & np.isin(status[..., j], ("complete", "filled")),
                                      "flagged", status[..., j])
            comp_note[..., j] = np.where(neg, join_notes(
                comp_note[..., j], "sea-salt sulfate from pNa exceeds the measured pSO4: "
                "non-sea-salt pSO4 clipped at 0"), comp_note[..., j])
        # weeks of pSO4 without pNa among weeks with it: their total pSO4 stands in
        # (sea salt included), flagged with the weeks named (the period still passes);
        # a site with no pNa at all: said, not flagged, one basis over its whole record
        # (docs/budget.md, "Components and units")
        if "pSO4_total_used" in dr.variables:
            words = np.asarray(dr.variables["pSO4_total_used"].values, object)
            said = np.array([isinstance(x, str) and x != "" for x in words.ravel()],
                            bool).reshape(words.shape)[:, None, :] & np.ones((1, n_r, 1), bool)
            said &= (status[..., j] != "missing") & ~np.char.startswith(
                comp_note[..., j].astype(str), "caught by the bulk collector")
            whole = np.array([isinstance(x, str) and x.startswith(NO_PNA_AT_SITE)
                              for x in words.ravel()], bool).reshape(words.shape)[:, None, :]
            status[..., j] = np.where(said & ~whole
                                      & np.isin(status[..., j], ("complete", "filled")),
                                      "flagged", status[..., j])
            comp_note[..., j] = np.where(said, join_notes(
                comp_note[..., j], (words[:, None, :] * np.ones((1, n_r, 1), object)).astype(str)),
                comp_note[..., j])
        # weeks whose pNa was below detection: their sea salt from the substitute, said
        # (not flagged: a value below detection is a measurement, as for every species)
        for var in ("pSO4_nss_censored", "pSO4_na_censored"):
            if var not in dr.variables:
                continue
            words = np.asarray(dr.variables[var].values, object)
            said = np.array([isinstance(x, str) and x != "" for x in words.ravel()],
                            bool).reshape(words.shape)[:, None, :] & np.ones((1, n_r, 1), bool)
            said &= (status[..., j] != "missing") & ~np.char.startswith(
                comp_note[..., j].astype(str), "caught by the bulk collector")
            comp_note[..., j] = np.where(said, join_notes(
                comp_note[..., j], (words[:, None, :] * np.ones((1, n_r, 1), object)).astype(str)),
                comp_note[..., j])
    # a site's own surface under a land-use class other than its land_use in the period
    # (workbench/surfacehistory.py): its dry rows say which
    lu = L["lu"]
    if (lu != "").any():
        for j, (_, path, _) in enumerate(comps):
            if path == "dry":
                said = (lu != "") & (status[..., j] != "missing")
                comp_note[..., j] = np.where(said, join_notes(comp_note[..., j], lu),
                                             comp_note[..., j])
    # NH3: the net exchange replaces the deposition-only figure when the dry model gave it
    j = [c[2] for c in comps].index("NH3")
    nh3_only = np.where(status[..., j] == "missing", np.nan, dep[..., j])
    nh3_net = np.full(nh3_only.shape, np.nan)
    figure = "deposition_only"
    if dry is not None and "nh3_net" in dr.variables and "NH3" in d_species:
        nh3_net = dr.variables["nh3_net"].values
        dep[..., j], status[..., j], comp_note[..., j] = nh3_net_component(
            nh3_only, nh3_net, status[..., j], comp_note[..., j])
        nh3_net = np.where(status[..., j] == "missing", np.nan, nh3_net)
        figure = "net"
        notes.append("NH3: the component and the N totals use the net exchange of the "
                     "compensation point model (deposition - emission); the deposition-only "
                     "figure is nh3_deposition_only")
    dep = np.where(status == "missing", np.nan, dep)
    compl = np.where(status == "missing", np.nan, compl)
    dims = ("site", "receptor", "period", "component")
    elements, pathways, species = L["elements"], L["pathways"], L["species"]
    data = {"deposition": xr.Variable(dims, dep, {"units": "mol m-2",
                                                  "long_name": "deposition as amount of element"}),
            "completeness": xr.Variable(dims, compl, {"units": "1", "long_name":
                                                      "smallest of the component's fractions"}),
            **{name: xr.Variable(dims, np.where(status == "missing", np.nan, v),
                                 {"units": "1", "long_name": FRACTIONS[name]})
               for name, v in fractions.items()},
            "note": text_variable(dims, comp_note),
            "fails_completeness": xr.Variable(dims, fails & (status != "missing"), {
                "long_name": "the component fails a completeness criterion"}),
            "completeness_failure": text_variable(dims, np.where(
                fails & (status != "missing"), failure, "").astype(object), {
                "long_name": "the first completeness criterion the component fails, with "
                             "its share and minimum"}),
            "status": text_variable(dims, status),
            "active": xr.Variable(("site", "receptor"), active),
            "nh3_deposition_only": xr.Variable(dims[:3], nh3_only, {
                "units": "mol m-2", "long_name": "dry NH3 deposition, deposition only (the "
                "gas scheme's Vd, no compensation point)"}),
            "nh3_net": xr.Variable(dims[:3], nh3_net, {
                "units": "mol m-2", "long_name": "net dry NH3 exchange, deposition - emission "
                "(positive down; NaN unless nh3_treatment = bidirectional)"})}
    names, totals = _totals(dep, status, compl, elements, pathways, species, fails,
                            failure)
    data.update(totals)
    if (lu != "").any() or (coll_words != "").any():
        # the sums of a period under another surface or collector say so too
        t_note = np.full(dep.shape[:3] + (len(names),), "", dtype=object)
        for t, name in enumerate(names):
            path = name.split("_")[1]
            if path in ("wet", "total"):
                t_note[..., t] = join_notes(t_note[..., t], coll_words[:, None, :]
                                            * np.ones((1, n_r, 1), object))
            if path in ("dry", "total"):
                t_note[..., t] = join_notes(t_note[..., t], lu)
        data["total_note"] = text_variable(dims[:3] + ("total",), t_note.astype(object))
    coords = {**L["coords"], "total": names}
    if dry is not None:
        sp_index = [c[2] for c in comps].index
        data.update(bulk_caught_brackets(
            bracket_outputs(dr, PAIRS, d_species, d_vdc, d_fs, d_meas, d_sok, d_ratio, options),
            PAIRS, bulk_p, lambda p: (dep[..., sp_index(p)], status[..., sp_index(p)],
                                    compl[..., sp_index(p)]), options))
        conc = dr.variables["concentration"]
        data["air_concentration"] = xr.Variable(
            tuple("air_species" if d == "species" else d for d in conc.dims), conc.values,
            conc.attrs)
        coords["air_species"] = dr.variables["species"].values
    if wet is not None:
        data.update(wc["variables"])
        coords["wet_ion"] = wc["wet_ion"]
    ds = xr.Dataset(data, coords=coords)               # built once (each assign aligns)
    ds.attrs.update({"options": json.dumps(options.to_dict(), sort_keys=True),
                     "notes": json.dumps(notes), "nh3_figure": figure,
                     "omissions": json.dumps([list(o) for o in OMISSIONS])})
    return ds
