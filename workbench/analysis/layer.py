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
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..budget import COMPONENTS
from .bulk import bulk_parts, piece_betas  # noqa: F401  (bulk_parts moved there)

#: Dry species of the budget, in the order of :data:`workbench.budget.COMPONENTS`.
DRY_SPECIES = tuple(c[2] for c in COMPONENTS if c[1] == "dry")
#: Wet ions of the budget, in the order of :data:`workbench.budget.COMPONENTS`.
WET_IONS = tuple(c[2] for c in COMPONENTS if c[1] == "wet")


@dataclass
class DryPieces:
    """Per-sample contributions of one dry species at one site."""

    contrib: np.ndarray      #: (n, P, R) [mol m-2] each sampling period's part
    censored: np.ndarray     #: (n,) bool, concentration below detection (substituted)
    filled: np.ndarray       #: (n, P, R) [1] share of the row's deposition in each period
    #: that its hours without a modelled Vd carry (gap-filled, or missing and taken as the
    #: row's mean Vd; :func:`workbench.drycomponents.row_filled_deposition_share`)
    row_id: np.ndarray       #: (n,) int, row number within the component's rows (stable
    #: per site; under pair_split the moved-into species' rows are both members')
    ident: list              #: (n,) the identity of each row's sample: (member species,
    #: sampler id, start [ns since 1970], occurrence), see :func:`sample_identity`
    #: (n,) start and end of each row's sample [datetime64 ns] (its laboratory period)
    start: np.ndarray | None = None
    end: np.ndarray | None = None
    #: (n, R) land-use class of each row at each receptor (the class in force at the
    #: sample's middle for a site's own surface with a declared history); None: the
    #: receptor's name
    klass: np.ndarray | None = None
    #: (n, P, R) [mol m-2] of non-sea-salt pSO4 only: the sea-salt sulfate each row's
    #: contribution had taken off (0.0605 pNa at the row's Vd), so that ``contrib +
    #: seasalt`` is the total pSO4's part; the Monte Carlo draws the pSO4 and the pNa
    #: analyses apart (:func:`workbench.analysis.uncertainty.nss_dry_draws`). None:
    #: not a non-sea-salt component.
    seasalt: np.ndarray | None = None
    #: (n,) bool of non-sea-salt pSO4 only: the row's pNa was below detection, its
    #: sea-salt sulfate from the substitute of ``[budget] air_censored`` (drawn with
    #: ``censored_rel_sd``, :func:`workbench.analysis.noise.site_noise`). None: none.
    seasalt_censored: np.ndarray | None = None
    #: (n, P, R) [mol m-2] of NH3 under ``nh3_treatment = "bidirectional"`` only: each
    #: row's deposition part C vd_NH3_bidirectional and its emission part of the net
    #: exchange (``rows["nh3_exchange"]``), so that ``(exchange - emission).sum(0)`` is
    #: the budget's net NH3; the Monte Carlo draws the concentration errors on the
    #: deposition part alone and the Gamma_s factor on the emission part alone
    #: (:func:`workbench.analysis.uncertainty.nh3_net_draws`).  Under ``pair_split =
    #: "all_gas"`` a moved pNH4 row holds its deposition part at the exchange's Vd and
    #: no emission; under ``"all_particle"`` the NH3 samples' rows hold the emission
    #: alone (``contrib`` and ``exchange`` 0: the net is -E).  None: deposition only
    #: (or an exchange the rows cannot be matched to).
    exchange: np.ndarray | None = None
    emission: np.ndarray | None = None


@dataclass
class WetPieces:
    """(sample, period) pieces of the precipitation samples of one site."""

    sample: np.ndarray       #: (m,) int, local sample number 0..n_samples-1
    period: np.ndarray       #: (m,) int, reporting period
    weight: np.ndarray       #: (m,) [mm] w = P_i f_ip <1/m>_ip (wet.deposition.sample_weights)
    conc: dict               #: ion -> (m,) [mol m-3], 0 where not valid
    valid: dict              #: ion -> (m,) bool, used sample with a value
    censored: dict           #: ion -> (m,) bool, below detection
    n_samples: int
    ident: list              #: (n_samples,) the identity of each sample: (sampler id,
    #: start [ns since 1970], occurrence), see :func:`sample_identity`
    #: (n_samples,) start and end of each sample [datetime64 ns] (its gauge and
    #: laboratory periods)
    start: np.ndarray | None = None
    end: np.ndarray | None = None
    #: (m,) int, each piece's row in the wet chain's sample-weights table (where the
    #: ``collector_split`` stage's bulk share of each piece is found)
    row: np.ndarray | None = None


@dataclass
class SiteLayer:
    dry: dict = field(default_factory=dict)      #: species -> DryPieces
    wet: WetPieces | None = None
    wet_filled: np.ndarray | None = None         #: (P,) bool, PWM from the climatology
    pwm: dict = field(default_factory=dict)      #: ion -> (P,) point PWM [mol m-3]
    #: instants [datetime64 ns] (00:00 UTC of the date) of the site's declared gauge
    #: and laboratory changes (``[[site.change]] what = "gauge"`` / ``"laboratory"``),
    #: in date order: they split the record into gauge and laboratory periods
    gauge_changes: np.ndarray = field(default_factory=lambda: np.array([], "datetime64[ns]"))
    lab_changes: np.ndarray = field(default_factory=lambda: np.array([], "datetime64[ns]"))
    #: the laboratory id of each laboratory period (len(lab_changes) + 1; None: not
    #: named, a laboratory of the site's own) of the precipitation and of the air samples
    lab_ids: list = field(default_factory=lambda: [None])
    air_lab_ids: list = field(default_factory=lambda: [None])
    #: wet component index -> :class:`workbench.analysis.bulk.BulkPart`: the share of
    #: the component's deposition that its bulk samples carry (``bulk_correction =
    #: "scale_wet"``); empty otherwise
    bulk_part: dict = field(default_factory=dict)
    #: (m,) bulk share of each wet piece [1] where a collector changed (the share of a
    #: period holding the change is redrawn with the samples); None otherwise
    bulk_beta: np.ndarray | None = None
    #: pair -> species moved into -> DryPieces of the other member at its Vd, for a
    #: drawn gas/particle split (:func:`workbench.analysis.pairlayer.moved_pieces`)
    pair_moved: dict = field(default_factory=dict)


@dataclass
class LinearLayer:
    """The pieces of one budget Dataset (a resolution), per site.

    Attributes
    ----------
    budget : xarray.Dataset
        The point budget (dims site, receptor, period, component).
    sites : list of SiteLayer
        In the order of ``budget.site``.
    period_year : ndarray (P,) of int
        Year of each period, for the systematic factors when they are drawn anew
        each year (``systematic_errors = "each_year"``).
    wet_component : dict
        Component index -> wet ion or ``"nssSO4"``.
    tracer : str
        Sea-salt tracer of the non-sea-salt sulfate.
    """

    budget: object
    sites: list
    period_year: np.ndarray
    wet_component: dict
    tracer: str = "Na"


def sample_identity(sampler, start, species=None) -> list:
    """What names a sample, whatever run it is in: its sampler id and start time.

    Parameters
    ----------
    sampler : ndarray of str (n,)
        ``sampler_id`` of each sample ("" where the file gives none).
    start : ndarray of datetime64 (n,)
        Start of each sample.
    species : ndarray of str (n,), optional
        The species of an air sample's value (put first in its identity).

    Returns
    -------
    list of tuple
        ``([species,] sampler, start [ns since 1970], occurrence)``, occurrence
        counting the samples with the same species, sampler and start in the order
        given (0 but for duplicates), so that no two samples of a site share an
        identity.  The site id is not in it: a site's streams are named by it already.
    """
    sampler = np.asarray(sampler).astype(str)
    ns = np.asarray(start, dtype="datetime64[ns]").astype(np.int64)
    sp = np.full(len(ns), "") if species is None else np.asarray(species).astype(str)
    occ = pd.DataFrame({"k": sp, "s": sampler, "t": ns}).groupby(
        ["k", "s", "t"], sort=False).cumcount().to_numpy()
    return [((k,) if species is not None else ()) + (s, int(t), int(o))
            for k, s, t, o in zip(sp, sampler, ns, occ)]


def period_years(periods: pd.DataFrame) -> np.ndarray:
    """Year of each period [int]: its ``year`` column, else the year it starts."""
    year = periods["year"].to_numpy()
    start = pd.DatetimeIndex(periods["start"]).year.to_numpy()
    return np.where(year > 0, year, start).astype(int)


def change_instants(site, what: str) -> np.ndarray:
    """00:00 UTC of the dates of a site's declared changes of kind `what`, in order
    [datetime64 ns] (none for a site without a ``changes`` attribute)."""
    dates = sorted(c.date for c in getattr(site, "changes", ()) or () if c.what == what)
    return np.array([np.datetime64(d.isoformat(), "ns") for d in dates], "datetime64[ns]")


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
            start.append(np.asarray(r["start"]))
            end.append(np.asarray(r["end"]))
        exch = (_exchange_rows(rows, parts, axes, times, len(row_sites))
                if sp == "NH3" else None)
        per_row, si = np.concatenate(per_row), np.concatenate(si)
        ss = None if ss is None else np.concatenate(ss)
        ss_cens = np.concatenate(ss_cens) if ss is not None else None
        filled, cens = np.concatenate(filled), np.concatenate(cens)
        member, sampler = np.concatenate(member), np.concatenate(sampler)
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
                                   None if exch is None else exch[1][sel][:, :, :n_r])
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
                 pair_shift=False) -> LinearLayer:
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
    if pair_shift:
        from .pairlayer import moved_pieces
        for lay, moved in zip(layers, moved_pieces(rows, periods, sites, ds.sizes["receptor"],
                                                   study.inputs.air, histories, _dry_layers)):
            lay.pair_moved = moved
    return LinearLayer(ds, layers, period_years(periods), wet_component, tracer)
