"""Exceedance of critical loads of acidity and of nutrient nitrogen.

The critical load function of acidity (CLF) is the line in the (N, S) deposition
plane through (0, CLmaxS), (CLminN, CLmaxS) and (CLmaxN, 0); deposition on or below it
does not exceed the critical loads.  The exceedance of a deposition (N, S) above it is
the sum of the N and S reductions to the nearest point of the function, and the region
says which part of the function that nearest point lies on (ICP Modelling and Mapping
Manual, chapter on the exceedance of critical loads; Posch, Hettelingh and De Smet
2001).  All loads and depositions in one unit, by convention [eq ha-1 yr-1].

Regions (our numbering, after the manual's figure):

====  ==============================================================================
0     not exceeded: on or below the function
1     N <= CLminN, nearest point on the flat part: reduce S only, Ex = S - CLmaxS
2     nearest point is the corner (CLminN, CLmaxS), N > CLminN:
      Ex = S + N - CLminN - CLmaxS
3     nearest point on the sloping part, not a corner: reduce S and N
4     nearest point is the corner (CLmaxN, 0): Ex = S + N - CLmaxN
====  ==============================================================================

A deposition exactly on the line between two regions has the same exceedance by
either region's formula; its code is 1 where N = CLminN (region 1 is N <= CLminN, as
in the manual), else that of the corner (2 or 4) where the nearest point is a corner.
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd
import xarray as xr

from ..errors import WorkbenchError
from ..io.critical_loads import ACIDITY_KEYS, NUTRIENT_KEY

#: Region codes and what each says, for tables and figures.
REGIONS = {
    -1: "not determined (deposition or critical load missing, a net emission, or a "
        "partial deposition on or below the function)",
    0: "not exceeded",
    1: "reduce S only (above the flat part of the function)",
    2: "nearest the corner (CLminN, CLmaxS): reduce S and N",
    3: "nearest the sloping part: reduce S and N",
    4: "nearest the corner (CLmaxN, 0): reduce S and N",
}
#: Points within this fraction of CLmaxN + CLmaxS of the function count as on it,
#: so that a point computed on the function in floating point gives 0 (common practice).
ON_FUNCTION_RTOL = 1e-12


class ExceedanceError(WorkbenchError, ValueError):
    """An impossible critical load function or a negative deposition."""


class AcidityExceedance(NamedTuple):
    """Result of :func:`acidity_exceedance` (each of the input's shape and type)."""

    exceedance: object   #: sum of the S and N reductions [eq ha-1 yr-1]
    region: object       #: region code, see :data:`REGIONS` [1]
    s_reduction: object  #: S reduction to the nearest point [eq ha-1 yr-1]
    n_reduction: object  #: N reduction to the nearest point [eq ha-1 yr-1]


def check_function(cl_max_s, cl_min_n, cl_max_n):
    """Raise :class:`ExceedanceError` for a negative or infinite load or CLmaxN below
    CLminN.

    NaN entries (no critical load) pass; they give NaN exceedances.
    """
    s, n0, n1 = (np.asarray(v, dtype=float) for v in (cl_max_s, cl_min_n, cl_max_n))
    for name, v in (("cl_max_s", s), ("cl_min_n", n0), ("cl_max_n", n1)):
        bad = v < 0
        if np.any(bad):
            raise ExceedanceError(f"negative critical load {name} = {v[bad].flat[0]:g} "
                                  f"(at position {int(np.flatnonzero(bad)[0])}); expected >= 0 eq/ha/yr")
        bad = np.isinf(v)
        if np.any(bad):
            raise ExceedanceError(f"critical load {name} = {v[bad].flat[0]:g} is not finite "
                                  f"(at position {int(np.flatnonzero(bad)[0])}); expected a "
                                  "finite number >= 0 eq/ha/yr, or NaN for none")
    bad = np.broadcast_to(n1 < n0, np.broadcast(n0, n1).shape)
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise ExceedanceError(
            f"impossible critical load function: cl_max_n = {np.broadcast_to(n1, bad.shape).flat[i]:g}"
            f" below cl_min_n = {np.broadcast_to(n0, bad.shape).flat[i]:g} eq/ha/yr "
            f"(at position {i}); expected cl_max_n >= cl_min_n")


def _check_deposition(s_dep, n_dep):
    for name, v in (("S", s_dep), ("N", n_dep)):
        bad = np.asarray(v) < 0
        if np.any(bad):
            raise ExceedanceError(f"negative {name} deposition {np.asarray(v)[bad].flat[0]:g} "
                                  f"(at position {int(np.flatnonzero(bad)[0])}); expected >= 0 eq/ha/yr")


def _project(n, s, n_a, s_a, n_b, s_b):
    """Nearest point of the segment a-b to (n, s): (t in [0, 1], squared distance)."""
    dn, ds = n_b - n_a, s_b - s_a
    length2 = dn * dn + ds * ds
    with np.errstate(invalid="ignore", divide="ignore"):
        t = np.where(length2 > 0, ((n - n_a) * dn + (s - s_a) * ds) / length2, 0.0)
    t = np.clip(t, 0.0, 1.0)
    en, es = n - (n_a + t * dn), s - (s_a + t * ds)
    return t, en * en + es * es


def _acidity_numpy(s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n):
    s, n, cs, c0, c1 = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (
        s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n)))
    slope = c1 - c0
    tol = ON_FUNCTION_RTOL * (cs + c1)
    inside = (s <= cs + tol) & (n <= c1 + tol) & (slope * s + cs * (n - c1) <= tol * (slope + cs))
    # flat part (0, CLmaxS)-(CLminN, CLmaxS) and sloping part (CLminN, CLmaxS)-(CLmaxN, 0)
    t_a, d_a = _project(n, s, 0.0, cs, c0, cs)
    t_b, d_b = _project(n, s, c0, cs, c1, 0.0)
    on_a = d_a <= d_b
    n_near = np.where(on_a, t_a * c0, c0 + t_b * slope)
    s_near = np.where(on_a, cs, cs * (1.0 - t_b))
    # on a boundary between two regions: N <= CLminN is region 1 (the manual's rule,
    # inclusive), else a point whose nearest point is a corner takes the corner's
    # region (2 or 4)
    region = np.select([n <= c0, on_a | (t_b == 0.0), t_b < 1.0], [1, 2, 3], 4)
    missing = np.isnan(s) | np.isnan(n) | np.isnan(cs) | np.isnan(c0) | np.isnan(c1)
    dn = np.where(inside, 0.0, np.maximum(n - n_near, 0.0))
    ds = np.where(inside, 0.0, np.maximum(s - s_near, 0.0))
    dn, ds = np.where(missing, np.nan, dn), np.where(missing, np.nan, ds)
    region = np.where(missing, -1, np.where(inside, 0, region)).astype(np.int8)
    return dn + ds, region, ds, dn


def acidity_exceedance(s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n) -> AcidityExceedance:
    """Exceedance of the critical load function of acidity and its region.

    Parameters
    ----------
    s_dep : float, ndarray or DataArray
        Sulfur deposition (non-sea-salt) [eq ha-1 yr-1].
    n_dep : float, ndarray or DataArray
        Total (oxidized + reduced) nitrogen deposition [eq ha-1 yr-1].
    cl_max_s, cl_min_n, cl_max_n : float, ndarray or DataArray
        The critical load function [eq ha-1 yr-1]; all arguments broadcast together.

    Returns
    -------
    AcidityExceedance
        ``exceedance`` [eq ha-1 yr-1], ``region`` (code of :data:`REGIONS`),
        ``s_reduction`` and ``n_reduction`` [eq ha-1 yr-1]; NaN (region -1) where an
        input is NaN.  DataArrays in give DataArrays out.

    Raises
    ------
    ExceedanceError
        For a negative load or deposition, or CLmaxN below CLminN.

    Notes
    -----
    The nearest point :math:`(N_0, S_0)` of the function to the deposition
    :math:`(N_{dep}, S_{dep})` (Euclidean) gives

    .. math:: Ex = (S_{dep} - S_0) + (N_{dep} - N_0)

    and :math:`Ex = 0` on or below the function.  The nearest point is found by projecting
    on the flat part and on the sloping part and keeping the closer, so that the four
    regions of the manual's case distinction follow from where the projection lands.

    References
    ----------
    ICP Modelling and Mapping Manual (UBA, Dessau), chapter "Dynamic modelling" /
    "Exceedance of critical loads" (Posch et al.): the exceedance of the critical load
    function as the sum of N and S reductions to its nearest point.
    Posch, M., Hettelingh, J.-P., De Smet, P.A.M. (2001) Characterization of critical
    load exceedances in Europe. Water Air Soil Pollut. 130, 1139-1144.

    Examples
    --------
    Above the flat part only S has to go (a hand-worked case):

    >>> r = acidity_exceedance(1200.0, 200.0, 950.0, 357.0, 1420.0)
    >>> float(r.exceedance), int(r.region)
    (250.0, 1)
    """
    check_function(cl_max_s, cl_min_n, cl_max_n)
    _check_deposition(s_dep, n_dep)
    args = (s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n)
    if any(isinstance(a, xr.DataArray) for a in args):
        out = xr.apply_ufunc(_acidity_numpy, *args, output_core_dims=[[]] * 4,
                             dask="parallelized", output_dtypes=[float, np.int8, float, float])
        for o, unit in zip(out, ("eq ha-1 yr-1", "1", "eq ha-1 yr-1", "eq ha-1 yr-1")):
            o.attrs["units"] = unit
        return AcidityExceedance(*out)
    out = _acidity_numpy(*args)
    if all(np.ndim(a) == 0 for a in args):
        out = tuple(o[()] for o in out)
    return AcidityExceedance(*out)


def nutrient_n_exceedance(n_dep, cl_nut_n):
    """Exceedance of the critical load of nutrient nitrogen.

    Parameters
    ----------
    n_dep : float, ndarray or DataArray
        Total nitrogen deposition [eq ha-1 yr-1].
    cl_nut_n : float, ndarray or DataArray
        Critical load of nutrient N [eq ha-1 yr-1].

    Returns
    -------
    Same type as the input
        :math:`\\max(N_{dep} - CL_{nut}N, 0)` [eq ha-1 yr-1] (NaN where an input is NaN).

    References
    ----------
    ICP Modelling and Mapping Manual (UBA, Dessau), exceedance of the critical load of
    nutrient nitrogen.

    Raises
    ------
    ExceedanceError
        For a negative or infinite load (an infinite CLnutN gave an exceedance of 0,
        "not exceeded", where :func:`acidity_exceedance` refuses an infinite load;
        2026-12 audit) or a negative deposition.  NaN (no load) passes and gives NaN.

    >>> float(nutrient_n_exceedance(1713.0, 714.0))
    999.0
    """
    v = np.asarray(cl_nut_n, dtype=float)
    for bad, what in ((v < 0, "negative critical load cl_nut_n = {:g}"),
                      (np.isinf(v), "critical load cl_nut_n = {:g} is not finite")):
        if np.any(bad):
            raise ExceedanceError(
                f"{what.format(v[bad].flat[0])} (at position {int(np.flatnonzero(bad)[0])}); "
                "expected a finite number >= 0 eq/ha/yr, or NaN for none")
    _check_deposition(0.0, n_dep)
    return np.maximum(n_dep - cl_nut_n, 0.0)


# ------------------------------------------------------------------ the table of a run
EXCEEDANCE_COLUMNS = ("site", "receptor", "period", "s_dep_eq_ha_yr", "n_dep_eq_ha_yr",
                      "ex_acidity_eq_ha_yr", "region", "ex_nutrient_n_eq_ha_yr", "status")


def annual_totals(result) -> pd.DataFrame:
    """Total S and N deposition per site, receptor and calendar year, and the span mean.

    Returns
    -------
    DataFrame
        site, receptor, period, ``s_dep_eq_ha_yr``, ``n_dep_eq_ha_yr`` [eq ha-1 yr-1],
        ``s_status``, ``n_status``, ``s_missing``, ``n_missing`` and ``s_basis``
        (budget.csv's ``sulfate_basis`` of the wet S sum: ``total`` where the wet S
        holds total SO4, sea salt included, e.g. a period whose non-sea-salt mean fell
        back for want of the sea-salt tracer; ``""`` where not known).
    """
    from ..tables import budget_table, span_table
    if result.options.get("resolution", "year") == "year":
        rows = result.table
    else:
        years = budget_table(result.years)
        rows = pd.concat([years, span_table(years)], ignore_index=True)
    tot = rows[(rows["pathway"] == "total") & (rows["species"] == "all")]
    keys = ["site", "receptor", "period"]
    parts = []
    for el in ("S", "N"):
        e = tot[tot["element"] == el].set_index(keys)
        miss = e["missing_components"] if "missing_components" in e else pd.Series("", e.index)
        parts.append(pd.DataFrame({f"{el.lower()}_dep_eq_ha_yr": e["flux_eq_ha_yr"],
                                   f"{el.lower()}_status": e["status"],
                                   f"{el.lower()}_missing": miss.fillna("").astype(str)}))
    out = pd.concat(parts, axis=1).reset_index()
    # which sulfate the S total holds (the wet S sum's label; the dry pSO4 follows the
    # same basis): a row on the nss basis whose wet SO4 fell back to total SO4 had only
    # "S total flagged" in exceedance.csv, while its exceedance counts sea-salt sulfate
    out["s_basis"] = ""
    if "sulfate_basis" in rows:
        wet = rows[(rows["pathway"] == "wet") & (rows["species"] == "all")
                   & (rows["element"] == "S")].drop_duplicates(keys).set_index(keys)
        basis = wet["sulfate_basis"].fillna("").astype(str)
        out["s_basis"] = basis.reindex(pd.MultiIndex.from_frame(out[keys])).fillna(
            "").to_numpy(dtype=object)
    return out


def _join(*notes) -> np.ndarray:
    """Notes joined element-wise with "; ", empty ones left out."""
    cols = [pd.Series(n, dtype=object).fillna("").astype(str).to_numpy() for n in notes]
    return np.array(["; ".join(v for v in row if v) for row in zip(*cols)], dtype=object)


def _status(frame: pd.DataFrame):
    """Status and note of an exceedance from the statuses of the S and N totals."""
    st = frame[["s_status", "n_status"]].astype(str)
    status = np.select([st.eq("missing").any(axis=1), st.isin(["partial", "flagged"]).any(axis=1),
                        st.eq("filled").any(axis=1)], ["missing", "flagged", "filled"], "complete")
    notes = []
    for el in ("s", "n"):
        s = frame[f"{el}_status"].astype(str).reset_index(drop=True)
        m = frame[f"{el}_missing"].astype(str).reset_index(drop=True)
        text = f"{el.upper()} total " + s + np.where(m != "", " (without " + m + ")", "")
        # a filled total is named too: the row's status "filled" had an empty note
        notes.append(text.where(s.isin(["partial", "flagged", "missing", "filled"]), ""))
    return status, _join(*notes)


def exceedance_table(result, catalogue) -> pd.DataFrame:
    """``exceedance.csv``: one row per site, receptor and year (and the span mean).

    Parameters
    ----------
    result : workbench.pipeline.Result
    catalogue : workbench.io.sites.SiteCatalogue
        The sites with their critical loads [eq ha-1 yr-1].

    Returns
    -------
    DataFrame
        :func:`exceedance_from_totals` of the run's annual totals; with Monte Carlo draws
        in the run, the columns of :func:`exceedance_probability` follow.
    """
    basis = getattr(result.options.get("budget"), "sulfate_basis", "nss")
    t = exceedance_from_totals(annual_totals(result), catalogue, basis)
    from .uncertainty import annual_total_draws
    draws = annual_total_draws(result)
    if draws is None:
        return t
    return pd.concat([t, exceedance_probability(t, draws, t.attrs["lower_bound"],
                                                t.attrs["lower_bound_n"])], axis=1)


def _lower_bound(totals: pd.DataFrame, elements=("s", "n")) -> np.ndarray:
    """Rows whose total of one of `elements` lacks a component (status ``partial``, or
    components named missing): that deposition, and so each exceedance computed from
    it, is a lower bound.  The acidity exceedance rests on S and N, the nutrient-N one
    on N alone (a partial S total left a nutrient-N exceedance of 0 "not determined";
    2026-12 audit)."""
    out = np.zeros(len(totals), bool)
    for el in elements:
        out |= totals[f"{el}_status"].astype(str).eq("partial").to_numpy()
        out |= totals[f"{el}_missing"].fillna("").astype(str).ne("").to_numpy() & \
            totals[f"{el}_dep_eq_ha_yr"].notna().to_numpy()
    return out


def not_determined(exceedance, lower_bound):
    """Where an exceedance of 0 rests on a partial deposition.

    A partial total leaves out components without data, so it is a lower bound of the
    deposition: an exceedance of 0 on it says nothing (the full deposition may exceed),
    while a positive one is a lower bound of the exceedance.

    Parameters
    ----------
    exceedance : array_like
        Exceedances [eq ha-1 yr-1].
    lower_bound : array_like of bool
        Whether the deposition behind each exceedance is a lower bound.

    Returns
    -------
    ndarray of bool
        True where the exceedance is 0 on a lower bound: not determined.

    >>> not_determined([0.0, 12.0, 0.0], [True, True, False]).tolist()
    [True, False, False]
    """
    return np.asarray(lower_bound, bool) & (np.asarray(exceedance, float) == 0)


#: The note of a row whose S includes sea-salt sulfate: the whole run on the total
#: basis, or (nss basis) a wet S that fell back to total SO4 for want of the tracer.
SEA_SALT_TOTAL = "S includes sea-salt sulfate (sulfate_basis = total)"
SEA_SALT_FALLBACK = ("S includes sea-salt sulfate (the non-sea-salt SO4 fell back to total "
                     "SO4 for want of the sea-salt tracer; budget.csv's sulfate_basis and "
                     "note say where): the exceedance counts sea salt")
#: The note of a span row: the exceedance is not linear in the deposition, so that of the
#: mean deposition is not the mean of the years' exceedances (a report's "mean" read so).
SPAN_NOTE = ("exceedance of the mean deposition of the years used, not the mean of the "
             "years' exceedances")

#: The note of a receptor without any critical load (its rows in exceedance.csv).
NO_CRITICAL_LOADS = ("no critical loads for this receptor in sites.toml (neither "
                     "[site.critical_loads] nor [site.critical_loads.<receptor>]): "
                     "no exceedance")


def borrowed_note(site, receptor) -> str:
    """Which of a receptor's critical loads come from the site's ``[site.critical_loads]``
    table (given for the site's own land use), or ``""``.

    A receptor without a table of its own takes all the site's loads; one whose own
    table lacks a key takes that key from the site's table (a heathland given only
    ``cl_nut_n`` got the forest soil's acidity function, and nothing said so).

    Parameters
    ----------
    site : workbench.io.sites.Site
    receptor : str
        One of the site's surfaces.
    """
    if receptor == site.land_use or not site.critical_loads:
        return ""
    own = site.receptor_critical_loads.get(receptor)
    if own is None:
        return "the site's critical loads, given for " + site.land_use
    taken = [k for k in ACIDITY_KEYS + (NUTRIENT_KEY,) if k in site.critical_loads
             and k not in own]
    if not taken:
        return ""
    return (f"{', '.join(taken)} from the site's critical loads, given for {site.land_use} "
            f"(not in [site.critical_loads.{receptor}])")


def exceedance_from_totals(totals: pd.DataFrame, catalogue, sulfate_basis="nss") -> pd.DataFrame:
    """The rows of ``exceedance.csv`` from annual S and N totals and the critical loads.

    Parameters
    ----------
    totals : DataFrame
        :func:`annual_totals`: site, receptor, period, ``s_dep_eq_ha_yr``,
        ``n_dep_eq_ha_yr`` [eq ha-1 yr-1], their statuses and missing components.
    catalogue : workbench.io.sites.SiteCatalogue
        The sites with their critical loads [eq ha-1 yr-1].
    sulfate_basis : str
        ``"nss"`` or ``"total"`` (noted: S then includes sea-salt sulfate).  On the nss
        basis a row whose ``s_basis`` (:func:`annual_totals`) is ``total`` (the wet SO4
        fell back to total SO4 for want of the sea-salt tracer) says so in its note too
        (:data:`SEA_SALT_FALLBACK`; before, only "S total flagged").

    Returns
    -------
    DataFrame
        :data:`EXCEEDANCE_COLUMNS`, then the loads, the S and N reductions and a note.
        A pair of site and receptor without any critical load has its rows too, with
        its deposition, no exceedance (empty, region -1), status ``missing`` and the
        note :data:`NO_CRITICAL_LOADS` (it had no row, and a reader of the file found
        nothing); otherwise a status
        other than ``complete`` comes from the S or N total and the note says which.
        A receptor without its own ``[site.critical_loads.<receptor>]`` table takes the
        site's loads, and the note says that they were given for the site's land use.
        Where a total lacks a component (``partial``) the deposition is a lower bound:
        a positive exceedance is then a lower bound too ("at least"), and an exceedance
        of 0 is not determined (NaN, region -1), as the full deposition may exceed.
        A negative total (net emission, e.g. of NH3) gives no exceedance (NaN, region -1).
        A span row's note says that its exceedance is that of the mean deposition
        (:data:`SPAN_NOTE`): the exceedance is not linear in the deposition, so the mean
        of the years' exceedances can be larger (a year exceeded, the mean deposition not).
    """
    t = totals
    loads = pd.DataFrame([
        {"site": s.id, "receptor": r, **{k: s.critical_loads_for(r).get(k, np.nan)
                                        for k in ACIDITY_KEYS + (NUTRIENT_KEY,)}}
        for s in catalogue for r in s.surfaces if s.critical_loads_for(r)],
        columns=["site", "receptor", *ACIDITY_KEYS, NUTRIENT_KEY])
    borrowed = pd.DataFrame([
        {"site": s.id, "receptor": r, "_borrowed": borrowed_note(s, r)}
        for s in catalogue for r in s.surfaces], columns=["site", "receptor", "_borrowed"])
    t = t.merge(loads.assign(_has_loads=True), on=["site", "receptor"], how="left").merge(
        borrowed, on=["site", "receptor"], how="left")
    none = ~t["_has_loads"].eq(True).to_numpy()     # no load at all: a row saying so
    s_dep = t["s_dep_eq_ha_yr"].to_numpy(float)
    n_dep = t["n_dep_eq_ha_yr"].to_numpy(float)
    net = (s_dep < 0) | (n_dep < 0)              # NaN compares False
    ok_s, ok_n = np.where(net, np.nan, s_dep), np.where(net, np.nan, n_dep)
    ex = acidity_exceedance(ok_s, ok_n, *(t[k].to_numpy(float) for k in ACIDITY_KEYS))
    nut = nutrient_n_exceedance(np.where(n_dep < 0, np.nan, n_dep),
                                t[NUTRIENT_KEY].to_numpy(float))
    lower = _lower_bound(t)                   # S or N partial: the acidity exceedance
    lower_n = _lower_bound(t, ("n",))         # N partial: the nutrient-N exceedance
    acid_undetermined = not_determined(ex.exceedance, lower)
    nut_undetermined = not_determined(nut, lower_n)
    t["ex_acidity_eq_ha_yr"] = np.where(acid_undetermined, np.nan, ex.exceedance)
    t["region"] = np.where(acid_undetermined, -1, ex.region).astype(np.int8)
    t["ex_nutrient_n_eq_ha_yr"] = np.where(nut_undetermined, np.nan, nut)
    t["s_reduction_eq_ha_yr"] = np.where(acid_undetermined, np.nan, ex.s_reduction)
    t["n_reduction_eq_ha_yr"] = np.where(acid_undetermined, np.nan, ex.n_reduction)
    t["status"], note = _status(t)
    t["status"] = np.where(none, "missing", t["status"])
    fell_back = (t["s_basis"].fillna("").astype(str).eq("total").to_numpy()
                 if "s_basis" in t else np.zeros(len(t), bool))
    sea = np.where(np.full(len(t), sulfate_basis == "total"), SEA_SALT_TOTAL,
                   np.where(fell_back, SEA_SALT_FALLBACK, ""))
    span = t["period"].astype(str).eq("span").to_numpy()
    no_acid = np.where(t[list(ACIDITY_KEYS)].isna().any(axis=1) & ~none,
                       "no complete acidity function", "")
    t["_borrowed"] = np.where(none, "", t["_borrowed"].fillna(""))
    net_note = np.where(n_dep < 0, "net N emission (N total below 0): no exceedance",
                        np.where(s_dep < 0, "net S emission (S total below 0): no exceedance", ""))
    und = np.select([acid_undetermined & nut_undetermined, acid_undetermined, nut_undetermined],
                    ["exceedances not determined (0 on the partial deposition)",
                     "acidity exceedance not determined (0 on the partial deposition)",
                     "nutrient-N exceedance not determined (0 on the partial deposition)"], "")
    acid_lb = lower & ~acid_undetermined & np.isfinite(ex.exceedance)
    nut_lb = lower_n & ~nut_undetermined & np.isfinite(nut)
    bound = _join(np.select([acid_lb & nut_lb, acid_lb, nut_lb],
                            ["exceedances are lower bounds (deposition partial)",
                             "acidity exceedance is a lower bound (deposition partial)",
                             "nutrient-N exceedance is a lower bound (N deposition partial)"],
                            ""), und)
    note = _join(pd.Series(np.where(none, NO_CRITICAL_LOADS, ""), dtype=object),
                 note, pd.Series(bound, dtype=object), pd.Series(net_note, dtype=object),
                 pd.Series(sea, dtype=object), pd.Series(no_acid, dtype=object),
                 t["_borrowed"], pd.Series(np.where(span & ~none, SPAN_NOTE, ""), dtype=object))
    t["note"] = note
    t = t.rename(columns={k: f"{k}_eq_ha_yr" for k in ACIDITY_KEYS + (NUTRIENT_KEY,)})
    extra = [f"{k}_eq_ha_yr" for k in ACIDITY_KEYS + (NUTRIENT_KEY,)] + [
        "s_reduction_eq_ha_yr", "n_reduction_eq_ha_yr", "note"]
    t = t[list(EXCEEDANCE_COLUMNS) + extra].reset_index(drop=True)
    t.attrs["lower_bound"] = lower
    t.attrs["lower_bound_n"] = lower_n
    return t


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
