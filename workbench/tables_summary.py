"""The rows of ``summary.csv`` (:func:`summary_table`).

Part of :mod:`workbench.tables` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .units import element_deposition_in
from .wet.qa import UMOL_L_PER_MOL_M3


def summary_table(result) -> pd.DataFrame:
    """summary.csv: one row per configured (site, receptor) pair and period.

    Only the surfaces a site asks for (the ``active`` pairs of the budget); the
    derived quantities (oxidized and reduced N, potential acidity, shares, the dry
    N bracket), the S and N totals with their status, the components they
    lack or flag, whether they pass completeness (``<e>_total_passes``) and, where
    not, the first criterion failed (``<e>_total_completeness_failure``); with the
    Monte Carlo's quantiles, those of the yearly rates too (``<e>_total_kg_ha_yr_p05``
    ... ``_p95``: the amount's quantiles [kg ha-1] times the period's
    ``annual_factor``, as the rate itself); and the wet
    chain's precipitation depth [mm], pH of the
    precipitation-weighted mean H+, free acidity deposited [eq ha-1] and the
    precipitation-weighted mean of each ion [umol L-1]; last, the derived sums' status,
    missing components and completeness (``oxidized_N_status`` ... ``<sum>_passes``,
    ``<sum>_completeness_failure``: :func:`workbench.budget.with_derived_status` of
    the chosen gas scheme's budget.csv rows).

    Parameters
    ----------
    result : workbench.pipeline.Result
        ``budget`` and ``derived`` Datasets of the run's resolution, ``table``
        (budget.csv's rows).

    Returns
    -------
    pandas.DataFrame
    """
    ds = result.budget
    frame = result.derived.to_dataframe().reset_index()
    sites = pd.Index(ds["site"].values.astype(str))
    recs = pd.Index(ds["receptor"].values.astype(str))
    periods = pd.Index(ds["period"].values.astype(str))
    si = sites.get_indexer(frame["site"].astype(str))
    ri = recs.get_indexer(frame["receptor"].astype(str))
    pi = periods.get_indexer(frame["period"].astype(str))
    keep = ds["active"].values[si, ri]
    frame, si, ri, pi = frame[keep].reset_index(drop=True), si[keep], ri[keep], pi[keep]
    if "period_start" not in frame:
        frame.insert(3, "period_start", pd.to_datetime(ds["period_start"].values[pi]))
        frame.insert(4, "period_end", pd.to_datetime(ds["period_end"].values[pi]))
    names = list(ds["total"].values.astype(str))
    order = ("site", "receptor", "period", "total")
    tot = ds["total_deposition"].transpose(*order).values
    for e in ("S", "N"):
        j = names.index(f"{e}_total")
        v = tot[si, ri, pi, j]
        frame[f"{e}_total_kg_ha"] = element_deposition_in(v, e, "kg_ha")
        fac = ds["annual_factor"].values[pi]      # rate per year = amount x factor [1]
        frame[f"{e}_total_kg_ha_yr"] = frame[f"{e}_total_kg_ha"] * fac
        for sfx in ("_p05", "_p50", "_p95"):   # the Monte Carlo's range, as a rate too
            if f"{e}_total_kg_ha{sfx}" in frame:
                frame[f"{e}_total_kg_ha_yr{sfx}"] = frame[f"{e}_total_kg_ha{sfx}"] * fac
        for col, var in (("status", "total_status"), ("missing_components",
                                                       "total_missing_components"),
                         ("flagged_components", "total_flagged_components")):
            if var in ds:
                frame[f"{e}_total_{col}"] = ds[var].transpose(*order).values[si, ri, pi, j]
        # whether the total passes completeness, and the first criterion failed where
        # not: a 'flagged' status alone is also a passing total with kept flagged samples
        if "total_passes" in ds:
            frame[f"{e}_total_passes"] = ds["total_passes"].transpose(*order).values[
                si, ri, pi, j].astype(bool)
        if "total_completeness_failure" in ds:
            why = ds["total_completeness_failure"].transpose(*order).values[si, ri, pi, j]
            frame[f"{e}_total_completeness_failure"] = np.where(pd.isna(why), "", why)
    if "nh3_deposition_only" in ds:          # which NH3 figure N_total uses, and the other
        order3 = ("site", "receptor", "period")
        net = element_deposition_in(ds["nh3_net"].transpose(*order3).values[si, ri, pi], "N", "kg_ha")
        only = element_deposition_in(ds["nh3_deposition_only"].transpose(*order3).values[si, ri, pi],
                                     "N", "kg_ha")
        frame["nh3_figure"] = ds.attrs.get("nh3_figure", "deposition_only")
        frame["NH3_net_kg_ha"] = net
        frame["NH3_deposition_only_kg_ha"] = only
        frame["N_total_kg_ha_NH3_deposition_only"] = np.where(
            np.isfinite(net), frame["N_total_kg_ha"] - net + np.where(np.isfinite(only), only, 0.0),
            frame["N_total_kg_ha"])
    if "precipitation" in ds:
        def wet(var):
            return ds[var].transpose("site", "period").values[si, pi]
        frame["precipitation_mm"] = wet("precipitation")
        frame["pH_pwm"] = wet("pH_pwm")
        frame["wet_status"] = wet("wet_status")
        if "wet_passes" in ds:                 # a flagged wet period may pass or fail
            frame["wet_passes"] = wet("wet_passes").astype(bool)
            why = wet("wet_completeness_failure")
            frame["wet_completeness_failure"] = np.where(pd.isna(why), "", why)
        frame["wet_flagged_share"] = wet("wet_flagged_share")
        pwm = ds["pwm"].transpose("site", "period", "wet_ion").values[si, pi]
        for k, ion in enumerate(ds["wet_ion"].values.astype(str)):
            frame[f"pwm_{ion}_umol_L"] = pwm[:, k] * UMOL_L_PER_MOL_M3
    frame = _values_beside_quantiles(frame, ds, si, ri, pi)
    # the derived sums' own status and completeness, from budget.csv's rows of the
    # chosen gas scheme (workbench.budget_derived.with_derived_status)
    from .budget_derived import with_derived_status
    from .comparison import chosen_scheme
    return with_derived_status(frame, chosen_scheme(result)[0].table)


def _values_beside_quantiles(frame, ds, si, ri, pi):
    """With the Monte Carlo's quantiles (``<name>_p05``, ``_p50``, ``_p95``): each
    quantity's own value in the column just before them.  The wet and dry totals
    (``S_wet_kg_ha`` ...) had their quantiles in summary.csv but not their value, and
    the S and N totals' value stood far after its quantiles."""
    if not any(c.endswith("_p05") for c in frame.columns):
        return frame
    names = list(ds["total"].values.astype(str))
    tot = ds["total_deposition"].transpose("site", "receptor", "period", "total").values
    for name in names:
        col = f"{name}_kg_ha"
        if f"{col}_p05" in frame and col not in frame:
            frame[col] = element_deposition_in(tot[si, ri, pi, names.index(name)],
                                               name.split("_")[0], "kg_ha")
    cols = [c for c in frame.columns]
    for c in [c[:-4] for c in frame.columns if c.endswith("_p05")]:
        if c in cols:
            cols.remove(c)
            cols.insert(cols.index(f"{c}_p05"), c)
    return frame[cols]
