"""Oxidized and reduced N and the potential acidity in the apps: the site explorer's
small table under the budget bars (:func:`n_split_table`, :func:`n_split_html`) and the
network overview's columns (:func:`network_derived`).  The numbers and their
completeness are :func:`workbench.report_derived.derived_rates`' (summary.csv's derived
sums as yearly rates).
"""
from __future__ import annotations

import html

import numpy as np
import pandas as pd
import xarray as xr

from .bracket import _kg_ha_to_mol_m2
from .controls_table import TABLE_CSS, table_number
from .summaries import to_unit


def _rates(years: xr.Dataset, table: pd.DataFrame | None) -> pd.DataFrame:
    from ..report_derived import derived_rates
    from ..tables import budget_table
    return derived_rates(years, budget_table(years) if table is None else table)


def completeness_words(frame: pd.DataFrame, name: str) -> np.ndarray:
    """``passes``, ``fails: <reason>`` or ``-`` (the sum missing) of the sum `name` of
    :func:`workbench.report_derived.derived_rates`, with ``(without NO2)`` where a part
    has no data."""
    status = frame[f"{name}_status"].fillna("missing").astype(str).to_numpy()
    ok = frame[f"{name}_passes"].fillna(False).astype(bool).to_numpy()
    why = frame[f"{name}_completeness_failure"].fillna("").astype(str).to_numpy()
    out = np.where(ok, "passes", "fails: " + why.astype(object))
    # a sum without a part (mere has no NO2) says so beside it: its share leans
    lack = frame[f"{name}_missing_components"].fillna("").astype(str).str.split()
    without = np.array([f" (without {', '.join(m)})" if m else "" for m in lack], dtype=object)
    return np.where(status == "missing", "-", out + without)


def n_split_table(years: xr.Dataset, site, receptor, unit="kg/ha/yr",
                  table: pd.DataFrame | None = None,
                  rates: pd.DataFrame | None = None) -> pd.DataFrame:
    """The split of N of one site and receptor per year of `years` (`rates`: the
    derived sums of `years` already computed, ``Result.rates()`` from the stage graph;
    else computed here, from `table` when given).

    Returns
    -------
    DataFrame
        ``period``; ``oxidized_N``, ``reduced_N`` [unit, of N], ``reduced_share`` [%],
        ``potential_acidity`` [eq ha-1 yr-1]; per sum ``<sum>_status``,
        ``<sum>_passes`` and ``<sum>_completeness_failure``
        (:func:`workbench.report_derived.derived_rates`).
    """
    if rates is not None:
        f = rates
    else:
        if table is None:       # only this site and receptor: a redraw pays for one pair
            years = years.sel(site=[site], receptor=[receptor])
        f = _rates(years, table)
    f = f[(f["site"] == str(site)) & (f["receptor"] == str(receptor))].reset_index(drop=True)
    for k in ("oxidized_N", "reduced_N"):      # kg N/ha/yr -> the unit on screen
        f[k] = to_unit(_kg_ha_to_mol_m2(f[k].to_numpy(float)), "N", unit)
    return f


def n_split_html(years: xr.Dataset, site, receptor, unit="kg/ha/yr",
                 table: pd.DataFrame | None = None,
                 rates: pd.DataFrame | None = None) -> str:
    """A small table (one row a year) of the oxidized and reduced N, the reduced share
    and the potential acidity, for the site explorer's 520 px column: a sum failing
    completeness marked ``x`` with its reason on the cell's tooltip and in a line
    under the table; ``f`` flagged but passing; ``p`` a part without data."""
    from ..report_derived import DEFINITIONS, SHOWN, fails, mark
    f = n_split_table(years, site, receptor, unit, table, rates)
    if f.empty:
        return ""
    n_unit = unit.replace("kg/", "kg N/").replace("mmol/", "mmol N/")   # eq: of charge
    units = {"oxidized_N": n_unit, "reduced_N": n_unit, "reduced_share": "%",
             "potential_acidity": "eq/ha/yr"}
    short = {"oxidized_N": "oxidized N", "reduced_N": "reduced N",
             "reduced_share": "reduced share", "potential_acidity": "potential acidity"}
    heads = "".join(f"<th title='{html.escape(SHOWN[k][0] + ' = ' + DEFINITIONS[k], quote=True)}'>"
                    f"{short[k]} [{html.escape(units[k])}]</th>" for k in SHOWN)
    marks = {k: mark(f, k).to_numpy() for k in SHOWN}
    bad = {k: fails(f, k).to_numpy() for k in SHOWN}
    rows, said = [], {}
    for i, r in f.iterrows():
        cells = [f"<td>{html.escape(str(r['period']))}</td>"]
        for k in SHOWN:
            v = r[k]
            text = ("–" if not np.isfinite(v) else f"{v:.0f}" if k == "reduced_share"
                    else table_number(v)) + marks[k][i]
            why = str(r[f"{k}_completeness_failure"])
            title = (f" title='fails completeness: {html.escape(why, quote=True)}'"
                     if bad[k][i] else "")
            if bad[k][i]:
                said.setdefault((str(r["period"]), why), []).append(short[k])
            cells.append(f"<td{title}>{html.escape(text)}</td>")
        rows.append("<tr>" + "".join(cells) + "</tr>")
    notes = "".join(f"<br><b>x</b> {html.escape(p)} {html.escape(', '.join(ks))} fails "
                    f"completeness: {html.escape(why)}" for (p, why), ks in said.items())
    return (f"{TABLE_CSS}<div style='font-size:85%;max-width:520px;overflow-x:auto'>"
            "<b>N split and potential acidity</b> (2 S + oxidized N + reduced N; yearly "
            "rates; marks as the report's: x fails completeness, f flagged, p partial)"
            "<table class='wb-table'><thead><tr><th>year</th>" + heads
            + "</tr></thead><tbody>" + "".join(rows) + "</tbody></table>" + notes + "</div>")


def own_surfaces(years: xr.Dataset, catalogue=None) -> pd.DataFrame:
    """The receptor of each site of `years` that the network overview shows: its own
    land use in `catalogue`, else its first active receptor (a site with none, or
    whose own surface `years` does not hold, is left out: it has no rows).

    Returns
    -------
    DataFrame
        ``site``, ``receptor`` (text), one row per site in the order of `years`.
    """
    sites = years["site"].values.astype(str)
    recs = years["receptor"].values.astype(str)
    act = np.asarray(years["active"].transpose("site", "receptor").values, bool)
    first = pd.Series(np.where(act.any(axis=1), recs[act.argmax(axis=1)], None),
                      index=sites, dtype=object)
    if catalogue is not None:
        own = pd.Series({s.id: s.land_use for s in catalogue}, dtype=object)
        first = own.reindex(sites).fillna(first)
    out = pd.DataFrame({"site": sites, "receptor": first.to_numpy(object)})
    return out[out["receptor"].isin(recs)].reset_index(drop=True)     # a receptor run


def network_derived(results, catalogue=None) -> pd.DataFrame:
    """The reduced share of N and the potential acidity of every site on its own surface
    (the network overview's receptor, :func:`workbench.ui.summaries.network_table`)
    per year: site, receptor, period, ``reduced_share`` [%], ``potential_acidity``
    [eq ha-1 yr-1] and their ``_status``, ``_passes``, ``_completeness_failure``.

    The runs' years are computed together
    (:func:`workbench.report_derived.rates_side_by_side`: one call for every site, in
    place of one per run and a pick per site), through the stage graph the runs share
    (stage ``network_rates``: a second call computes nothing).
    """
    results = list(results)
    picks = [own_surfaces(r.years, catalogue) for r in results]
    keep = [i for i, p in enumerate(picks) if len(p)]
    if not keep:
        return pd.DataFrame()
    runs = [results[i] for i in keep]
    pairs = tuple(tuple(zip(picks[i]["site"], picks[i]["receptor"])) for i in keep)
    graph = runs[0].graph              # the runs of one session share their graph
    if (graph is None or any(r.graph is not graph for r in runs)
            or any(r.keys.get("years") is None for r in runs)):
        from ..report_derived import rates_side_by_side
        f = rates_side_by_side([r.years for r in runs], pairs)
    else:
        from ..graph import Node
        f = graph.run("network_rates", params={"picks": pairs},
                      deps={f"run_{i}": Node(r.keys["years"], r.years)
                            for i, r in enumerate(runs)}).value
    return f.drop(columns="_run")
