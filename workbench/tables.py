"""Tidy tables of a budget for export and display (``budget.csv``, ``summary.csv``,
the span mean)."""
from __future__ import annotations

import json

import numpy as np
import pandas as pd
import xarray as xr

from .budgetstatus import as_flag, join_notes, split_notes
from .units import deposition_in, element_deposition_in
from .wet.qa import UMOL_L_PER_MOL_M3

#: The first columns of budget.csv, in this order (a public interface).
BUDGET_COLUMNS = ("site", "receptor", "period_start", "period_end", "element", "pathway",
                  "species", "flux_kg_ha", "flux_eq_ha", "flux_kg_ha_yr", "flux_eq_ha_yr",
                  "completeness", "status")


def _labels(values, index=None):
    """Text `values` (a few labels, taken at `index`) as an object array whose equal cells
    share one ``str`` object.

    A fixed-width text array (``<U``) becomes one new ``str`` per cell in a DataFrame
    column (about 50 bytes each); shared objects cost the 8-byte reference only: the
    month rows of 1,000 site-years took about 200 MB less at their peak.  The cells and
    their order are unchanged; arrays of another kind are returned as given (indexed)."""
    values = np.asarray(values)
    if values.dtype.kind != "U":
        return values if index is None else values[index]
    if index is None:          # many cells of a few labels: one object per distinct label
        uniq, inv = np.unique(values, return_inverse=True)
        return uniq.astype(object)[inv.reshape(-1)]
    return values.astype(object)[index]


def _rows(ds: xr.Dataset, dep_var, status_var, compl_var, comp_dim, element, pathway, species,
          missing_var=None, flagged_var=None, lean=False):
    d = ds[dep_var].transpose("site", "receptor", "period", comp_dim)
    n_s, n_r, n_p, n_c = d.shape
    if lean:                     # the columns of a trend, only the rows of active pairs
        active = np.broadcast_to(ds["active"].values[:, :, None, None], d.shape)
        sel = np.flatnonzero(active.reshape(-1))
        idx = np.unravel_index(sel, d.shape)
        el = _labels(element, idx[3])
        values = d.values.reshape(-1)[sel]
        kg = np.where(el == "S", element_deposition_in(values, "S", "kg_ha"),
                      element_deposition_in(values, "N", "kg_ha"))
        fac = ds["annual_factor"].values[idx[2]]
        return pd.DataFrame({
            "site": _labels(ds["site"].values, idx[0]),
            "receptor": _labels(ds["receptor"].values, idx[1]),
            "period_start": pd.to_datetime(ds["period_start"].values[idx[2]]),
            "element": el, "pathway": _labels(pathway, idx[3]),
            "species": _labels(species, idx[3]), "flux_kg_ha_yr": kg * fac,
            "status": _labels(ds[status_var].transpose("site", "receptor", "period",
                                                       comp_dim).values.reshape(-1)[sel]),
            "period": _labels(ds["period"].values, idx[2])})
    idx = np.indices((n_s, n_r, n_p, n_c)).reshape(4, -1)
    el = np.asarray(element)[idx[3]]
    values = d.values.reshape(-1)
    kg = np.where(el == "S", element_deposition_in(values, "S", "kg_ha"),
                  element_deposition_in(values, "N", "kg_ha"))
    active = ds["active"].values[idx[0], idx[1]]
    eq = np.where(el == "S", element_deposition_in(values, "S", "eq_ha"),
                  element_deposition_in(values, "N", "eq_ha"))
    mmol = element_deposition_in(values, "N", "mmol_m2")
    fac = ds["annual_factor"].values[idx[2]]
    frame = pd.DataFrame({
        "site": _labels(ds["site"].values, idx[0]),
        "receptor": _labels(ds["receptor"].values, idx[1]),
        "period_start": pd.to_datetime(ds["period_start"].values[idx[2]]),
        "period_end": pd.to_datetime(ds["period_end"].values[idx[2]]),
        "element": _labels(element, idx[3]), "pathway": _labels(pathway, idx[3]),
        "species": _labels(species, idx[3]),
        "flux_kg_ha": kg, "flux_eq_ha": eq, "flux_kg_ha_yr": kg * fac, "flux_eq_ha_yr": eq * fac,
        "completeness": ds[compl_var].transpose("site", "receptor", "period", comp_dim).values.reshape(-1),
        "status": _labels(ds[status_var].transpose("site", "receptor", "period",
                                                   comp_dim).values.reshape(-1)),
        "flux_mmol_m2": mmol, "period": _labels(ds["period"].values, idx[2]),
    })
    for extra in ("wet_gauge_fraction", "wet_coverage_fraction", "wet_valid_precip_fraction",
                  "wet_flagged_precip_fraction", "air_coverage", "vd_coverage", "flux_coverage",
                  "note"):
        if extra in ds and comp_dim in ds[extra].dims:
            frame[extra] = _labels(ds[extra].transpose("site", "receptor", "period",
                                                       comp_dim).values.reshape(-1))
    if comp_dim == "total" and "total_note" in ds:     # a changed surface or collector
        frame["note"] = _labels(ds["total_note"].transpose("site", "receptor", "period",
                                                           "total").values.reshape(-1))

    def flat(var):
        return ds[var].transpose("site", "receptor", "period", comp_dim).values.reshape(-1)
    frame["missing_components"] = _labels(flat(missing_var)) if missing_var else ""
    frame["flagged_components"] = (_labels(flat(flagged_var)) if flagged_var and flagged_var in ds
                                   else "")
    if "total_passes" in ds and comp_dim == "total":
        frame["passes"] = flat("total_passes").astype(bool)
    else:
        frame["passes"] = ~np.isin(frame["status"].to_numpy(), ("flagged", "missing"))
    if "fails_completeness" in ds and comp_dim == "component":
        frame["passes"] = (~flat("fails_completeness").astype(bool)
                           & (frame["status"] != "missing"))
    return frame[active]


def budget_table(ds: xr.Dataset, lean: bool = False) -> pd.DataFrame:
    """One row per site, receptor, period and component, then the sums.

    Columns start with :data:`BUDGET_COLUMNS`; ``species`` is ``all`` on the rows that
    sum a pathway (``wet``, ``dry``) or the ``total``.  With `lean`, only the columns
    a trend reads (site, receptor, period_start, element, pathway, species,
    flux_kg_ha_yr [kg ha-1 yr-1], status, period), the same rows in the same order:
    for the monthly trends of a large network, without the wide table.
    """
    comps = _rows(ds, "deposition", "status", "completeness", "component",
                  ds["element"].values, ds["pathway"].values, ds["species"].values,
                  lean=lean)
    tot_names = ds["total"].values
    totals = _rows(ds, "total_deposition", "total_status", "total_completeness", "total",
                   [t.split("_")[0] for t in tot_names], [t.split("_")[1] for t in tot_names],
                   ["all"] * len(tot_names), "total_missing_components",
                   "total_flagged_components", lean=lean)
    frame = pd.concat([comps, totals], ignore_index=True)
    del comps, totals
    if lean:
        return _sorted(frame)
    basis = "nss"
    if "options" in ds.attrs:
        basis = json.loads(ds.attrs["options"]).get("sulfate_basis", "nss")
    frame = _wet_columns(ds, frame, basis)
    frame = _sum_notes(_nh3_columns(ds, frame))
    return _sorted(frame.assign(sulfate_basis=_sulfate_basis(ds, frame, basis)))


#: The keys of one sum row's parts: same site, receptor, period and element.
_SUM_KEYS = ["site", "receptor", "period_start", "element"]


def _sum_notes(frame: pd.DataFrame) -> pd.DataFrame:
    """`frame` with the ``note`` of each sum row (``species`` ``all``) gathering the
    notes of its parts: the rows of its element (and period, site, receptor) in its
    pathway (``wet``, ``dry``), or in both for the ``total``.  Each note part
    ("; "-joined, :func:`workbench.budgetstatus.join_notes`) is said once, after the
    species that carry it, in the order the parts first come (``SO2 pSO4: not measured
    at the site (...)``); a sum row's own note, if any, comes first.  Vectorized over the
    rows that carry a note; the groups are joined by pandas, never a loop over hours."""
    if "note" not in frame:
        return frame
    note = frame["note"].fillna("").astype(str)
    frame = frame.assign(note=note.to_numpy(dtype=object))
    part_of = (frame["species"] != "all").to_numpy() & (note != "").to_numpy()
    if not part_of.any():
        return frame
    rows = frame.loc[part_of, _SUM_KEYS + ["pathway", "species"]].assign(
        _part=note[part_of].map(split_notes))
    rows = rows.explode("_part")
    rows = rows[rows["_part"].str.strip() != ""]
    both = pd.concat([rows, rows.assign(pathway="total")], ignore_index=True)
    both["_o"] = np.arange(len(both))
    both = both.drop_duplicates(_SUM_KEYS + ["pathway", "_part", "species"])
    by = _SUM_KEYS + ["pathway"]
    named = both.groupby(by + ["_part"], sort=False).agg(
        species=("species", " ".join), _o=("_o", "min")).reset_index()
    named = named.sort_values("_o", kind="stable")
    named["_text"] = named["species"] + ": " + named["_part"]
    gathered = named.groupby(by, sort=False)["_text"].agg("; ".join).rename("_gathered")
    sums = frame.loc[frame["species"] == "all", by]
    got = sums.join(gathered, on=by)["_gathered"].fillna("").to_numpy(dtype=object)
    own = frame.loc[frame["species"] == "all", "note"].to_numpy(dtype=object)
    joined = join_notes(own, got)
    note = frame["note"].to_numpy(dtype=object).copy()
    note[(frame["species"] == "all").to_numpy()] = joined
    return frame.assign(note=note)


def _sorted(frame: pd.DataFrame) -> pd.DataFrame:
    """Rows by site, receptor, period start, element, then wet, dry, total (components
    before their sum)."""
    order = {"wet": 0, "dry": 1, "total": 2}
    o = frame["pathway"].map(order) + (frame["species"] == "all") * 0.5
    keys = ["site", "receptor", "period_start", "element"]
    idx = frame[keys].assign(_o=o).sort_values(keys + ["_o"], kind="stable").index
    return frame.take(idx).reset_index(drop=True)


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
    agg["note"] = join_notes(fewer_note, yearly)
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


def _notes_by_year(rows: pd.DataFrame, keys) -> pd.Series:
    """The span row's ``note``: the yearly rows' notes over the years used, each note
    once with the years that carry it (``2017 2019: precipitation: 1 week without a
    usable sample (...)``; ``every year used: not measured at the site (...)`` when each
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


#: ``sulfate_basis`` of budget.csv: what the wet S rows (labelled ``SO4``) hold.
SULFATE_BASIS_WORDS = {"nss": "non-sea-salt", "total": "total"}
def _sulfate_basis(ds: xr.Dataset, frame: pd.DataFrame, basis: str) -> np.ndarray:
    """``non-sea-salt`` or ``total`` on the wet S rows (the SO4 component and the wet S
    sum, which is that SO4), empty on the others: the component keeps the label
    ``SO4`` (a public key of budget.csv, trends.csv and the comparison tables) and this
    column says which sulfate it holds.  ``total`` where the budget's
    ``wet_sulfate_total`` (site, period) says the wet S component holds total SO4
    (:func:`workbench.budgetstatus.wet_sulfate_total`: the total basis, no non-sea-salt
    mean in the record, or a period whose mean fell back for want of the tracer; such a
    row is flagged and its note says why), else ``non-sea-salt``.  The flag, not the
    words of the note, decides (before 2026-12 the note was searched for its sentence).
    A Dataset without the flag (no wet chain) is labelled from the basis and the wet
    ions alone.  Before 2026-12 the rows said ``SO4`` only, whatever they held."""
    rows = ((frame["element"].astype(str) == "S") & (frame["pathway"].astype(str) == "wet")
            & frame["species"].astype(str).isin(("SO4", "all"))).to_numpy()
    if "wet_sulfate_total" in ds:
        sites = pd.Index(ds["site"].values.astype(str))
        periods = pd.Index(ds["period"].values.astype(str))
        si = sites.get_indexer(frame["site"].astype(str))
        pi = periods.get_indexer(frame["period"].astype(str))
        flag = as_flag(ds["wet_sulfate_total"].transpose("site", "period").values)
        at = rows & (si >= 0) & (pi >= 0)
        total = np.zeros(len(frame), bool)
        total[at] = flag[si[at], pi[at]]
        total |= rows & ~at & (basis != "nss")
    else:
        ions = list(ds["wet_ion"].values.astype(str)) if "wet_ion" in ds.coords else []
        have_nss = "nssSO4" in ions or "dep_nssSO4" in ds.variables
        total = np.full(len(frame), not (basis == "nss" and have_nss))
    return np.where(rows, np.where(total, SULFATE_BASIS_WORDS["total"],
                                   SULFATE_BASIS_WORDS["nss"]), "").astype(object)


def _wet_columns(ds: xr.Dataset, frame: pd.DataFrame, basis: str) -> pd.DataFrame:
    """Add the wet chain's period values to the wet rows of a budget table.

    ``precipitation_mm`` [mm], ``pwm_umol_L`` (precipitation-weighted mean of the
    row's ion [umol L-1]; non-sea-salt for SO4 on the nss basis; NaN on the sums),
    ``pH_pwm`` [1] and ``wet_H_eq_ha`` (free acidity H+ deposited [eq ha-1]).
    """
    cols = ("precipitation_mm", "pwm_umol_L", "pH_pwm", "wet_H_eq_ha")
    if "precipitation" not in ds:
        return frame.assign(**{c: np.nan for c in cols})
    sites = pd.Index(ds["site"].values.astype(str))
    periods = pd.Index(ds["period"].values.astype(str))
    si = sites.get_indexer(frame["site"].astype(str))
    pi = periods.get_indexer(frame["period"].astype(str))
    wet = (frame["pathway"] == "wet").to_numpy() & (si >= 0) & (pi >= 0)
    s, p = np.where(wet, si, 0), np.where(wet, pi, 0)

    def pick(var):
        return np.where(wet, ds[var].transpose("site", "period").values[s, p], np.nan)
    out = {"precipitation_mm": pick("precipitation"), "pH_pwm": pick("pH_pwm")}
    h = pick("wet_H_deposition")
    out["wet_H_eq_ha"] = deposition_in(h, "H", "eq_ha")
    ions = list(ds["wet_ion"].values.astype(str)) if "wet_ion" in ds.coords else []
    want = frame["species"].astype(str).to_numpy().copy()
    if basis == "nss":
        want = np.where((want == "SO4") & ("nssSO4" in ions), "nssSO4", want)
    k = pd.Index(ions).get_indexer(want) if ions else np.full(len(frame), -1)
    pwm = ds["pwm"].transpose("site", "period", "wet_ion").values if ions else None
    out["pwm_umol_L"] = (np.where(wet & (k >= 0), pwm[s, p, np.clip(k, 0, None)], np.nan)
                         * UMOL_L_PER_MOL_M3 if ions else np.full(len(frame), np.nan))
    return frame.assign(**out)


def _nh3_columns(ds: xr.Dataset, frame: pd.DataFrame) -> pd.DataFrame:
    """The two NH3 figures on the rows that hold NH3: the dry NH3 component and the
    N dry and total sums.

    ``nh3_figure`` (``net`` or ``deposition_only``: which NH3 figure the row's flux
    uses), ``nh3_net_kg_ha`` and ``nh3_deposition_only_kg_ha`` [kg N ha-1] (the
    period's NH3 figures), and ``flux_kg_ha_nh3_deposition_only`` [kg N ha-1] (the
    row's flux with the deposition-only NH3 figure in place of the net); empty or NaN
    on the other rows.
    """
    cols = ("nh3_net_kg_ha", "nh3_deposition_only_kg_ha", "flux_kg_ha_nh3_deposition_only")
    if "nh3_deposition_only" not in ds:
        return frame.assign(nh3_figure="", **{c: np.nan for c in cols})
    figure = ds.attrs.get("nh3_figure", "deposition_only")
    sp, pw = frame["species"].astype(str), frame["pathway"].astype(str)
    sums = (sp == "all") & pw.isin(["dry", "total"])
    rows = ((frame["element"] == "N") & ((sp == "NH3") | sums)).to_numpy()
    si = pd.Index(ds["site"].values.astype(str)).get_indexer(frame["site"].astype(str))
    ri = pd.Index(ds["receptor"].values.astype(str)).get_indexer(frame["receptor"].astype(str))
    pi = pd.Index(ds["period"].values.astype(str)).get_indexer(frame["period"].astype(str))
    rows = rows & (si >= 0) & (ri >= 0) & (pi >= 0)

    def pick(var):
        v = ds[var].transpose("site", "receptor", "period").values
        return np.where(rows, element_deposition_in(v[si, ri, pi], "N", "kg_ha"), np.nan)
    net, only = pick("nh3_net"), pick("nh3_deposition_only")
    flux = frame["flux_kg_ha"].to_numpy(dtype=float)
    swap = np.where(np.isfinite(net), flux - net + np.where(np.isfinite(only), only, 0.0), flux)
    return frame.assign(nh3_figure=np.where(rows, figure, ""), nh3_net_kg_ha=net,
                        nh3_deposition_only_kg_ha=only,
                        flux_kg_ha_nh3_deposition_only=np.where(rows, swap, np.nan))


def summary_table(result) -> pd.DataFrame:
    """summary.csv: one row per configured (site, receptor) pair and period.

    Only the surfaces a site asks for (the ``active`` pairs of the budget); the
    derived quantities (oxidized and reduced N, potential acidity, shares, the dry
    N bracket), the S and N totals with their status and the components they
    lack or flag, and the wet chain's precipitation depth [mm], pH of the
    precipitation-weighted mean H+, free acidity deposited [eq ha-1] and the
    precipitation-weighted mean of each ion [umol L-1].

    Parameters
    ----------
    result : workbench.pipeline.Result
        ``budget`` and ``derived`` Datasets of the run's resolution.

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
        frame[f"{e}_total_kg_ha_yr"] = frame[f"{e}_total_kg_ha"] * ds["annual_factor"].values[pi]
        for col, var in (("status", "total_status"), ("missing_components",
                                                       "total_missing_components"),
                         ("flagged_components", "total_flagged_components")):
            if var in ds:
                frame[f"{e}_total_{col}"] = ds[var].transpose(*order).values[si, ri, pi, j]
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
        frame["wet_flagged_share"] = wet("wet_flagged_share")
        pwm = ds["pwm"].transpose("site", "period", "wet_ion").values[si, pi]
        for k, ion in enumerate(ds["wet_ion"].values.astype(str)):
            frame[f"pwm_{ion}_umol_L"] = pwm[:, k] * UMOL_L_PER_MOL_M3
    return _values_beside_quantiles(frame, ds, si, ri, pi)


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
