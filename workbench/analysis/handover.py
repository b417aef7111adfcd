"""Tables handed over with a run: precipitation per site and year (depth and
precipitation-weighted mean concentrations), and data quality per site and year.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..species import SPECIES
from ..units import convert_plain

#: Wet-chain counts and fractions copied into the quality table (wet Dataset names).
WET_QUALITY = ("gauge_fraction", "coverage_fraction", "valid_precip_fraction", "n_samples",
               "n_used", "n_flagged", "n_excluded", "n_dry", "n_gauge_filled")


def _frame(ds, names) -> pd.DataFrame:
    """(site, period) variables of a Dataset as columns of a long table."""
    out = ds[list(names)].to_dataframe().reset_index()
    return out[["site", "period"] + list(names)]


def precipitation_table(wet) -> pd.DataFrame:
    """Precipitation depth and precipitation-weighted mean (PWM) concentrations.

    Parameters
    ----------
    wet : Dataset
        The wet chain on (site, period) (``Result.wet`` of a run at calendar years):
        ``precipitation`` [mm], ``pwm_<ion>`` [mol m-3], ``pH_pwm``, ``status``.

    Returns
    -------
    DataFrame
        site, period, ``precipitation_mm``, ``precipitation_valid_mm`` [mm], one
        ``pwm_<ion>_ueq_l`` column per ion [ueq L-1] (the charge of the ion from the
        species table), ``ph_of_pwm_h`` [1], ``status`` and the completeness reasons.
    """
    if wet is None:
        return pd.DataFrame(columns=["site", "period", "precipitation_mm"])
    ions = [v[4:] for v in wet.data_vars if v.startswith("pwm_") and v[4:] in SPECIES
            or v.startswith("pwm_nss")]
    out = _frame(wet, ["precipitation", "precipitation_valid"]).rename(
        columns={"precipitation": "precipitation_mm", "precipitation_valid": "precipitation_valid_mm"})
    for ion in ions:
        base = SPECIES[ion[3:] if ion.startswith("nss") else ion]
        umol = convert_plain(wet[f"pwm_{ion}"].transpose("site", "period").values, "mol/m3", "umol/L")
        out[f"pwm_{ion}_ueq_l"] = (umol * base.eq_per_mol).reshape(-1)
    flat = lambda v: wet[v].transpose("site", "period").values.reshape(-1)  # noqa: E731
    out["ph_of_pwm_h"] = flat("pH_pwm")
    out["status"] = flat("status")
    out["completeness_reasons"] = flat("completeness_reasons")
    # rows by site, then period: the same file whatever order the wet chain held the sites
    # in (a run in site blocks concatenates them in catalogue order)
    return out.sort_values(["site", "period"], kind="stable", ignore_index=True)


def _reasons_by_year(screened) -> pd.DataFrame:
    """Samples excluded and flagged per site and calendar year, by reason.

    A sample is counted in every calendar year its interval [start, end) overlaps, as
    the wet chain's ``n_flagged``/``n_excluded`` count it, so a sample across 31
    December is listed in both years and one ending after the last year of the run is
    still listed in the years it covers.
    """
    if screened is None:
        return pd.DataFrame(columns=["site", "period", "excluded_by_reason", "flagged_by_reason"])
    first = pd.DatetimeIndex(screened["start"].values).year.values
    last = pd.DatetimeIndex(screened["end"].values - np.timedelta64(1, "s")).year.values
    n_years = np.maximum(last - first + 1, 1)
    row = np.repeat(np.arange(len(first)), n_years)
    # the k-th year of each sample: its first year + k (k counted within the sample's rows)
    k = np.arange(len(row)) - np.repeat(np.cumsum(n_years) - n_years, n_years)
    f = pd.DataFrame({"site": screened["site"].values.astype(str)[row],
                      "period": (first[row] + k).astype(str),
                      "status": screened["status"].values.astype(str)[row],
                      "reasons": screened["reasons"].values.astype(str)[row]})
    keys = ["site", "period"]
    out = f[keys].drop_duplicates().set_index(keys)
    for st in ("excluded", "flagged"):
        g = f[f["status"] == st].assign(reason=lambda d: d["reasons"].replace("", "no reason")
                                        .str.split("; ")).explode("reason")
        counts = g.groupby(keys + ["reason"]).size().reset_index(name="n")
        counts["text"] = counts["reason"] + " (" + counts["n"].astype(str) + ")"
        out[f"{st}_by_reason"] = counts.groupby(keys)["text"].agg("; ".join) \
            .reindex(out.index).fillna("")
    return out.reset_index()


def quality_table(years, wet=None, screened=None) -> pd.DataFrame:
    """``quality.csv``: data quality per site and calendar year.

    Parameters
    ----------
    years : Dataset
        The yearly budget (``Result.years``): ``air_coverage`` and ``vd_coverage`` on
        (site, receptor, period, component) [1].
    wet : Dataset, optional
        The wet chain at calendar years (fractions [1] and sample counts).
    screened : Dataset, optional
        The screened samples (status and reasons per sample).

    Returns
    -------
    DataFrame
        site, period; the wet fractions and counts (``wet_`` prefix) and the wet status;
        samples excluded and flagged by reason (``reason (count)``, a sample counted in
        every calendar year it overlaps, as the ``wet_n_*`` counts);
        ``air_coverage_<species>`` [1] (fraction of the year's hours with a
        concentration) and ``vd_coverage_min`` [1] (the smallest over the site's
        receptors and species).
    """
    sites = years["site"].values.astype(str)
    periods = years["period"].values.astype(str)
    out = pd.DataFrame({"site": np.repeat(sites, len(periods)),
                        "period": np.tile(periods, len(sites))})
    if wet is not None:
        w = _frame(wet, WET_QUALITY).rename(columns={k: f"wet_{k}" for k in WET_QUALITY})
        w["wet_status"] = wet["status"].transpose("site", "period").values.reshape(-1)
        w["period"] = w["period"].astype(str)
        out = out.merge(w, on=["site", "period"], how="left")
    reasons = _reasons_by_year(screened)
    out = out.merge(reasons, on=["site", "period"], how="left")
    for col in ("excluded_by_reason", "flagged_by_reason"):
        out[col] = out[col].fillna("")
    active = years["active"]
    dry = years["pathway"].values.astype(str) == "dry"
    air = years["air_coverage"].isel(component=np.flatnonzero(dry)).where(active)
    air = air.max("receptor")                      # the same air record for every receptor
    for i, sp in enumerate(years["species"].values[dry].astype(str)):
        out[f"air_coverage_{sp}"] = air.isel(component=i).transpose("site", "period").values.reshape(-1)
    if "vd_coverage" in years:
        vd = years["vd_coverage"].isel(component=np.flatnonzero(dry)).where(active)
        out["vd_coverage_min"] = vd.min(["receptor", "component"], skipna=True) \
            .transpose("site", "period").values.reshape(-1)
    return out


def element_totals(table: pd.DataFrame) -> pd.DataFrame:
    """Total S and N per site, receptor and period, wide, for ``summary.csv``.

    Parameters
    ----------
    table : DataFrame
        budget.csv rows (``Result.table``).

    Returns
    -------
    DataFrame
        site, receptor, period, ``S_total_kg_ha_yr``, ``S_total_eq_ha_yr``,
        ``N_total_kg_ha_yr``, ``N_total_eq_ha_yr`` and the two statuses.
    """
    tot = table[(table["pathway"] == "total") & (table["species"] == "all")]
    wide = tot.pivot_table(index=["site", "receptor", "period"], columns="element",
                           values=["flux_kg_ha_yr", "flux_eq_ha_yr", "status"],
                           aggfunc="first", sort=False)
    out = pd.DataFrame(index=wide.index)
    for el in ("S", "N"):
        if ("flux_kg_ha_yr", el) in wide:
            out[f"{el}_total_kg_ha_yr"] = wide[("flux_kg_ha_yr", el)].astype(float)
            out[f"{el}_total_eq_ha_yr"] = wide[("flux_eq_ha_yr", el)].astype(float)
            out[f"{el}_total_status"] = wide[("status", el)]
    return out.reset_index()


#: Totals of the common-surface table (element_pathway).
COMMON_TOTALS = ("S_wet", "S_dry", "S_total", "N_wet", "N_dry", "N_total")


def common_surface_table(result, study, receptor: str) -> pd.DataFrame:
    """Every site on one receptor surface: annual totals side by side (``common_surface.csv``).

    The study is run again at calendar years with every site given `receptor` as a
    further receptor (``Study.run(overrides={site: {"receptors": [receptor]}})``, the
    site's own ``[sites.<id>]`` overrides kept) and that receptor only computed, so
    that the sites differ by their air, precipitation and weather, not by their land
    use.  Wet deposition does not depend on the surface; dry deposition does.

    Parameters
    ----------
    result : workbench.pipeline.Result
        The run whose options (wet, dry, budget, fixed Vd) and span are used.
    study : workbench.pipeline.Study
    receptor : str
        A land-use class of :data:`workbench.landuse.LAND_USE`.

    Returns
    -------
    DataFrame
        site, receptor, own_land_use, period (calendar years and ``span``),
        ``<element>_<pathway>_kg_ha_yr`` for S and N wet, dry and total [kg ha-1 yr-1],
        ``S_total_eq_ha_yr``, ``N_total_eq_ha_yr`` [eq ha-1 yr-1], ``S_total_status``,
        ``N_total_status``.

    Raises
    ------
    ValueError
        For a receptor that is not a land-use class.
    """
    from ..landuse import LAND_USE
    if receptor not in LAND_USE:
        raise ValueError(f"common receptor {receptor!r} is not a land-use class; expected one "
                         f"of {', '.join(LAND_USE)}")
    o = result.options
    cat = study.catalogue()
    over = {s.id: {**study.site_overrides.get(s.id, {}),
                   "receptors": list(dict.fromkeys(tuple(s.receptors) + (receptor,)))}
            for s in cat}
    start = str(result.years["period_start"].values.min())[:19]
    end = str(result.years["period_end"].values.max())[:19]
    run = study.run(o.get("wet"), o.get("dry"), o.get("budget"), o.get("fixed_velocity"),
                    "year", start, end, overrides=over, receptors=[receptor])
    t = run.table[run.table["species"] == "all"].copy()
    t["name"] = t["element"] + "_" + t["pathway"]
    keys = ["site", "receptor", "period"]
    kg = t.set_index(keys + ["name"])["flux_kg_ha_yr"].unstack("name")   # NaN rows kept
    out = pd.DataFrame(index=kg.index)
    for name in COMMON_TOTALS:
        out[f"{name}_kg_ha_yr"] = kg[name].astype(float) if name in kg else np.nan
    tot = element_totals(run.table).set_index(keys)
    for el in ("S", "N"):
        for col in (f"{el}_total_eq_ha_yr", f"{el}_total_status"):
            out[col] = tot[col].reindex(out.index) if col in tot else np.nan
    out = out.reset_index()
    out.insert(2, "own_land_use", out["site"].map({s.id: s.land_use for s in cat}))
    return out
