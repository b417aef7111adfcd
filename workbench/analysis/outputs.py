"""The files the analyses add to a run folder (called by :func:`workbench.writers.write_run`).

``exceedance.csv`` (critical-load exceedance per site, receptor and year, and the span
mean); each further analysis adds its file here, so that the run-folder code calls one
function.
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
    return written
