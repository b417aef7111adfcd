"""Wet deposition per site and period: PWMs, completeness, fluxes, sea-salt correction.

:func:`wet_deposition` turns screened samples (:func:`workbench.wet.screen`) into a
Dataset with dims (``site``, ``period``); :func:`to_table` flattens it for export.
The rules and their sources are in ``docs/methods_wet.md``.

Where the parts are: the samples' pieces and weights (:func:`sample_weights`) in
:mod:`workbench.wet.deposition_pieces`; the PWMs and the climatology in
:mod:`workbench.wet.deposition_pwm`; the sea-salt notes in
:mod:`workbench.wet.deposition_notes`.  This module re-exports them all.
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import xarray as xr

from .. import periods as _periods
from ..units import deposition_in, ureg
from . import seasalt
from .options import WetOptions
from .pwm import CoverageProfile, covered_share, group_sums, precipitation_weighted_mean
from .qa import UMOL_L_PER_MOL_M3, falls_short, pH_from_hydrogen
from .screening import STATUSES

# the sea-salt notes (defined here before)
from .deposition_notes import (_sample_names, _seasalt_floor_notes, _tracer_gaps,  # noqa: F401
                               uncovered_words)
# the samples' pieces and weights (defined here before)
from .deposition_pieces import (_join, _met_fractions, _periods_table,  # noqa: F401
                                _piece_weights, _species_list, _split, sample_weights)
# the precipitation-weighted means (defined here before)
from .deposition_pwm import _N_SEASONS, _climatology, _leave_out, _weighted  # noqa: F401


#: m per mm (= 1e-3), from the unit registry: mol m-3 x mm -> mol m-2.
M_PER_MM = ureg.Quantity(1.0, "mm").to("m").magnitude
#: Ions reported also in kg of their element per hectare (budget ions).
ELEMENT_IONS = ("SO4", "NO3", "NH4")
#: Period statuses.
PERIOD_STATUSES = ("complete", "flagged", "filled", "missing")
_UNIT_KG = {"SO4": "kg S ha-1", "NO3": "kg N ha-1", "NH4": "kg N ha-1"}
#: The words of the failed sample-coverage criterion (a period's reason and
#: completeness failure); a budget row whose note holds them adds no gap note
#: (:func:`workbench.budgetstatus.sampling_gap_note`).
COVERAGE_SHORT = "sample coverage below minimum"


def _short_label(label, fraction, of, minimum):
    """`label` with the fraction found and the minimum asked, per cell [text].

    >>> _short_label("gauge record below minimum", np.array([0.5111]), "of the period",
    ...              0.9).tolist()
    ['gauge record below minimum (51.1 % of the period; minimum 90 %)']
    """
    pct = np.char.mod("%.1f", 100.0 * np.nan_to_num(np.asarray(fraction, dtype=float)))
    tail = f" % {of}; minimum {100.0 * minimum:g} %)"
    return np.char.add(np.char.add(f"{label} (", pct), tail).astype(object)


def wet_deposition(screened: xr.Dataset, periods, options: WetOptions = WetOptions(),
                   met: xr.Dataset | None = None) -> xr.Dataset:
    """Precipitation-weighted means, completeness and wet deposition per site and period.

    Parameters
    ----------
    screened : xarray.Dataset
        Output of :func:`workbench.wet.screen` (dim ``sample``).
    periods : pandas.DataFrame or str
        A period table of :func:`workbench.periods.make_periods`, or a resolution
        (``"month"``, ``"season"``, ``"year"``, ``"hydro_year"``) to build one over
        the span of the samples.
    options : WetOptions
        Straddle rule, completeness thresholds, period fill, sea-salt tracer.
    met : xarray.Dataset, optional
        Hourly ``precipitation`` [mm], dims (site, time = end of hour), for the
        ``straddle="met"`` rule.

    Returns
    -------
    xarray.Dataset
        Dims (``site``, ``period``) [and ``ion`` for per-ion counts]:
        ``precipitation`` [mm] (all gauge-valid samples), ``precipitation_valid``
        [mm]; ``pwm_<X>`` [mol m-3] for each ion and H; ``pH_pwm`` [1];
        ``pwm_nss<X>`` [mol m-3]; ``dep_<X>`` [mol m-2], ``dep_<X>_eq_ha``
        [eq ha-1], ``dep_<X>_kg_ha`` [kg S or N ha-1] for SO4, NO3, NH4 and nss SO4;
        ``gauge_fraction``, ``coverage_fraction``, ``valid_precip_fraction`` [1];
        counts ``n_samples``, ``n_valid``, ``n_used``, ``n_flagged``,
        ``n_excluded``, ``n_dry``, ``n_gauge_filled``; ``status`` (complete |
        flagged | filled | missing: ``flagged`` when a completeness criterion fails
        or when kept samples failed a check), ``completeness_reasons``, ``filled``,
        ``completeness_failed`` (bool), ``flagged_precip_fraction`` [1] (share of
        the precipitation carried by kept flagged samples);
        ``nss<X>_total_used`` and ``nss<X>_clipped`` (bool: no tracer, so the total
        ion stands in; negative nss clipped at 0); ``nss<X>_tracer_estimated`` (text
        naming the samples with the ion but no tracer, whose sea salt is the period's
        tracer PWM of its other samples; "" where none);
        ``ion_valid_precip_fraction``, ``ion_n_valid``, ``ion_n_censored``,
        ``ion_filled`` (site, period, ion; the ion's PWM is the seasonal fill),
        ``ion_all_censored`` (every valid value of the ion below detection).
        The attributes hold the provenance (JSON texts).

    Notes
    -----
    For sample *i* with gauge depth :math:`P_i`, share :math:`f_{ip}` of it in
    period *p* (share of hours, or of hourly precipitation) and the mean over that part
    of :math:`1/m(t)`, with :math:`m(t)` the number of gauge-valid samples of the site
    running at instant *t* (collocated samplers; normally 1):

    .. math:: w_{ip} = P_i f_{ip} \\langle 1/m \\rangle_{ip}, \\quad
              P_p = \\sum_i w_{ip}, \\quad
              \\bar C_p = \\frac{\\sum_{i\\,valid} w_{ip} C_i}{\\sum_{i\\,valid} w_{ip}},
              \\quad D_p = \\bar C_p P_p

    The flux uses the precipitation of all gauge-valid samples, not only of the
    samples with valid chemistry.  The annual flux is the annual PWM times the
    annual precipitation, so monthly fluxes need not add up to it exactly.
    """
    opt = options
    if screened.sizes.get("sample", 0) == 0:
        raise ValueError("no precipitation samples to aggregate (the screened Dataset is empty)")
    if "status" not in screened:
        raise ValueError("wet_deposition needs screened samples: call workbench.wet.screen first")
    ptable = _periods_table(periods, screened, opt)
    sites = np.unique(screened.variables["site"].values.astype(str))
    n_site, n_per = len(sites), len(ptable)
    site_idx = pd.Index(sites).get_indexer(screened.variables["site"].values.astype(str))
    species = _species_list(screened)
    status = screened.variables["status"].values.astype(str)
    used_s = screened.variables["used"].values.astype(bool)
    # time coverage: used and dry samples, and trace samples with a known gauge depth
    # (their rain is measured and counts against the valid-chemistry share instead;
    # docs/methods_wet.md section 7)
    trace = (screened.variables["qa_flag_trace"].values.astype(bool)
             if "qa_flag_trace" in screened.variables else np.zeros(len(status), bool))
    covering = used_s | (status == "dry") | (trace & screened.variables["gauge_valid"].values
                                             .astype(bool))

    s_all = screened.variables["start"].values.astype("datetime64[ns]")
    e_all = screened.variables["end"].values.astype("datetime64[ns]")
    p_s = ptable["start"].values.astype("datetime64[ns]")
    p_e = ptable["end"].values.astype("datetime64[ns]")
    table, weight, gauge_prof, origin, span, mult = sample_weights(screened, ptable, opt, met)
    cover_prof = CoverageProfile(site_idx[covering], s_all[covering], e_all[covering], n_site,
                                 origin, span)
    i = table["interval"].values
    flat = site_idx[i] * n_per + table["period"].values
    n_flat = n_site * n_per
    used = used_s[i]
    shape = (n_site, n_per)

    def per(values):
        return group_sums(values, flat, n_flat).reshape(shape)

    # --- precipitation, coverage, counts ------------------------------------------------
    gs, ge = np.repeat(np.arange(n_site), n_per), np.tile(p_e, n_site)
    gstart = np.tile(p_s, n_site)
    hours = np.tile(ptable["hours"].values, n_site).reshape(shape)
    gauge_hours = gauge_prof.covered_hours(gs, gstart, ge).reshape(shape)
    cover_hours = cover_prof.covered_hours(gs, gstart, ge).reshape(shape)
    precip = np.where(gauge_hours > 0, per(weight), np.nan)

    def valid_precip(mask):
        # rain of the period whose chemistry is known: each gauge-valid piece by the
        # share of its hours covered by samples in `mask` (itself, or a collocated
        # partner; section 7) [mm]
        return per(weight * covered_share(table, site_idx, s_all, e_all, mask, n_site,
                                          origin, span))

    precip_valid = np.where(gauge_hours > 0, valid_precip(used_s), np.nan)
    counts = {f"n_{s}": per((status[i] == s).astype(float)).astype(int) for s in STATUSES}
    n_samples = per(np.ones(len(i))).astype(int)
    n_valid = counts["n_used"] + counts["n_flagged"]
    filled_src = screened.variables["gauge_source"].values.astype(str)
    n_gauge_filled = per((np.isin(filled_src[i], ["collector", "met"])).astype(float)).astype(int)
    gauge_fraction = gauge_hours / hours
    coverage_fraction = cover_hours / hours
    with np.errstate(invalid="ignore", divide="ignore"):
        vpf = np.where(precip > 0, precip_valid / np.where(precip > 0, precip, 1.0),
                       np.where(precip == 0, 1.0, np.nan))

    # --- PWMs ---------------------------------------------------------------------------
    flat_pwm, num, den = _weighted(table, screened, weight, used, flat, n_flat, species)
    pwm = {sp: flat_pwm[sp].reshape(shape) for sp in species}

    # --- completeness and status --------------------------------------------------------
    missing = (n_samples == 0) | ~(gauge_hours > 0)
    wet = precip > 0
    # the samples and hours a failing coverage misses, named in its words (section 7)
    cover_short = falls_short(coverage_fraction, opt.min_coverage_fraction)
    piece_uncovered = table["hours"].values * (1.0 - covered_share(
        table, site_idx, s_all, e_all, covering, n_site, origin, span))
    all_prof = CoverageProfile(site_idx, s_all, e_all, n_site, origin, span)
    fails = [
        # a fraction equal to its minimum passes (to rounding: qa.falls_short); the
        # reason says how much there is against how much is asked (section 7)
        (falls_short(gauge_fraction, opt.min_gauge_fraction),
         _short_label("gauge record below minimum", gauge_fraction,
                      "of the period", opt.min_gauge_fraction)),
        (cover_short,
         _short_label(COVERAGE_SHORT, coverage_fraction,
                      "of the period", opt.min_coverage_fraction)
         + uncovered_words(screened, table, piece_uncovered,
                           hours - all_prof.covered_hours(gs, gstart, ge).reshape(shape),
                           cover_short & (n_samples > 0) & (gauge_hours > 0), flat, shape,
                           hours)),
        (wet & falls_short(vpf, opt.min_valid_precip_fraction),
         _short_label("valid-chemistry precipitation below minimum", vpf,
                      "of the precipitation", opt.min_valid_precip_fraction)),
        (wet & (n_valid < opt.min_valid_samples),
         np.char.add(np.char.add("too few valid samples (", n_valid.astype(str)),
                     f" valid; minimum {opt.min_valid_samples})").astype(object)),
    ]
    reasons = np.full(shape, "", dtype=object)
    reasons = _join(reasons, n_samples == 0, "no samples")
    reasons = _join(reasons, (n_samples > 0) & ~(gauge_hours > 0), "no valid gauge depth")
    gauge_short = fails[0][0]
    failed = np.zeros(shape, bool)
    first_fail = np.full(shape, "", dtype=object)      # the first criterion failed, in words
    for mask, label in fails:
        reasons = _join(reasons, mask & ~missing, label)
        first_fail = np.where(mask & ~missing & ~failed, label, first_fail)
        failed |= mask
    failed &= ~missing
    filled = np.zeros(shape, bool)
    ion_fill = {sp: np.zeros(shape, bool) for sp in species}     # the ion's PWM was filled
    fill_n = 0
    if opt.period_fill == "seasonal" and failed.any():
        cat = pd.Index(_periods.SEASON_NAMES).get_indexer(ptable["season"].values)
        has_season = ptable["kind"].isin(["month", "season"]).values & (cat >= 0)
        loo = _leave_out(_climatology(screened, opt, met, site_idx, n_site, species,
                                      gauge_prof),
                         table, site_idx, cat, has_season, n_site, n_per, species)
        for sp in species:
            clim = loo[sp]
            # missing chemistry is filled, missing rain is not: a period whose gauge
            # record fails keeps its own PWM and stays flagged (section 7)
            take = failed & wet & np.isfinite(clim) & ~gauge_short
            filled |= take
            ion_fill[sp] = take
            pwm[sp] = np.where(take, clim, pwm[sp])
        fill_n = int(filled.sum())
    # kept samples that failed a check (flagged, not excluded): the period says so
    is_flagged = used & (status[i] == "flagged")
    flagged_precip = per(np.where(is_flagged, weight, 0.0))
    n_flagged_kept = counts["n_flagged"]          # flagged samples are kept (used)
    with np.errstate(invalid="ignore", divide="ignore"):
        flagged_share = np.where(precip > 0, flagged_precip / np.where(precip > 0, precip, 1.0),
                                 np.where(n_flagged_kept > 0, 1.0, 0.0))
    has_flagged = (n_flagged_kept > 0) & ~missing & ~filled
    pct = np.round(100 * np.nan_to_num(flagged_share), 1).astype(str)
    reasons = _join(reasons, has_flagged, np.char.add(np.char.add(np.char.add(
        n_flagged_kept.astype(str), np.where(n_flagged_kept == 1, " flagged sample kept (",
                                             " flagged samples kept (")),
        pct), " % of precipitation)"))
    # gauge depths filled (collector or met, section 6): the period says so and is
    # 'filled' where nothing weaker holds (docs/budget.md, "Status")
    is_gfill = np.isin(filled_src[i], ["collector", "met"])
    gfill_share = per(np.where(is_gfill, weight, 0.0))
    with np.errstate(invalid="ignore", divide="ignore"):
        gfill_share = np.where(precip > 0, gfill_share / np.where(precip > 0, precip, 1.0), 0.0)
    has_gfill = (n_gauge_filled > 0) & ~missing
    gpct = np.round(100 * np.nan_to_num(gfill_share), 1).astype(str)
    reasons = _join(reasons, has_gfill, np.char.add(np.char.add(np.char.add(
        n_gauge_filled.astype(str), np.where(n_gauge_filled == 1, " gauge depth filled (",
                                             " gauge depths filled (")),
        gpct), " % of precipitation)"))
    period_status = np.select([missing, filled, failed, has_flagged, has_gfill],
                              ["missing", "filled", "flagged", "flagged", "filled"],
                              "complete").astype(object)

    # --- fluxes and sea salt ------------------------------------------------------------
    out = {}
    coords = {"site": sites, "period": ptable["label"].values,
              "period_start": ("period", p_s), "period_end": ("period", p_e),
              "period_kind": ("period", ptable["kind"].values.astype(str)),
              "period_hours": ("period", ptable["hours"].values, {"units": "h"})}

    def var(name, values, units, long_name, **extra):
        attrs = {"long_name": long_name, **extra}
        if units:
            attrs["units"] = units
        out[name] = (("site", "period"), values, attrs)

    # an ion with no valid value at a site over the whole record is not measured
    # there: its deposition is unknown in dry periods too (never 0; section 5)
    measured = {}
    for sp in species:
        c = np.asarray(screened.variables[sp].values, dtype=float)
        measured[sp] = np.bincount(site_idx[used_s & np.isfinite(c)], minlength=n_site) > 0

    def flux(values, ion):
        dep = np.where(precip == 0, 0.0, values * precip * M_PER_MM)
        return np.where(measured[ion][:, None], dep, np.nan)

    var("precipitation", precip, "mm", "precipitation depth of all gauge-valid samples")
    var("precipitation_valid", precip_valid, "mm", "precipitation depth with valid chemistry")
    tracer = opt.seasalt_tracer
    nss, nss_state = {}, {}

    def filled_ok(ion, tr):
        # a filled PWM does not rest on the period's own samples: nothing to say there
        return ~(ion_fill.get(ion, np.zeros(shape, bool)) | ion_fill.get(tr, np.zeros(shape, bool)))
    if tracer in pwm:
        for ion in seasalt.corrected_ions(tracer, species):
            raw = seasalt.non_seasalt(pwm[ion], pwm[tracer], ion, tracer)
            # no tracer at the site in the period: the total ion stands in (flagged);
            # more sea salt than the ion itself: the nss part is clipped at 0 (flagged)
            no_tracer = np.isfinite(pwm[ion]) & ~np.isfinite(pwm[tracer])
            clipped = np.isfinite(raw) & (raw < 0)
            nss[f"nss{ion}"] = (np.where(no_tracer, pwm[ion], np.where(clipped, 0.0, raw)), ion)
            nss_state[f"nss{ion}"] = (no_tracer, clipped,
                                      _tracer_gaps(screened, table, weight, used, flat, shape,
                                                   precip, ion, tracer, no_tracer | ~filled_ok(
                                                       ion, tracer)))
    for sp in species:
        label = "free acidity H+" if sp == "H" else sp
        var(f"pwm_{sp}", pwm[sp], "mol m-3", f"precipitation-weighted mean of {label}")
    var("pH_pwm", pH_from_hydrogen(pwm["H"]), "1", "pH of the precipitation-weighted mean H+")
    if "SO4" in species:
        var("SO4_seasalt_floor", _seasalt_floor_notes(
            screened, table, weight, used, flat, shape, tracer, opt.detection_limit), "",
            f"samples of the period with SO4 below detection beside {tracer}: their "
            "sea-salt sulfate taken as the floor of their SO4 (docs/methods_wet.md 3.1)")
    for name, (values, ion) in nss.items():
        var(f"pwm_{name}", values, "mol m-3",
            f"precipitation-weighted mean of non-sea-salt {ion} (tracer {tracer})",
            seasalt_tracer=tracer)
        no_tracer, clipped, gaps = nss_state[name]
        var(f"{name}_tracer_estimated", gaps, "", f"samples of the period with {ion} but "
            f"no {tracer}: their sea salt is the period's {tracer} PWM of its other samples")
        var(f"{name}_total_used", no_tracer, "", f"no {tracer} in the period: "
            + seasalt.total_in_place(ion))
        var(f"{name}_clipped", clipped, "", f"sea-salt {ion} from {tracer} exceeds the "
            f"measured {ion}: non-sea-salt {ion} clipped at 0")
    all_dep = [(sp, sp, pwm[sp]) for sp in species] + [(n, ion, v) for n, (v, ion) in nss.items()]
    for name, ion, values in all_dep:
        dep = flux(values, ion)
        var(f"dep_{name}", dep, "mol m-2", f"wet deposition of {name}")
        var(f"dep_{name}_eq_ha", deposition_in(dep, ion, "eq_ha"), "eq ha-1",
            f"wet deposition of {name} in equivalents")
        if ion in ELEMENT_IONS:
            var(f"dep_{name}_kg_ha", deposition_in(dep, ion, "kg_ha"), _UNIT_KG[ion],
                f"wet deposition of {name} as {_UNIT_KG[ion].split()[1]}")
    var("gauge_fraction", gauge_fraction, "1", "fraction of the period with a valid gauge record")
    var("coverage_fraction", coverage_fraction, "1",
        "fraction of the period covered by valid or dry samples")
    var("valid_precip_fraction", vpf, "1", "fraction of precipitation with valid chemistry")
    var("n_samples", n_samples, "1", "samples overlapping the period")
    var("n_valid", n_valid, "1", "samples with valid chemistry (used + flagged)")
    for key, values in counts.items():
        var(key, values, "1", f"samples with status {key[2:]}")
    var("n_gauge_filled", n_gauge_filled, "1", "samples with a filled gauge depth")
    var("flagged_precip_fraction", flagged_share, "1",
        "share of the period's precipitation carried by kept flagged samples")
    var("completeness_failed", failed & ~filled & ~missing, "",
        "the period fails a completeness criterion (not only kept flagged samples)")
    var("completeness_failure", np.where(failed & ~filled & ~missing, first_fail, ""
                                         ).astype(object), "",
        "the first completeness criterion the period fails, with its share and minimum "
        "('' where it passes)")
    var("status", period_status, "", "complete | flagged | filled | missing")
    var("completeness_reasons", reasons, "", "failed completeness criteria ('; '-joined)")
    var("filled", filled, "", "PWM filled with the multi-year seasonal PWM")
    # --- per-ion completeness -----------------------------------------------------------
    ions = [sp for sp in species]
    frac_ion = np.stack([np.where(precip > 0, valid_precip(
        used_s & np.isfinite(np.asarray(screened.variables[sp].values, dtype=float)))
        / np.where(precip > 0, precip, 1.0), np.nan) for sp in ions], axis=-1)
    nval_ion, ncen_ion, allcen_ion = [], [], []
    for sp in ions:
        c = np.asarray(screened.variables[sp].values, dtype=float)[i]
        nval_ion.append(per((used & np.isfinite(c)).astype(float)).astype(int))
        cen_name = f"{sp}_censored"
        cen = (np.asarray(screened.variables[cen_name].values, bool)[i] if cen_name in screened
               else np.zeros(len(i), bool))
        ncen_ion.append(per((used & cen).astype(float)).astype(int))
        # every value behind the ion's PWM is a substitute for a censored one
        n_sub = per((used & cen & np.isfinite(c)).astype(float)).astype(int)
        allcen_ion.append((nval_ion[-1] > 0) & (n_sub == nval_ion[-1]))
    coords["ion"] = ions
    out["ion_valid_precip_fraction"] = (("site", "period", "ion"), frac_ion,
                                        {"units": "1", "long_name": "fraction of precipitation "
                                         "with a valid value of the ion"})
    out["ion_all_censored"] = (("site", "period", "ion"), np.stack(allcen_ion, -1),
                               {"long_name": "every valid value of the ion in the period is "
                                "below detection (its PWM is made of substitutes)"})
    out["ion_filled"] = (("site", "period", "ion"), np.stack([ion_fill[sp] for sp in ions], -1),
                         {"long_name": "the ion's PWM is the multi-year seasonal PWM "
                          "(period_fill), not the period's own samples"})
    out["ion_n_valid"] = (("site", "period", "ion"), np.stack(nval_ion, -1),
                          {"units": "1", "long_name": "valid samples with a value of the ion"})
    out["ion_n_censored"] = (("site", "period", "ion"), np.stack(ncen_ion, -1),
                             {"units": "1", "long_name": "censored values among valid samples"})
    ds = xr.Dataset(out, coords=coords)                # built once (each item set aligns)

    # --- provenance ---------------------------------------------------------------------
    in_period = np.zeros(screened.sizes["sample"], bool)
    in_period[np.unique(i)] = True
    reason_labels = [v for v in screened.data_vars if v.startswith("qa_")]
    excluded_by = {screened.variables[v].attrs["long_name"]: int((screened.variables[v].values & in_period &
                                                        (status == "excluded")).sum())
                   for v in reason_labels}
    flagged_by = {screened.variables[v].attrs["long_name"]: int((screened.variables[v].values & in_period &
                                                       (status == "flagged")).sum())
                  for v in reason_labels}
    censored = {sp: int(((np.asarray(screened.variables[f"{sp}_censored"].values, bool)) & in_period &
                         used_s).sum()) for sp in species if f"{sp}_censored" in screened}
    ds.attrs.update({
        "title": "wet deposition per site and period",
        "samples_total": int(screened.sizes["sample"]),
        "samples_in_periods": int(in_period.sum()),
        "samples_by_status": json.dumps({s: int(((status == s) & in_period).sum())
                                         for s in STATUSES}),
        "excluded_by_reason": json.dumps({k: v for k, v in excluded_by.items() if v}),
        "flagged_by_reason": json.dumps({k: v for k, v in flagged_by.items() if v}),
        "censored_values_used": json.dumps(censored),
        "gauge_filled": json.dumps({m: int(((filled_src == m) & in_period).sum())
                                    for m in ("collector", "met")}),
        "periods_by_status": json.dumps({s: int((period_status == s).sum())
                                         for s in PERIOD_STATUSES}),
        "periods_filled": fill_n,
        "straddle_split_by_met": int((table["share_method"].values == "met").sum()),
        "detection_limit_treatment": screened.attrs.get("detection_limit_treatment", ""),
        "wet_options": opt.to_json(),
        "wet_screen_options": screened.attrs.get("wet_screen_options", ""),
        "seasalt_tracer": tracer,
    })
    return ds


def to_table(wet: xr.Dataset) -> pd.DataFrame:
    """Tidy table of a wet-deposition Dataset: one row per site, period and species.

    Parameters
    ----------
    wet : xarray.Dataset
        Output of :func:`wet_deposition`.

    Returns
    -------
    pandas.DataFrame
        Columns ``site, period, period_start, period_end, species, pwm [mol m-3],
        pwm [ueq/L], deposition [mol m-2], deposition [eq/ha], deposition [kg/ha]``
        (kg of S or N for SO4, NO3, NH4 and nss SO4; NaN for the others),
        ``kg_basis``, ``precipitation [mm]``, ``gauge_fraction``,
        ``coverage_fraction``, ``valid_precip_fraction``, ``n_valid``, ``status``,
        ``filled``.
    """
    from .. import species as _species
    frames = []
    base = wet[["precipitation", "gauge_fraction", "coverage_fraction", "valid_precip_fraction",
                "n_valid", "status", "filled"]].to_dataframe().reset_index()
    names = [v.removeprefix("pwm_") for v in wet.data_vars if v.startswith("pwm_")]
    for name in names:
        ion = name.removeprefix("nss")
        cols = {"pwm [mol m-3]": wet[f"pwm_{name}"],
                "deposition [mol m-2]": wet[f"dep_{name}"],
                "deposition [eq/ha]": wet[f"dep_{name}_eq_ha"]}
        if f"dep_{name}_kg_ha" in wet:
            cols["deposition [kg/ha]"] = wet[f"dep_{name}_kg_ha"]
        part = xr.Dataset(cols).to_dataframe().reset_index()
        part["pwm [ueq/L]"] = (part["pwm [mol m-3]"] * _species.get(ion).eq_per_mol *
                               UMOL_L_PER_MOL_M3)
        part["kg_basis"] = _UNIT_KG.get(ion, "").split(" ")[1] if ion in _UNIT_KG else ""
        part.insert(2, "species", name)
        frames.append(part)
    long = pd.concat(frames, ignore_index=True)
    long = long.merge(base, on=["site", "period"], how="left", suffixes=("", "_b"))
    first = ["site", "period", "period_start", "period_end", "species", "pwm [mol m-3]",
             "pwm [ueq/L]", "deposition [mol m-2]", "deposition [eq/ha]", "deposition [kg/ha]",
             "kg_basis", "precipitation", "gauge_fraction", "coverage_fraction",
             "valid_precip_fraction", "n_valid", "status", "filled"]
    if "deposition [kg/ha]" not in long:
        long["deposition [kg/ha]"] = np.nan
    long = long.rename(columns={"precipitation": "precipitation [mm]"})
    first = [c if c != "precipitation" else "precipitation [mm]" for c in first]
    return long[first]
