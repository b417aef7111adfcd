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
                  table: pd.DataFrame | None = None) -> pd.DataFrame:
    """The split of N of one site and receptor per year of `years`.

    Returns
    -------
    DataFrame
        ``period``; ``oxidized_N``, ``reduced_N`` [unit, of N], ``reduced_share`` [%],
        ``potential_acidity`` [eq ha-1 yr-1]; per sum ``<sum>_status``,
        ``<sum>_passes`` and ``<sum>_completeness_failure``
        (:func:`workbench.report_derived.derived_rates`).
    """
    if table is None:           # only this site and receptor: a redraw pays for one pair
        years = years.sel(site=[site], receptor=[receptor])
    f = _rates(years, table)
    f = f[(f["site"] == str(site)) & (f["receptor"] == str(receptor))].reset_index(drop=True)
    for k in ("oxidized_N", "reduced_N"):      # kg N/ha/yr -> the unit on screen
        f[k] = to_unit(_kg_ha_to_mol_m2(f[k].to_numpy(float)), "N", unit)
    return f


def n_split_html(years: xr.Dataset, site, receptor, unit="kg/ha/yr",
                 table: pd.DataFrame | None = None) -> str:
    """A small table (one row a year) of the oxidized and reduced N, the reduced share
    and the potential acidity, for the site explorer's 520 px column: a sum failing
    completeness marked ``x`` with its reason on the cell's tooltip and in a line
    under the table; ``f`` flagged but passing; ``p`` a part without data."""
    from ..report_derived import DEFINITIONS, SHOWN, fails, mark
    f = n_split_table(years, site, receptor, unit, table)
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


def network_derived(results, catalogue=None) -> pd.DataFrame:
    """The reduced share of N and the potential acidity of every site on its own surface
    (the network overview's receptor, :func:`workbench.ui.summaries.network_table`)
    per year: site, receptor, period, ``reduced_share`` [%], ``potential_acidity``
    [eq ha-1 yr-1] and their ``_status``, ``_passes``, ``_completeness_failure``."""
    rows = []
    for r in results:
        f = _rates(r.years, None)
        for site in r.years["site"].values.astype(str):
            if catalogue is not None and site in catalogue.ids:
                rec = catalogue[site].land_use
            else:
                act = r.years["active"].sel(site=site).values
                rec = str(r.years["receptor"].values[np.flatnonzero(act)[0]])
            rows.append(f[(f["site"] == site) & (f["receptor"] == str(rec))])
    if not rows:
        return pd.DataFrame()
    return pd.concat(rows, ignore_index=True)

