"""The probability of exceedance and the quantiles of the deposition from Monte Carlo
draws of S and N (:func:`exceedance_probability`, the columns of exceedance.csv after
the central values).

Part of :mod:`workbench.analysis.exceedance` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from ..io.critical_loads import ACIDITY_KEYS, NUTRIENT_KEY
from .exceedance_function import acidity_exceedance, nutrient_n_exceedance


#: Quantiles of the draws in exceedance.csv [1] and the suffixes of their columns (the
#: median and the 5-95 % band, common practice).
DRAW_QUANTILES = (0.05, 0.5, 0.95)
DRAW_SUFFIXES = ("_p05", "_p50", "_p95")


def exceedance_probability(table: pd.DataFrame, draws: xr.Dataset,
                           lower_bound=None, lower_bound_n=None) -> pd.DataFrame:
    """Probability of exceedance and quantiles, from Monte Carlo draws of S and N.

    Parameters
    ----------
    table : DataFrame
        Rows of :func:`exceedance_table` (site, receptor, period and the loads
        ``cl_*_eq_ha_yr`` [eq ha-1 yr-1]).
    draws : Dataset
        ``s_dep_eq_ha_yr``, ``n_dep_eq_ha_yr`` [eq ha-1 yr-1] with dims (draw, site,
        receptor, period), from
        :func:`workbench.analysis.uncertainty.annual_total_draws`.

    Returns
    -------
    DataFrame
        Aligned with `table`: ``p_exceed_acidity`` and ``p_exceed_nutrient_n`` (share
        of the draws whose exceedance is > 0 [1]), the 5, 50 and 95 % quantiles of
        ``ex_acidity_eq_ha_yr``, ``ex_nutrient_n_eq_ha_yr``, ``s_dep_eq_ha_yr`` and
        ``n_dep_eq_ha_yr`` [eq ha-1 yr-1], each over the same draws.  NaN where the row
        has no draws or a draw is NaN or negative (net emission), and where a 0 (a
        probability or an exceedance quantile) rests on a partial deposition (not
        determined, as the point value): `lower_bound` (bool per row: the S or N total
        is partial) for acidity, `lower_bound_n` (the N total is partial; default
        `lower_bound`) for nutrient N.

    Notes
    -----
    Every draw goes through :func:`acidity_exceedance` and
    :func:`nutrient_n_exceedance` at once (arrays of draws x rows); the critical loads
    themselves are taken as exact.
    """
    keys = ["site", "receptor", "period"]
    flat = draws.stack(row=keys)
    index = pd.MultiIndex.from_arrays([flat[k].values.astype(str) for k in keys])
    pos = index.get_indexer(pd.MultiIndex.from_frame(table[keys].astype(str)))
    have = pos >= 0
    d = draws.sizes["draw"]
    s = np.full((d, len(table)), np.nan)
    n = np.full((d, len(table)), np.nan)
    s[:, have] = flat["s_dep_eq_ha_yr"].transpose("draw", "row").values[:, pos[have]]
    n[:, have] = flat["n_dep_eq_ha_yr"].transpose("draw", "row").values[:, pos[have]]
    cl = [table[f"{k}_eq_ha_yr"].to_numpy(float) for k in ACIDITY_KEYS + (NUTRIENT_KEY,)]
    net = (s < 0) | (n < 0)                                            # net emission
    s_ok, n_ok = np.where(net, np.nan, s), np.where(net, np.nan, n)
    ex = acidity_exceedance(s_ok, n_ok, *cl[:3]).exceedance            # (D, rows)
    ex_n = nutrient_n_exceedance(np.where(n < 0, np.nan, n), cl[3])
    lower = (np.zeros(len(table), bool) if lower_bound is None
             else np.asarray(lower_bound, bool))
    lower_n = lower if lower_bound_n is None else np.asarray(lower_bound_n, bool)
    out = {}
    for name, v, lb in (("p_exceed_acidity", ex, lower), ("p_exceed_nutrient_n", ex_n, lower_n)):
        ok = np.isfinite(v).all(0)
        p = np.where(ok, (np.nan_to_num(v) > 0).mean(0), np.nan)
        out[name] = np.where(lb & (p == 0), np.nan, p)
    for name, v, lb in (("ex_acidity_eq_ha_yr", ex, lower), ("ex_nutrient_n_eq_ha_yr", ex_n, lower_n),
                        ("s_dep_eq_ha_yr", s, lower), ("n_dep_eq_ha_yr", n, lower)):
        qs = np.quantile(v, DRAW_QUANTILES, axis=0)                    # NaN where any is NaN
        if name.startswith("ex_"):
            qs = np.where(lb & (qs == 0), np.nan, qs)
        for qi, suffix in enumerate(DRAW_SUFFIXES):
            out[name + suffix] = qs[qi]
    return pd.DataFrame(out, index=table.index)
