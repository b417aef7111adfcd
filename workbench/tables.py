"""Tidy tables of a budget for export and display (``budget.csv``, the span mean)."""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .units import element_deposition_in

#: The first columns of budget.csv, in this order (a public interface).
BUDGET_COLUMNS = ("site", "receptor", "period_start", "period_end", "element", "pathway",
                  "species", "flux_kg_ha", "flux_eq_ha", "flux_kg_ha_yr", "flux_eq_ha_yr",
                  "completeness", "status")


def _rows(ds: xr.Dataset, dep_var, status_var, compl_var, comp_dim, element, pathway, species,
          missing_var=None, flagged_var=None):
    d = ds[dep_var].transpose("site", "receptor", "period", comp_dim)
    n_s, n_r, n_p, n_c = d.shape
    idx = np.indices((n_s, n_r, n_p, n_c)).reshape(4, -1)
    el = np.asarray(element)[idx[3]]
    values = d.values.reshape(-1)
    kg = np.where(el == "S", element_deposition_in(values, "S", "kg_ha"),
                  element_deposition_in(values, "N", "kg_ha"))
    eq = np.where(el == "S", element_deposition_in(values, "S", "eq_ha"),
                  element_deposition_in(values, "N", "eq_ha"))
    mmol = element_deposition_in(values, "N", "mmol_m2")
    fac = ds["annual_factor"].values[idx[2]]
    frame = pd.DataFrame({
        "site": ds["site"].values[idx[0]], "receptor": ds["receptor"].values[idx[1]],
        "period_start": pd.to_datetime(ds["period_start"].values[idx[2]]),
        "period_end": pd.to_datetime(ds["period_end"].values[idx[2]]),
        "element": el, "pathway": np.asarray(pathway)[idx[3]],
        "species": np.asarray(species)[idx[3]],
        "flux_kg_ha": kg, "flux_eq_ha": eq, "flux_kg_ha_yr": kg * fac, "flux_eq_ha_yr": eq * fac,
        "completeness": ds[compl_var].transpose("site", "receptor", "period", comp_dim).values.reshape(-1),
        "status": ds[status_var].transpose("site", "receptor", "period", comp_dim).values.reshape(-1),
        "flux_mmol_m2": mmol, "period": ds["period"].values[idx[2]],
    })
    for extra in ("wet_gauge_fraction", "wet_coverage_fraction", "wet_valid_precip_fraction",
                  "wet_flagged_precip_fraction", "air_coverage", "vd_coverage", "flux_coverage",
                  "note"):
        if extra in ds and comp_dim in ds[extra].dims:
            frame[extra] = ds[extra].transpose("site", "receptor", "period", comp_dim).values.reshape(-1)
    def flat(var):
        return ds[var].transpose("site", "receptor", "period", comp_dim).values.reshape(-1)
    frame["missing_components"] = flat(missing_var) if missing_var else ""
    frame["flagged_components"] = (flat(flagged_var) if flagged_var and flagged_var in ds
                                   else "")
    if "total_passes" in ds and comp_dim == "total":
        frame["passes"] = flat("total_passes").astype(bool)
    else:
        frame["passes"] = ~np.isin(frame["status"].to_numpy(), ("flagged", "missing"))
    if "fails_completeness" in ds and comp_dim == "component":
        frame["passes"] = (~flat("fails_completeness").astype(bool)
                           & (frame["status"] != "missing"))
    active = ds["active"].values[idx[0], idx[1]]
    return frame[active]


def budget_table(ds: xr.Dataset) -> pd.DataFrame:
    """One row per site, receptor, period and component, then the sums.

    Columns start with :data:`BUDGET_COLUMNS`; ``species`` is ``all`` on the rows that
    sum a pathway (``wet``, ``dry``) or the ``total``.
    """
    comps = _rows(ds, "deposition", "status", "completeness", "component",
                  ds["element"].values, ds["pathway"].values, ds["species"].values)
    tot_names = ds["total"].values
    totals = _rows(ds, "total_deposition", "total_status", "total_completeness", "total",
                   [t.split("_")[0] for t in tot_names], [t.split("_")[1] for t in tot_names],
                   ["all"] * len(tot_names), "total_missing_components",
                   "total_flagged_components")
    frame = pd.concat([comps, totals], ignore_index=True)
    order = {"wet": 0, "dry": 1, "total": 2}
    frame["_o"] = frame["pathway"].map(order) + (frame["species"] == "all") * 0.5
    frame = frame.sort_values(["site", "receptor", "period_start", "element", "_o"],
                              kind="stable").drop(columns="_o").reset_index(drop=True)
    return frame


def span_table(year_table: pd.DataFrame) -> pd.DataFrame:
    """The whole span: the mean of the years that pass completeness.

    A year passes for an element when the element's total passes completeness (the
    ``passes`` column; without it, a total neither ``flagged`` nor ``missing``):
    ``partial`` passes (it says which components are absent, not that the present
    ones are incomplete), and so does a total ``flagged`` only because kept samples
    failed a check or the sulfate basis fell back (its span row stays ``flagged``).
    The rows list the years used and excluded.
    """
    t = year_table.copy()
    t["year"] = t["period_start"].dt.year
    tot = t[(t["pathway"] == "total") & (t["species"] == "all")]
    passes = (tot["passes"].astype(bool) if "passes" in tot
              else ~tot["status"].isin(["flagged", "missing"]))
    ok = tot.assign(passes=passes)[["site", "receptor", "element", "year", "passes"]]
    t = t.drop(columns=["passes"], errors="ignore").merge(
        ok, on=["site", "receptor", "element", "year"], how="left")
    keys = ["site", "receptor", "element", "pathway", "species"]
    used = t[t["passes"]]
    if used.empty:
        cols = list(BUDGET_COLUMNS) + ["years_used", "years_excluded"]
        return pd.DataFrame(columns=cols)
    rank = {"complete": 0, "filled": 1, "partial": 2, "flagged": 2, "missing": 3}
    used = used.assign(_rank=used["status"].map(rank).fillna(2),
                       _missing=(used["status"] == "missing").astype(int),
                       _flagged=(used["status"] == "flagged").astype(int))
    g = used.groupby(keys, sort=False)
    agg = g.agg(period_start=("period_start", "min"), period_end=("period_end", "max"),
                flux_kg_ha_yr=("flux_kg_ha_yr", "mean"), flux_eq_ha_yr=("flux_eq_ha_yr", "mean"),
                completeness=("completeness", "min"), _rank=("_rank", "max"),
                _missing=("_missing", "mean"), _flagged=("_flagged", "max")).reset_index()
    agg["status"] = np.select([agg["_missing"] == 1, agg["_missing"] > 0, agg["_flagged"] > 0,
                               agg["_rank"] >= 2, agg["_rank"] == 1],
                              ["missing", "partial", "flagged", "partial", "filled"], "complete")
    agg = agg.drop(columns=["_rank", "_missing", "_flagged"])
    by = ["site", "receptor", "element"]
    years = ok.groupby(by + ["passes"])["year"].apply(
        lambda y: " ".join(str(v) for v in sorted(set(y)))).unstack("passes")
    years = years.reindex(columns=[True, False]).rename(columns={True: "years_used",
                                                                 False: "years_excluded"})
    agg = agg.merge(years.reset_index(), on=by, how="left")
    agg["years_excluded"] = agg["years_excluded"].astype(object).fillna("")
    agg["flux_kg_ha"] = agg["flux_kg_ha_yr"]
    agg["flux_eq_ha"] = agg["flux_eq_ha_yr"]
    agg["period"] = "span"
    cols = list(BUDGET_COLUMNS) + ["period", "years_used", "years_excluded"]
    return agg[cols]
