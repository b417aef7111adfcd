"""Sobol indices and the one-at-a-time tornado of every total: the rows of
sensitivity.csv (:func:`sobol`) and tornado.csv (:func:`tornado`).  Re-exported by
:mod:`workbench.analysis.sensitivity`.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .sensitivity_model import engine_value, evaluate, problem, saltelli_sample, sobol_indices
from .sensitivity_notes import row_note
from .sensitivity_options import OUTPUTS, SensitivityOptions, factor_kind, output_unit


def sobol(study, base_options: dict, options: SensitivityOptions, run_kwargs=None,
          progress=None) -> pd.DataFrame:
    """First-order and total Sobol indices of every total (see the module text).

    Parameters
    ----------
    study : workbench.pipeline.Study
    base_options : dict
        ``wet``, ``dry``, ``budget`` options and ``fixed_velocity`` of the scenario.
    options : SensitivityOptions
    run_kwargs : dict, optional
        ``resolution``, ``start``, ``end``, ``receptors`` for :meth:`Study.run`.
    progress : callable, optional
        Wraps the iterable of engine runs (e.g. ``tqdm``).

    Returns
    -------
    pandas.DataFrame
        Columns ``site, receptor, period, element, quantity, factor, S1, S1_conf, ST,
        ST_conf`` [1] and ``note`` (:func:`row_note`: an index 0 for want of data, a
        total lacking components); outputs that do not vary (a missing total) are left
        out.  ``attrs``: ``evaluations`` (rows of the sample, N (k + 2)) and
        ``engine_runs`` (pipeline runs among them).
    """
    prob = problem(options)
    x = saltelli_sample(prob, options.samples, options.seed)
    y, coords = evaluate(study, base_options, options, x, run_kwargs, progress)
    rows = []
    for cell, (s, r, p, q), (el, quantity, _) in _cells(coords, options):
        v = y[:, s, r, p, q]
        if not np.all(np.isfinite(v)) or np.ptp(v) <= 1e-12 * np.abs(v).max():
            continue
        si = sobol_indices(prob, v, options.seed)
        for i, name in enumerate(prob["names"]):
            rows.append((*cell, el, quantity, name, si["S1"][i], si["S1_conf"][i],
                         si["ST"][i], si["ST_conf"][i],
                         row_note(name, el, quantity, coords["data"][(s, r, p)],
                                  coords["bulk"].get((s, p)),
                                  coords["classes"].get(cell[0]), coords["nh3_treatment"])))
    frame = pd.DataFrame(rows, columns=["site", "receptor", "period", "element", "quantity",
                                        "factor", "S1", "S1_conf", "ST", "ST_conf", "note"])
    frame.attrs.update(evaluations=len(x), engine_runs=coords["engine_runs"])
    return frame


def tornado(study, base_options: dict, options: SensitivityOptions, run_kwargs=None,
            progress=None) -> pd.DataFrame:
    """One factor at a time at its low and high end, the others at their base.

    The base of a linear factor is 1; of an engine factor, the scenario's own value
    (the low and high ends of ``wetness_rule`` are its first and last rule).

    Returns
    -------
    pandas.DataFrame
        ``site, receptor, period, element, quantity, factor, low, high, base,
        output_low, output_high, output_base, unit, note``: outputs [kg ha-1] of S or
        N per reporting period ([eq ha-1] for the acidity), the unit of each row named
        in ``unit`` (:func:`output_unit`, e.g. ``kg S ha-1 yr-1`` for yearly periods;
        tornado.csv mixes the three elements), ``note`` as in
        :func:`sobol`; ``attrs`` as :func:`sobol`'s (2 k + 1 evaluations).
    """
    from ..units import element_deposition_in
    names = list(options.factors)
    prob = problem(options)
    k = len(names)
    base = np.full(k, np.nan)
    lows, highs = np.array([b[0] for b in prob["bounds"]]), np.array([b[1] for b in prob["bounds"]])
    for i, nm in enumerate(names):
        kind = factor_kind(nm)
        if kind == "linear":
            base[i] = 1.0
        elif kind == "wetness_rule":
            rules = list(options.factors[nm])
            cur = base_options["dry"].wetness_rule
            base[i] = rules.index(cur) + 0.5 if cur in rules else np.nan
            lows[i], highs[i] = 0.5, len(rules) - 0.5
    # NaN: an engine factor at the scenario's own value
    x = [base.copy()]
    for i in range(k):
        for end in (lows[i], highs[i]):
            row = base.copy()
            row[i] = end
            x.append(row)
    x = np.array(x)
    y, coords = evaluate(study, base_options, options, x, run_kwargs, progress)
    resolution = (run_kwargs or {}).get("resolution", "year")      # Study.run's default
    rows = []
    for cell, (s, r, p, q), (el, quantity, _) in _cells(coords, options):
        conv = ((lambda v: v) if el == "S+N" else
                (lambda v, e=el: element_deposition_in(v, e, "kg_ha")))
        b = conv(y[0, s, r, p, q])
        unit = output_unit(el, resolution)
        if not np.isfinite(b):
            continue
        for i, nm in enumerate(names):
            lo, hi = y[1 + 2 * i, s, r, p, q], y[2 + 2 * i, s, r, p, q]
            rows.append((*cell, el, quantity, nm, _label(nm, options, x[1 + 2 * i, i]),
                         _label(nm, options, x[2 + 2 * i, i]), _label(nm, options, base[i]),
                         conv(lo), conv(hi), b, unit,
                         row_note(nm, el, quantity, coords["data"][(s, r, p)],
                                  coords["bulk"].get((s, p)),
                                  coords["classes"].get(cell[0]), coords["nh3_treatment"])))
    frame = pd.DataFrame(rows, columns=["site", "receptor", "period", "element", "quantity",
                                        "factor", "low", "high", "base", "output_low",
                                        "output_high", "output_base", "unit", "note"])
    frame.attrs.update(evaluations=len(x), engine_runs=coords["engine_runs"])
    return frame


def _cells(coords, options):
    """Each (site, receptor, period) asked for by `options` and each output of
    :data:`OUTPUTS`: yields ((site, receptor, period), (s, r, p, q) indices, output).
    Only a site's own surfaces (``coords["pairs"]``, the budget's rows): the arrays hold
    every receptor of the network at every site, and a surface the site does not have
    has no deposition velocity (its rows said "check the met record", a false lead)."""
    sites, recs, pers = coords["site"], coords["receptor"], coords["period"]
    pairs = coords.get("pairs")
    for s in range(len(sites)):
        if options.sites and sites[s] not in options.sites:
            continue
        for r in range(len(recs)):
            if options.receptors and recs[r] not in options.receptors:
                continue
            if pairs is not None and (sites[s], recs[r]) not in pairs:
                continue
            for p in range(len(pers)):
                for q, out in enumerate(OUTPUTS):
                    yield (sites[s], recs[r], pers[p]), (s, r, p, q), out


def _label(name, options, x):
    if np.isnan(x):
        return "scenario"
    v = engine_value(name, options, x) if factor_kind(name) == "wetness_rule" else float(x)
    return str(v)
