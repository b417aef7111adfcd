"""The derived sums where users read them: oxidized and reduced N, the reduced share of
N and the potential acidity as yearly rates per site, receptor and period, each with its
status and completeness (:func:`derived_rates`), and report.html's section of them
(:func:`derived_section`).  The site explorer and the network overview read
:func:`derived_rates` too (:mod:`workbench.ui`; the overview's sites side by side in one
call, :func:`rates_side_by_side`).

The numbers are those of summary.csv (``oxidized_N_kg_ha``, ``reduced_N_kg_ha``,
``potential_acidity_eq_ha`` of the period, :func:`workbench.budget.derived`) times the
period's yearly factor (``annual_factor``, docs/budget.md); the completeness is
:func:`workbench.budget.derived_status`'s, summary.csv's ``<sum>_passes`` and
``<sum>_completeness_failure``.
"""
from __future__ import annotations

import html

import numpy as np
import pandas as pd
import xarray as xr

from .budget_totals import combine_status
from .report_tables import failing, status_marks

#: The derived sums shown, their words and unit (the order of the tables).
SHOWN = {"oxidized_N": ("Oxidized N", "kg N/ha/yr"),
         "reduced_N": ("Reduced N", "kg N/ha/yr"),
         "reduced_share": ("Reduced share of N", "%"),
         "potential_acidity": ("Potential acidity", "eq/ha/yr")}

#: What each sum holds (docs/budget.md, "Units"; the terms of the potential acidity:
#: common practice, 2 eq per mol S as sulfate, 1 eq per mol N).
DEFINITIONS = {
    "oxidized_N": "NO3 (wet) + HNO3 + pNO3 + NO2 (dry)",
    "reduced_N": "NH4 (wet) + NH3 + pNH4 (dry); with the NH3 exchange model, the net NH3",
    "reduced_share": "reduced N / (oxidized N + reduced N), in kg N; no share where "
                     "that sum is not above 0",
    "potential_acidity": "2 S + oxidized N + reduced N in eq, S the budget's S total "
                         "(non-sea-salt SO4 where the wet chain has it) with its SO2 and "
                         "pSO4; kept apart from the free acidity H+ of the precipitation",
}


def derived_rates(ds: xr.Dataset, table: pd.DataFrame, dv: xr.Dataset | None = None,
                  active_only: bool = True) -> pd.DataFrame:
    """Oxidized N, reduced N, the reduced share and the potential acidity of every
    (site, receptor, period) of a budget, as yearly rates, with their completeness.

    Parameters
    ----------
    ds : xarray.Dataset
        A budget (``Result.budget`` or ``Result.years``; ``annual_factor`` per period).
    table : pandas.DataFrame
        budget.csv's rows of the same periods (``status``, ``passes``,
        ``completeness_failure`` of each component; span rows are left out).
    dv : xarray.Dataset, optional
        :func:`workbench.budget.derived` of `ds` (computed when not given).
    active_only : bool
        Only the (site, receptor) pairs a site asks for (as summary.csv).

    Returns
    -------
    pandas.DataFrame
        site, receptor, period; ``oxidized_N`` and ``reduced_N`` [kg N ha-1 yr-1],
        ``reduced_share`` [%], ``potential_acidity`` [eq ha-1 yr-1]; per sum
        ``<sum>_status``, ``<sum>_missing_components``, ``<sum>_passes`` (bool) and
        ``<sum>_completeness_failure`` ('' where it passes).  The share passes where
        both forms of N pass; its failure is the first failing form's (oxidized
        first, the order of docs/budget.md).
    """
    from .budget_derived import derived, with_derived_status
    if dv is None:
        dv = derived(ds)
    key = ["site", "receptor", "period"]
    frame = dv[["oxidized_N_kg_ha", "reduced_N_kg_ha", "potential_acidity_eq_ha"]] \
        .to_dataframe().reset_index()
    for k in ("site", "receptor", "period"):
        frame[k] = frame[k].astype(str)
    if active_only and "active" in ds:
        act = ds["active"].to_dataframe().reset_index()[["site", "receptor", "active"]]
        act = act.astype({"site": str, "receptor": str})
        frame = frame.merge(act, on=["site", "receptor"], how="left")
        frame = frame[frame["active"].fillna(False).astype(bool)].drop(columns="active")
    fac = pd.Series(np.asarray(ds["annual_factor"].values, float),
                    index=pd.Index(ds["period"].values.astype(str)))
    f = fac.reindex(frame["period"]).to_numpy()
    ox = frame["oxidized_N_kg_ha"].to_numpy(float) * f
    red = frame["reduced_N_kg_ha"].to_numpy(float) * f
    n = ox + red
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(n > 0, 100.0 * red / n, np.nan)
    out = frame[key].assign(oxidized_N=ox, reduced_N=red, reduced_share=share,
                            potential_acidity=frame["potential_acidity_eq_ha"].to_numpy(float) * f)
    out = with_derived_status(out, table[table["period"].astype(str) != "span"])
    for name in ("oxidized_N", "reduced_N", "potential_acidity"):
        out[f"{name}_passes"] = out[f"{name}_passes"].fillna(False).astype(bool)
        for c in ("status", "missing_components", "completeness_failure"):
            out[f"{name}_{c}"] = out[f"{name}_{c}"].fillna(
                "missing" if c == "status" else "").astype(str)
    both = out[["oxidized_N_status", "reduced_N_status"]].to_numpy(object)
    out["reduced_share_status"] = combine_status(both)[0]
    out["reduced_share_missing_components"] = (
        out["oxidized_N_missing_components"] + " " + out["reduced_N_missing_components"]
    ).str.strip()
    out["reduced_share_passes"] = out["oxidized_N_passes"] & out["reduced_N_passes"]
    out["reduced_share_completeness_failure"] = np.where(
        ~out["oxidized_N_passes"], out["oxidized_N_completeness_failure"],
        np.where(~out["reduced_N_passes"], out["reduced_N_completeness_failure"], ""))
    return out.reset_index(drop=True)


def rates_side_by_side(years: list, picks) -> pd.DataFrame:
    """The derived sums of each run's picked (site, receptor) pairs in one
    :func:`workbench.report_derived.derived_rates` call.

    Each run's years are cut to the receptors picked there, their receptor axis named
    by place (``0``, ``1``...), and the runs put side by side on the site axis (the
    receptor's name only labels budget.csv's rows: the sums are per pair); the rows
    read back their receptor's name.  Runs whose periods, components or number of
    picked receptors differ, or that share a site, are computed one by one.

    Parameters
    ----------
    years : list of xarray.Dataset
        Each run's ``years``.
    picks : sequence
        Per run, its ``(site, receptor)`` pairs.

    Returns
    -------
    DataFrame
        :func:`workbench.report_derived.derived_rates`' columns, the picked pairs
        only, in the order of the runs and their sites; ``_run`` the run's place.
    """
    from .tables import budget_table
    cut, names = [], []
    for i, (y, p) in enumerate(zip(years, picks)):
        recs = sorted({str(r) for _, r in p})
        cut.append(y.sel(receptor=recs).assign_coords(receptor=[str(k) for k in range(len(recs))]))
        names.append(pd.DataFrame({"_run": i, "_slot": [str(k) for k in range(len(recs))],
                                   "receptor": recs}))
    wanted = pd.concat([pd.DataFrame(list(p), columns=["site", "receptor"], dtype=object)
                        .assign(_run=i) for i, p in enumerate(picks)], ignore_index=True)
    sites = np.concatenate([y["site"].values.astype(str) for y in cut])
    same = all(y.sizes["receptor"] == cut[0].sizes["receptor"]
               and np.array_equal(y["period"].values, cut[0]["period"].values)
               and np.array_equal(y["component"].values, cut[0]["component"].values)
               for y in cut)
    if same and len(set(sites)) == len(sites):
        together = xr.concat(cut, dim="site", data_vars="minimal", coords="minimal",
                             compat="override", join="exact", combine_attrs="override")
        f = derived_rates(together, budget_table(together)).rename(columns={"receptor": "_slot"})
        run = pd.Series(np.repeat(np.arange(len(cut)), [y.sizes["site"] for y in cut]),
                        index=sites)
        f.insert(0, "_run", run.reindex(f["site"]).to_numpy())
    else:
        f = pd.concat([derived_rates(y, budget_table(y)).rename(columns={"receptor": "_slot"})
                       .assign(_run=i) for i, y in enumerate(cut)], ignore_index=True)
    f = f.merge(pd.concat(names, ignore_index=True), on=["_run", "_slot"], how="left")
    f = f.merge(wanted, on=["_run", "site", "receptor"], how="inner")
    cols = ["_run", "site", "receptor"] + [c for c in f.columns
                                           if c not in ("_run", "_slot", "site", "receptor")]
    return f[cols].astype({"site": str, "receptor": str}).reset_index(drop=True)


def fails(frame: pd.DataFrame, name: str) -> pd.Series:
    """Where the sum `name` of :func:`derived_rates` fails completeness (not missing)."""
    return pd.Series(failing(frame[f"{name}_status"].to_numpy(object),
                             frame[f"{name}_passes"].to_numpy(object)), index=frame.index)


def mark(frame: pd.DataFrame, name: str) -> pd.Series:
    """The report's mark of each row's sum `name` (``x`` fails completeness, ``f``
    flagged but passing, ``p`` partial or a part without data, ``~`` filled): the
    totals' rule, :func:`workbench.report_tables.status_marks`."""
    return pd.Series(status_marks(frame[f"{name}_status"], frame[f"{name}_passes"],
                                  frame[f"{name}_missing_components"]), index=frame.index)


def _value(v, name) -> str:
    from .report_numbers import plain
    if not np.isfinite(v):
        return "–"
    return f"{v:.0f} %" if name == "reduced_share" else plain(v)


def derived_table_html(frame: pd.DataFrame) -> str:
    """The table of :func:`derived_rates` laid out as the report's totals: a row per
    site, receptor and sum, a column per period; each value with its mark, a failing
    one with its reason as the cell's ``title``."""
    periods = list(dict.fromkeys(frame["period"]))
    col = {p: i for i, p in enumerate(periods)}
    heads = "".join(f"<th>{html.escape(p)}</th>" for p in periods)
    rows = []
    marks = {k: mark(frame, k).to_numpy() for k in SHOWN}
    bad = {k: fails(frame, k).to_numpy() for k in SHOWN}
    for (site, rec), g in frame.groupby(["site", "receptor"], sort=False):
        for k, (words, unit) in SHOWN.items():
            cells = ["<td>–</td>"] * len(periods)
            for i, r in zip(g.index, g.itertuples(index=False)):
                text = _value(getattr(r, k), k) + marks[k][i]
                why = getattr(r, f"{k}_completeness_failure")
                title = (f" title='fails completeness: {html.escape(why, quote=True)}'"
                         if bad[k][i] else "")
                cells[col[r.period]] = f"<td{title}>{html.escape(text)}</td>"
            name = (f"<td title='{html.escape(DEFINITIONS[k], quote=True)}'>"
                    f"{html.escape(words)} [{html.escape(unit)}]</td>")
            rows.append(f"<tr><td>{html.escape(site)}</td><td>{html.escape(rec)}</td>{name}"
                        + "".join(cells) + "</tr>")
    return ("<table class='tab derived'><thead><tr><th>Site</th><th>Receptor surface</th>"
            f"<th>Sum</th>{heads}</tr></thead><tbody>{''.join(rows)}</tbody></table>")


def failure_notes(frame: pd.DataFrame) -> list:
    """One line per (site, period, reason) of a failing sum, naming the sums and the
    receptor surfaces: ``mere 2023 (water, wetland): oxidized N — NO3: gauge ...``."""
    lines = []
    rows = []
    for k, (w, _) in SHOWN.items():
        f = frame[fails(frame, k)]
        rows.append(pd.DataFrame({"site": f["site"], "period": f["period"],
                                  "receptor": f["receptor"], "sum": w,
                                  "why": f[f"{k}_completeness_failure"]}))
    every = pd.concat(rows, ignore_index=True)
    if every.empty:
        return lines
    for (site, period), g in every.groupby(["site", "period"], sort=False):
        recs = ", ".join(sorted(g["receptor"].unique()))
        parts = [f"{', '.join(dict.fromkeys(h['sum']))}: {why}"
                 for why, h in g.groupby("why", sort=False)]
        lines.append(f"{site} {period} ({recs}): " + "; ".join(parts))
    return lines


def derived_section(result, network: bool = False) -> list:
    """report.html's section of the derived sums per period (`result` of the chosen
    scheme): the definitions, the table, the reasons of the failing sums."""
    from .report_network import fold
    frame = derived_rates(result.budget, result.table, result.derived)
    out = ["<h2 id='derived'>Oxidized and reduced N, potential acidity per period</h2>"]
    if frame.empty:
        return out + ["<p>No site and period.</p>"]
    out.append("<p>Yearly rates of summary.csv's derived sums (its <code>oxidized_N_kg_ha"
               "</code>, <code>reduced_N_kg_ha</code> and <code>potential_acidity_eq_ha"
               "</code> of the period, as a yearly rate like the totals above). "
               "<b>Oxidized N</b> = " + html.escape(DEFINITIONS["oxidized_N"])
               + ". <b>Reduced N</b> = " + html.escape(DEFINITIONS["reduced_N"])
               + ". <b>Reduced share of N</b> = " + html.escape(DEFINITIONS["reduced_share"])
               + ". <b>Potential acidity</b> = " + html.escape(DEFINITIONS["potential_acidity"])
               + " (the deposition an acidity critical load is set against). Marks as in "
               "the totals: <b>x</b> fails completeness (a part it sums fails; the reason "
               "below and on the cell's tooltip, summary.csv's "
               "<code>&lt;sum&gt;_completeness_failure</code>), <b>f</b> flagged but "
               "passing, <b>p</b> partial (a part without data: summary.csv's "
               "<code>&lt;sum&gt;_missing_components</code>), <b>~</b> filled. The share "
               "fails where either form of N fails.</p>")
    table = derived_table_html(frame)
    n_rows = len(SHOWN) * len(frame[["site", "receptor"]].drop_duplicates())
    out.append(fold(table, n_rows, "the derived sums of every site, receptor and period")
               if network else table)
    notes = failure_notes(frame)
    if notes:
        out.append("<p>Derived sums that fail completeness, and why (the first failing "
                   "part, after the parts failing for the same reason):</p><ul>"
                   + "".join(f"<li>{html.escape(n)}</li>" for n in notes) + "</ul>")
    return out
