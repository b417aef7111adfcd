"""The files the analyses add to a run folder (called by :func:`workbench.writers.write_run`).

``exceedance.csv`` (critical-load exceedance per site, receptor and year, and the span
mean) and ``trends.csv`` (Mann-Kendall and seasonal Kendall trends); each further
analysis adds its file here, so that the run-folder code calls one function.
"""
from __future__ import annotations

from pathlib import Path

#: Float format of the analysis tables (as budget.csv).
FLOAT_FORMAT = "%.10g"


def _csv(frame, path: Path, atomic_write) -> Path:
    return atomic_write(path, lambda t: frame.to_csv(t, index=False, float_format=FLOAT_FORMAT))


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
    return written


def monthly_result(result, study):
    """The run at calendar months (the result itself when it is monthly)."""
    o = result.options
    if o.get("resolution") == "month":
        return result
    start = str(result.years["period_start"].values.min())[:19]
    end = str(result.years["period_end"].values.max())[:19]
    return study.run(o.get("wet"), o.get("dry"), o.get("budget"), o.get("fixed_velocity"),
                     "month", start, end, receptors=o.get("receptors"))


def yearly_and_monthly_rows(result, study):
    """budget.csv rows of calendar years and of calendar months (without the span)."""
    import warnings
    from ..tables import budget_table
    if result.options.get("resolution", "year") == "year":
        year_rows = result.table[result.table["period"].astype(str) != "span"]
    else:
        year_rows = budget_table(result.years)
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", "All-NaN slice encountered", RuntimeWarning)
        month_rows = budget_table(monthly_result(result, study).budget)
    return year_rows, month_rows
