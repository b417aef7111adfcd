"""Quantities derived from the budget's components: oxidized and reduced N, the
potential acidity, dry and wet shares, the bracket of dry N, the air's total nitrate
and ammonia + ammonium (:func:`derived`) and the status and completeness of the
derived sums of summary.csv and budget.nc (:func:`derived_status`, put beside the sums
by :func:`with_derived_status` and :func:`derived_status_variables`); re-exported by
:mod:`workbench.budget`.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .budget_components import DERIVED_PARTS, OXIDIZED_N, PAIRS, REDUCED_N
from .budget_totals import _first_failure, _joined_names, combine_status, sum_present
from .species import element_molar_mass
from .units import UG_PER_KG, deposition_in, element_deposition_in


def nitrogen_forms(dep, element, species):
    """Oxidized and reduced N of components (..., component) [mol m-2 of N].

    Parameters
    ----------
    dep : ndarray
        (..., component) deposition [mol m-2 of element].
    element, species : ndarray of str
        Per component.

    Returns
    -------
    oxidized, reduced : ndarray
        Sums of :data:`OXIDIZED_N` and :data:`REDUCED_N` (:func:`sum_present`) [mol m-2].
    """
    return (sum_present(dep[..., np.isin(species, OXIDIZED_N) & (element == "N")]),
            sum_present(dep[..., np.isin(species, REDUCED_N) & (element == "N")]))


def potential_acidity(s_total, oxidized, reduced):
    """Potential acidity 2 S + oxidized N + reduced N [eq ha-1] from the S total and
    the oxidized and reduced N [mol m-2 of element] (common practice)."""
    return (element_deposition_in(s_total, "S", "eq_ha")
            + element_deposition_in(oxidized, "N", "eq_ha")
            + element_deposition_in(reduced, "N", "eq_ha"))


def derived_status(table: pd.DataFrame) -> pd.DataFrame:
    """Status, missing components and completeness of the derived sums (oxidized N,
    reduced N, potential acidity) per (site, receptor, period), by the rule of every sum
    (:func:`workbench.budget.combine_status`): without them an oxidized N that lacks an
    unmeasured NO2 read as complete in summary.csv.

    A derived sum passes completeness only if every part it sums (every present
    component) passes, as the totals do (:func:`workbench.budget_totals._totals`);
    where it does not, its failure is the first failing part's reason, after the parts
    failing for the same words (``NO3: gauge record below minimum (51.1 % of the
    period; minimum 90 %)``), the parts in the order of :data:`DERIVED_PARTS`.

    Each part's status, pass and words are the first given (not NaN) on its (site,
    receptor, period) and species, as a pivot of the rows would take them: one grouping
    of the rows and numpy arrays (parts x species), not a pivot per column (three
    pandas pivots were about 10 % of a cold change in the site explorer,
    docs/performance.md).

    Returns
    -------
    DataFrame
        Columns site, receptor, period, ``<sum>_status``, ``<sum>_missing_components``,
        ``<sum>_passes`` (bool) and ``<sum>_completeness_failure`` ('' where it passes);
        one row per (site, receptor, period) with a status, sorted on them.
    """
    comp = table[(table["species"] != "all") & (table["period"] != "span")]
    key = ["site", "receptor", "period"]
    # a part fails where budget.csv's `passes` is false and it is present (as the
    # totals); a table without `passes` reads every flagged part as failing
    ok = (comp["passes"].astype(str).str.lower().isin(("true", "1")) if "passes" in comp
          else ~comp["status"].astype(str).isin(("flagged", "missing")))
    why = (comp["completeness_failure"].fillna("").astype(str) if "completeness_failure"
           in comp else pd.Series("", index=comp.index))
    named = comp["species"].notna().to_numpy()     # a row without a species: no part
    groups = comp[named].groupby(key, sort=True, observed=True)
    cell_of = np.full(len(comp), -1)
    cell_of[named] = groups.ngroup().to_numpy()   # -1: a key not given
    index = groups.size().index
    species = list(dict.fromkeys(p for parts in DERIVED_PARTS.values() for p in parts))
    col = pd.Index(species).get_indexer(comp["species"])
    status = comp["status"].to_numpy(object)
    given = (cell_of >= 0) & (col >= 0)
    has_status = pd.notna(status) & (cell_of >= 0)
    kept = np.zeros(len(index), bool)            # a (site, receptor, period) with a status
    kept[cell_of[has_status]] = True
    n_sp = len(species)

    def first(values, valid, fill):
        """(kept rows, species) of the first value of each cell where `valid`."""
        out = np.full(len(index) * n_sp, fill, dtype=object)
        at = np.flatnonzero(valid)
        cells, first_at = np.unique(cell_of[at] * n_sp + col[at], return_index=True)
        out[cells] = values[at[first_at]]
        return out.reshape(len(index), n_sp)[kept]

    st = first(status, given & has_status, "missing")
    okw = first(ok.to_numpy(), given, True)
    whyw = first(why.to_numpy(object), given, "")
    out = pd.DataFrame(index=index[kept])
    for name, parts in DERIVED_PARTS.items():
        cols = [species.index(p) for p in parts]
        sub = st[:, cols]
        out[f"{name}_status"], _ = combine_status(sub)
        out[f"{name}_missing_components"] = _joined_names(sub == "missing", parts)
        present = sub != "missing"
        fails = present & ~okw[:, cols].astype(bool)
        words = whyw[:, cols]
        out[f"{name}_passes"] = ~fails.any(-1) & present.any(-1)
        out[f"{name}_completeness_failure"] = _first_failure(fails, words,
                                                             np.asarray(parts, dtype=object))
    return out.reset_index()


def with_derived_status(frame: pd.DataFrame, table: pd.DataFrame) -> pd.DataFrame:
    """`frame` (rows per site, receptor and period: summary.csv's, or the derived sums
    as yearly rates) with the status and completeness of its derived sums from
    budget.csv's rows `table` (:func:`derived_status`), matched on site, receptor and
    period, each read as `frame`'s (text where `frame` holds text).  Rows `table` has not are left empty (NaN).

    Returns
    -------
    DataFrame
        `frame`'s rows in their order, then the columns of :func:`derived_status`.
    """
    st = derived_status(table)
    key = ["site", "receptor", "period"]
    st = st.astype({k: str if frame[k].dtype == object else frame[k].dtype for k in key})
    return frame.merge(st, on=key, how="left")


def derived_status_variables(table: pd.DataFrame, coords: xr.Dataset) -> dict:
    """The columns of :func:`derived_status` of `table` as variables on the (site,
    receptor, period) of `coords`, for budget.nc: a pair no site asks for has
    ``_passes`` false and empty words.

    Returns
    -------
    dict
        name -> DataArray, each with its ``long_name``.
    """
    st = derived_status(table).set_index(["site", "receptor", "period"])
    out = {}
    for col in st.columns:
        v = st[col].to_xarray().reindex(site=coords["site"], receptor=coords["receptor"],
                                        period=coords["period"])
        passes = col.endswith("_passes")       # a pair no site asks for: false
        v = v.fillna(False).astype(bool) if passes else v.fillna("").astype(object)
        v.attrs["long_name"] = (
            f"{col.split('_status')[0]}: status (docs/budget.md)" if col.endswith("_status")
            else f"{col.split('_passes')[0]}: every part passes completeness" if passes
            else f"{col.split('_completeness')[0]}: the first completeness criterion a part "
                 "fails, with its share and minimum, after the parts failing for it"
            if col.endswith("_completeness_failure")
            else f"{col.split('_missing')[0]}: components without data")
        out[col] = v
    return out


def derived(ds: xr.Dataset) -> xr.Dataset:
    """Dry and wet shares, oxidized and reduced N, potential acidity [eq ha-1].

    Potential acidity = 2 nss-S + oxidized N + reduced N in eq ha-1 (common practice);
    the S term uses the budget's sulfate basis.
    """
    sp = ds["species"].values
    el = ds["element"].values
    d = ds["deposition"].values
    totals = list(ds["total"].values)
    tot = ds["total_deposition"].values

    def part(mask):
        return sum_present(d[..., mask])

    def t(name):
        return tot[..., totals.index(name)]

    ox, red = nitrogen_forms(d, el, sp)
    dims = ("site", "receptor", "period")
    kg, eq = "kg N ha-1", "eq ha-1"
    out = {"oxidized_N_kg_ha": (dims, element_deposition_in(ox, "N", "kg_ha"),
                                {"units": kg, "long_name": "oxidized N deposition (NO3, HNO3, pNO3, NO2)"}),
           "oxidized_N_eq_ha": (dims, element_deposition_in(ox, "N", "eq_ha"), {"units": eq}),
           "reduced_N_kg_ha": (dims, element_deposition_in(red, "N", "kg_ha"),
                               {"units": kg, "long_name": "reduced N deposition (NH4, NH3, pNH4)"}),
           "reduced_N_eq_ha": (dims, element_deposition_in(red, "N", "eq_ha"), {"units": eq}),
           "potential_acidity_eq_ha": (dims, potential_acidity(t("S_total"), ox, red),
                                       {"units": eq,
                                        "long_name": "potential acidity 2 S + oxidized N + reduced N"})}
    if "wet_H_deposition" in ds:
        h = ds["wet_H_deposition"].transpose("site", "period").values
        out["wet_H_eq_ha"] = (dims, np.broadcast_to(
            deposition_in(h, "H", "eq_ha")[:, None, :], d.shape[:3]).copy(),
            {"units": eq, "long_name": "wet deposition of free acidity H+"})
    with np.errstate(invalid="ignore", divide="ignore"):
        for e in ("S", "N"):
            out[f"{e}_dry_share"] = (dims, t(f"{e}_dry") / t(f"{e}_total"), {"units": "1"})
            out[f"{e}_wet_share"] = (dims, t(f"{e}_wet") / t(f"{e}_total"), {"units": "1"})
        # the bracket of dry N: each gas/particle pair all as gas, and all as particle;
        # its status by the rule of every sum, with each bracket for its pair
        dry_n = t("N_dry")
        n_dry = (el == "N") & (ds["pathway"].values == "dry")
        others = ds["status"].values[..., n_dry & ~np.isin(sp, sum(PAIRS.values(), ()))]
        for how in ("all_gas", "all_particle"):
            alt, st = dry_n.copy(), [others]
            for pair, members in PAIRS.items():
                v = f"bracket_{pair}_{how}"
                measured = part(np.isin(sp, members) & (ds["pathway"].values == "dry"))
                alt = alt - measured + (ds[v].values if v in ds else np.nan)
                st.append(ds[f"{v}_status"].values[..., None] if f"{v}_status" in ds
                          else np.full(alt.shape + (1,), "missing", object))
            out[f"dry_N_{how}_kg_ha"] = (dims, element_deposition_in(alt, "N", "kg_ha"),
                                         {"units": kg, "long_name": f"dry N with the nitrate and "
                                          f"ammonium pairs {how.replace('_', ' ')}"})
            out[f"dry_N_{how}_status"] = (dims, np.where(
                np.isfinite(alt), combine_status(np.concatenate(st, -1))[0], "missing"
            ).astype(object), {"long_name": f"status of dry_N_{how}_kg_ha (docs/budget.md)"})
        if "air_concentration" in ds:
            c = ds["air_concentration"]
            n_mass = element_molar_mass("N") * UG_PER_KG   # mol N -> ug N [ug mol-1]
            for name, (gas, prt) in (("total_nitrate", PAIRS["nitrate"]),
                                     ("total_ammonia_ammonium", PAIRS["ammonium"])):
                if gas in c["air_species"].values and prt in c["air_species"].values:
                    v = (c.sel(air_species=gas) + c.sel(air_species=prt)).values * n_mass
                    out[f"{name}_ug_N_m3"] = (("site", "period"), v, {
                        "units": "ug N m-3", "long_name": f"{gas} + {prt}, time-weighted mean"})
    return xr.Dataset(out, coords={k: ds[k] for k in dims})
