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

Where the parts are: the function, its regions and the exceedance of one deposition
(:data:`REGIONS`, :func:`check_function`, :func:`acidity_exceedance`,
:func:`nutrient_n_exceedance`) in :mod:`workbench.analysis.exceedance_function`; the
probability of exceedance from Monte Carlo draws (:func:`exceedance_probability`) in
:mod:`workbench.analysis.exceedance_draws`.  The tables of a run (exceedance.csv:
:func:`exceedance_table`, :func:`exceedance_from_totals`) are here; this module
re-exports the others, so that ``workbench.analysis.exceedance.<name>`` keeps working.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..io.critical_loads import ACIDITY_KEYS, NUTRIENT_KEY
# the probability of exceedance from draws (defined here before)
from .exceedance_draws import DRAW_QUANTILES, DRAW_SUFFIXES, exceedance_probability  # noqa: F401
# the function, its regions and the exceedance of one deposition (defined here before)
from .exceedance_function import (ON_FUNCTION_RTOL, REGIONS, AcidityExceedance,  # noqa: F401
                                  ExceedanceError, _acidity_numpy, _check_deposition,
                                  _project, acidity_exceedance, check_function,
                                  nutrient_n_exceedance)


# ------------------------------------------------------------------ the table of a run
EXCEEDANCE_COLUMNS = ("site", "receptor", "period", "s_dep_eq_ha_yr", "n_dep_eq_ha_yr",
                      "ex_acidity_eq_ha_yr", "region", "ex_nutrient_n_eq_ha_yr", "status")


def annual_totals(result) -> pd.DataFrame:
    """Total S and N deposition per site, receptor and calendar year, and the span mean.

    Returns
    -------
    DataFrame
        site, receptor, period, ``s_dep_eq_ha_yr``, ``n_dep_eq_ha_yr`` [eq ha-1 yr-1],
        ``s_status``, ``n_status``, ``s_missing``, ``n_missing``, ``s_fails``,
        ``n_fails`` (the total fails completeness: budget.csv's ``passes`` false, not
        missing), ``s_failure``, ``n_failure`` (budget.csv's ``completeness_failure``:
        the first criterion failed, with its share and minimum) and ``s_basis``
        (budget.csv's ``sulfate_basis`` of the wet S sum: ``total`` where the wet S
        holds total SO4, sea salt included, e.g. a period whose non-sea-salt mean fell
        back for want of the sea-salt tracer; ``""`` where not known), ``s_components``,
        ``n_components`` (the components of the total that are filled or flagged, by
        status: "filled: SO2 pSO4"; :func:`_component_statuses`).
    """
    from ..tables import budget_table, span_table
    if result.options.get("resolution", "year") == "year":
        rows = result.table
    else:
        years = budget_table(result.years)
        rows = pd.concat([years, span_table(years)], ignore_index=True)
    tot = rows[(rows["pathway"] == "total") & (rows["species"] == "all")]
    keys = ["site", "receptor", "period"]
    comp_words = _component_statuses(rows, keys)
    parts = []
    for el in ("S", "N"):
        e = tot[tot["element"] == el].set_index(keys)
        miss = e["missing_components"] if "missing_components" in e else pd.Series("", e.index)
        # a total failing completeness (passes false; a span row, the mean of passing
        # years, has no passes of its own) was "flagged" here as one kept only to be
        # read with care, and its exceedance looked like a whole year's
        fails = (e["passes"].map(lambda v: str(v).lower() in ("false", "0"))
                 if "passes" in e else pd.Series(False, e.index)) & e["status"].ne("missing")
        why = (e["completeness_failure"].fillna("").astype(str)
               if "completeness_failure" in e else pd.Series("", e.index))
        parts.append(pd.DataFrame({f"{el.lower()}_dep_eq_ha_yr": e["flux_eq_ha_yr"],
                                   f"{el.lower()}_status": e["status"],
                                   f"{el.lower()}_missing": miss.fillna("").astype(str),
                                   f"{el.lower()}_fails": fails.astype(bool),
                                   f"{el.lower()}_failure": why.where(fails, ""),
                                   f"{el.lower()}_components": comp_words.get(
                                       el, pd.Series(dtype=object)).reindex(e.index)
                                   .fillna("").astype(str)}))
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


def _component_statuses(rows: pd.DataFrame, keys) -> dict:
    """Per element, the components of each (site, receptor, period) whose status is not
    complete, by status: "filled: SO2 pSO4" or "flagged: SO4; filled: HNO3" (a
    ``filled`` or ``flagged`` total said only "S total filled" before, not which of its
    components nor where to read why: budget.csv's rows of those components).

    Returns
    -------
    dict of str to pandas.Series
        Element -> words indexed by `keys` (absent where every component is complete).
    """
    if not {"pathway", "species", "status", "element"} <= set(rows.columns):
        return {}
    c = rows[rows["pathway"].isin(["wet", "dry"]) & (rows["species"] != "all")
             & rows["status"].isin(["flagged", "filled"])]
    if c.empty:
        return {}
    c = c.drop_duplicates(keys + ["element", "pathway", "species"])
    by_status = (c.groupby(keys + ["element", "status"], sort=False)["species"]
                 .agg(" ".join).reset_index())
    by_status["_w"] = by_status["status"].astype(str) + ": " + by_status["species"]
    # flagged first, then filled
    by_status = by_status.sort_values("status", key=lambda s: s.map({"flagged": 0,
                                                                   "filled": 1}),
                                      kind="stable")
    words = by_status.groupby(keys + ["element"], sort=False)["_w"].agg("; ".join)
    return {el: w.droplevel("element") for el, w in words.groupby(level="element")}


def _join(*notes) -> np.ndarray:
    """Notes joined element-wise with "; ", empty ones left out."""
    cols = [pd.Series(n, dtype=object).fillna("").astype(str).to_numpy() for n in notes]
    return np.array(["; ".join(v for v in row if v) for row in zip(*cols)], dtype=object)


#: The note of an exceedance resting on a total that fails completeness (after the
#: totals named "S total fails completeness (<the first criterion failed>)").
FAILS_NOTE = ("a total failing completeness is no whole figure for its period, and neither "
              "is the exceedance (a 0 may miss one); the span mean leaves the year out")


def _fails(frame: pd.DataFrame, el: str) -> np.ndarray:
    """The `el` (``s`` or ``n``) total of each row fails completeness (False where the
    frame does not say)."""
    col = f"{el}_fails"
    return (frame[col].fillna(False).astype(bool).to_numpy() if col in frame
            else np.zeros(len(frame), bool))


def _status(frame: pd.DataFrame):
    """Status, note and ``passes`` of an exceedance from the S and N totals.

    A total failing completeness keeps the status ``flagged`` (budget.csv's word) and
    is named in the note with the first criterion failed, then :data:`FAILS_NOTE`; it was
    "S total flagged", the words of a total only to be read with care.  ``passes``:
    both totals are there and pass completeness (budget.csv's ``passes``).
    """
    st = frame[["s_status", "n_status"]].astype(str)
    status = np.select([st.eq("missing").any(axis=1), st.isin(["partial", "flagged"]).any(axis=1),
                        st.eq("filled").any(axis=1)], ["missing", "flagged", "filled"], "complete")
    notes = []
    for el in ("s", "n"):
        s = frame[f"{el}_status"].astype(str).reset_index(drop=True)
        m = frame[f"{el}_missing"].astype(str).reset_index(drop=True)
        fails = _fails(frame, el)
        why = (frame[f"{el}_failure"].fillna("").astype(str).reset_index(drop=True)
               if f"{el}_failure" in frame else pd.Series("", s.index))
        why = why.where(why != "", "a criterion of budget.csv")
        said = pd.Series(np.where(fails, "fails completeness (" + why + ")", s), dtype=object)
        comps = (frame[f"{el}_components"].fillna("").astype(str).reset_index(drop=True)
                 if f"{el}_components" in frame else pd.Series("", s.index))
        # which components a filled or flagged total holds so (budget.csv's notes of
        # those rows say why)
        comps = comps.where(~fails & s.isin(["filled", "flagged"]).to_numpy(), "")
        text = (f"{el.upper()} total " + said
                + np.where(comps != "", " (" + comps + ")", "")
                + np.where(m != "", " (without " + m + ")", ""))
        # a filled total is named too: the row's status "filled" had an empty note
        notes.append(text.where(s.isin(["partial", "flagged", "missing", "filled"]) | fails, ""))
    failing = _fails(frame, "s") | _fails(frame, "n")
    notes.append(np.where(failing, FAILS_NOTE, ""))
    passes = ~st.eq("missing").any(axis=1).to_numpy() & ~failing
    return status, _join(*notes), passes


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
        :data:`EXCEEDANCE_COLUMNS`, then the loads, the S and N reductions, ``passes``
        (both totals there and passing completeness, as budget.csv's ``passes``; a
        total failing it is named in the note with the criterion, :data:`FAILS_NOTE`)
        and a note.
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
    t["status"], note, t["passes"] = _status(t)
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
        "s_reduction_eq_ha_yr", "n_reduction_eq_ha_yr", "passes", "note"]
    t = t[list(EXCEEDANCE_COLUMNS) + extra].reset_index(drop=True)
    t.attrs["lower_bound"] = lower
    t.attrs["lower_bound_n"] = lower_n
    return t
