"""The files the analyses add to a run folder (called by :func:`workbench.writers.write_run`).

``exceedance.csv`` (critical-load exceedance per site, receptor and year, and the span
mean), ``trends.csv`` (Mann-Kendall and seasonal Kendall trends),
``precipitation_annual.csv`` (depth and precipitation-weighted means per site and year)
``quality.csv`` (data quality per site and year) and, with ``[compare]
common_receptor``, ``common_surface.csv`` (every site on one surface); each further
analysis adds its file here, so that the run-folder code calls one function.
"""
from __future__ import annotations

from pathlib import Path

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
    from .trends import detection_limit_notes, trend_table
    tr = trend_table(year_rows, month_rows, detection_limit_notes(study.inputs))
    written["trends.csv"] = _csv(tr, out / "trends.csv", atomic_write)
    from .handover import precipitation_table, quality_table
    wet = yearly_wet(result, study)
    if wet is not None:
        written["precipitation_annual.csv"] = _csv(precipitation_table(wet),
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
