"""Status, reasons and wet outputs of the budget's components (used by
:mod:`workbench.budget`).

No status says more than the data: a component is ``missing`` with its reason when
nothing stands behind its number (no concentration, no hour of deposition velocity, no
air density for a mixing ratio, no valid value of a wet ion), ``flagged`` when it
fails completeness or holds something to read with care (kept flagged samples, a
sulfate basis that fell back, a clipped non-sea-salt value), and the reason is
written in words (the ``note`` column of budget.csv).

Where the parts are: the notes (:func:`join_notes`, :func:`split_notes`,
:func:`sampling_gap_note`) in :mod:`workbench.budgetstatus_notes`; the dry components,
the net NH3 and the pair brackets (:func:`dry_status`, :func:`nh3_net_component`,
:func:`bracket_outputs`...) in :mod:`workbench.budgetstatus_dry`.  The wet components
are here (:func:`wet_component` looks :func:`wet_mean_status` up in this module); it
re-exports the others, so that ``workbench.budgetstatus.<name>`` keeps working.
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import xarray as xr

from .wet.qa import falls_short
from .wet.seasalt import total_in_place
# the notes (defined here before)
from .budgetstatus_notes import (HOURS_PER_WEEK, NO_PNA_AT_SITE,  # noqa: F401
                                 SAMPLING_GAP_NOTE_H, join_notes, sampling_gap_note,
                                 split_notes)
# the dry components and the brackets (defined here before)
from .budgetstatus_dry import (ALL_MASKED_NOTE, NOT_MEASURED_NOTE,  # noqa: F401
                               NO_CONCENTRATION_NOTE, PERIOD_MASKED_NOTE,
                               no_concentration_note, unmeasured_note,
                               NH3_NET_EMISSION, bracket_outputs,
                               bracket_velocities, bulk_caught_brackets, dry_failure_words,
                               dry_status,
                               nh3_net_component)

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


def _values(w, var, dims, **at):
    """The values of `w`'s variable `var` on the axes `dims`, at the labels `at` of its
    other axes: what ``w[var].sel(**at).transpose(*dims).values`` gives, read from the
    Variable without building a DataArray with every coordinate of `w` (that was most
    of the budget stage's time on a budget option change: docs/performance.md,
    "The N split and the bracket from the graph")."""
    x = w.variables[var]
    if at:
        x = x.isel({d: w.get_index(d).get_loc(label) for d, label in at.items()})
    return x.transpose(*dims).values


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
    low_words : ndarray of str
        Where `low`: the first ion found short, its share and the minimum ("SO4 valid
        for 42.9 % of the precipitation only (minimum 70 %)"); '' elsewhere.
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
                hit = as_flag(_values(w, var, dims))
                soft |= hit
                notes.append((hit, text))
    if name != ion and f"{name}_tracer_estimated" in v:
        # samples without the tracer in a period whose other samples have it: said in
        # words, naming them, the status kept (the tracer's share below judges how much
        # of the rain it covers; docs/methods_wet.md section 8)
        est = _values(w, f"{name}_tracer_estimated", dims)
        said = np.array([isinstance(x, str) and x != "" for x in est.ravel()],
                        bool).reshape(shape) & (status != "missing")
        notes.append((said, np.where(said, est, "").astype(str)))
    floor_said = np.zeros(shape, bool)
    if ion == "SO4" and "SO4_seasalt_floor" in v:
        # a SO4 below detection beside the tracer: its sea salt is its floor (said, the
        # status kept: a value below detection is a measurement; methods_wet.md 3.1)
        floor = _values(w, "SO4_seasalt_floor", dims)
        floor_said = np.array([isinstance(x, str) and x != "" for x in floor.ravel()],
                              bool).reshape(shape) & (status != "missing")
        notes.append((floor_said, np.where(floor_said, floor, "").astype(str)))
    status = np.where(soft & np.isin(status, ("complete", "filled")), "flagged", status)
    precip = (_values(w, "precipitation", dims) if "precipitation" in v
              else np.full(shape, np.nan))
    need = json.loads(w.attrs.get("wet_options", "{}")).get("min_valid_precip_fraction", 0.7)
    have = list(w["ion"].values) if "ion" in w.coords else []
    share = np.full(shape, np.inf)
    low = np.zeros(shape, bool)
    low_words = np.full(shape, "", dtype=object)
    for i in [ion] + ([tracer] if name != ion else []):
        if "ion_valid_precip_fraction" not in v or i not in have:
            continue
        frac = _values(w, "ion_valid_precip_fraction", dims, ion=i)
        # equal to the minimum (to rounding) passes, as the wet chain's own criteria
        low_i = (np.isfinite(frac) & falls_short(frac, need) & (frac > 0)
                 & (w_status != "missing"))
        if "ion_filled" in v:
            # a PWM filled with the multi-year seasonal PWM (period_fill) does not rest on
            # the period's own samples: their share does not judge it (the period is
            # 'filled', docs/methods_wet.md section 7)
            low_i &= ~as_flag(_values(w, "ion_filled", dims, ion=i))
        pct = np.round(100 * np.nan_to_num(frac), 1).astype(str)
        words = np.char.add(np.char.add(f"{i} valid for ", pct),
                            f" % of the precipitation only (minimum {100 * need:g} %)")
        notes.append((low_i, words))
        low_words = np.where(low_i & ~low, words, low_words)
        low |= low_i
        share = np.fmin(share, np.where(precip > 0, frac, np.where(precip == 0, 1.0, np.nan)))
    share = np.where(np.isinf(share), np.nan, share)
    if "ion_all_censored" in v and ion in have:
        # every value behind the mean is a substitute for one below detection: said in
        # words, the status kept (docs/methods_wet.md section 3.1, "In the budget")
        subs = as_flag(_values(w, "ion_all_censored", dims, ion=ion))
        if "ion_filled" in v:
            subs &= ~as_flag(_values(w, "ion_filled", dims, ion=ion))
        subs &= (w_status != "missing") & (precip > 0)
        how = CENSORED_WORDS.get(w.attrs.get("detection_limit_treatment", ""),
                                 "a substitute")
        n_val = np.nan_to_num(_values(w, "ion_n_valid", dims, ion=ion)
                              if "ion_n_valid" in v else np.zeros(shape)).astype(int)
        how = np.where(floor_said, f"{how} used; beside {tracer}: the sea salt plus that "
                       "share of (limit - sea salt)", f"{how} used")
        notes.append((subs, np.char.add(np.char.add(np.char.add(
            f"{ion} below detection in all ", n_val.astype(str)), " valid samples ("),
            np.char.add(how.astype(str), ")"))))
    status = np.where(low, "flagged", status)
    dep = (_values(w, f"dep_{name}", dims).astype(float) if f"dep_{name}" in v
           else np.full(shape, np.nan))
    gone = ~np.isfinite(dep) & (status != "missing")
    share = np.where(~np.isfinite(dep) & ~(precip > 0), np.nan, share)
    status = np.where(~np.isfinite(dep), "missing", status).astype(object)
    return status, low, notes, share, gone, low_words


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


def wet_component(w, sp, options, w_status, w_fail, with_share=False, with_failure=False):
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
    with_failure : bool
        Also (after the share) the first completeness criterion failed, in words with
        its share and minimum ('' where the component passes).

    Returns
    -------
    status, note : ndarray of str
    deposition : ndarray [mol m-2] or None (no such column)
    fails : ndarray of bool
    share : ndarray [1] (with `with_share` or `with_failure`)
    failure : ndarray of str (with `with_failure`)
    """
    v = w.variables
    nss = sp == "SO4" and options.sulfate_basis == "nss"
    name = f"nss{sp}" if nss and "dep_nssSO4" in v else sp
    if f"dep_{name}" not in v:
        return (None,) * (6 if with_failure else 5 if with_share else 4)
    d = v[f"dep_{name}"].values.astype(float)
    reasons = v["completeness_reasons"].values.astype(object) if "completeness_reasons" in v \
        else np.full(d.shape, "", object)
    reasons = np.where(pd.isna(reasons), "", reasons).astype(object)   # sites without samples
    note = np.where(w_status != "complete", reasons, "").astype(object)
    status, low_ion, notes, share, gone, low_words = wet_mean_status(
        w, name, w_status, fallback=nss and name == sp)
    for hit, text in notes:
        note = np.where(hit, join_notes(note, text), note)
    precip = v["precipitation"].values if "precipitation" in v else np.full(d.shape, np.nan)
    note = np.where(gone, join_notes(note, f"no valid {sp} value in the period's samples" if
                                 np.all(np.isfinite(precip[gone])) else
                                 "no precipitation depth"), note)
    note = np.where((status == "missing") & (note == ""), "no precipitation samples in the "
                    "period", note)
    fails = (w_fail | low_ion) & (status != "missing")
    # the first criterion failed, in words: the period's (gauge, coverage, valid
    # precipitation, valid samples), else the ion's share of the rain
    period_words = (v["completeness_failure"].values.astype(object)
                    if "completeness_failure" in v else np.full(d.shape, "", object))
    period_words = np.where(pd.isna(period_words), "", period_words)
    period_words = np.where(w_fail & (period_words == ""), "fails completeness", period_words)
    failure = np.where(fails, np.where(w_fail, period_words, low_words), "").astype(object)
    if with_failure:
        return status, note, d, fails, share, failure
    return (status, note, d, fails, share) if with_share else (status, note, d, fails)


def _words(v, name, shape):
    """Text variable `name` of `v` with NaN (a site without samples) read as '' [text]."""
    if name not in v:
        return np.full(shape, "", dtype=object)
    words = v[name].values.astype(object)
    return np.where(pd.isna(words), "", words).astype(object)


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
        the wet chain), ``wet_passes`` (it passes completeness), ``wet_completeness_failure``
        (the first criterion it fails, in words) and ``wet_flagged_share`` [1].
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
        "wet_passes": xr.Variable(dims, ~(as_flag(v["completeness_failed"].values)
                                          if "completeness_failed" in v
                                          else st == "flagged") & (st != "missing"), {
            "long_name": "the wet chain's period passes completeness (a flagged one may, "
                         "with kept flagged samples)"}),
        "wet_completeness_failure": xr.Variable(dims, _words(v, "completeness_failure", shape), {
            "long_name": "the first completeness criterion the wet chain's period fails, "
                         "with its share and minimum"}),
        "pwm": xr.Variable(dims + ("wet_ion",),
                           np.stack([v[f"pwm_{i}"].values for i in ions], -1) if ions
                           else np.zeros(shape + (0,)),
                           {"units": "mol m-3", "long_name": "precipitation-weighted mean "
                            "concentration (nss: non-sea-salt)"}),
    }
    return out, ions
