"""The 5-95 % range of the Monte Carlo (``[uncertainty]``) on the budget bars.

:func:`with_range` adds the range of every total to a spec of
:func:`workbench.ui.figures.budget_bars_spec` as asymmetric error bars on the total
markers (a total lacking components gets its lower arm only: the draws hold its
measured part, whose 95 % is no upper bound of the total); the site explorer calls it on every redraw, so the range follows each change
of an assumption.  Nothing changes while ``[uncertainty] draws`` is 0 (the default).
"""
from __future__ import annotations

import copy

import numpy as np

from .palette import OKABE_ITO
from .summaries import total_rates


def total_ranges(result, study, site, receptor, unit, options, overrides=None) -> dict:
    """(element, period) -> (p05, p95) of each element total's yearly rate [unit]; p95
    is NaN for a total lacking components (its range is that of the measured part).

    Parameters
    ----------
    result : workbench.pipeline.Result
        A run of `study` (its ``years`` are used).
    study : workbench.pipeline.Study
    site, receptor : str
    unit : str
        A unit of :func:`workbench.ui.summaries.total_rates`.
    options : UncertaintyOptions
    overrides : dict, optional
        The site overrides the run was made with.
    """
    from ..analysis.uncertainty import monte_carlo, range_note
    q = monte_carlo(result, study, options, overrides=overrides, years_only=True).years
    ds = result.years
    out = {}
    ends = []
    for level in (0.05, 0.95):
        v = q["total_deposition"].sel(quantile=level).transpose(*ds["total_deposition"].dims)
        t = total_rates(ds.assign(total_deposition=v), site, receptor, None, unit)
        ends.append(t[t["pathway"] == "total"])
    for (_, lo), (_, hi) in zip(ends[0].iterrows(), ends[1].iterrows()):
        # a total lacking components: the draws hold its measured part only, whose 5 %
        # is a lower bound of the total's and whose 95 % is no upper bound (NaN: no arm)
        partial = bool(range_note(lo["missing"] if lo["missing"] not in ("nan", "None")
                                  else ""))
        out[(lo["element"], lo["period"])] = (float(lo["value"]),
                                              np.nan if partial else float(hi["value"]))
    return out


def with_range(spec: dict, study, result, site, receptor, unit, options, overrides=None) -> dict:
    """`spec` with the 5-95 % range of every total as error bars (a copy; `spec` itself
    when `options` is None or asks for no draws)."""
    if options is None or options.draws == 0:
        return spec
    ranges = total_ranges(result, study, site, receptor, unit, options, overrides)
    spec = copy.deepcopy(spec)
    totals = [t for t in spec["data"] if t.get("name") == "total"]
    partial = False
    for trace in totals:           # one trace per element's panel, x the periods
        el = trace["meta"]["element"]
        lo, hi = [], []
        for p, y in zip(trace["x"], trace["y"]):
            a, b = ranges.get((el, p), (np.nan, np.nan))
            ok = y is not None and np.isfinite(a)
            lo.append(float(y - a) if ok else None)
            # a partial total: the lower arm only (its 95 % is no upper bound)
            hi.append(float(b - y) if ok and np.isfinite(b) else None)
        trace["error_y"] = {"type": "data", "symmetric": False, "array": hi, "arrayminus": lo,
                            "color": OKABE_ITO["black"], "thickness": 1.5, "width": 6}
        partial |= any(h is None and m is not None for h, m in zip(hi, lo))
    for trace in totals:           # the legend's one entry says it for both
        trace["name"] = ("total (5-95 % range; partial: 5 % only)" if partial
                         else "total (5-95 % range)")
    return spec
