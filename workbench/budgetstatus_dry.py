"""Status and reasons of the budget's dry components: a dry species, the net NH3
exchange, and the brackets of the gas/particle pairs.

Part of :mod:`workbench.budgetstatus` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .budget_totals import text_variable
from .budgetstatus_notes import SAMPLING_GAP_NOTE_H, join_notes
from .wet.qa import exceeds, falls_short


#: The start of the note of a dry component that has no number because the species
#: is not in the air file at the site.
NOT_MEASURED_NOTE = "not measured at the site (no valid concentration)"
#: The start of the note of a dry component whose species was measured at the site but
#: lost every value to a check of the air reader; the flag follows.
ALL_MASKED_NOTE = "measured, every value masked"
#: The start of the note of a dry component whose period had air samples, every one
#: masked by a check of the air reader (other periods of the site may have values); the
#: reason of the most masked hours follows.  A period with no samples at all reads "no
#: concentration in the period".
PERIOD_MASKED_NOTE = "every value of the period masked"
NO_CONCENTRATION_NOTE = "no concentration in the period"


def no_concentration_note(period_masked) -> np.ndarray:
    """The note of a period with no concentration of a species measured at the site:
    :data:`PERIOD_MASKED_NOTE` with the reason where its samples were all masked
    (`period_masked`, the reader's reason), :data:`NO_CONCENTRATION_NOTE` where
    `period_masked` is "" (no sample in the period).

    >>> no_concentration_note(np.array(["", "NH3 above the plausible 1000 ug/m3"], object)).tolist()
    ['no concentration in the period', 'every value of the period masked: NH3 above the plausible 1000 ug/m3']
    """
    return _masked_or(period_masked, PERIOD_MASKED_NOTE, NO_CONCENTRATION_NOTE)


def unmeasured_note(masked) -> np.ndarray:
    """The note of a component without any value at the site: :data:`ALL_MASKED_NOTE`
    with the flag where every value was masked (`masked`, the reader's reason, e.g.
    ``measured, every value masked: NH3 values look 1000x too high at this sampler:
    ng/m3 written under a ug/m3 header?``), :data:`NOT_MEASURED_NOTE` where `masked` is
    "" (the species is not sampled there).

    >>> unmeasured_note(np.array(["", "NH3 above the plausible 1000 ug/m3"], object)).tolist()
    ['not measured at the site (no valid concentration)', 'measured, every value masked: NH3 above the plausible 1000 ug/m3']
    """
    return _masked_or(masked, ALL_MASKED_NOTE, NOT_MEASURED_NOTE)


def _masked_or(reasons, masked_note, empty_note) -> np.ndarray:
    """`masked_note` + ": " + the reader's reason where `reasons` holds one, `empty_note`
    where it is "" or missing (object array of the shape of `reasons`)."""
    m = np.asarray(reasons, dtype=object)
    m = np.where(pd.isna(m), "", m).astype(str)
    return np.where(m == "", empty_note, np.char.add(masked_note + ": ", m)).astype(object)


def dry_failure_words(coverage, flux_cov, season_ok, options):
    """The completeness criteria a dry component fails, in words with its share and
    the minimum ('' where none fails; :func:`dry_status` decides where it fails): the
    first (its air coverage, else a season without concentrations, else its hours with
    a known flux) and, where the first is not the flux hours, those hours too when they
    fall short on a share of their own, below the air coverage (sampled hours without
    a Vd or an air density): ``air coverage below minimum (70.0 % of the period;
    minimum 75 %), hours with a known flux below minimum (40.0 % of the period;
    minimum 75 %)``.  Before, such a component named its air coverage alone; a flux
    share equal to the air coverage is the same share and is not said twice.

    Parameters
    ----------
    coverage, flux_cov : ndarray
        Share of the period's hours with a concentration, and in sampling periods whose
        flux is known [1].
    season_ok : ndarray of bool
    options : BudgetOptions

    Returns
    -------
    ndarray of str

    >>> from workbench.budget_options import BudgetOptions
    >>> dry_failure_words(np.array([0.5, 1.0]), np.array([0.5, 1.0]), np.array([True, True]),
    ...                   BudgetOptions()).tolist()
    ['air coverage below minimum (50.0 % of the period; minimum 75 %)', '']
    >>> dry_failure_words(np.array([0.7]), np.array([0.4]), np.array([True]),
    ...                   BudgetOptions()).tolist()
    ['air coverage below minimum (70.0 % of the period; minimum 75 %), hours with a known flux below minimum (40.0 % of the period; minimum 75 %)']
    """
    need = options.min_air_coverage
    cov, fc = np.asarray(coverage, float), np.asarray(flux_cov, float)

    def words(label, frac):
        pct = np.char.mod("%.1f", 100.0 * np.nan_to_num(frac))
        return np.char.add(np.char.add(f"{label} (", pct),
                           f" % of the period; minimum {100.0 * need:g} %)").astype(object)
    out = np.full(np.broadcast(cov, fc, season_ok).shape, "", dtype=object)
    low_flux = falls_short(fc, need)
    flux_words = words("hours with a known flux below minimum", fc)
    out = np.where(low_flux, flux_words, out)
    first = np.where(falls_short(cov, need), words("air coverage below minimum", cov),
                     np.where(~np.asarray(season_ok, bool), "a season without concentrations",
                              ""))
    # the flux hours beside the first criterion: a share of their own (lower than the
    # air coverage by more than rounding), else the same share said twice
    own = low_flux & (cov - fc > PART_FLUX_TOL)
    out = np.where(first != "", np.where(own, first + ", " + flux_words, first), out)
    return out.astype(object)


#: The smallest share of a period sampled but without a flux that a dry note tells [1]
#: (a difference of shares to rounding is none; one hour of a year is 1.1e-4).
PART_FLUX_TOL = 1e-6


def _met_without(dr) -> np.ndarray:
    """The ``met_without`` words per site of dry components `dr` ("" where absent)."""
    if "met_without" in dr.variables:
        return dr.variables["met_without"].values.astype(object)
    return np.full(dr.sizes["site"], "", object)


def _met_gaps(dr) -> np.ndarray:
    """The ``met_gaps`` words per (site, period) of dry components `dr` ("" where
    absent: :func:`workbench.drycomponents.period_met_gaps`)."""
    if "met_gaps" in dr.variables:
        return dr.variables["met_gaps"].values.astype(object)
    return np.full((dr.sizes["site"], dr.sizes["period"]), "", object)


def _met_gap_hours(dr) -> np.ndarray:
    """The ``met_gap_hours`` per (site, period) of dry components `dr` [h] (0 where
    absent)."""
    if "met_gap_hours" in dr.variables:
        return dr.variables["met_gap_hours"].values
    return np.zeros((dr.sizes["site"], dr.sizes["period"]))


def filled_vd_words(filled_share, options) -> np.ndarray:
    """Why a dry component is ``filled``: the share of the hours behind its flux whose
    Vd was not modelled, with the bound it exceeds.

    >>> from workbench.budget_options import BudgetOptions
    >>> filled_vd_words(np.array([0.115]), BudgetOptions()).tolist()
    ['deposition velocity not modelled in 11.5 % of the hours behind the flux (filled from the diurnal cycle or the sample mean; more than 10 %)']
    """
    pct = np.char.mod("%.1f", 100.0 * np.nan_to_num(np.asarray(filled_share, float)))
    bound = 100.0 * (1.0 - options.min_vd_coverage)
    return np.char.add(np.char.add("deposition velocity not modelled in ", pct),
                       " % of the hours behind the flux (filled from the diurnal cycle or "
                       f"the sample mean; more than {bound:.3g} %)").astype(object)


#: Why a mixing ratio's period with a Vd has no flux.
RATIO_NO_FLUX = ("no molar density of air (temperature or pressure) in the sampled "
                 "hours: the mixing ratio cannot become a flux")
#: Why a concentration's period with a Vd has no flux.
NO_HOUR_WITH_BOTH = "no hour with both a concentration and a deposition velocity"


def dry_status(coverage, vd_cov, filled_share, flux_cov, measured, season_ok, ratio,
                options, masked="", period_masked="", met_without="", met_gaps="",
                met_gap_h=0.0):
    """Status, completeness failure and reason of a dry component.

    Parameters
    ----------
    coverage, vd_cov, filled_share, flux_cov : ndarray
        Share of the period's hours with a concentration, with a modelled Vd, with
        a filled Vd, and in sampling periods whose flux is known [1].
    measured, season_ok : ndarray of bool
    ratio : bool or ndarray of bool
        The species is given as a mixing ratio (needs the molar density of air);
        broadcastable to `coverage` (one per species on a last axis of species: every
        step here is element by element, so several species are judged in one call).
    options : BudgetOptions
    masked : str or ndarray of str, optional
        Where the species is not `measured`: why every value at the site was masked
        ("" for none: not sampled), broadcastable to `coverage` (:func:`unmeasured_note`).
    period_masked : str or ndarray of str, optional
        Where a measured species has no concentration in the period: the reason of its
        masked samples there ("" for none: no sample in the period), broadcastable to
        `coverage` (:func:`no_concentration_note`).
    met_without : str or ndarray of str, optional
        The variables a Vd reads that the site's met has in no hour ("wind speed"; ""
        for none: :func:`workbench.io.metgaps.without_value`), broadcastable to
        `coverage`: named as the reason where no hour has a Vd.
    met_gaps : str or ndarray of str, optional
        The period's hours without a met row or a value a Vd reads, in words
        (:func:`workbench.drymetgaps.met_gap_words`; "" for none), broadcastable to
        `coverage`: the reason of a period whose Vd was filled, whose flux is known
        for part of its sampled hours, or which has no Vd at all, and added to the note
        of a component flagged for another reason (a year without samples or met).
    met_gap_h : float or ndarray, optional
        The most hours of one kind of those gaps [h], broadcastable to `coverage`: a
        ``complete`` component says its period's met gaps where they last at least
        :data:`workbench.budgetstatus_notes.SAMPLING_GAP_NOTE_H` (a week; the rule of
        the notes of sampling gaps), as its Vd then rests on the diurnal fill.

    Returns
    -------
    status : ndarray of str
    fails : ndarray of bool
        A present component fails completeness (status ``flagged``).
    note : ndarray of str
        Why a component is missing, flagged or filled, or why its flux rests on part
        of its sampled hours ('' otherwise).
    """
    vd_any = np.nan_to_num(vd_cov) + np.nan_to_num(filled_share)
    # a share equal to its bound (to rounding) is inside it: 10 % filled is not "more
    # than 10 %" although 1 - 0.9 is 0.09999999999999998 (workbench.wet.qa)
    low_flux = falls_short(flux_cov, options.min_air_coverage)
    fails = falls_short(coverage, options.min_air_coverage) | ~season_ok | low_flux
    status = np.full(coverage.shape, "complete", dtype=object)
    status = np.where(exceeds(filled_share, 1 - options.min_vd_coverage), "filled", status)
    status = np.where(fails, "flagged", status)
    note = np.full(coverage.shape, "", dtype=object)
    # sampled hours without a flux (no Vd the fill could close, no air density): the
    # period's flux is scaled up from the others, said whether or not it passes
    part_flux = (flux_cov > 0) & (np.asarray(coverage, float) - flux_cov > PART_FLUX_TOL)
    note = np.where(part_flux, np.char.add(np.char.add(np.char.add(
        "flux known for part of the sampled hours only (",
        np.char.mod("%.1f", 100.0 * np.nan_to_num(np.asarray(flux_cov, float)))),
        np.char.add(" % of the period with a flux, ",
                    np.char.mod("%.1f", 100.0 * np.nan_to_num(np.asarray(coverage, float))))),
        " % sampled; Vd or air density missing in the others)").astype(object), note)
    note = np.where(~season_ok & (coverage > 0), "a season without concentrations", note)
    no_vd = vd_any <= 0
    # the variables the site's met has in no hour, named where it has no Vd at all
    lacks = np.broadcast_to(np.asarray(met_without, dtype=object), np.shape(coverage)).astype(str)
    verb = np.where(np.char.find(lacks, " and ") >= 0, " have", " has")
    no_vd_why = np.where(lacks != "", np.char.add(np.char.add(np.char.add(
        "no deposition velocity for any hour of the period: ", lacks), verb),
        " no value in any hour of the site's met record"),
        "no deposition velocity for any hour of the period (check the met record and the "
        "site's roughness and heights)").astype(object)
    why_none = np.where(no_vd, no_vd_why, np.where(np.asarray(ratio, bool), RATIO_NO_FLUX,
                                                   NO_HOUR_WITH_BOTH))
    gaps = np.broadcast_to(np.asarray(met_gaps, dtype=object), np.shape(coverage))
    gaps = np.where(pd.isna(gaps), "", gaps).astype(object)
    # the period's own met gaps, named where the whole record has the variable: a
    # sensor dead for six weeks leaves a filled, partial or missing period behind
    why_none = np.where(no_vd & (lacks == "") & (gaps != ""),
                        np.char.add("no deposition velocity for any hour of the period: ",
                                    gaps.astype(str)).astype(object), why_none)
    is_filled = status == "filled"
    note = np.where(is_filled, join_notes(note, filled_vd_words(
        np.broadcast_to(filled_share, np.shape(coverage)), options)), note)
    # the period's met gaps where its Vd was filled, its flux is known for part of the
    # sampled hours, or it is flagged for another reason (a year without samples and
    # met reads as both)
    long_gap = np.broadcast_to(np.asarray(met_gap_h, float), np.shape(coverage)) \
        >= SAMPLING_GAP_NOTE_H - 1e-6
    note = np.where(part_flux | is_filled | fails | long_gap, join_notes(note, gaps), note)
    gone = (coverage > 0) & ~(flux_cov > 0)
    note = np.where(gone, why_none, note)
    note = np.where(~(coverage > 0), no_concentration_note(
        np.broadcast_to(np.asarray(period_masked, dtype=object), np.shape(coverage))), note)
    note = np.where(measured, note, unmeasured_note(masked))
    missing = ~measured | ~(coverage > 0) | gone | ~np.isfinite(vd_cov)
    status = np.where(missing, "missing", status)
    return status, fails & ~missing, note


#: Reason written where the net NH3 exchange over a period is an emission while the
#: deposition-only figure is a deposition (the sign flips).
NH3_NET_EMISSION = "nh3_net_emission"


def nh3_net_component(dep_only, net, status, note):
    """The NH3 component as the net exchange, its flag where the sign flips.

    Parameters
    ----------
    dep_only : ndarray (site, receptor, period)
        Deposition-only NH3 flux (the scheme's Vd) [mol m-2].
    net : ndarray (site, receptor, period)
        Net exchange of the compensation point model, deposition - emission
        (positive down; negative = emission, never clipped) [mol m-2].
    status, note : ndarray of str
        The component's status and note from the deposition-only rows (same sampling
        periods, so the same coverage).

    Returns
    -------
    dep, status, note : ndarray
        The net flux; ``flagged`` (not failing completeness: it is the answer, read with
        care) with the reason :data:`NH3_NET_EMISSION` where the net is an emission and
        the deposition-only figure is not; ``missing`` where the net is unknown.
    """
    present = status != "missing"
    flip = present & np.isfinite(net) & (net < 0) & ~(dep_only < 0)
    unknown = present & ~np.isfinite(net)
    status = np.where(flip & np.isin(status, ("complete", "filled")), "flagged", status)
    note = np.where(flip, join_notes(note, f"{NH3_NET_EMISSION}: the net NH3 exchange is an "
                                     "emission (deposition - emission < 0) while the "
                                     "deposition-only figure is a deposition; N totals use "
                                     "the net"), note)
    note = np.where(unknown, join_notes(note, "net NH3 exchange unknown (no hour of the "
                                        "compensation point model)"), note)
    status = np.where(unknown, "missing", status)
    return np.where(present & ~unknown, net, np.nan), status, note


def bracket_velocities(members) -> dict:
    """The species whose Vd deposits a whole gas/particle pair in each bracket.

    Parameters
    ----------
    members : tuple of str
        (gas, particle), a value of :data:`workbench.budget.PAIRS`.

    Returns
    -------
    dict
        ``{"all_gas": gas, "all_particle": particle}``: for NH3 the gas scheme's
        deposition-only Vd, also under ``nh3_treatment = "bidirectional"``.
    """
    gas, part = members
    return {"all_gas": gas, "all_particle": part}


def bracket_outputs(dr, pairs, species, vd_cov, filled_share, measured, season_ok, ratio,
                    options):
    """The dry-N brackets with their status: the weaker pair member's coverage.

    A bracket adds both members of a gas/particle pair deposited with one phase's Vd,
    each over its own sampling periods (:func:`workbench.drycomponents.dry_rows`), so it
    is no better than its weaker member: its air and flux coverage are the smaller of
    the members' (at the bracket's Vd), its Vd coverage that of the Vd it uses, and it
    is judged by the rule of a dry component (:func:`dry_status`): ``missing`` where a
    member has no flux, ``flagged`` where either member fails completeness.

    Parameters
    ----------
    dr : xarray.Dataset
        :func:`workbench.drycomponents.dry_components` on the budget's receptor axis.
    pairs : dict
        :data:`workbench.budget.PAIRS`.
    species : list of str
        The ``species`` axis of `dr`.
    vd_cov, filled_share : ndarray (site, receptor, period, species) [1]
    measured : ndarray of bool (site, species)
    season_ok : ndarray of bool (site, period, species)
    ratio : ndarray of bool (species)
        Given as a mixing ratio.
    options : BudgetOptions

    Returns
    -------
    dict
        xarray Variables on (site, receptor, period): ``bracket_<pair>_<how>``
        [mol m-2 of N] (NaN where ``missing``), ``..._status``, ``..._completeness``
        [1] (the smallest of air, flux and Vd coverage) and ``..._note``.
    """
    out = {}
    dims = ("site", "receptor", "period")
    found = [(f"bracket_{pair}_{how}", members, vd_sp) for pair, members in pairs.items()
             for how, vd_sp in bracket_velocities(members).items()
             if f"bracket_{pair}_{how}" in dr.variables]
    if not found:
        return out
    # every bracket judged in one call of dry_status, the brackets on a last axis (its
    # steps are element by element: the same statuses and notes as one call each)
    names = [f[0] for f in found]
    ks = np.array([[species.index(m) for m in f[1]] for f in found])      # (bracket, 2)
    k = [species.index(f[2]) for f in found]
    d = np.stack([dr.variables[n].values for n in names], axis=-1)
    shape = d.shape                                            # (site, receptor, period, b)
    cov = np.broadcast_to(np.stack([dr.variables[f"{n}_air_coverage"].values for n in names],
                                   axis=-1)[:, None, :, :], shape)
    fc = np.stack([dr.variables[f"{n}_flux_coverage"].values for n in names], axis=-1)
    meas = np.broadcast_to(measured[:, ks].all(-1)[:, None, None, :], shape)
    sok = season_ok[:, :, ks].all(-1)[:, None, :, :]
    # the reason of the first member that lost every value, where each member was
    # measured (a member not sampled at the site: "not measured")
    n_s = measured.shape[0]
    mk = (dr.variables["masked_note"].values[:, ks].astype(object)
          if "masked_note" in dr.variables else np.full((n_s, len(names), 2), "", object))
    mk = np.where(measured[:, ks], "", mk)
    sampled = (measured[:, ks] | (mk != "")).all(-1)
    mk = np.where(sampled, np.where(mk[..., 0] != "", mk[..., 0], mk[..., 1]), "")
    # a period without a concentration of a member: the first member's masked reason
    # there ("" where neither member's samples of the period were masked)
    pm = (dr.variables["period_masked_note"].values[:, :, ks].astype(object)
          if "period_masked_note" in dr.variables
          else np.full((n_s, shape[2], len(names), 2), "", object))
    pm = np.where(pm[..., 0] != "", pm[..., 0], pm[..., 1])
    vdc = vd_cov[..., k]
    st, _, note = dry_status(cov, vdc, filled_share[..., k], fc, meas, sok,
                             ratio[ks].any(-1), options, masked=mk[:, None, None, :],
                             period_masked=pm[:, None, :, :],
                             met_without=_met_without(dr)[:, None, None, None],
                             met_gaps=_met_gaps(dr)[:, None, :, None],
                             met_gap_h=_met_gap_hours(dr)[:, None, :, None])
    compl = np.fmin(np.fmin(cov, fc), vdc)
    miss = st == "missing"
    for i, (name, members, _) in enumerate(found):
        note_i = note[..., i]
        note_i = np.where(note_i == "", note_i, f"the weaker of {' and '.join(members)}: "
                          + note_i)
        out[name] = xr.Variable(dims, np.where(miss[..., i], np.nan, d[..., i]),
                                dr.variables[name].attrs)
        out[f"{name}_status"] = text_variable(dims, st[..., i], {
            "long_name": f"status of {name}: that of the weaker pair member (docs/budget.md)"})
        out[f"{name}_completeness"] = xr.Variable(dims, np.where(miss[..., i], np.nan,
                                                                 compl[..., i]), {
            "units": "1", "long_name": f"completeness of {name}: the smallest air, flux "
            "and Vd coverage of the pair members"})
        out[f"{name}_note"] = text_variable(dims, note_i.astype(object), {
            "long_name": f"why {name} is missing or flagged"})
    return out


def bulk_caught_brackets(brackets, pairs, bulk, component_of, options):
    """The all-particle brackets at bulk-collector sites under ``bulk_correction =
    "exclude_particles"``: taken as caught by the collector, as the particle components.

    With the pair all as particle, both members' mass deposits as particles, and at a
    bulk site the budget takes particle dry deposition as caught in the bulk "wet" ion
    (docs/budget.md, bulk collectors): the bracket is 0 there, with the status and
    completeness of the particle component (that of its wet ion), so that
    ``dry_N_all_particle`` equals the main numbers under ``pair_split =
    "all_particle"``.  The all-gas brackets are left as they are (gases are not taken
    as caught).

    Parameters
    ----------
    brackets : dict
        :func:`bracket_outputs`; changed in place and returned.
    pairs : dict
        :data:`workbench.budget.PAIRS`.
    bulk : ndarray of bool (site) or (site, period)
        The site has a bulk collector (over the whole period: a declared collector
        change is followed).
    component_of : callable
        Particle species -> (deposition [mol m-2], status, completeness [1]) on (site,
        receptor, period), the budget's own component after its bulk rule.
    options : BudgetOptions

    Returns
    -------
    dict
    """
    if options.bulk_correction != "exclude_particles" or not bulk.any():
        return brackets
    for pair, (_, particle) in pairs.items():
        name = f"bracket_{pair}_all_particle"
        if name not in brackets:
            continue
        dep, st, compl = component_of(particle)
        at = ((bulk[:, None, None] if bulk.ndim == 1 else bulk[:, None, :])
              & np.ones(dep.shape, bool))
        for var, new in ((name, dep), (f"{name}_status", st),
                         (f"{name}_completeness", compl),
                         (f"{name}_note", np.full(dep.shape, "caught by the bulk collector: "
                                                  f"the {pair} pair as particles is counted in "
                                                  "the wet deposition, 0 here (the scenario's "
                                                  "bulk_correction = \"exclude_particles\")",
                                                  dtype=object))):
            v = brackets[var]
            brackets[var] = v.copy(data=np.where(at, new, v.values))
    return brackets
