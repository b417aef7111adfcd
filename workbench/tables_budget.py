"""The rows of ``budget.csv``: one per component, sum and total of each site, receptor
and period, with the wet, NH3 and sulfate-basis columns (:func:`budget_table`).

Part of :mod:`workbench.tables` (which re-exports every name here).
"""
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
    for var in ("completeness_failure", "total_completeness_failure"):
        if var in ds and comp_dim in ds[var].dims:       # the first criterion failed
            words = ds[var].transpose("site", "receptor", "period", comp_dim).values.reshape(-1)
            frame["completeness_failure"] = _labels(np.where(pd.isna(words), "", words)
                                                    .astype(str))
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


def component_rows(ds: xr.Dataset) -> pd.DataFrame:
    """budget.csv's component rows (no sums) of `ds`, with the columns the status of the
    derived sums reads (:func:`workbench.budget_derived.derived_status`; stage
    ``part_rows``): site, receptor, period, species, ``status``, ``passes`` and
    ``completeness_failure`` (where `ds` has it), and the keys of their order
    (period_start, element, pathway).  The same rows, in the same order and with the
    same values in these columns as the component rows of :func:`budget_table`; the
    deposition, its units, fractions and notes are not built (they were most of the
    rows' cost in a change of the site explorer, docs/performance.md)."""
    comp = "component"
    dims = ("site", "receptor", "period", comp)
    v = ds.variables             # read as variables: no DataArray with every coordinate

    def flat(var):
        return v[var].transpose(*dims).values.reshape(-1)
    shape = v["status"].transpose(*dims).shape
    idx = np.indices(shape).reshape(4, -1)
    active = v["active"].transpose("site", "receptor").values[idx[0], idx[1]]
    status = _labels(flat("status"))
    frame = pd.DataFrame({
        "site": _labels(v["site"].values, idx[0]),
        "receptor": _labels(v["receptor"].values, idx[1]),
        "period_start": pd.to_datetime(v["period_start"].values[idx[2]]),
        "element": _labels(v["element"].values, idx[3]),
        "pathway": _labels(v["pathway"].values, idx[3]),
        "species": _labels(v["species"].values, idx[3]),
        "status": status, "period": _labels(v["period"].values, idx[2])})
    if "completeness_failure" in v and comp in v["completeness_failure"].dims:
        words = flat("completeness_failure")        # the first criterion failed
        frame["completeness_failure"] = _labels(np.where(pd.isna(words), "", words)
                                                .astype(str))
    if "fails_completeness" in v and comp in v["fails_completeness"].dims:
        frame["passes"] = (~flat("fails_completeness").astype(bool)
                           & (frame["status"] != "missing"))
    else:
        frame["passes"] = ~np.isin(frame["status"].to_numpy(), ("flagged", "missing"))
    return _sorted(frame[active])


def total_note_rows(ds: xr.Dataset) -> pd.DataFrame:
    """budget.csv's total rows (pathway ``total``, species ``all``) of `ds` with their
    ``note`` and ``status`` and the keys (site, receptor, period, element): the notes
    :func:`budget_table` gives them (:func:`_sum_notes`: each part of the component
    notes of the element once, after the species carrying it, in the order the parts
    first come; a total's own note first), without the deposition, its units,
    fractions and the other rows.  What the site explorer's gap line reads on every
    change (:meth:`workbench.ui.apps.SiteExplorer._gaps_html`; a change builds no
    whole table, tests/ui/test_derived_split.py): a budget of one site and receptor,
    whose few component notes are gathered one by one (no pandas groupby: its fixed
    cost was most of the line's), never over hours."""
    v = ds.variables
    dims4 = ("site", "receptor", "period")
    names = [str(t) for t in v["total"].values]
    tot_el = [t.split("_")[0] for t in names]
    status = v["total_status"].transpose(*dims4, "total").values
    own = (v["total_note"].transpose(*dims4, "total").values if "total_note" in v
           else np.full(status.shape, "", dtype=object))
    note = (v["note"].transpose(*dims4, "component").values if "note" in v
            else np.full(v["status"].transpose(*dims4, "component").shape, "", object))
    element = [str(e) for e in v["element"].values]
    species = [str(x) for x in v["species"].values]
    active = v["active"].transpose("site", "receptor").values
    sites, recs = v["site"].values, v["receptor"].values
    periods = v["period"].values
    rows = []
    for i, j in zip(*np.nonzero(active)):              # the pairs run (one in the app)
        for p in range(len(periods)):
            cell = note[i, j, p]
            gathered = {}                               # element -> part -> species
            for k in np.flatnonzero([isinstance(x, str) and x != "" for x in cell]):
                for part in split_notes(cell[k]):
                    if part.strip():
                        sp = gathered.setdefault(element[k], {}).setdefault(part, [])
                        if species[k] not in sp:
                            sp.append(species[k])
            for t, el in enumerate(tot_el):
                if not names[t].endswith("_total"):
                    continue
                got = "; ".join(f"{' '.join(sp)}: {part}"
                                for part, sp in gathered.get(el, {}).items())
                mine = own[i, j, p, t]
                mine = mine if isinstance(mine, str) else ""
                rows.append((str(sites[i]), str(recs[j]), str(periods[p]), el, "total",
                             "all", str(status[i, j, p, t]),
                             str(join_notes(mine, got).item())))
    return pd.DataFrame(rows, columns=["site", "receptor", "period", "element", "pathway",
                                       "species", "status", "note"])


#: The data variables of a budget Dataset that :func:`budget_table` reads with `lean`
#: (besides the coordinates of their axes: site, receptor, period, period_start,
#: annual_factor, element, pathway, species, total).
LEAN_VARIABLES = ("deposition", "status", "total_deposition", "total_status", "active")


def lean_budget(ds: xr.Dataset) -> xr.Dataset:
    """`ds` with only what ``budget_table(ds, lean=True)`` reads: the data variables of
    :data:`LEAN_VARIABLES` and the coordinates on their axes (the same rows, bit for
    bit).

    A network run in blocks holds every block's monthly budget until the blocks are
    reduced, for the monthly trends only (:func:`workbench.blocks.run_block`): 49 data
    variables of which a trend reads these 5 (about 0.13 MB a site-year held, 0.01
    with these; docs/performance.md, "What a block holds for the monthly trends")."""
    return ds[[n for n in ds.data_vars if n in LEAN_VARIABLES]]


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
