"""Screening of precipitation samples: every check, every decision, every reason.

:func:`screen` applies the checks of :mod:`workbench.wet.qa` to a sample Dataset
(dim ``sample``, see ``docs/data_model.md``) and returns it with all intermediates
and the decision per sample.  Vectorized over samples; the only Python loops run
over the handful of ions, flag codes and reasons.
"""
from __future__ import annotations


import json

import numpy as np
import pandas as pd
import xarray as xr

from .. import flags as _flags
from ..species import PRECIP_IONS
from . import qa
from .carbonate import bicarbonate
from .hourly import met_precipitation, snow_share
from .options import WetOptions

#: Ions whose field blank is compared with the sample (the budget ions).
BLANK_IONS = ("SO4", "NO3", "NH4")
#: Sample statuses.
STATUSES = ("used", "flagged", "excluded", "dry")


def _values(ds, name, default=np.nan, dtype=float):
    n = ds.sizes["sample"]
    if name in ds:
        return np.asarray(ds[name].values, dtype=dtype)
    return np.full(n, default, dtype=dtype)


def _flag_table(flags_text: np.ndarray):
    """Per-code membership of the flags column: dict code -> bool array, and unknown.

    No option changes it: :class:`workbench.pipeline.Study` runs it once per sample
    file as the ``sample_flags`` stage of its graph and hands it to :func:`screen`.
    """
    flags_text = tuple("" if (v is None or (isinstance(v, float) and np.isnan(v))) else str(v)
                       for v in flags_text)
    n = len(flags_text)
    text = pd.Series(flags_text, dtype=object).astype(str)
    text = text.where(~text.isin(["nan", "None"]), "")
    tokens = text.str.replace(r"[,;]", " ", regex=True).str.split().explode()
    tokens = tokens[tokens.notna() & (tokens != "")]
    out = {}
    for code in _flags.FLAGS:
        hit = tokens.eq(code).groupby(level=0).any()
        out[code] = hit.reindex(range(n), fill_value=False).values.astype(bool)
    unknown = (~tokens.isin(list(_flags.FLAGS))).groupby(level=0).any()
    return out, unknown.reindex(range(n), fill_value=False).values.astype(bool)


def _site_stat(values, sites, how: str):
    """Per-site statistic of `values` broadcast back to the samples (NaN ignored).

    `how` is ``"median"``, ``"sum"`` or ``"count"`` (as pandas' groupby transform: a
    site without a finite value gets NaN for the median, 0 for the sum and count).
    A loop over the few sites, not over samples.
    """
    values = np.asarray(values, dtype=float)
    sites = np.asarray(sites)
    out = np.full(len(values), np.nan)
    for s in pd.unique(sites):
        m = sites == s
        v = values[m]
        ok = np.isfinite(v)
        if how == "median":
            out[m] = np.median(v[ok]) if ok.any() else np.nan
        elif how == "sum":
            out[m] = v[ok].sum()
        elif how == "count":
            out[m] = float(ok.sum())
        else:
            raise ValueError(f"unknown statistic {how!r}")
    return out


def _join(acc, mask, label):
    """Append `label` to the '; '-joined texts in `acc` where `mask`."""
    add = np.where(acc == "", label, acc + "; " + label)
    return np.where(mask, add, acc).astype(object)


def _blank_values(ds, blanks, ion):
    """Largest field-blank value of `ion` at the sample's site over its interval [mol m-3]."""
    s_site = ds["site"].values.astype(str)
    b_site = blanks["site"].values.astype(str)
    s0, s1 = ds["start"].values, ds["end"].values
    b0, b1 = blanks["start"].values, blanks["end"].values
    match = ((s_site[:, None] == b_site[None, :]) &
             (s0[:, None] < b1[None, :]) & (b0[None, :] < s1[:, None]))
    bv = np.asarray(blanks[ion].values, dtype=float)
    m = np.where(match & np.isfinite(bv)[None, :], bv[None, :], -np.inf).max(axis=1,
                                                                              initial=-np.inf)
    return np.where(np.isfinite(m), m, np.nan)


def ion_sums(conc: dict, pH, opt: WetOptions):
    """Hydrogen, bicarbonate, equivalents and their sums as the ion balance has them.

    Parameters
    ----------
    conc : dict of str to ndarray
        Concentrations of the measured ions [mol m-3] (censored values as treated);
        those of the balance enter it.
    pH : ndarray
    opt : WetOptions
        ``bicarbonate``, ``co2_mixing_ratio``, ``lab_temperature``.

    Returns
    -------
    hyd, hco3 : ndarray
        Free hydrogen from pH and bicarbonate in equilibrium with CO2 [mol m-3].
    eqs : dict of str to ndarray
        Equivalents per ion, H and HCO3 included [ueq/L].
    cations, anions : ndarray
        Their sums [ueq/L].
    """
    pH = np.asarray(pH, dtype=float)
    hyd = qa.hydrogen_from_pH(pH)
    hco3 = (bicarbonate(hyd, opt.co2_mixing_ratio, opt.lab_temperature) if opt.bicarbonate
            else np.zeros(len(pH)))
    eqs = {"H": qa.ueq_per_litre(hyd, "H")}
    eqs.update({i: qa.ueq_per_litre(c, i) for i, c in conc.items()
                if i in qa.BALANCE_CATIONS + qa.BALANCE_ANIONS and i not in ("H", "HCO3")})
    eqs["HCO3"] = qa.ueq_per_litre(hco3, "HCO3")
    cations, anions = qa.ion_sums(eqs)
    return hyd, hco3, eqs, cations, anions


def ion_balance_test(cations, anions, tiers):
    """The ion balance check of :func:`screen` on cation and anion sums [ueq/L].

    Returns
    -------
    idiff : ndarray
        Ion difference [%].
    limit : ndarray
        Allowed |ion difference| of each sample's tier [%].
    evaluated, fail : ndarray of bool
    """
    idiff = qa.ion_difference(cations, anions)
    limit = qa.tier_limit(cations + anions, tiers)
    evaluated = np.isfinite(idiff)
    return idiff, limit, evaluated, evaluated & qa.exceeds(np.abs(idiff), limit)


def _censored_so4_beside_tracer(ds, added, ions, opt) -> None:
    """A SO4 below detection beside a value of the sea-salt tracer: its substitute.

    The sea-salt correction (section 8) takes the tracer T as sea salt, so such a
    sample's total SO4 lies between its sea-salt sulfate S = r T (r the seawater
    ratio, :func:`workbench.wet.seasalt.seawater_ratio`) and the limit L, and its
    non-sea-salt part between 0 and max(0, L - S).  The total becomes S plus the
    ``detection_limit`` substitute of max(0, L - S) (half of it by default), so that
    its non-sea-salt part is that substitute: the rule of the air's pSO4 beside a
    pNa (:func:`workbench.drycomponents._nss_particles`).  Before, it took the
    substitute of L itself (L / 2), and its non-sea-salt part L / 2 - S went below 0
    wherever S > L / 2, pulling down the nss PWM of the period's measured samples
    (docs/methods_wet.md section 3.1).  A tracer below detection counts with its own
    substitute, as for the air.  Marks the samples in ``SO4_seasalt_floor`` (bool);
    `added` is changed in place.  [mol m-3]
    """
    from .seasalt import seawater_ratio
    tracer = getattr(opt, "seasalt_tracer", "Na")
    if "SO4" not in ions or tracer not in ions or tracer == "SO4":
        return
    cens = _values(ds, "SO4_censored", False, bool)
    lim = added["SO4_limit_used"][1]
    sea = seawater_ratio("SO4", tracer) * added[tracer][1]
    hit = cens & np.isfinite(lim) & np.isfinite(sea)
    nss = qa.censored_value(np.full(len(hit), np.nan), hit, np.maximum(lim - sea, 0.0),
                            opt.detection_limit)
    name, values, attrs = "SO4", added["SO4"][1], added["SO4"][2]
    added[name] = ("sample", np.where(hit, sea + nss, values), attrs)
    added["SO4_seasalt_floor"] = ("sample", hit, {
        "long_name": f"SO4 below detection beside {tracer}: its sea-salt sulfate plus the "
                     f"{opt.detection_limit} substitute of the limit less it",
        "seasalt_tracer": tracer})


def screen(samples: xr.Dataset, options: WetOptions = WetOptions(), met: xr.Dataset | None = None,
           blanks: xr.Dataset | None = None, flag_table=None) -> xr.Dataset:
    """Screen precipitation samples and decide, per sample, what is used.

    Parameters
    ----------
    samples : xarray.Dataset
        Samples, dim ``sample``: ``site``, ``start``, ``end``, ``flags``,
        ``gauge_depth`` [mm], ``sample_depth`` [mm], ``pH`` [1], ``conductivity``
        [uS cm-1], ions [mol m-3] with ``<ion>_censored`` and
        ``<ion>_detection_limit`` [mol m-3].
    options : WetOptions
        Options in force (detection limits, actions, tiers, ranges, fills).
    met : xarray.Dataset, optional
        Hourly meteorology, dims (site, time = end of hour): ``temperature`` [K]
        for the precipitation type, ``precipitation`` [mm] for the gauge fill.
    blanks : xarray.Dataset, optional
        Field blanks, dim ``blank``: ``site``, ``start``, ``end`` (the batch they
        stand for) and ions [mol m-3].
    flag_table : tuple, optional
        :func:`_flag_table` of ``samples["flags"]`` when the caller has it (not
        changed here).

    Returns
    -------
    xarray.Dataset
        The samples (ions replaced by their values after the detection-limit
        treatment; reported values kept as ``<ion>_reported``) plus:
        ``H``, ``HCO3`` [mol m-3]; ``cation_sum``, ``anion_sum`` [ueq/L];
        ``ion_difference``, ``ion_balance_limit`` [%]; ``conductivity_calc``
        [uS cm-1]; ``conductivity_difference``, ``conductivity_limit`` [%];
        ``capture_ratio`` [1]; ``snow_share`` [1]; ``precip_type``;
        ``ion_balance_check``, ``conductivity_check``, ``capture_check``
        (pass | fail | low | high | not evaluated); ``qa_<reason>`` (bool);
        ``n_censored``; ``gauge_depth_used`` [mm] and ``gauge_source``
        (measured | collector | met | none); ``chemistry_valid``,
        ``gauge_valid``, ``used`` (bool); ``status`` (used | flagged | excluded
        | dry); ``reasons`` and ``notes`` (text).  The attributes count every
        decision (JSON texts) and hold the options.

    Notes
    -----
    The rules, their equations and their sources are in ``docs/methods_wet.md``
    and in :mod:`workbench.wet.qa`.
    """
    opt = options
    ds = samples.copy()
    n = ds.sizes["sample"]
    site = _values(ds, "site", "", object).astype(str)
    start = ds["start"].values.astype("datetime64[ns]")
    end = ds["end"].values.astype("datetime64[ns]")
    ions = [i for i in PRECIP_IONS if i in ds]
    reasons = []  # (key, label, mask, effect); effect: "exclude" | "flag" | "note"
    added = {}    # variables to add, assigned once at the end (one merge, not dozens)

    # --- flags --------------------------------------------------------------------------
    codes, unknown = (_flag_table(_values(ds, "flags", "", object)) if flag_table is None
                      else flag_table)
    chem_flag_bad = np.zeros(n, bool)
    gauge_flag_bad = np.zeros(n, bool)
    for code, (meaning, chem_ok, gauge_ok) in _flags.FLAGS.items():
        hit = codes[code]
        chem_flag_bad |= hit & (not chem_ok)
        gauge_flag_bad |= hit & (not gauge_ok)
        effect = "exclude" if not chem_ok else "note"
        reasons.append((f"flag_{code}", f"flag {code}: {meaning}", hit, effect))
    reasons.append(("flag_unknown", "unknown flag code", unknown, "flag"))
    row_invalid = np.zeros(n, bool)
    for code, (_, chem_ok, gauge_ok) in _flags.FLAGS.items():
        if not chem_ok and not gauge_ok:
            row_invalid |= codes[code]

    # --- detection limits ---------------------------------------------------------------
    n_censored = np.zeros(n, int)
    censored_counts, no_limit_counts = {}, {}
    has_chem = np.zeros(n, bool)
    for ion in ions:
        rep = _values(ds, ion)
        cens = _values(ds, f"{ion}_censored", False, bool)
        lim = _values(ds, f"{ion}_detection_limit")
        stated = np.where(np.isfinite(lim), lim, np.where(cens & (rep > 0), rep, np.nan))
        site_median = _site_stat(np.where(np.isfinite(lim), lim, np.nan), site, "median")
        lim_used = np.where(cens, np.where(np.isfinite(stated), stated, site_median), np.nan)
        treated = qa.censored_value(rep, cens, lim_used, opt.detection_limit)
        attrs = dict(ds[ion].attrs)
        added[f"{ion}_reported"] = ("sample", rep, {**attrs, "long_name": f"{ion} as reported"})
        added[f"{ion}_limit_used"] = ("sample", lim_used, {
            "units": "mol m-3", "long_name": f"detection limit applied to censored {ion}"})
        added[ion] = ("sample", treated, {**attrs, "units": "mol m-3",
                                          "detection_limit_treatment": opt.detection_limit})
        n_censored += cens
        censored_counts[ion] = int(cens.sum())
        no_limit_counts[ion] = int((cens & ~np.isfinite(treated)).sum())
        has_chem |= np.isfinite(rep) | cens
    _censored_so4_beside_tracer(ds, added, ions, opt)
    pH = _values(ds, "pH")
    has_chem |= np.isfinite(pH)
    conc = {ion: added[ion][1] for ion in ions}

    # --- acidity, bicarbonate, ion balance ----------------------------------------------
    hyd, hco3, eqs, cations, anions = ion_sums(conc, pH, opt)
    idiff, ib_limit, ib_eval, ib_fail = ion_balance_test(cations, anions, opt.ion_balance_tiers)
    reasons.append(("ion_balance", "ion balance outside acceptance", ib_fail,
                    "exclude" if opt.on_ion_balance_fail == "exclude" else "flag"))
    # gross errors: beyond every tier of the ion balance, or an implausible value
    loosest = max(opt.gross_ion_difference, max(lim for _, lim in opt.ion_balance_tiers))
    gross = ib_eval & qa.exceeds(np.abs(idiff), loosest)
    too_high = np.zeros(n, bool)
    for ion in ions:
        cap = (opt.max_seasalt_concentration if ion in ("Na", "Cl") else opt.max_concentration)
        too_high |= qa.exceeds(np.nan_to_num(conc[ion], nan=0.0), cap)
    gross_effect = "exclude" if opt.on_gross_error == "exclude" else "flag"
    reasons.append(("gross_ion_balance", f"gross error: |ion difference| above {loosest:g} % "
                    "(beyond every tier)", gross, gross_effect))
    reasons.append(("gross_concentration", "gross error: a concentration above its plausible "
                    "maximum", too_high, gross_effect))

    # --- conductivity -------------------------------------------------------------------
    k_calc = qa.conductivity_calculated(eqs)
    k_meas = _values(ds, "conductivity")
    cdiff = qa.conductivity_difference(k_calc, k_meas, opt.conductivity_difference_basis)
    cd_limit = qa.tier_limit(k_meas, opt.conductivity_tiers)
    cd_eval = np.isfinite(cdiff)
    cd_fail = cd_eval & qa.exceeds(np.abs(cdiff), cd_limit)
    reasons.append(("conductivity", "conductivity outside acceptance", cd_fail,
                    "exclude" if opt.on_conductivity_fail == "exclude" else "flag"))

    # --- precipitation type and capture -------------------------------------------------
    if met is not None and "temperature" in met:
        share = snow_share(met, site, start, end, opt.snow_temperature)
    else:
        share = np.full(n, np.nan)
    ptype = qa.precipitation_type(share, opt.snow_share)
    gauge = _values(ds, "gauge_depth")
    sample_depth = _values(ds, "sample_depth")
    ranges = {"rain": opt.capture_rain, "snow": opt.capture_snow, "mixed": opt.capture_mixed,
              "unknown": opt.capture_unknown}
    lo = np.select([ptype == k for k in ranges], [r[0] for r in ranges.values()])
    hi = np.select([ptype == k for k in ranges], [r[1] for r in ranges.values()])
    # a gauge of 0 mm, or below capture_min_depth and under 1/hi of the collector,
    # beside a collector holding at least capture_min_depth missed the rain (blocked
    # funnel): not a dry (or nearly dry) week; the gauge is taken as failed and filled
    # like one (docs/methods_wet.md section 3.8)
    gauge_failed_wet = ~gauge_flag_bad & qa.gauge_under_wet_collector(
        gauge, sample_depth, opt.capture_min_depth, hi)
    gauge_zero_wet = gauge_failed_wet & (gauge == 0)
    gauge_low_wet = gauge_failed_wet & (gauge > 0)
    measured_ok = ~gauge_flag_bad & np.isfinite(gauge) & (gauge >= 0) & ~gauge_failed_wet
    ratio = qa.capture_ratio(sample_depth, np.where(measured_ok, gauge, np.nan),
                             opt.capture_min_depth)
    cap_low, cap_high = qa.falls_short(ratio, lo), qa.exceeds(ratio, hi)
    cap_effect = "exclude" if opt.on_capture_fail == "exclude" else "flag"
    reasons.append(("gauge_zero_wet", "gauge 0 mm under a wet collector (gauge taken as "
                    "failed)", gauge_zero_wet, "flag"))
    reasons.append(("gauge_low_wet", "gauge far below a wet collector (below the capture "
                    "check's minimum depth, collector above the capture range: gauge taken "
                    "as failed)", gauge_low_wet, "flag"))
    reasons.append(("capture_low", "capture ratio below range", cap_low, cap_effect))
    reasons.append(("capture_high", "capture ratio above range (leak or contamination?)",
                    cap_high, cap_effect))

    # --- contamination screens ----------------------------------------------------------
    cont_effect = "exclude" if opt.on_contamination == "exclude" else "flag"
    if "K" in conc and "NH4" in conc:
        po4 = conc.get("PO4")
        both = qa.biological_screen(conc["K"], conc["NH4"], None, opt.bio_potassium,
                                    opt.bio_ammonium, opt.bio_phosphate)
        has_po4 = np.isfinite(po4) if po4 is not None else np.zeros(n, bool)
        bio = both & has_po4 & qa.at_least(np.where(has_po4, po4, 0.0), opt.bio_phosphate)
        bio_weak = both & ~has_po4      # K and NH4 alone: farm rain too, so flag only
    else:
        bio = bio_weak = np.zeros(n, bool)
    dust = (qa.dust_screen(pH, conc["Ca"], opt.dust_pH, opt.dust_calcium) if "Ca" in conc
            else np.zeros(n, bool))
    reasons.append(("bio", "contamination screen: biological (K, NH4, PO4 high)", bio,
                    cont_effect))
    reasons.append(("bio_no_po4", "contamination screen: K and NH4 high, PO4 not measured "
                    "(flagged, not excluded)", bio_weak, "flag"))
    reasons.append(("dust", "contamination screen: soil dust (high pH and Ca)", dust,
                    "exclude" if opt.on_dust == "exclude" else "flag"))
    blank_hit = np.zeros(n, bool)
    if blanks is not None:
        for ion in BLANK_IONS:
            if ion in conc and ion in blanks:
                bmax = _blank_values(ds, blanks, ion)
                added[f"{ion}_blank"] = ("sample", bmax, {"units": "mol m-3",
                                                          "long_name": f"largest field blank of {ion}"})
                blank_hit |= qa.exceeds(bmax, opt.blank_share * conc[ion])
    reasons.append(("blank", "field blank high against the sample", blank_hit, cont_effect))

    # --- gauge depth and its fill -------------------------------------------------------
    depth = np.where(measured_ok, gauge, np.nan)
    source = np.where(measured_ok, "measured", "none").astype(object)
    fillable = ~measured_ok & ~row_invalid
    fill_info = {}
    for method in opt.gauge_fill:
        est = np.full(n, np.nan)
        if method == "collector":
            med = _site_stat(ratio, site, "median")
            cnt = _site_stat(ratio, site, "count")
            est = np.where(cnt >= opt.fill_min_samples, sample_depth / med, np.nan)
        elif met is not None and "precipitation" in met:
            mp = met_precipitation(met, site, start, end)
            both = measured_ok & np.isfinite(mp)
            g_sum = _site_stat(np.where(both, gauge, np.nan), site, "sum")
            m_sum = _site_stat(np.where(both, mp, np.nan), site, "sum")
            cnt = _site_stat(np.where(both, mp, np.nan), site, "count")
            with np.errstate(invalid="ignore", divide="ignore"):
                scale = np.where((cnt >= opt.fill_min_samples) & (m_sum > 0), g_sum / m_sum,
                                 np.nan)
            est = mp * scale
        take = fillable & ~np.isfinite(depth) & np.isfinite(est)
        depth = np.where(take, est, depth)
        source = np.where(take, method, source).astype(object)
        fill_info[method] = int(take.sum())
    gauge_valid = np.isfinite(depth)
    reasons.append(("gauge_filled", "gauge depth filled", gauge_valid & ~measured_ok, "note"))

    # --- decisions ----------------------------------------------------------------------
    dry = gauge_valid & (depth == 0)
    reasons.append(("dry_with_chemistry", "chemistry reported for a dry sample",
                    dry & has_chem, "note"))
    reasons.append(("no_chemistry", "no chemistry reported",
                    ~dry & ~has_chem & ~chem_flag_bad, "exclude"))
    excluded_by_check = np.zeros(n, bool)
    flagged_by_check = np.zeros(n, bool)
    for _, _, mask, effect in reasons:
        if effect == "exclude":
            excluded_by_check |= mask
        elif effect == "flag":
            flagged_by_check |= mask
    chemistry_valid = has_chem & ~dry & ~excluded_by_check
    no_depth = chemistry_valid & ~gauge_valid
    reasons.append(("no_depth", "no precipitation depth (gauge missing, no fill)", no_depth,
                    "exclude"))
    used = chemistry_valid & gauge_valid & (np.nan_to_num(depth) > 0)
    status = np.select([dry, ~used, flagged_by_check], ["dry", "excluded", "flagged"],
                       "used").astype(object)

    text = np.full(n, "", dtype=object)
    notes = np.full(n, "", dtype=object)
    for key, label, mask, effect in reasons:
        if effect == "note":
            notes = _join(notes, mask, label)
        else:
            text = _join(text, mask, label)
        added[f"qa_{key}"] = ("sample", np.asarray(mask, bool), {"long_name": label,
                                                                 "effect": effect})
    notes = _join(notes, n_censored > 0, f"censored values set to {opt.detection_limit} limit")

    def check(evaluated, failed):
        return np.where(~evaluated, "not evaluated", np.where(failed, "fail", "pass")).astype(object)

    cap_eval = np.isfinite(ratio)
    cap_check = np.where(~cap_eval, "not evaluated",
                         np.where(cap_low, "low", np.where(cap_high, "high", "pass"))).astype(object)
    new = {
        "H": (hyd, "mol m-3", "free hydrogen ion from pH"),
        "HCO3": (hco3, "mol m-3", "bicarbonate in equilibrium with atmospheric CO2"),
        "cation_sum": (cations, "ueq L-1", "sum of cations CE"),
        "anion_sum": (anions, "ueq L-1", "sum of anions AN"),
        "ion_difference": (idiff, "percent", "ion difference 100 (CE - AN) / (CE + AN)"),
        "ion_balance_limit": (ib_limit, "percent", "allowed |ion difference|"),
        "ion_balance_check": (check(ib_eval, ib_fail), "", "ion balance check"),
        "conductivity_calc": (k_calc, "uS cm-1", "conductivity calculated at 25 degC"),
        "conductivity_difference": (cdiff, "percent", "conductivity difference 100 (calc - "
                                    "meas) / " + ("meas" if opt.conductivity_difference_basis
                                                  == "measured" else "(calc + meas)")),
        "conductivity_limit": (cd_limit, "percent", "allowed |conductivity difference|"),
        "conductivity_check": (check(cd_eval, cd_fail), "", "conductivity check"),
        "snow_share": (share, "1", "share of precipitation in snow hours"),
        "precip_type": (ptype, "", "precipitation type (rain | snow | mixed | unknown)"),
        "capture_ratio": (ratio, "1", "collector depth / gauge depth"),
        "capture_low": (lo, "1", "lower end of the accepted capture ratio"),
        "capture_high": (hi, "1", "upper end of the accepted capture ratio"),
        "capture_check": (cap_check, "", "capture check (pass | low | high | not evaluated)"),
        "n_censored": (n_censored, "1", "number of censored ion values"),
        "gauge_depth_used": (depth, "mm", "gauge depth, measured or filled"),
        "gauge_source": (source, "", "measured | collector | met | none"),
        "chemistry_valid": (chemistry_valid, "", "chemistry valid for PWM"),
        "gauge_valid": (gauge_valid, "", "precipitation depth known (measured or filled)"),
        "used": (used, "", "sample enters the PWM"),
        "status": (status, "", "used | flagged | excluded | dry"),
        "reasons": (text, "", "reasons for flagging or excluding ('; '-joined)"),
        "notes": (notes, "", "informative notes ('; '-joined)"),
    }
    for name, (values, units, long_name) in new.items():
        attrs = {"long_name": long_name}
        if units:
            attrs["units"] = units
        added[name] = ("sample", np.asarray(values), attrs)
    ds = ds.assign(added)

    status_counts = {s: int((status == s).sum()) for s in STATUSES}
    reason_counts = {label: {s: int((mask & (status == s)).sum()) for s in STATUSES
                             if (mask & (status == s)).any()}
                     for _, label, mask, _ in reasons if np.any(mask)}
    ds.attrs.update({
        "wet_screen_options": opt.to_json(),
        "n_samples": int(n),
        "status_counts": json.dumps(status_counts),
        "reason_counts": json.dumps(reason_counts),
        "censored_counts": json.dumps(censored_counts),
        "censored_without_limit": json.dumps(no_limit_counts),
        "gauge_fill_counts": json.dumps(fill_info),
        "ions_in_balance": " ".join(k for k in eqs),
        "detection_limit_treatment": opt.detection_limit,
    })
    return ds


def samples_table(screened: xr.Dataset) -> pd.DataFrame:
    """Tidy table of the screened samples for export (one row per sample).

    Parameters
    ----------
    screened : xarray.Dataset
        Output of :func:`screen`.

    Returns
    -------
    pandas.DataFrame
        Identity columns first (site, start, end, line, sampler_id), then the
        decision (status, reasons, notes) and every QA intermediate; column names
        carry the unit in brackets.
    """
    first = [c for c in ("site", "start", "end", "line", "sampler_id", "status", "reasons",
                         "notes") if c in screened]
    rest = [v for v in screened.data_vars if v not in first]
    df = screened[first + rest].to_dataframe().reset_index(drop=True)
    rename = {v: f"{v} [{screened[v].attrs['units']}]" for v in first + rest
              if screened[v].attrs.get("units") not in (None, "", "1")}
    return df.rename(columns=rename)
