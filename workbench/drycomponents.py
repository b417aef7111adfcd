"""The dry components of a budget: Vd per species, deposition per sampling period, and
its aggregation over reporting periods.

:func:`prepare_velocities` (:mod:`workbench.dryvelocities`) turns the model's hourly
Vd (or fixed what-if values) into gap-filled series; :func:`dry_rows`
(:mod:`workbench.dryrows`) computes the deposition over every air-sampling period of
every species (independent of the reporting periods, so it is computed once per
option set), on the air's non-sea-salt pSO4 (:mod:`workbench.drynss`);
:func:`dry_components` (here) shares it among reporting periods with the coverage
and Vd completeness, the share of gap-filled Vd (:mod:`workbench.dryfilled`) and the
notes on pSO4.  The numpy cores are in :mod:`workbench.dryflux`.  The names of those
modules stay importable from here.
Units: Vd [m s-1], concentrations [mol m-3] or [mol mol-1], deposition [mol m-2].
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from . import graph as _graph
from . import species as _species
from .budget import COMPONENTS
from .dryfilled import (covered_filled_share, row_filled_deposition_share,  # noqa: F401
                        row_filled_hours)
from .dryflux import no_hour_inside, period_axes, period_mean, share_to_periods
from .drymetgaps import met_gap_hours, met_gap_words
from .dryspeciesgaps import period_species_gaps, share_pair_gaps
from .io.metgaps import VD_INPUTS
from .drynss import (CENSORED_WORDS, _nss_particles, _pso4_cell_notes,  # noqa: F401
                     _rows_by_cell, censored_na_notes, censored_nss_notes,
                     total_used_notes)
from .drypairs import apply_split, bracket_variables
# the rows and their stages (defined here before; importing this module declares them)
from .dryrows import (_fingerprint, air_content, dry_rows, flux_inputs,  # noqa: F401
                      nh3_emission_rows, prepared_air, species_rows, vd_axes)
from .dryvelocities import (NH3_EXCHANGE, fill_arrays, nh3_exchange_velocities,  # noqa: F401
                            prepare_velocities)
from .periods import hour_bounds


@_graph.stage("period_shares")
def period_shares(o, rows, periods, n_sites, times):
    """One piece of rows shared among reporting periods (:func:`share_to_periods`)."""
    r = rows[0] if isinstance(rows, tuple) else rows
    return share_to_periods(r["site_index"], r["a"], r["b"], r["deposition"], r["cs"],
                            n_sites, period_axes(periods), times, r["start"], r["end"],
                            cn=r.get("cn"))


def dry_components(rows: dict, periods: pd.DataFrame, share=None):
    """Dry deposition of every measured species over the reporting periods.

    Parameters
    ----------
    rows : dict
        Output of :func:`workbench.dryrows.dry_rows`.
    periods : pandas.DataFrame
    share : callable, optional
        ``share(name, rows_piece)`` -> the piece shared among `periods` (the output of
        :func:`.dryflux.share_to_periods`); `name` is the piece's entry of ``rows["keys"]``.
        The pipeline runs it as the ``period_shares`` stage, so that an option
        touching one species shares that species only.  Default: computed here.

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, period, species): ``deposition`` [mol m-2] scaled to the
        whole period, ``coverage`` [1] (site, period, species), ``vd_coverage`` [1]
        (share of the period's hours with a modelled Vd), ``vd_filled_share`` [1] (share
        of the hours behind the flux, those in sampling periods with a known flux, whose
        Vd was filled or, missing, taken as the sampling period's mean), ``flux_coverage`` [1] (hours with a concentration
        and a deposition velocity: 0 where Vd or the air density is missing for every
        hour, and the deposition is then NaN, never 0), ``measured`` (site, species), ``masked_note`` (site, species: why a
        species measured there has no value left, "" otherwise), ``period_masked_note``
        (site, period, species: :func:`period_masked_notes`), ``species_gap_note``
        (site, period, species: :func:`workbench.dryspeciesgaps.period_species_gaps`),
        ``met_without`` (site: the
        variables a Vd reads that the site's met has in no hour, "" for none),
        ``met_gaps`` (site, period: the period's hours without a met row or a value a
        Vd reads, in words, "" for none; :func:`period_met_gaps`), ``met_gap_hours``
        (site, period: the most hours of one kind of those gaps [h]),
        ``mixing_ratio`` (species: given as a mixing ratio), ``pSO4_total_used`` (site,
        period; text naming the pSO4 samples without pNa whose total pSO4 was used on
        the nss basis, "" where none; :func:`workbench.drynss.total_used_notes`), the pair brackets
        (:func:`workbench.drypairs.bracket_variables`) and,
        when the rows hold the bidirectional NH3 exchange, ``nh3_net`` (deposition -
        emission, positive down) and ``nh3_emission`` [mol m-2] (site, receptor, period).
    """
    species_list = [c[2] for c in COMPONENTS if c[1] == "dry"]
    sites, receptors, times = rows["sites"], rows["receptors"], rows["times"]
    n_s, n_r, n_p, n_k = len(sites), len(receptors), len(periods), len(species_list)
    dep = np.full((n_s, n_r, n_p, n_k), np.nan)
    cov = np.zeros((n_s, n_p, n_k))
    vd_cov = np.full((n_s, n_r, n_p, n_k), np.nan)
    flux_cov = np.zeros((n_s, n_r, n_p, n_k))
    ratio = np.zeros(n_k, bool)
    filled_share = np.full((n_s, n_r, n_p, n_k), np.nan)
    conc = np.full((n_s, n_p, n_k), np.nan)
    axes = period_axes(periods)                 # the columns read once
    pa, pb = hour_bounds(times, axes.start, axes.end)
    hours_p = axes.hours

    def agg(name, r):
        if share is not None:
            return share(name, r)
        return share_to_periods(r["site_index"], r["a"], r["b"], r["deposition"], r["cs"],
                                n_s, axes, times, r["start"], r["end"], cn=r.get("cn"))

    for k, sp in enumerate(species_list):
        if sp not in rows["species"]:
            continue
        r = rows["species"][sp]
        d, c, _, fh = agg(sp, r)
        dep[..., k], cov[..., k] = d, c
        flux_cov[..., k] = np.clip(fh / np.maximum(hours_p, 1), 0, 1)
        ratio[k] = r.get("quantity") == "mixing_ratio"
        if r.get("quantity") == "amount_density":
            c_rows = np.where(no_hour_inside(r["start"], r["end"], r["a"], r["b"]), np.nan,
                              r["conc"])               # no covered hours: not in the mean
            conc[..., k] = period_mean(r["site_index"], r["start"], r["end"], c_rows, n_s, axes)
        c_valid, c_fill = rows["vd_cum"][sp]
        vd_cov[..., k] = (c_valid[:, :, pb] - c_valid[:, :, pa]) / hours_p
        filled_share[..., k] = covered_filled_share(r["site_index"], r["a"], r["b"], c_fill,
                                                    pa, pb, r.get("cn"),
                                                    np.isfinite(r["deposition"]))
    shared = {(pair, how): {m: agg(("bracket", pair, how, m), r) for m, r in members.items()}
              for (pair, how), members in rows["bracket"].items()}
    split = rows.get("split", {})
    apply_split(split, shared, species_list, hours_p, dep, cov, flux_cov, ratio, conc)
    nh3 = {}
    if "nh3_exchange" in rows:        # net = deposition part - emission part, per period
        ex = rows["nh3_exchange"]
        d_bd = agg("nh3|deposition", ex["deposition"])[0]
        if "moved" in ex:             # pair_split all_gas: pNH4 with the exchange's Vd too
            moved = split["ammonium"][1]
            d_bd = d_bd + (_species.get(moved).atoms / _species.get("NH3").atoms
                           * agg("nh3|moved", ex["moved"])[0])
        elif split.get("ammonium", ("NH3",))[0] != "NH3":    # all_particle: C(NH3) = 0
            d_bd = np.where(np.isfinite(d_bd), 0.0, np.nan)
        e = agg("nh3|emission", ex["emission"])[0]
        dims3 = ("site", "receptor", "period")
        nh3 = {"nh3_net": (dims3, d_bd - e, {
                   "units": "mol m-2", "long_name": "net NH3 exchange of the compensation "
                   "point model, deposition - emission (positive down)"}),
               "nh3_emission": (dims3, e, {"units": "mol m-2",
                                           "long_name": "NH3 emission term over the period"})}
    gap_words, gap_hours = period_met_gaps(rows, axes, n_s)
    brackets = {}
    for (pair, how), members in shared.items():
        brackets.update(bracket_variables(pair, how, members, hours_p))
    ds = xr.Dataset(
        {"deposition": (("site", "receptor", "period", "species"), dep, {"units": "mol m-2"}),
         "coverage": (("site", "period", "species"), cov, {"units": "1"}),
         "vd_coverage": (("site", "receptor", "period", "species"), vd_cov, {"units": "1"}),
         "vd_filled_share": (("site", "receptor", "period", "species"), filled_share, {"units": "1"}),
         "flux_coverage": (("site", "receptor", "period", "species"), flux_cov,
                           {"units": "1", "long_name": "share of the period's hours in sampling "
                            "periods with a known flux (concentration and Vd)"}),
         "mixing_ratio": (("species",), ratio),
         "measured": (("site", "species"), rows["measured"]),
         "masked_note": (("site", "species"), np.asarray(rows.get(
             "masked_note", np.full(rows["measured"].shape, ""))).astype(str),
                         {"long_name": "why a species measured at the site has no value: "
                          "every value masked by a check of the air reader (the flag)"}),
         "period_masked_note": (("site", "period", "species"), period_masked_notes(
             rows.get("masked_runs"), periods, n_s, n_k).astype(str),
             {"long_name": "the reason of the most masked sampling hours of the period, "
              "where the air reader masked values of the species in it ('' elsewhere)"}),
         "species_gap_note": (("site", "period", "species"), share_pair_gaps(
             period_species_gaps(rows.get("species_gap_runs"), periods, sites,
                                 species_list), split, species_list).astype(str),
             {"long_name": "the first stretch of the period in which a sampler of the "
              "site ran without the species' values: sampler and dates ('' for none); both "
              "members' on both rows of a pair that pair_split moves"}),
         "met_without": (("site",), np.asarray(rows.get(
             "met_without", np.full(len(sites), ""))).astype(str),
                         {"long_name": "the variables a deposition velocity reads that the "
                          "site's met record has in no hour ('' for none)"}),
         "met_gaps": (("site", "period"), gap_words,
                      {"long_name": "the period's hours without a met row or a value a "
                       "deposition velocity reads, in words ('' for none)"}),
         "met_gap_hours": (("site", "period"), gap_hours,
                           {"units": "h", "long_name": "the most hours of the period "
                            "without a met row or without a value of one variable a "
                            "deposition velocity reads"}),
         "concentration": (("site", "period", "species"), conc,
                           {"units": "mol m-3", "long_name": "time-weighted mean concentration "
                            "over the covered hours (amount of species; ambient)"}),
         "pSO4_total_used": (("site", "period"), total_used_notes(rows, periods, sites),
                             {"long_name": "pSO4 samples without pNa in the period: total "
                              "pSO4 used for them in place of non-sea-salt pSO4"}),
         "pSO4_nss_censored": (("site", "period"), censored_nss_notes(rows, periods, sites),
                               {"long_name": "pSO4 samples below detection beside a pNa: "
                                "their non-sea-salt pSO4 from the limit less the sea salt"}),
         "pSO4_na_censored": (("site", "period"), censored_na_notes(rows, periods, sites),
                              {"long_name": "pSO4 samples whose pNa was below detection: "
                               "their sea-salt sulfate from the substitute"}),
         **brackets, **nh3},
        coords={"site": sites, "receptor": receptors, "period": periods["label"].values,
                "species": species_list})
    return ds


def period_met_gaps(rows: dict, axes, n_sites: int):
    """The met gaps of each (site, period): in words
    (:func:`workbench.drymetgaps.met_gap_words`; "" where none and where the rows hold
    no met runs, rows made without a met record) and the most hours of one kind (no
    row, or no value of one variable) [h]."""
    runs, times = rows.get("met_gap_runs"), rows.get("met_times")
    if runs is None or times is None:
        return (np.full((n_sites, len(axes)), "", dtype=object).astype(str),
                np.zeros((n_sites, len(axes)), np.int64))
    counts = met_gap_hours(runs, times, axes.start, axes.end, axes.hours, n_sites,
                           1 + len(VD_INPUTS))
    return met_gap_words(counts, axes.hours, VD_INPUTS).astype(str), counts.max(axis=1)


def period_masked_notes(runs, periods: pd.DataFrame, n_sites: int, n_species: int) -> np.ndarray:
    """The reason of the masked air rows of each (site, period, species): the one of the
    most masked sampling hours inside the period (the most common reason where several).

    Parameters
    ----------
    runs : pandas.DataFrame or None
        The masked rows in runs (:func:`workbench.dryrows.masked_runs`).
    periods : pandas.DataFrame
        Reporting periods (``start``, ``end``).
    n_sites, n_species : int

    Returns
    -------
    ndarray of str (site, period, species)
        "" where no masked row overlaps the period.  The budget reads it where the
        period has no concentration: every value of the period masked, not a period with
        no samples (:func:`workbench.budgetstatus.dry_status`).
    """
    out = np.full((n_sites, len(periods), n_species), "", dtype=object)
    if runs is None or not len(runs):
        return out
    order = np.argsort(periods["start"].values.astype("datetime64[ns]"), kind="stable")
    p0 = periods["start"].values.astype("datetime64[ns]")[order]     # in time order
    p1 = periods["end"].values.astype("datetime64[ns]")[order]
    t0 = runs["start"].to_numpy("datetime64[ns]")
    t1 = runs["end"].to_numpy("datetime64[ns]")
    # the periods each run may overlap (a run of weeks spans one or two years): memory
    # of the runs' length, not runs x periods
    if np.all(p1[:-1] <= p0[1:]):                   # periods one after another
        first = np.searchsorted(p1, t0, side="right")
        last = np.searchsorted(p0, t1, side="left")
    else:                                            # overlapping periods: every one
        first, last = np.zeros(len(runs), int), np.full(len(runs), len(p0))
    n = np.maximum(last - first, 0)
    r = np.repeat(np.arange(len(runs)), n)
    j = np.repeat(first - np.cumsum(n) + n, n) + np.arange(n.sum())   # first, first+1...
    hours = (np.minimum(t1[r], p1[j]) - np.maximum(t0[r], p0[j])) / np.timedelta64(1, "h")
    keep = hours > 0
    r, p, hours = r[keep], order[j[keep]], hours[keep]
    if not r.size:
        return out
    f = pd.DataFrame({"site": runs["site"].to_numpy()[r], "period": p,
                      "species": runs["species"].to_numpy()[r],
                      "why": runs["why"].to_numpy()[r], "hours": hours})
    f = f.groupby(["site", "period", "species", "why"], as_index=False)["hours"].sum()
    f = f.sort_values(["hours", "why"], ascending=[False, True], kind="stable")
    f = f.drop_duplicates(["site", "period", "species"])
    out[f["site"].to_numpy(), f["period"].to_numpy(), f["species"].to_numpy()] = f["why"].to_numpy()
    return out
