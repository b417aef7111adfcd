"""The files the analyses add to a run folder (called by :func:`workbench.writers.write_run`).

``exceedance.csv`` (critical-load exceedance per site, receptor and year, and the span
mean), ``trends.csv`` (Mann-Kendall and seasonal Kendall trends),
``precipitation_annual.csv`` (depth and precipitation-weighted means per site and year,
each mean with its own status and valid share: :func:`precipitation_annual`)
``quality.csv`` (data quality per site and year) and, with ``[compare]
common_receptor``, ``common_surface.csv`` (every site on one surface); each further
analysis adds its file here, so that the run-folder code calls one function.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

#: Float format of the analysis tables (as budget.csv).
FLOAT_FORMAT = "%.10g"


def _csv(frame, path: Path, atomic_write) -> Path:
    from ..csvwrite import write_csv
    return atomic_write(path, lambda t: write_csv(frame, t, FLOAT_FORMAT))


def write_analysis(result, study, scenario, out, atomic_write) -> dict:
    """Write the analysis tables of a run into `out`.

    Parameters
    ----------
    result : workbench.pipeline.Result
    study : workbench.pipeline.Study
    scenario : workbench.scenario.Scenario or None
    out : Path
        The run folder (already prepared).
    atomic_write : callable
        ``atomic_write(path, writer)`` of :mod:`workbench.writers`.

    Returns
    -------
    dict
        name -> Path of each file written.
    """
    from .exceedance import exceedance_table
    out = Path(out)
    written = {}
    catalogue = study.catalogue()
    ex = exceedance_table(result, catalogue)
    written["exceedance.csv"] = _csv(ex, out / "exceedance.csv", atomic_write)
    year_rows, month_rows = yearly_and_monthly_rows(result, study)
    from .trends import change_notes, detection_limit_notes, trend_table
    serial = (scenario.data.get("trends", {}).get("serial_correction")
              if scenario is not None and hasattr(scenario, "data") else None)
    tr = trend_table(year_rows, month_rows, detection_limit_notes(study.inputs),
                     changes=change_notes(catalogue, study.inputs), serial_correction=serial)
    written["trends.csv"] = _csv(tr, out / "trends.csv", atomic_write)
    from .handover import quality_table
    wet = yearly_wet(result, study)
    if wet is not None:
        written["precipitation_annual.csv"] = _csv(precipitation_annual(wet),
                                                   out / "precipitation_annual.csv", atomic_write)
    q = quality_table(result.years, wet, result.screened)
    written["quality.csv"] = _csv(q, out / "quality.csv", atomic_write)
    common = (scenario.data.get("compare", {}).get("common_receptor")
              if scenario is not None and hasattr(scenario, "data") else None)
    if common:
        from .handover import common_surface_table
        written["common_surface.csv"] = _csv(common_surface_table(result, study, common),
                                             out / "common_surface.csv", atomic_write)
    return written


def ion_status(wet, name):
    """Status and valid share of one precipitation-weighted mean of the wet chain.

    The rule of the budget's wet components, written once in
    :func:`workbench.budgetstatus.wet_mean_status`: the period's status, ``flagged``
    where the ion itself was valid for less than ``min_valid_precip_fraction`` of the
    rain (another ion may have carried the period), where non-sea-salt sulfate etc. fell back to the total ion or was clipped at 0, and
    ``missing`` where the ion has no value (no valid value in the period's samples, or
    never measured at the site).  A non-sea-salt mean counts the valid share of the ion
    and of the sea-salt tracer, and reports the smaller one.

    Parameters
    ----------
    wet : xarray.Dataset
        :func:`workbench.wet.wet_deposition` on (site, period).
    name : str
        The mean's name without ``pwm_`` (``SO4``, ``H``, ``nssSO4``...).

    Returns
    -------
    status : ndarray of str, shape (site, period)
    share : ndarray, shape (site, period)
        Share of the period's precipitation with a valid value of the ion [1]; 1 in a
        period without rain at a site that measures the ion (as the period's
        ``valid_precip_fraction``); NaN without a gauge depth, and in a period without
        rain at a site that never measured the ion.
    """
    from ..budgetstatus import wet_mean_status
    status = wet["status"].transpose("site", "period").values.astype(object)
    status = np.where(pd.isna(status), "missing", status).astype(object)
    status, _, _, share, _, _ = wet_mean_status(wet, name, status)
    return status, share


def precipitation_annual(wet):
    """``precipitation_annual.csv``: :func:`workbench.analysis.handover.precipitation_table`
    with, after its columns, ``pwm_<ion>_valid_share`` [1] and ``pwm_<ion>_status`` of
    each mean (:func:`ion_status`); ``status`` stays the period's (all ions) status."""
    from .handover import precipitation_table
    table = precipitation_table(wet)
    names = [c[4:-6] for c in table.columns if c.startswith("pwm_") and c.endswith("_ueq_l")]
    sites = wet["site"].values.astype(str)
    periods = wet["period"].values.astype(str)
    extra = {"site": sites.repeat(len(periods)), "period": np.tile(periods, len(sites))}
    for name in names:
        st, share = ion_status(wet, name)
        extra[f"pwm_{name}_valid_share"] = share.reshape(-1)
        extra[f"pwm_{name}_status"] = st.reshape(-1)
    keyed = table.astype({"site": str, "period": str})
    return keyed.merge(pd.DataFrame(extra), on=["site", "period"], how="left", validate="1:1")


def yearly_wet(result, study):
    """The wet chain at calendar years (``Result.wet`` of a yearly run)."""
    o = result.options
    if o.get("resolution", "year") == "year" or result.wet is None:
        return result.wet
    years = result.years
    start = str(years["period_start"].values.min())[:19]
    end = str(years["period_end"].values.max())[:19]
    return study.wet(o["wet"], study.periods("year", start, end, o["wet"].hydro_start_month))


def monthly_result(result, study):
    """The run at calendar months (the result itself when it is monthly)."""
    o = result.options
    if o.get("resolution") == "month":
        return result
    carried = getattr(result, "monthly_budget", None)    # a block run made it block by block
    if carried is not None:
        from types import SimpleNamespace
        return SimpleNamespace(budget=carried)
    start = str(result.years["period_start"].values.min())[:19]
    end = str(result.years["period_end"].values.max())[:19]
    return study.run(o.get("wet"), o.get("dry"), o.get("budget"), o.get("fixed_velocity"),
                     "month", start, end, receptors=o.get("receptors"))


def yearly_and_monthly_rows(result, study):
    """budget.csv rows of calendar years and of calendar months (without the span); the
    rows computed here only have the columns a trend reads (``budget_table(lean=True)``)."""
    import warnings
    from ..tables import budget_table
    if result.options.get("resolution", "year") == "year":
        year_rows = result.table[result.table["period"].astype(str) != "span"]
    else:
        year_rows = budget_table(result.years, lean=True)
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", "All-NaN slice encountered", RuntimeWarning)
        month_rows = budget_table(monthly_result(result, study).budget, lean=True)
    return year_rows, month_rows
