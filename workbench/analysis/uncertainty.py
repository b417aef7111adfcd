"""Correlated Monte Carlo of the budget on its linear layer.

Every factor acts on pieces the engine has already computed (:mod:`.layer`), so a
draw is a few matrix products per site and never re-runs the engine:

* dry component of species *k* at site *s*, reporting period *p*, receptor *r*:

  .. math:: D^{(d)}_{srpk} = F^{(d)}_{s,y(p),k} \\sum_n A_{npr}\\,
            \\delta^{(d)}_n \\,(1 + \\phi_{npr} \\eta^{(d)}_n)

  with :math:`A` the sampling period's contribution, :math:`F` the Vd model factor
  (log-normal, median 1, systematic: shared by every site and year, correlated among
  species through the shared micrometeorology, with a part of its own per land-use
  class of the receptor, ``vd_class_fraction``, and one of the site's own,
  ``vd_site_gsd``), :math:`\\delta` the analytical error
  of the sample (random per sample) times its laboratory's calibration bias
  (systematic per laboratory period and species), :math:`\\phi` the share of its deposition in the
  period that its hours without a modelled Vd carry (gap-filled, or missing) and
  :math:`\\eta` the error of the fill (random per sample);
* wet component of ion *X*: :math:`D = \\bar C_p P_p` with, per draw,

  .. math:: P_p = g_{s,y(p)} \\sum_i w_{ip} \\varepsilon_i, \\quad
            \\bar C_p = \\frac{\\sum_{i\\,valid} w_{ip} \\varepsilon_i C_i \\delta_i}
                              {\\sum_{i\\,valid} w_{ip} \\varepsilon_i}

  with :math:`g` the gauge catch (systematic: one per gauge period of a site, shared
  by its years; a piece under two gauges by the share of its hours under each, in the
  precipitation and the PWM's weights alike), :math:`\\varepsilon` the depth error
  and :math:`\\delta` the analytical error (random per sample) times the
  laboratory's calibration bias (systematic: one per ion and laboratory period, shared
  by the sites naming one laboratory); under ``bulk_correction = "scale_wet"`` the
  bulk samples' part of D takes a drawn ``bulk_wet_factor`` and, in a period holding a
  collector change, a share redrawn with the samples (:mod:`.bulk`); a PWM
  filled from the multi-year seasonal means gets its own error instead, and the
  non-sea-salt sulfate is recomputed from the drawn SO4 and tracer PWMs.

Each draw multiplies the point budget by its ratio to the point (the same arithmetic
with every factor at 1), so a factor at 0 (GSD 1) leaves the numbers exactly as they
are.  The factors, their correlation structure and their sources are in
``docs/methods_uncertainty.md``.

Where the parts are: the options (:class:`UncertaintyOptions`, the default GSDs) in
:mod:`.uncertainty_options`; the pieces the draws act on in :mod:`.layer`; the factors
of a site, drawn from named streams, in :mod:`.noise`; the dry side of a draw (a dry
component's ratio, the non-sea-salt pSO4 and the net NH3 exchange drawn directly) in
:mod:`.drydraws`, the wet side in :mod:`.wetdraws`, a bulk collector's part in
:mod:`.bulk`; every component of a site's draw and the totals in :mod:`.sitedraws`;
:func:`monte_carlo`, its quantiles and the kept draws of the annual totals in
:mod:`.montecarlo`; the tables and report text of the quantiles in
:mod:`.quantile_tables`.  This module adds the quantiles to a run's outputs
(:func:`add_quantiles`, :func:`with_uncertainty`), holds the report's glue, and
re-exports the names above so that ``workbench.analysis.uncertainty.<name>`` keeps
working.  Units: deposition [mol m-2], potential acidity [eq ha-1], factors [1].
"""
from __future__ import annotations

import json

import numpy as np

from ..budget import COMPONENTS, OXIDIZED_N, REDUCED_N  # noqa: F401
from ..units import element_deposition_in  # noqa: F401
from .bulk import HELD, PRECIP, apply_bulk  # noqa: F401
# the dry side of a draw (defined here before)
from .drydraws import dry_ratio, nh3_net_draws, nss_dry_draws  # noqa: F401
from .layer import DRY_SPECIES, LinearLayer, linear_layer  # noqa: F401
# the quantiles of a run and the kept draws (defined here before)
from .montecarlo import (BudgetQuantiles, _annual_draws, _nanmean,  # noqa: F401
                         _span_draws, annual_total_draws, monte_carlo)
# the factors of the draws, named by what they draw for (site, year, sample)
from .noise import (SAMPLE_STREAM, YEAR_STREAM, SiteNoise, _normal_factor,  # noqa: F401
                    _stream_key, keyed_normal_factor, site_noise)
from . import quantile_tables as _quantile_tables
from .quantile_tables import (QUANTILES, SUFFIXES, TOTALS, quantile_table,  # noqa: F401
                              range_note, summary_dataset,
                              summary_range_notes)
# every component of a site's draw and the totals (defined here before)
from .sitedraws import component_draws, totals_of  # noqa: F401
# the options (defined here before)
from .uncertainty_options import (DEFAULT_NH3_GAMMA_GSD, DEFAULT_VD_GSD,  # noqa: F401
                                  SYSTEMATIC_ERRORS, UncertaintyOptions,
                                  pair_shift_refusal)
# the wet side of a draw (wet_ratios, _gauge_by_piece were defined here before)
from .wetdraws import _gauge_by_piece, _safe_ratio, wet_ratios  # noqa: F401


# ------------------------------------------------------------------------------ outputs


def add_quantiles(obj, q: BudgetQuantiles | None, annual_factor=None):
    """The 5-95 % range of the draws added to a budget output (unchanged when `q` is None).

    Parameters
    ----------
    obj : pandas.DataFrame or xarray.Dataset
        budget.csv rows (:attr:`workbench.pipeline.Result.table`): gets
        ``<flux column>_p05``, ``_p50``, ``_p95`` after the public first columns, and
        ``range_note`` (:func:`~.quantile_tables.range_note`: a total lacking
        components has the range of its measured part only);
        summary.csv rows (``result.derived.to_dataframe()``) or the derived Dataset:
        gets ``<total>_kg_ha`` and its quantiles for every total, and the quantiles of
        ``oxidized_N_kg_ha``, ``reduced_N_kg_ha`` and ``potential_acidity_eq_ha``;
        the budget Dataset (budget.nc): gets ``deposition_quantiles``,
        ``total_deposition_quantiles`` [mol m-2] with a ``quantile`` dimension.
    q : BudgetQuantiles or None
    annual_factor : ndarray, optional
        Of the budget's periods, for budget.csv (default: 1).
    """
    import pandas as pd
    if q is None:
        return obj
    if isinstance(obj, pd.DataFrame) and "flux_kg_ha" in obj:
        fac = np.ones(q.budget.sizes["period"]) if annual_factor is None else annual_factor
        qt = quantile_table(q, fac)
        keys = ["site", "receptor", "period", "element", "pathway", "species"]
        out = obj.assign(period=obj["period"].astype(str)).merge(qt, on=keys, how="left")
        out.index = obj.index
        if "missing_components" in out:       # a partial total: the measured part's range
            miss = np.where(np.isfinite(out["flux_kg_ha_p05"].to_numpy(float)),
                            out["missing_components"].to_numpy(object), "")
            out["range_note"] = range_note(miss)
        return out
    if isinstance(obj, pd.DataFrame):
        extra = summary_dataset(q).to_dataframe().reset_index()
        extra["period"] = extra["period"].astype(str)
        return obj.assign(period=obj["period"].astype(str)).merge(
            extra, on=["site", "receptor", "period"], how="left")
    if "deposition" in obj and "component" in obj.dims:
        b = q.budget
        return obj.assign(deposition_quantiles=b["deposition"].assign_attrs(
                              long_name="quantiles of the Monte Carlo draws of the deposition"),
                          total_deposition_quantiles=b["total_deposition"].assign_attrs(
                              long_name="quantiles of the Monte Carlo draws of the totals"))
    return obj.assign(summary_dataset(q).data_vars)


#: The run note of ``explain_ranges = true`` with fewer than 2 draws (no variance).
NO_DRAWS_TO_EXPLAIN = ("[uncertainty] explain_ranges = true, and draws < 2: there is no "
                       "Monte Carlo range to explain, so range_shares.csv is not written "
                       "(set draws, e.g. 1000)")


def with_uncertainty(result, study, scenario):
    """`result` with the quantiles in its table, derived sums and budget (for the writers).

    Returns `result` itself when the scenario asks for no draws (``[uncertainty] draws =
    0``, the default); otherwise a copy whose ``table`` (budget.csv), ``derived``
    (summary.csv) and ``budget`` (budget.nc) carry the quantiles of
    :func:`monte_carlo`, and whose ``options["uncertainty"]`` holds them; the derived
    sums get ``range_note`` (:func:`~.quantile_tables.summary_range_notes`).  With
    ``explain_ranges`` the copy's ``range_shares`` holds each factor's share of the
    ranges (:func:`.range_shares.range_shares`, range_shares.csv).
    """
    import dataclasses
    opt = (scenario.options.get("uncertainty") if scenario is not None else None)
    if opt is not None and opt.draws < 2 and opt.explain_ranges:
        result = dataclasses.replace(result, notes=[*result.notes, NO_DRAWS_TO_EXPLAIN])
    if opt is None or opt.draws == 0:
        return result
    q = monte_carlo(result, study, opt)
    new = dataclasses.replace(result, budget=add_quantiles(result.budget, q),
                              options={**result.options, "uncertainty": q})
    new.__dict__["table"] = add_quantiles(result.table, q, result.budget["annual_factor"].values)
    new.__dict__["derived"] = add_quantiles(result.derived, q).assign(
        range_note=summary_range_notes(result.budget))
    given = opt.to_dict()
    for name in ("explain_ranges", "vd_follows_air"):
        if not given[name]:                  # budget.nc as before the option existed
            del given[name]
    new.budget.attrs["uncertainty"] = json.dumps(given, sort_keys=True)
    if opt.explain_ranges and opt.draws >= 2:       # range_shares.csv, the report's table
        from .range_shares import range_shares
        new.__dict__["range_shares"] = range_shares(result, study, opt)
    return new


def bulk_state(result) -> tuple:
    """``(bulk_correction, drawn)`` of a run: its ``[budget] bulk_correction`` and whether
    its Monte Carlo drew a bulk collector's factor at any site (False without draws)."""
    q = result.options.get("uncertainty")
    return (getattr(result.options.get("budget"), "bulk_correction", None),
            bool(getattr(q, "bulk_drawn", False)))


def nh3_gamma_state(result) -> tuple:
    """``(net, drawn)`` of a run: its NH3 component is the net exchange of the
    bidirectional model (the budget's ``nh3_figure``), and its Monte Carlo drew the
    stomatal emission potential's factor at any site (False without draws)."""
    q = result.options.get("uncertainty")
    budget = getattr(result, "budget", None)
    net = budget is not None and budget.attrs.get("nh3_figure") == "net"
    return net, bool(getattr(q, "nh3_gamma_drawn", False))


def air_vd_state(result) -> tuple:
    """The ``[dry]`` options of a run in force that make a velocity depend on the
    measured air (:data:`workbench.analysis.quantile_tables.AIR_DEPENDENT_VD`), which
    the draws hold at the point's velocities: named in the report's text."""
    dry = result.options.get("dry")
    return tuple(k for k in _quantile_tables.AIR_DEPENDENT_VD if getattr(dry, k, False))


def air_vd_held_state(result) -> tuple:
    """The draws of a run held at the end of the grid of ``vd_follows_air``
    (:attr:`BudgetQuantiles.air_vd_held`; empty without draws or without the option)."""
    return tuple(getattr(result.options.get("uncertainty"), "air_vd_held", ()) or ())


def report_section(table, to_html, options=None, bulk=None, gamma=None, air_vd=(),
                   held=()) -> list:
    """HTML parts of the report: the 5-95 % range of every total (none without draws),
    :func:`workbench.analysis.quantile_tables.report_section` with the text of what a
    range holds written for `options`, or for the default :class:`UncertaintyOptions`
    where a run has none (quantile_tables does not import this module: no cycle).

    `bulk`: ``(bulk_correction, drawn)``, the run's ``[budget] bulk_correction`` and
    whether a bulk collector's factor was drawn (:attr:`BudgetQuantiles.bulk_drawn`), so
    that the text names the factor only where it was in force; None: not known (the
    factor is named as drawn wherever ``bulk_factor_rel_sd`` > 0).  `gamma`: ``(net,
    drawn)`` (:func:`nh3_gamma_state`), the Gamma_s factor named as drawn only where it
    was; None: not named.  `air_vd`: :func:`air_vd_state`, the velocities that depend
    on the air, named as held at the point's.  `held`: :func:`air_vd_held_state`, the
    draws held at the grid's end, named under "Not in the range"."""
    return _quantile_tables.report_section(
        table, to_html, options,
        text_options=UncertaintyOptions() if options is None else options, bulk=bulk,
        gamma=gamma, air_vd=air_vd, held=held)
