"""The whole span of ``budget.csv``: the mean of the years that pass completeness, with
the years used and excluded and the notes of those years (:func:`span_table`).

Part of :mod:`workbench.tables` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .budgetstatus import join_notes, split_notes
from .tables_budget import BUDGET_COLUMNS, SULFATE_BASIS_WORDS


def fullest_years(ok, missing) -> np.ndarray:
    """The passing years whose total holds every component any passing year holds.

    A long record may have years with wet deposition only (air measured from a later
    year on): such a year's total passes (``partial``) but is a smaller sum, and a mean
    over it and the years with a dry part would mix two sums.  A passing year is kept
    when its missing components are those missing in every passing year.

    Parameters
    ----------
    ok : array of bool, shape (..., year)
        The years that pass.
    missing : array of str, shape (..., year)
        Space-separated missing components of each year's total ("" or NaN: none).

    Returns
    -------
    ndarray of bool, shape (..., year)
    """
    ok = np.asarray(ok, bool)
    miss = np.asarray(missing, dtype=object)
    sets = np.empty(miss.shape, dtype=object)
    sets.reshape(-1)[:] = [frozenset(str(m).split()) if isinstance(m, str) else frozenset()
                           for m in miss.reshape(-1)]
    out = ok.copy()
    flat_ok, flat_sets, flat_out = (a.reshape(-1, a.shape[-1]) for a in (ok, sets, out))
    for r in range(flat_ok.shape[0]):          # per series (site, receptor): a few years
        used = [flat_sets[r, y] for y in np.flatnonzero(flat_ok[r])]
        if used:
            common = frozenset.intersection(*used)
            flat_out[r] = flat_ok[r] & np.array([st == common for st in flat_sets[r]])
    return flat_out.reshape(ok.shape)


#: What the status of a whole-span row means (the demo's console line under its span
#: table, report.html under its "Whole span" table).  A span row averages only the years
#: that pass completeness (``years_used``): its ``flagged`` never means that it fails
#: completeness, but that a year it uses passes while holding something to read with care
#: (kept flagged samples, a sulfate fallback);
#: the per-period legend's "fails completeness" read there made a flagged row listing
#: every year look like a mean over failing years.
SPAN_STATUS_WORDS = (
    "complete (every component, every year used passes completeness); filled (gaps "
    "filled in a year used); partial (a component has no data: missing_components names "
    "it, here and per year in budget.csv); flagged (every year in years_used passes "
    "completeness, but a component of one is flagged for another reason to read with "
    "care, e.g. flagged samples kept or total sulfate for want of a sea-salt tracer: the "
    "notes of budget.csv and report.html say which year and why). A year that fails "
    "completeness is never in the mean: years_excluded lists it")

#: Note of a span row whose years left out hold fewer components (:func:`fullest_years`).
FEWER_PARTS_NOTE = "years left out for a smaller sum (without {}): {}"


def span_table(year_table: pd.DataFrame) -> pd.DataFrame:
    """The whole span: the mean of the years that pass completeness.

    A year passes for an element when the element's total passes completeness (the
    ``passes`` column; without it, a total neither ``flagged`` nor ``missing``):
    ``partial`` passes (it says which components are absent, not that the present
    ones are incomplete), and so does a total ``flagged`` only because kept samples
    failed a check or the sulfate basis fell back (its span row stays ``flagged``).
    The rows list the years used and excluded, and the components missing and flagged
    in any year used (``missing_components``, ``flagged_components``: the union over
    those years, in component order), so that a ``partial`` span row says what it lacks,
    and the notes of those years with the years that carry each (``note``,
    :func:`_notes_by_year`), so that a ``flagged`` span row says why.
    A passing year whose total lacks a component other passing years hold (a year of
    wet deposition only, before the air was measured) is excluded
    (:func:`fullest_years`) and the span row's ``note`` names those years first.
    """
    t = year_table.copy()
    t["year"] = t["period_start"].dt.year
    tot = t[(t["pathway"] == "total") & (t["species"] == "all")]
    passes = (tot["passes"].astype(bool) if "passes" in tot
              else ~tot["status"].isin(["flagged", "missing"]))
    left_out = _left_out_notes(tot, passes, t)
    fewer = pd.Series("", index=tot.index, dtype=object)
    if "missing_components" in tot and len(tot):
        by3 = ["site", "receptor", "element"]
        g = tot.assign(_p=passes.to_numpy()).groupby(by3, sort=False)
        for _, idx in g.indices.items():        # per series: a few tens of years
            rows = tot.iloc[idx]
            keep = fullest_years(passes.iloc[idx].to_numpy(),
                                 rows["missing_components"].to_numpy(dtype=object))
            drop = passes.iloc[idx].to_numpy() & ~keep
            if drop.any():
                common = set.intersection(*[set(str(m).split()) if isinstance(m, str) else set()
                                            for m in rows["missing_components"].to_numpy()[keep]]
                                          ) if keep.any() else set()
                lacks = sorted(set().union(*[set(str(m).split()) for m in
                                             rows["missing_components"].to_numpy()[drop]])
                               - common)
                fewer.iloc[idx] = FEWER_PARTS_NOTE.format(
                    " ".join(lacks), " ".join(str(y) for y in rows["year"].to_numpy()[drop]))
            passes.iloc[idx] = keep
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
    notes = tot.assign(_n=fewer)[["site", "receptor", "element", "_n"]]
    notes = notes[notes["_n"] != ""].drop_duplicates(["site", "receptor", "element"])
    if len(notes):
        agg = agg.merge(notes, on=by, how="left")
        agg["note"] = agg["_n"].astype(object).fillna("")
        agg = agg.drop(columns="_n")
    agg["flux_kg_ha"] = agg["flux_kg_ha_yr"]
    agg["flux_eq_ha"] = agg["flux_eq_ha_yr"]
    agg["period"] = "span"
    order = {sp: i for i, sp in enumerate(pd.unique(t.loc[t["species"] != "all", "species"]))}
    for col in ("missing_components", "flagged_components"):
        agg[col] = _union_of_parts(used, keys, col, order).reindex(
            pd.MultiIndex.from_frame(agg[keys])).fillna("").to_numpy(dtype=object)
    yearly = _notes_by_year(used, keys).reindex(
        pd.MultiIndex.from_frame(agg[keys])).fillna("").to_numpy(dtype=object)
    fewer_note = (agg["note"].fillna("").to_numpy(dtype=object) if "note" in agg
                  else np.full(len(agg), "", dtype=object))
    # why each year failing completeness is left out (years_excluded lists it alone)
    why_out = left_out.reindex(pd.MultiIndex.from_frame(agg[by])).fillna("").to_numpy(
        dtype=object)
    agg["note"] = join_notes(join_notes(why_out, fewer_note), yearly)
    cols = list(BUDGET_COLUMNS) + ["period", "years_used", "years_excluded",
                                   "missing_components", "flagged_components", "note"]
    if "sulfate_basis" in used:
        # the span mean of wet S is total SO4 if any year used holds total SO4
        word = used["sulfate_basis"].fillna("").astype(str)
        basis = word.map({"": 0, SULFATE_BASIS_WORDS["nss"]: 1,
                          SULFATE_BASIS_WORDS["total"]: 2}).fillna(0)
        top = used.assign(_b=basis).groupby(keys, sort=False)["_b"].max()
        top = top.reindex(pd.MultiIndex.from_frame(agg[keys])).fillna(0).to_numpy()
        agg["sulfate_basis"] = np.select([top == 2, top == 1], [
            SULFATE_BASIS_WORDS["total"], SULFATE_BASIS_WORDS["nss"]], "").astype(object)
        cols.append("sulfate_basis")
    return agg[cols]


#: The words of a span row's note on a year left out for failing completeness, with
#: every criterion its components fail (:func:`_year_failures`), or budget.csv's
#: ``completeness_failure`` of that year's total (or its status).
LEFT_OUT_NOTE = "{year} left out: {why}"

#: The completeness criteria a component's note may hold beside its first one
#: (``completeness_failure``), each with its measured share and minimum: those of the
#: wet chain (:func:`workbench.wet.deposition.wet_deposition`), the share of the rain
#: with a valid ion (:func:`workbench.budgetstatus.wet_mean_status`) and of the dry
#: components (:func:`workbench.budgetstatus_dry.dry_failure_words`, whose "a season
#: without concentrations" stands in the note).  A pattern ends at the parenthesis
#: closing the share, so that what follows it (the samples a coverage misses) is left
#: to the yearly row.
CRITERIA_PATTERN = (
    r"((?:gauge record|sample coverage|valid-chemistry precipitation|air coverage"
    r"|hours with a known flux) below minimum \([^()]*\)"
    r"|too few valid samples \([^()]*\)"
    r"|\w+ valid for [0-9.]+ % of the precipitation only \(minimum [^()]*\)"
    r"|a season without concentrations)")


def _year_failures(t: pd.DataFrame, out: pd.DataFrame) -> pd.Series:
    """Every completeness criterion the components of each year left out fail, by the
    species failing the same ones, per row of `out` (the totals of those years):
    "SO4: gauge record below minimum (1.8 % of the period; minimum 90 %), sample
    coverage below minimum (1.8 % of the period; minimum 90 %); SO2 pSO4: air coverage
    below minimum (1.8 % of the period; minimum 75 %), a season without
    concentrations" ('' where no component row says one: the total's words stand).

    Before, the span row named the first criterion of the first failing component
    only (the gauge record, not the same year's 1.8 % air coverage).  String
    operations over the component rows of the years left out, no loop over rows."""
    by = ["site", "receptor", "element", "year"]
    if "completeness_failure" not in t or out.empty:
        return pd.Series("", index=out.index, dtype=object)
    comp = t[(t["pathway"].isin(["wet", "dry"])) & (t["species"] != "all")]
    comp = comp.merge(out[by].drop_duplicates(), on=by)
    first = comp["completeness_failure"].fillna("").astype(str)
    comp = comp[first != ""]
    if comp.empty:
        return pd.Series("", index=out.index, dtype=object)
    # the first criterion, then those the note adds (each once, in order)
    text = (comp["completeness_failure"].astype(str) + " | "
            + (comp["note"].fillna("").astype(str) if "note" in comp else ""))
    found = text.str.extractall(CRITERIA_PATTERN)[0].rename("_c").reset_index(level=1)
    head = comp["completeness_failure"].astype(str).rename("_c").to_frame().assign(match=-1)
    crit = pd.concat([head, found]).sort_values("match", kind="stable")
    crit = crit.reset_index().drop_duplicates(["index", "_c"])
    per = crit.groupby("index", sort=False)["_c"].agg(", ".join)
    comp = comp.assign(_c=per.reindex(comp.index).to_numpy(), _o=np.arange(len(comp)))
    # the species failing the same criteria, in component order
    grouped = (comp.groupby(by + ["_c"], sort=False)
               .agg(_s=("species", " ".join), _o=("_o", "min")).reset_index()
               .sort_values("_o", kind="stable"))
    grouped["_t"] = grouped["_s"] + ": " + grouped["_c"]
    words = grouped.groupby(by, sort=False)["_t"].agg("; ".join)
    return pd.Series(words.reindex(pd.MultiIndex.from_frame(out[by])).fillna("")
                     .to_numpy(dtype=object), index=out.index)


def _left_out_notes(tot: pd.DataFrame, passes: pd.Series, t: pd.DataFrame | None = None
                    ) -> pd.Series:
    """Per (site, receptor, element), why each year whose total fails completeness is
    left out of the span mean: "2021 left out: fails completeness (SO4: gauge record
    below minimum (1.8 % of the period; minimum 90 %), sample coverage below minimum
    (...); SO2 pSO4: air coverage below minimum (1.8 % of the period; minimum 75 %),
    ...)" (every criterion the components of `t`, the yearly rows, fail:
    :func:`_year_failures`), "2019 left out: missing"; '; '-joined in year order.
    Before, years_excluded named the year and no note said why, and then the note
    named the first criterion only.  The loop runs over the excluded site-years, never
    over hours."""
    by = ["site", "receptor", "element"]
    out = tot.loc[~passes.to_numpy(), by + ["year", "status"]
                  + (["completeness_failure"] if "completeness_failure" in tot else [])]
    if out.empty:
        return pd.Series(dtype=object, index=pd.MultiIndex.from_tuples([], names=by))
    why = (out["completeness_failure"].fillna("").astype(str)
           if "completeness_failure" in out else pd.Series("", index=out.index))
    every = _year_failures(t, out) if t is not None else pd.Series("", index=out.index)
    why = why.where(every == "", every)
    status = out["status"].astype(str)
    words = np.where(why != "", "fails completeness (" + why + ")",
                     np.where(status == "missing", "missing", "fails completeness"))
    text = [LEFT_OUT_NOTE.format(year=int(y), why=w)
            for y, w in zip(out["year"].to_numpy(), words)]
    return (out.assign(_t=text).sort_values("year", kind="stable")
            .groupby(by, sort=False)["_t"].agg("; ".join))


def _notes_by_year(rows: pd.DataFrame, keys) -> pd.Series:
    """The span row's ``note``: the yearly rows' notes over the years used, each note
    once with the years that carry it (``2017 2019: 1 week without a usable
    precipitation sample (...)``; ``every year used: not measured at the site (...)`` when each
    year used carries it), joined with "; " in the order of their first year.

    A yearly note of several parts ("; "-joined, :func:`workbench.budgetstatus.join_notes`)
    counts part by part, so a part shared by some years is listed once.  Only the words
    of the yearly rows are used; years without a note add nothing (``years_used`` lists
    them).  Indexed by `keys`; groups without a note are left out.  The loop runs over
    the rows that carry a note (a few per site and component), never over hours."""
    empty = pd.Series(dtype=object, index=pd.MultiIndex.from_tuples([], names=keys))
    if "note" not in rows:
        return empty
    note = rows["note"].fillna("").astype(str).to_numpy(dtype=object)
    has = note != ""
    if not has.any():
        return empty
    n_years = rows.groupby(keys, sort=False)["year"].nunique()
    n_years = dict(zip(n_years.index, n_years.to_numpy()))
    noted = rows.loc[has, keys]
    by_key: dict = {}                 # key -> part -> set of years (parts in first order)
    for key, year, text in zip(zip(*(noted[k].to_numpy() for k in keys)),
                               rows.loc[has, "year"].to_numpy(), note[has]):
        parts = by_key.setdefault(key, {})
        for part in split_notes(text):
            if part.strip():
                parts.setdefault(part, set()).add(int(year))
    out = {}
    for key, parts in by_key.items():
        items = sorted(parts.items(), key=lambda kv: min(kv[1]))      # stable: ties keep order
        out[key] = "; ".join(
            ("every year used" if len(ys) == n_years[key] else " ".join(map(str, sorted(ys))))
            + ": " + part for part, ys in items)
    return pd.Series(list(out.values()), dtype=object,
                     index=pd.MultiIndex.from_tuples(list(out), names=keys))


def _union_of_parts(rows: pd.DataFrame, keys, col: str, order: dict) -> pd.Series:
    """The space-joined component names of `col` over the rows of each `keys` group:
    each name once, in component order (`order`: name -> position).  Indexed by `keys`;
    groups without a name are left out."""
    if col not in rows:
        return pd.Series(dtype=object, index=pd.MultiIndex.from_tuples([], names=keys))
    names = rows[keys + [col]].assign(**{col: rows[col].fillna("").astype(str).str.split()})
    names = names.explode(col).dropna(subset=[col])
    names = names[names[col] != ""].drop_duplicates()
    pos = names[col].map(order).fillna(len(order))
    names = names.assign(_pos=pos).sort_values(keys + ["_pos", col], kind="stable")
    return names.groupby(keys, sort=False)[col].agg(" ".join)
