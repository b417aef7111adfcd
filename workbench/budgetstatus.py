"""Status, reasons and wet outputs of the budget's components (used by
:mod:`workbench.budget`).

No status says more than the data: a component is ``missing`` with its reason when
nothing stands behind its number (no concentration, no hour of deposition velocity, no
air density for a mixing ratio, no valid value of a wet ion), ``flagged`` when it
fails completeness or holds something to read with care (kept flagged samples, a
sulfate basis that fell back, a clipped non-sea-salt value), and the reason is
written in words (the ``note`` column of budget.csv).
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import xarray as xr

from .wet.qa import exceeds, falls_short
from .wet.seasalt import total_in_place

#: The start of the note of a site that measures no pNa at all: its total pSO4 stands
#: for the non-sea-salt part on one basis over the whole record, said but not flagged
#: (the budget flags only weeks without pNa among weeks with it; docs/budget.md;
#: written by :func:`workbench.drycomponents.total_used_notes`).
NO_PNA_AT_SITE = "no pNa measured at the site"


#: The start of the note of a dry component that has no number because the species
#: is not in the air file at the site.
NOT_MEASURED_NOTE = "not measured at the site (no valid concentration)"
#: The start of the note of a dry component whose species was measured at the site but
#: lost every value to a check of the air reader; the flag follows.
ALL_MASKED_NOTE = "measured, every value masked"


def unmeasured_note(masked) -> np.ndarray:
    """The note of a component without any value at the site: :data:`ALL_MASKED_NOTE`
    with the flag where every value was masked (`masked`, the reader's reason, e.g.
    ``measured, every value masked: NH3 values look 1000x too high at this sampler:
    ng/m3 written under a ug/m3 header?``), :data:`NOT_MEASURED_NOTE` where `masked` is
    "" (the species is not sampled there).

    >>> unmeasured_note(np.array(["", "NH3 above the plausible 1000 ug/m3"], object)).tolist()
    ['not measured at the site (no valid concentration)', 'measured, every value masked: NH3 above the plausible 1000 ug/m3']
    """
    m = np.asarray(masked, dtype=object)
    m = np.where(pd.isna(m), "", m).astype(str)
    return np.where(m == "", NOT_MEASURED_NOTE,
                    np.char.add(ALL_MASKED_NOTE + ": ", m)).astype(object)


def dry_status(coverage, vd_cov, filled_share, flux_cov, measured, season_ok, ratio,
                options, masked=""):
    """Status, completeness failure and reason of a dry component.

    Parameters
    ----------
    coverage, vd_cov, filled_share, flux_cov : ndarray
        Share of the period's hours with a concentration, with a modelled Vd, with
        a filled Vd, and in sampling periods whose flux is known [1].
    measured, season_ok : ndarray of bool
    ratio : bool
        The species is given as a mixing ratio (needs the molar density of air).
    options : BudgetOptions
    masked : str or ndarray of str, optional
        Where the species is not `measured`: why every value at the site was masked
        ("" for none: not sampled), broadcastable to `coverage` (:func:`unmeasured_note`).

    Returns
    -------
    status : ndarray of str
    fails : ndarray of bool
        A present component fails completeness (status ``flagged``).
    note : ndarray of str
        Why a component is missing or flagged ('' otherwise).
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
    note = np.where(low_flux & (flux_cov > 0) & (flux_cov < coverage),
                    "flux known for part of the sampled hours only (Vd or air density "
                    "missing in the others)", note)
    note = np.where(~season_ok & (coverage > 0), "a season without concentrations", note)
    no_vd = vd_any <= 0
    why_none = np.where(no_vd, "no deposition velocity for any hour of the period (check the "
                        "met record and the site's roughness and heights)",
                        "no molar density of air (temperature or pressure) in the sampled "
                        "hours: the mixing ratio cannot become a flux" if ratio else
                        "no hour with both a concentration and a deposition velocity")
    gone = (coverage > 0) & ~(flux_cov > 0)
    note = np.where(gone, why_none, note)
    note = np.where(~(coverage > 0), "no concentration in the period", note)
    note = np.where(measured, note, unmeasured_note(masked))
    missing = ~measured | ~(coverage > 0) | gone | ~np.isfinite(vd_cov)
    status = np.where(missing, "missing", status)
    return status, fails & ~missing, note


def split_notes(text) -> list:
    """The parts of a '; '-joined note (:func:`join_notes`), split only outside
    parentheses: a part may hold "; " inside its own parenthesis ("... (sea salt
    included, an upper bound; small inland)"), and a split there cut it in two, the
    second half then read as a part of its own ("every year used: pSO4: small inland)").

    >>> split_notes("a (b; c); d")
    ['a (b; c)', 'd']
    >>> split_notes("")
    []
    """
    text = str(text)
    parts, depth, start = [], 0, 0
    for i, ch in enumerate(text):            # over a note's characters, never over hours
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth = max(depth - 1, 0)
        elif ch == ";" and depth == 0 and text.startswith("; ", i):
            parts.append(text[start:i])
            start = i + 2
    parts.append(text[start:])
    return [p for p in parts if p.strip()]


def join_notes(acc, text):
    """Append `text` to the '; '-joined notes in `acc` (ndarray of str or str); an empty
    `text` (scalar or element) leaves `acc` as it is."""
    acc = np.asarray(acc, dtype=object)
    acc = np.where(pd.isna(acc), "", acc)
    text = np.asarray(text, dtype=object)
    return np.where(text == "", acc, np.where(acc == "", text, acc + "; " + text)).astype(object)


#: The shortest stretch of a period without samples that a budget row notes [h]: a
#: week, the usual sample (our choice; a weekly sample across the edge of the record's
#: first year leaves less).
SAMPLING_GAP_NOTE_H = 168.0
#: Hours of a week, the unit the note counts a gap in [h].
HOURS_PER_WEEK = 168.0


def sampling_gap_note(note, status, coverage, hours, role):
    """Add to a component's note the hours of its period without a usable sample.

    A gap within the completeness thresholds keeps a component ``complete`` (the covered
    weeks stand for the period): the note says it where the number is read, e.g. ``air:
    10 weeks without a usable sample (80.8 % of the period's hours covered)``.  Written
    for a component that is not ``missing`` with at least :data:`SAMPLING_GAP_NOTE_H`
    hours of its period not covered: no sample (a sampler out of service) or only
    samples left out (a lost sample; input_rows.csv says why).  The coverage is the
    budget's own (``air_coverage``; ``wet_coverage_fraction``, where dry and trace weeks
    count as covered).

    Parameters
    ----------
    note, status : ndarray of str
        The component's note and status (any shape, the period axis among them).
    coverage : ndarray
        Share of the period's hours covered [1] (NaN: not applicable), as `note`.
    hours : ndarray
        Hours of the periods [h], broadcastable to `coverage`.
    role : str
        ``air`` or ``precipitation``: the word the note opens with.

    Returns
    -------
    ndarray of str
    """
    cov = np.asarray(coverage, float)
    note = np.array(np.broadcast_to(np.asarray(note, dtype=object), cov.shape))
    gap = (1.0 - cov) * np.broadcast_to(np.asarray(hours, float), cov.shape)      # [h]
    show = np.flatnonzero((np.isfinite(cov) & (cov > 0) & (status != "missing")
                           & (gap >= SAMPLING_GAP_NOTE_H - 1e-6)).ravel())
    flat, flat_gap, flat_cov = note.reshape(-1), gap.reshape(-1), cov.reshape(-1)
    weeks = [round(float(g) / HOURS_PER_WEEK, 1) for g in flat_gap[show]]
    text = np.array([f"{role}: {w:g} week{'' if w == 1 else 's'} without a usable sample "
                     f"({100 * c:.1f} % of the period's hours covered)"
                     for w, c in zip(weeks, flat_cov[show])], dtype=object)
    flat[show] = join_notes(flat[show], text)     # the few rows with a gap: their words
    return flat.reshape(cov.shape)


#: How a censored value was replaced, in words (`WetOptions.detection_limit`).
CENSORED_WORDS = {"half": "half the detection limit", "limit": "the detection limit",
                  "zero": "0"}


def as_flag(values):
    """A boolean variable of the wet chain as bool, NaN read as False [bool].

    The budget reindexes the wet Dataset onto the catalogue's sites and periods, and a
    site without precipitation samples gets NaN there, which ``astype(bool)`` reads as
    True: such a site's missing SO4 rows said "total SO4 used ... clipped at 0" until
    the 2026-12 audit (tests/test_audit_wet_budget.py).

    >>> as_flag(np.array([1.0, 0.0, np.nan])).tolist()
    [True, False, False]
    """
    v = np.asarray(values)
    return np.where(pd.isna(v), False, v).astype(bool)


def wet_mean_status(w, name, w_status, fallback=False):
    """The status rule of one wet mean: of a budget wet component (:func:`wet_component`)
    and of each mean of precipitation_annual.csv
    (:func:`workbench.analysis.outputs.ion_status`), written once.

    The period's status of the wet chain; ``flagged`` where a non-sea-salt mean fell
    back to the total ion or was clipped at 0 (a complete or filled period only), and
    where the ion itself (and, for a non-sea-salt mean, its sea-salt tracer, whose PWM
    is part of it) was valid for less than ``min_valid_precip_fraction`` of the
    precipitation (another ion may have carried the period's completeness; equal to
    the minimum, to rounding, passes); ``missing`` where the mean has no value.

    Parameters
    ----------
    w : xarray.Dataset
        Wet deposition on (site, period).
    name : str
        The mean as named in ``dep_<name>``: ``SO4``, ``nssSO4``, ``H``...
    w_status : ndarray of str (site, period)
        Period status of the wet chain (NaN already read as ``missing``).
    fallback : bool
        The non-sea-salt basis was asked for but `w` has no ``dep_nss<ion>``: `name`
        is the total ion, flagged everywhere it is present (sea salt included).

    Returns
    -------
    status : ndarray of str (site, period)
    low : ndarray of bool
        The ion (or tracer) valid for too small a share of the precipitation: a
        completeness failure.
    notes : list of (ndarray of bool, str or ndarray of str)
        In order, where each reason holds and its words (:func:`wet_component` joins
        them into the budget's ``note``).
    share : ndarray (site, period) [1]
        The smallest share of the period's precipitation with a valid value of the
        ion(s); 1 in a period without rain at a site that measures them, NaN without a
        gauge depth or where the mean has no value in a period without rain.
    gone : ndarray of bool
        The mean has no value in a period the wet chain does not call ``missing``.
    """
    dims = ("site", "period")
    v = w.variables
    tracer = w.attrs.get("seasalt_tracer", "Na")
    ion = name.removeprefix("nss")
    status = np.asarray(w_status, dtype=object).copy()
    shape = status.shape
    notes = []
    soft = np.zeros(shape, bool)          # flagged for a reason other than completeness
    if fallback:
        soft[:] = True
        notes.append((soft.copy(), f"no {tracer} measured: {total_in_place(ion)} "
                      "(sea salt included)"))
    elif name != ion:
        for var, text in ((f"{name}_total_used", f"no {tracer} at the site in the period: "
                           f"{total_in_place(ion)} (sea salt included)"),
                          (f"{name}_clipped", f"sea-salt {ion} from {tracer} exceeds the "
                           f"measured {ion}: non-sea-salt {ion} clipped at 0")):
            if var in v:
                hit = as_flag(w[var].transpose(*dims).values)
                soft |= hit
                notes.append((hit, text))
    if name != ion and f"{name}_tracer_estimated" in v:
        # samples without the tracer in a period whose other samples have it: said in
        # words, naming them, the status kept (the tracer's share below judges how much
        # of the rain it covers; docs/methods_wet.md section 8)
        est = w[f"{name}_tracer_estimated"].transpose(*dims).values
        said = np.array([isinstance(x, str) and x != "" for x in est.ravel()],
                        bool).reshape(shape) & (status != "missing")
        notes.append((said, np.where(said, est, "").astype(str)))
    floor_said = np.zeros(shape, bool)
    if ion == "SO4" and "SO4_seasalt_floor" in v:
        # a SO4 below detection beside the tracer: its sea salt is its floor (said, the
        # status kept: a value below detection is a measurement; methods_wet.md 3.1)
        floor = w["SO4_seasalt_floor"].transpose(*dims).values
        floor_said = np.array([isinstance(x, str) and x != "" for x in floor.ravel()],
                              bool).reshape(shape) & (status != "missing")
        notes.append((floor_said, np.where(floor_said, floor, "").astype(str)))
    status = np.where(soft & np.isin(status, ("complete", "filled")), "flagged", status)
    precip = (w["precipitation"].transpose(*dims).values if "precipitation" in v
              else np.full(shape, np.nan))
    need = json.loads(w.attrs.get("wet_options", "{}")).get("min_valid_precip_fraction", 0.7)
    have = list(w["ion"].values) if "ion" in w.coords else []
    share = np.full(shape, np.inf)
    low = np.zeros(shape, bool)
    for i in [ion] + ([tracer] if name != ion else []):
        if "ion_valid_precip_fraction" not in v or i not in have:
            continue
        frac = w["ion_valid_precip_fraction"].sel(ion=i).transpose(*dims).values
        # equal to the minimum (to rounding) passes, as the wet chain's own criteria
        low_i = (np.isfinite(frac) & falls_short(frac, need) & (frac > 0)
                 & (w_status != "missing"))
        if "ion_filled" in v:
            # a PWM filled with the multi-year seasonal PWM (period_fill) does not rest on
            # the period's own samples: their share does not judge it (the period is
            # 'filled', docs/methods_wet.md section 7)
            low_i &= ~as_flag(w["ion_filled"].sel(ion=i).transpose(*dims).values)
        pct = np.round(100 * np.nan_to_num(frac), 1).astype(str)
        notes.append((low_i, np.char.add(np.char.add(f"{i} valid for ", pct),
                                         " % of the precipitation only")))
        low |= low_i
        share = np.fmin(share, np.where(precip > 0, frac, np.where(precip == 0, 1.0, np.nan)))
    share = np.where(np.isinf(share), np.nan, share)
    if "ion_all_censored" in v and ion in have:
        # every value behind the mean is a substitute for one below detection: said in
        # words, the status kept (docs/methods_wet.md section 3.1, "In the budget")
        subs = as_flag(w["ion_all_censored"].sel(ion=ion).transpose(*dims).values)
        if "ion_filled" in v:
            subs &= ~as_flag(w["ion_filled"].sel(ion=ion).transpose(*dims).values)
        subs &= (w_status != "missing") & (precip > 0)
        how = CENSORED_WORDS.get(w.attrs.get("detection_limit_treatment", ""),
                                 "a substitute")
        n_val = np.nan_to_num(w["ion_n_valid"].sel(ion=ion).transpose(*dims).values
                              if "ion_n_valid" in v else np.zeros(shape)).astype(int)
        how = np.where(floor_said, f"{how} used; beside {tracer}: the sea salt plus that "
                       "share of (limit - sea salt)", f"{how} used")
        notes.append((subs, np.char.add(np.char.add(np.char.add(
            f"{ion} below detection in all ", n_val.astype(str)), " valid samples ("),
            np.char.add(how.astype(str), ")"))))
    status = np.where(low, "flagged", status)
    dep = (w[f"dep_{name}"].transpose(*dims).values.astype(float) if f"dep_{name}" in v
           else np.full(shape, np.nan))
    gone = ~np.isfinite(dep) & (status != "missing")
    share = np.where(~np.isfinite(dep) & ~(precip > 0), np.nan, share)
    status = np.where(~np.isfinite(dep), "missing", status).astype(object)
    return status, low, notes, share, gone


def wet_sulfate_total(w, options) -> np.ndarray:
    """Where the budget's wet S component (``SO4``) holds total SO4, sea salt included
    [bool] (site, period): everywhere on ``sulfate_basis = "total"`` and where the wet
    chain has no non-sea-salt mean (no tracer in the record); on the nss basis, the
    periods whose non-sea-salt mean fell back to the total ion for want of the tracer
    (the wet chain's ``nssSO4_total_used``).  The choice of :func:`wet_component`, as
    data: budget.csv's ``sulfate_basis`` reads it (carried as ``wet_sulfate_total``),
    not the words of the note.

    Parameters
    ----------
    w : xarray.Dataset
        Wet deposition (site, period) on the budget's axes.
    options : BudgetOptions
    """
    shape = w.variables["status"].shape
    if options.sulfate_basis != "nss" or "dep_nssSO4" not in w.variables:
        return np.ones(shape, bool)
    if "nssSO4_total_used" not in w.variables:
        return np.zeros(shape, bool)
    return as_flag(w.variables["nssSO4_total_used"].values)


def wet_component(w, sp, options, w_status, w_fail, with_share=False):
    """Deposition, status, completeness failure and note of a wet component.

    The status is :func:`wet_mean_status` of the component's mean (``nss<sp>`` on the
    non-sea-salt basis); the note starts with the wet chain's completeness reasons.

    Parameters
    ----------
    w : xarray.Dataset
        Wet deposition (site, period) on the budget's axes.
    sp : str
        ``SO4``, ``NO3`` or ``NH4``.
    options : BudgetOptions
    w_status, w_fail : ndarray
        Period status of the wet chain and its completeness failure.
    with_share : bool
        Also return the share of the precipitation with a valid value of the ion (and,
        for nss SO4, of its tracer) [1] (:func:`wet_mean_status`).

    Returns
    -------
    status, note : ndarray of str
    deposition : ndarray [mol m-2] or None (no such column)
    fails : ndarray of bool
    share : ndarray [1] (with `with_share`)
    """
    v = w.variables
    nss = sp == "SO4" and options.sulfate_basis == "nss"
    name = f"nss{sp}" if nss and "dep_nssSO4" in v else sp
    if f"dep_{name}" not in v:
        return (None,) * (5 if with_share else 4)
    d = v[f"dep_{name}"].values.astype(float)
    reasons = v["completeness_reasons"].values.astype(object) if "completeness_reasons" in v \
        else np.full(d.shape, "", object)
    reasons = np.where(pd.isna(reasons), "", reasons).astype(object)   # sites without samples
    note = np.where(w_status != "complete", reasons, "").astype(object)
    status, low_ion, notes, share, gone = wet_mean_status(w, name, w_status,
                                                          fallback=nss and name == sp)
    for hit, text in notes:
        note = np.where(hit, join_notes(note, text), note)
    precip = v["precipitation"].values if "precipitation" in v else np.full(d.shape, np.nan)
    note = np.where(gone, join_notes(note, f"no valid {sp} value in the period's samples" if
                                 np.all(np.isfinite(precip[gone])) else
                                 "no precipitation depth"), note)
    note = np.where((status == "missing") & (note == ""), "no precipitation samples in the "
                    "period", note)
    fails = (w_fail | low_ion) & (status != "missing")
    return (status, note, d, fails, share) if with_share else (status, note, d, fails)


def wet_outputs(w: xr.Dataset):
    """Precipitation depth, precipitation-weighted means, free acidity of the wet chain.

    Parameters
    ----------
    w : xarray.Dataset
        Wet deposition on the budget's (site, period) axes.

    Returns
    -------
    variables : dict
        ``precipitation`` [mm], ``pwm`` (site, period, wet_ion) [mol m-3],
        ``pH_pwm`` [1] (pH of the PWM of H+), ``wet_H_deposition`` [mol m-2] (free
        acidity: the PWM of H+ times the depth), ``wet_status`` (the period status of
        the wet chain) and ``wet_flagged_share`` [1].
    ions : list of str
        The ``wet_ion`` coordinate (the ions, H, and non-sea-salt ions).
    """
    v = w.variables
    dims = ("site", "period")
    ions = [n.removeprefix("pwm_") for n in w.data_vars if n.startswith("pwm_")]
    shape = v["status"].shape
    st = v["status"].values.astype(object)
    st = np.where(pd.isna(st), "missing", st)

    def get(name, units, long_name):
        vals = v[name].values if name in v else np.full(shape, np.nan)
        return xr.Variable(dims, vals, {"units": units, "long_name": long_name})
    out = {
        "precipitation": get("precipitation", "mm", "precipitation depth of all gauge-valid "
                             "samples in the period"),
        "pH_pwm": get("pH_pwm", "1", "pH of the precipitation-weighted mean H+"),
        "wet_H_deposition": get("dep_H", "mol m-2", "wet deposition of free acidity H+ "
                                "(precipitation-weighted mean H+ x depth)"),
        "wet_flagged_share": get("flagged_precip_fraction", "1", "share of the precipitation "
                                 "carried by kept samples that failed a check"),
        "wet_status": xr.Variable(dims, st, {"long_name": "status of the wet chain's period"}),
        "pwm": xr.Variable(dims + ("wet_ion",),
                           np.stack([v[f"pwm_{i}"].values for i in ions], -1) if ions
                           else np.zeros(shape + (0,)),
                           {"units": "mol m-3", "long_name": "precipitation-weighted mean "
                            "concentration (nss: non-sea-salt)"}),
    }
    return out, ions


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
    for pair, members in pairs.items():
        for how, vd_sp in bracket_velocities(members).items():
            name = f"bracket_{pair}_{how}"
            if name not in dr.variables:
                continue
            ks = [species.index(m) for m in members]
            k = species.index(vd_sp)
            d = dr.variables[name].values
            cov = dr.variables[f"{name}_air_coverage"].values[:, None, :] * np.ones(d.shape)
            fc = dr.variables[f"{name}_flux_coverage"].values
            meas = measured[:, ks].all(-1)[:, None, None] & np.ones(d.shape, bool)
            sok = season_ok[:, :, ks].all(-1)[:, None, :]
            # the reason of the first member that lost every value, where each member
            # was measured (a member not sampled at the site: "not measured")
            mk = (dr.variables["masked_note"].values[:, ks].astype(object)
                  if "masked_note" in dr.variables else np.full((len(meas), 2), "", object))
            mk = np.where(measured[:, ks], "", mk)
            sampled = (measured[:, ks] | (mk != "")).all(-1)
            mk = np.where(sampled, np.where(mk[:, 0] != "", mk[:, 0], mk[:, 1]), "")
            st, _, note = dry_status(cov, vd_cov[..., k], filled_share[..., k], fc, meas, sok,
                                     bool(ratio[ks].any()), options, masked=mk[:, None, None])
            note = np.where(note == "", note, f"the weaker of {' and '.join(members)}: " + note)
            compl = np.fmin(np.fmin(cov, fc), vd_cov[..., k])
            miss = st == "missing"
            out[name] = xr.Variable(dims, np.where(miss, np.nan, d), dr.variables[name].attrs)
            out[f"{name}_status"] = xr.Variable(dims, st, {
                "long_name": f"status of {name}: that of the weaker pair member (docs/budget.md)"})
            out[f"{name}_completeness"] = xr.Variable(dims, np.where(miss, np.nan, compl), {
                "units": "1", "long_name": f"completeness of {name}: the smallest air, flux "
                "and Vd coverage of the pair members"})
            out[f"{name}_note"] = xr.Variable(dims, note.astype(object), {
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
