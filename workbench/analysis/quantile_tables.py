"""Tables and report text of the Monte Carlo quantiles (budget.csv, summary.csv, report).

See :func:`workbench.analysis.uncertainty.add_quantiles`, which calls these.
"""
from __future__ import annotations

import types  # noqa: F401  (the doctest of bulk_in_force)

import numpy as np
import pandas as pd
import xarray as xr

from ..budget import COMPONENTS
from ..report_numbers import number
from ..units import element_deposition_in

#: Quantiles reported [1] and the suffixes of their columns.
QUANTILES = (0.05, 0.5, 0.95)
SUFFIXES = ("_p05", "_p50", "_p95")
#: ``[dry]`` options that make a velocity depend on the measured air, which the draws
#: hold at the point's velocities: option -> what it moves, in the report's words.
AIR_DEPENDENT_VD = {
    "so2_codeposition": "Vd(SO2) with the NH3/SO2 ratio of the air (so2_codeposition)",
    "nh3_acid_ratio_from_air": ("Vd(NH3) with the acid ratio (2 SO2 + HNO3)/NH3 of the air "
                                "(nh3_acid_ratio_from_air)"),
}
#: What that leaves out, measured (benchmarks/air_dependent_vd.py, the invented demo's
#: ridge site, 2021, default [uncertainty], 1,000 draws, seed 12345, against the engine
#: run on the drawn air; docs/methods_uncertainty.md): per option, and for both.
AIR_DEPENDENT_VD_MEASURED = {
    "so2_codeposition": "a draw's dry SO2 within 4 % of the model run on the drawn air in "
                        "95 % of the draws (up to 7 %)",
    "nh3_acid_ratio_from_air": "a draw's dry NH3 within 8 % of the model run on the drawn "
                               "air in 95 % of the draws (up to 13 %)",
}
AIR_DEPENDENT_VD_QUANTILES = ("the 5, 50 and 95 % quantiles within 1.5 %, the Vd factors "
                              "making most of the range")
#: The grid method of ``[uncertainty] vd_follows_air`` (:mod:`.airvd`), in the report's
#: words, and its error measured against engine runs on drawn air
#: (benchmarks/air_vd_grid.py; docs/methods_uncertainty.md).
AIR_VD_GRID_METHOD = ("the grid method: the velocities run on the air with NH3 scaled by "
                      "9 factors from 0.5 to 2, each sample's part read off them at the "
                      "draw's factor of the ratio")
AIR_VD_GRID_ERROR = ("a draw's dry SO2 and NH3 within 0.1 % of the model run on the drawn "
                     "air, measured on the invented demo's ridge site in 2021, 10 draws, "
                     "against up to 7.6 % with the velocities of the measured air")
#: Totals of the budget (element_pathway), as in :func:`workbench.budget._totals`.
TOTALS = ("S_wet", "S_dry", "S_total", "N_wet", "N_dry", "N_total")


def _long(values, sites, receptors, periods, names, elements, pathways, species, fac):
    """Rows (site, receptor, period, name) of quantile arrays (Q, S, R, P, N) [mol m-2]."""
    n_q, n_s, n_r, n_p, n_n = values.shape
    idx = np.indices((n_s, n_r, n_p, n_n)).reshape(4, -1)
    el = np.asarray(elements)[idx[3]]
    frame = pd.DataFrame({"site": np.asarray(sites)[idx[0]],
                          "receptor": np.asarray(receptors)[idx[1]],
                          "period": np.asarray(periods)[idx[2]], "element": el,
                          "pathway": np.asarray(pathways)[idx[3]],
                          "species": np.asarray(species)[idx[3]]})
    for qi, suffix in enumerate(SUFFIXES):
        v = values[qi].reshape(-1)
        kg = np.where(el == "S", element_deposition_in(v, "S", "kg_ha"),
                      element_deposition_in(v, "N", "kg_ha"))
        eq = np.where(el == "S", element_deposition_in(v, "S", "eq_ha"),
                      element_deposition_in(v, "N", "eq_ha"))
        f = np.asarray(fac)[idx[2]]
        frame["flux_kg_ha" + suffix] = kg
        frame["flux_eq_ha" + suffix] = eq
        frame["flux_kg_ha_yr" + suffix] = kg * f
        frame["flux_eq_ha_yr" + suffix] = eq * f
        frame["flux_mmol_m2" + suffix] = element_deposition_in(v, "N", "mmol_m2")
    return frame


def range_note(missing):
    """What the 5-95 % range of a total lacking components covers [text].

    Parameters
    ----------
    missing : str or ndarray of str
        The components without data (``missing_components``, space-separated; empty
        or not text where the total lacks none).

    Returns
    -------
    str or ndarray of str
        ``""`` where nothing is missing; else the note: the draws scale the measured
        components only, so each quantile is at most the total's (the missing
        components add a deposition >= 0 the draws do not hold) and the 95 % is no
        upper bound.
    """
    m = pd.Series(np.atleast_1d(np.asarray(missing, dtype=object))).map(
        lambda v: v.strip() if isinstance(v, str) else "")
    note = np.where(m != "", "range of the measured components only (not measured: " + m
                    + "): the total's quantiles are at least these, the 95 % is no upper "
                    "bound", "")
    return note if np.ndim(missing) else str(note[0])


def summary_range_notes(budget: xr.Dataset) -> xr.DataArray:
    """summary.csv's ``range_note``: the totals and sums whose 5-95 % range holds the
    measured components only, per (site, receptor, period) [text].

    From the budget's ``total_missing_components``: a total lacking a component, the
    oxidized (reduced) N lacking an oxidized (reduced) N component, the potential
    acidity lacking any S or N component.
    """
    from ..budget import OXIDIZED_N, REDUCED_N
    miss = budget["total_missing_components"].transpose("site", "receptor", "period",
                                                        "total")
    names = [str(t) for t in miss["total"].values]
    cells = miss.values.reshape(-1, len(names))
    out = np.full(len(cells), "", dtype=object)
    for i, row in enumerate(cells):        # one per (site, receptor, period) cell
        lists = {n: (v.split() if isinstance(v, str) else []) for n, v in zip(names, row)}
        n_all = lists.get("N_total", [])
        lists["oxidized_N"] = [c for c in n_all if c in OXIDIZED_N]
        lists["reduced_N"] = [c for c in n_all if c in REDUCED_N]
        lists["potential_acidity"] = lists.get("S_total", []) + n_all
        lacking = [n for n in TOTALS + ("oxidized_N", "reduced_N", "potential_acidity")
                   if lists.get(n)]
        if lacking:
            gone = " ".join(dict.fromkeys(lists["potential_acidity"]))
            out[i] = (f"ranges of {', '.join(lacking)}: the measured components only (not "
                      f"measured: {gone}): those totals' quantiles are at least these, "
                      "their 95 % is no upper bound")
    return xr.DataArray(out.reshape(miss.shape[:3]), dims=("site", "receptor", "period"),
                        coords={k: miss[k].values for k in ("site", "receptor", "period")},
                        attrs={"long_name": "what the 5-95 % ranges of a row cover "
                                            "(docs/methods_uncertainty.md)"})


def quantile_table(q, annual_factor) -> pd.DataFrame:
    """The quantile columns of budget.csv, keyed by (site, receptor, period, element,
    pathway, species), for the periods of the budget and the span rows.

    Parameters
    ----------
    q : BudgetQuantiles
    annual_factor : ndarray (P,)
        Of the budget's periods [1].
    """
    b = q.budget
    el = [c[0] for c in COMPONENTS]
    pa = [c[1] for c in COMPONENTS]
    sp = [c[2] for c in COMPONENTS]
    t_el, t_pa = [t.split("_")[0] for t in TOTALS], [t.split("_")[1] for t in TOTALS]
    per = [str(p) for p in b["period"].values]
    parts = [_long(b["deposition"].values, b["site"].values, b["receptor"].values, per,
                   sp, el, pa, sp, annual_factor),
             _long(b["total_deposition"].values, b["site"].values, b["receptor"].values, per,
                   TOTALS, t_el, t_pa, ["all"] * len(TOTALS), annual_factor)]
    s = q.span
    for var, names, e, p, spc in (("deposition", sp, el, pa, sp),
                                  ("total_deposition", TOTALS, t_el, t_pa, ["all"] * len(TOTALS))):
        v = s[var].values[:, :, :, None, :]                      # a period axis of one
        frame = _long(v, s["site"].values, s["receptor"].values, ["span"], names, e, p, spc,
                      [1.0])
        for suffix in SUFFIXES:          # span rows: a yearly rate in both columns
            frame["flux_kg_ha" + suffix] = frame["flux_kg_ha_yr" + suffix]
            frame["flux_eq_ha" + suffix] = frame["flux_eq_ha_yr" + suffix]
            frame["flux_mmol_m2" + suffix] = np.nan
        parts.append(frame)
    return pd.concat(parts, ignore_index=True)


def summary_dataset(q) -> xr.Dataset:
    """Totals [kg ha-1] and derived sums with their quantiles, dims (site, receptor, period)."""
    b = q.budget
    out = {}
    for j, name in enumerate(TOTALS):
        e = name.split("_")[0]
        for qi, suffix in enumerate(SUFFIXES):
            v = b["total_deposition"].values[qi, ..., j]
            out[f"{name}_kg_ha{suffix}"] = (("site", "receptor", "period"),
                                            element_deposition_in(v, e, "kg_ha"),
                                            {"units": f"kg {e} ha-1"})
    for name, e, unit in (("oxidized_N", "N", "kg_ha"), ("reduced_N", "N", "kg_ha")):
        for qi, suffix in enumerate(SUFFIXES):
            out[f"{name}_{unit}{suffix}"] = (("site", "receptor", "period"),
                                             element_deposition_in(b[name].values[qi], e, unit),
                                             {"units": "kg N ha-1"})
    for qi, suffix in enumerate(SUFFIXES):
        out[f"potential_acidity_eq_ha{suffix}"] = (("site", "receptor", "period"),
                                                   b["potential_acidity"].values[qi],
                                                   {"units": "eq ha-1"})
    return xr.Dataset(out, coords={"site": b["site"].values, "receptor": b["receptor"].values,
                                   "period": b["period"].values})


def bulk_in_force(options, bulk=None) -> tuple:
    """Whether the report names the bulk collector's factor as drawn, and why not.

    Parameters
    ----------
    options : UncertaintyOptions
    bulk : tuple, optional
        ``(bulk_correction, drawn)``: the run's ``[budget] bulk_correction`` and whether
        a factor was drawn at any site; None where not known (then the factor counts as
        drawn wherever ``bulk_factor_rel_sd`` > 0).

    Returns
    -------
    (bool, str)
        Drawn, and the words of why not ("" where drawn or where the spread is 0).
        The factor is drawn only under ``bulk_correction = "scale_wet"``, at a site
        whose wet deposition has a bulk collector's part: the report named it under
        ``"exclude_particles"`` (the demo's), where no factor exists.

    >>> bulk_in_force(types.SimpleNamespace(bulk_factor_rel_sd=0.1), ("exclude_particles", False))
    (False, 'not drawn: bulk_correction = "exclude_particles"')
    """
    if float(getattr(options, "bulk_factor_rel_sd", 0.0)) <= 0:
        return False, ""
    if bulk is None:
        return True, ""
    correction, drawn = bulk
    if correction != "scale_wet":
        return False, f'not drawn: bulk_correction = "{correction}"'
    if not drawn:
        return False, "not drawn: no site's wet deposition has a bulk collector's part"
    return True, ""


def gamma_words(options, gamma=None) -> str:
    """The words naming the stomatal NH3 emission potential's factor where it was
    drawn (`gamma` true: :attr:`workbench.analysis.uncertainty.BudgetQuantiles.
    nh3_gamma_drawn`), "" otherwise: a factor is named as drawn only where it was.

    >>> gamma_words(types.SimpleNamespace(nh3_gamma_gsd=3.0), True)
    'nh3_gamma_gsd = 3 (Gamma_s of the bidirectional NH3 exchange), '
    >>> gamma_words(types.SimpleNamespace(nh3_gamma_gsd=3.0), False)
    ''
    """
    if not gamma or float(getattr(options, "nh3_gamma_gsd", 1.0)) <= 1.0:
        return ""
    return (f"nh3_gamma_gsd = {options.nh3_gamma_gsd:g} (Gamma_s of the bidirectional NH3 "
            "exchange), ")


def pair_words(options) -> str:
    """The words naming a drawn gas/particle split (``pair_shift_<pair>`` not [0, 0]),
    "" where none is asked for.

    >>> pair_words(types.SimpleNamespace(pair_shift_nitrate=(-0.3, 0.0),
    ...                                  pair_shift_ammonium=(0.0, 0.0)))
    'pair_shift_nitrate = [-0.3, 0] (the gas/particle split, where both members are measured and pair_split = "measured"), '
    """
    given = [(p, getattr(options, f"pair_shift_{p}", (0.0, 0.0)))
             for p in ("nitrate", "ammonium")]
    given = [(p, r) for p, r in given if tuple(r) != (0.0, 0.0)]
    if not given:
        return ""
    return ", ".join(f"pair_shift_{p} = [{r[0]:g}, {r[1]:g}]" for p, r in given) + (
        ' (the gas/particle split, where both members are measured and pair_split = '
        '"measured"), ')


def draws_in_force(options, bulk=None, gamma=None) -> str:
    """One line naming how the factors were drawn (the options a reader of a range must
    know: the Vd model factors' GSDs and their shared fraction, ``systematic_errors``,
    the laboratory biases, the land-use class part of the Vd, and the spreads of the
    random errors of each sample), as the report shows it; "" without options.  `bulk`:
    as :func:`bulk_in_force`; a bulk factor not drawn is said so beside its option.
    `gamma`: whether the Gamma_s factor was drawn (:func:`gamma_words`; named only
    then).  Before, the line left out the Vd GSDs, which make most of a dry range
    (docs/methods_uncertainty.md, "Where a range's width comes from"), and the random
    spreads, and read as the whole list.

    >>> from workbench.analysis.uncertainty import UncertaintyOptions
    >>> draws_in_force(UncertaintyOptions(draws=10))[:80]
    'Drawn with vd_gsd = SO2 1.5, pSO4 1.8, HNO3 1.4, pNO3 1.8, pNH4 1.8, NH3 2, NO2 '
    """
    if options is None:
        return ""
    gsd = ", ".join(f"{sp} {g:g}" for sp, g in dict(options.vd_gsd).items())
    random = (f"per sample: air_rel_sd = {options.air_rel_sd:g}, precip_conc_rel_sd = "
              f"{options.precip_conc_rel_sd:g}, depth_rel_sd = {options.depth_rel_sd:g}, "
              f"censored_rel_sd = {options.censored_rel_sd:g}, vd_fill_rel_sd = "
              f"{options.vd_fill_rel_sd:g}; per period: pwm_fill_rel_sd = "
              f"{options.pwm_fill_rel_sd:g} ")
    drawn, why = bulk_in_force(options, bulk)
    bulk_words = (f"bulk_factor_rel_sd = {getattr(options, 'bulk_factor_rel_sd', 0.0):g}, "
                  f"bulk_factor_ion_correlation = "
                  f"{getattr(options, 'bulk_factor_ion_correlation', 1.0):g}"
                  + (f" ({why})" if why else "") + ", ")
    return (f"Drawn with vd_gsd = {gsd} (vd_shared_fraction = "
            f"{options.vd_shared_fraction:g}), systematic_errors = "
            f"\"{options.systematic_errors}\", "
            f"lab_bias_precip_rel_sd = {options.lab_bias_precip_rel_sd:g}, "
            f"lab_bias_air_rel_sd = {options.lab_bias_air_rel_sd:g}, "
            f"vd_class_fraction = {options.vd_class_fraction:g}, "
            f"vd_site_gsd = {getattr(options, 'vd_site_gsd', 1.0):g}, "
            f"lab_bias_filter_pack = {str(getattr(options, 'lab_bias_filter_pack', False)).lower()}, "
            + bulk_words + gamma_words(options, gamma) + pair_words(options)
            + f"gauge_catch_rel_sd = {options.gauge_catch_rel_sd:g} per gauge period; "
            + random + f"({number(options.draws)} draws, seed {options.seed}).")


def report_section(table, to_html, options=None, text_options=None, bulk=None,
                   gamma=None, air_vd=(), held=()) -> list:
    """HTML parts of the report: the 5-95 % range of every total (none without draws).

    Parameters
    ----------
    table : pandas.DataFrame
        budget.csv rows, with the quantile columns of :func:`add_quantiles` or without.
    to_html : callable
        DataFrame -> HTML table text (the report's own).
    options : UncertaintyOptions, optional
        The options of the draws: named under the text (:func:`draws_in_force`).
    text_options : UncertaintyOptions, optional
        The options the text of what a range holds is written for (:func:`report_text`;
        default `options`).
    bulk : tuple, optional
        ``(bulk_correction, drawn)`` of the run (:func:`bulk_in_force`).
    gamma : tuple, optional
        ``(net, drawn)`` of the run: its NH3 component is the net exchange
        (``nh3_treatment = "bidirectional"``) and the Gamma_s factor was drawn
        (:func:`report_text`).
    """
    import html
    if "flux_kg_ha_yr_p05" not in table:
        return []
    tot = table[table["species"] == "all"]
    cols = ["site", "receptor", "period", "element", "pathway", "flux_kg_ha_yr",
            "flux_kg_ha_yr_p05", "flux_kg_ha_yr_p50", "flux_kg_ha_yr_p95", "status"]
    cols += [c for c in ("range_note",) if c in tot]
    frame = tot[cols].rename(columns={"flux_kg_ha_yr": "kg/ha/yr", "flux_kg_ha_yr_p05": "5 %",
                                      "flux_kg_ha_yr_p50": "50 %", "flux_kg_ha_yr_p95": "95 %",
                                      "range_note": "the range covers"})
    return ["<h2>Uncertainty: 5-95 % range of every total [kg/ha/yr of S or N]</h2>",
            "<p>" + html.escape(report_text(options if text_options is None
                                            else text_options, bulk, gamma, air_vd,
                                            held))
            + "</p>",
            "<p class='draws'>" + html.escape(draws_in_force(
                options, bulk, gamma is not None and gamma[1])) + "</p>",
            to_html(frame)]


def report_text(options, bulk=None, gamma=None, air_vd=(), held_draws=()) -> str:
    """What the ranges hold and leave out, as the report says it, for the options the
    draws were made with (docs/methods_uncertainty.md, "What a range covers").

    Each factor the draws hold is named, and nothing they hold is listed as left out:
    before, one fixed text said that a calibration bias shared by the air and the
    precipitation laboratory, or by two species analysed as one ion, was not in the
    range, beside the line saying ``lab_bias_filter_pack = true`` (SO2 and pSO4 one
    draw) and while a laboratory the catalogue names for both is one draw; and it
    named neither the site's own Vd factor, the bulk-collector factor, nor the values
    below detection, all drawn.

    Parameters
    ----------
    options : UncertaintyOptions
        The options of the draws (:func:`workbench.analysis.uncertainty.report_section`
        gives the defaults where a run has none).
    bulk : tuple, optional
        ``(bulk_correction, drawn)`` of the run (:func:`bulk_in_force`): the bulk
        collector's factor is named only where it was drawn, and under
        ``"exclude_particles"`` its assumption is named as not in the range.
    gamma : tuple, optional
        ``(net, drawn)``: the run's NH3 component is the net exchange of the
        bidirectional model, and its stomatal emission potential Gamma_s was drawn
        (``nh3_gamma_gsd`` > 1 at a site with an emission part): named as drawn only
        then; a net exchange without the draw names Gamma_s as not in the range.
    air_vd : sequence of str, optional
        The ``[dry]`` options in force that make a velocity depend on the measured air
        (:data:`AIR_DEPENDENT_VD`: ``so2_codeposition``, ``nh3_acid_ratio_from_air``):
        the draws move the concentrations but keep the velocities of the measured air,
        named as not in the range with the error measured on the demo (before, the
        text said nothing of it, and the ranges read as if they held it); with
        ``options.vd_follows_air`` the draws follow them by the grid method, named
        among what the range holds, and only the grid's interpolation among what it
        leaves out.
    held_draws : sequence of tuple, optional
        The draws whose factor of the ratio over a sample fell outside the grid's 0.5-2
        (``BudgetQuantiles.air_vd_held``, :func:`.airvd.held`): that sample's part is
        held at the grid's end, named under what the range leaves out as "n of D draws
        at site x held at the grid's end" (before, they were held silently).
    """
    shared = getattr(options, "systematic_errors", "shared") == "shared"
    site_vd = float(getattr(options, "vd_site_gsd", 1.0)) > 1.0
    pack = bool(getattr(options, "lab_bias_filter_pack", False))
    bulk_drawn = bulk_in_force(options, bulk)[0]
    excluded = bulk is not None and bulk[0] == "exclude_particles"
    when = ("the same at every site and in every year" if shared
            else "drawn anew for every site and calendar year")
    vd = (f"Vd model factors (log-normal, systematic: {when}, with a part of their own per "
          "land-use class" + (" and one of each site's own, vd_site_gsd" if site_vd else "")
          + ")")
    gauge = ("gauge catch (systematic: one per gauge of a site, the same in every year that "
             "gauge stood; a declared gauge change starts a new one)" if shared else
             "gauge catch (systematic: one per gauge of a site and calendar year)")
    lab = ("a laboratory's calibration bias (systematic: one per ion or species and "
           "laboratory period of a site, shared by every sample it analysed; air and "
           "precipitation laboratories apart; a laboratory the site catalogue names is one "
           "draw per analysed ion for every site, and for the air and the precipitation, "
           "naming it"
           + ("; a filter pack's gas filter shares its particle filter's draw, SO2 with "
              "pSO4, HNO3 with pNO3, NH3 with pNH4" if pack else "")
           + "; a declared laboratory change starts a new one)")
    rest = ("analytical and depth errors per sample, values below detection (a spread "
            "between 0 and the limit about the substitute), the pNa analysis behind the "
            "non-sea-salt pSO4, gap-filled Vd (by the share of the deposition the filled "
            "hours carry) and PWMs filled from the climatology")
    if bulk_drawn:
        rest += (", and under bulk_correction = \"scale_wet\" a bulk collector's "
                 "wet-only / bulk factor (one per site and ion, correlated among the ions "
                 "by bulk_factor_ion_correlation)")
    net, gamma_drawn = gamma if gamma is not None else (False, False)
    if gamma_drawn:
        rest += (", and under nh3_treatment = \"bidirectional\" the stomatal NH3 emission "
                 "potential Gamma_s (log-normal, nh3_gamma_gsd; one per site and land-use "
                 "class, on the emission part of the net NH3 exchange)")
    span = ("A span mean's range does not narrow with its years for the systematic "
            "factors (unless [uncertainty] systematic_errors = \"each_year\", the old "
            "treatment kept for comparison). " if shared else
            "With systematic_errors = \"each_year\" a span mean's range narrows as "
            "1/sqrt(years) for the systematic factors: a range for comparison, not to be "
            "quoted for a multi-year mean. ")
    left = ("a calibration bias shared by laboratories the site catalogue does not name "
            "as one" + ("" if pack else ", or by the gas and particle filters of a pack "
                        "(lab_bias_filter_pack = false)"))
    if net and not gamma_drawn:
        left += ("; the stomatal NH3 emission potential Gamma_s of the net NH3 exchange "
                 "(not drawn: nh3_gamma_gsd = 1)")
    held = [k for k in AIR_DEPENDENT_VD if k in tuple(air_vd)]
    if held and getattr(options, "vd_follows_air", False):
        rest += (", and the change of " + " and of ".join(AIR_DEPENDENT_VD[k] for k in held)
                 + " with each draw's air (vd_follows_air, " + AIR_VD_GRID_METHOD + ")")
        left += ("; the grid method's interpolation where the draws' velocities follow "
                 "the drawn air (" + AIR_VD_GRID_ERROR + "; docs/methods_uncertainty.md, "
                 "\"Velocities that depend on the air\")")
        if held_draws:
            from .airvd import held_words
            left += ("; the velocity's change beyond the grid where a draw's factor of the "
                     "ratio over a sample fell outside 0.5-2 (that sample's part held at the "
                     "grid's end, not extrapolated): " + held_words(held_draws))
    elif held:
        left += ("; the change of " + " and of ".join(AIR_DEPENDENT_VD[k] for k in held)
                 + ": a draw moves each concentration but keeps the velocities computed "
                 "from the measured air (measured on the invented demo's ridge site in "
                 "2021, 1,000 draws of the default errors: "
                 + ", ".join(AIR_DEPENDENT_VD_MEASURED[k] for k in held) + "; "
                 + AIR_DEPENDENT_VD_QUANTILES + "; docs/methods_uncertainty.md, "
                 "\"Velocities that depend on the air\")")
    if excluded:
        left += ("; the assumption of bulk_correction = \"exclude_particles\" that a bulk "
                 "collector's samples hold the particle dry deposition of the hours it ran "
                 "(none is added there, and no factor is drawn for it)")
    return (f"Quantiles of a Monte Carlo of the budget: {vd}, {gauge}, {lab}, {rest} "
            "(docs/methods_uncertainty.md). They bound the errors named there only. "
            + span + "Not in the range: errors of the method itself (omitted species and "
            "processes); the difference between the gas schemes (the Vd factors stand for "
            "model spread in general, not for the scheme chosen); " + left + "; the "
            "scaling of a period's measured hours or samples to the whole period where "
            "coverage is short; flagged samples kept at their values and gauge depths "
            "filled from the collector or the met record (they get the ordinary errors). "
            "A total lacking components (status partial) has the range of its measured "
            "components: the total's quantiles are at least these and its 95 % is no "
            "upper bound (column 'the range covers').")

