"""Figures: pure functions, a budget Dataset (or table) in, a plotly figure out."""
from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from ..units import element_deposition_in
from .palette import COMPONENT_COLOURS, STATUS_OPACITY, STATUS_PATTERN

#: Reported units: label -> (deposition unit key, scale, axis text).
UNITS = {
    "kg/ha/yr": ("kg_ha", 1.0, "kg {el} ha-1 yr-1"),
    "eq/ha/yr": ("eq_ha", 1.0, "eq ha-1 yr-1"),
    "keq/ha/yr": ("eq_ha", 1e-3, "keq ha-1 yr-1"),
    "mmol/m2/yr": ("mmol_m2", 1.0, "mmol {el} m-2 yr-1"),
}


def annual_rate(ds, site, receptor, period, unit="kg/ha/yr"):
    """Yearly rate of each component of one site, receptor and period.

    Returns
    -------
    pandas.DataFrame
        ``element, pathway, species, value, status, completeness``.
    """
    key, scale, _ = UNITS[unit]
    sel = ds.sel(site=site, receptor=receptor, period=period)
    fac = float(sel["annual_factor"])
    rows = []
    for i, comp in enumerate(sel["component"].values):
        el = str(sel["element"].values[i])
        v = float(sel["deposition"].values[i])
        rows.append({"element": el, "pathway": str(sel["pathway"].values[i]),
                     "species": str(sel["species"].values[i]),
                     "value": float(element_deposition_in(v, el, key)) * scale * fac,
                     "status": str(sel["status"].values[i]),
                     "completeness": float(sel["completeness"].values[i])})
    return pd.DataFrame(rows)


def budget_bars(ds, site, receptor, period, unit="kg/ha/yr", fig=None):
    """Stacked bars of the wet and dry parts by species, S and N side by side.

    Bars of components that are not complete are faded and patterned by status; the
    hover text gives the number, its status and completeness.
    """
    table = annual_rate(ds, site, receptor, period, unit)
    _, _, axis = UNITS[unit]
    fig = fig if fig is not None else go.Figure()
    traces = []
    for _, r in table.iterrows():
        name = f"{r['pathway']} {r['species']}"
        st = r["status"]
        value = 0.0 if not np.isfinite(r["value"]) else r["value"]
        traces.append(go.Bar(
            x=[r["element"]], y=[value], name=name, legendgroup=name,
            marker=dict(color=COMPONENT_COLOURS[f"{r['pathway']}/{r['species']}"],
                        opacity=STATUS_OPACITY.get(st, 1.0),
                        pattern=dict(shape=STATUS_PATTERN.get(st, ""))),
            hovertemplate=(f"{name}: %{{y:.3g}} {axis.format(el=r['element'])}<br>status {st}"
                           f"<br>completeness {r['completeness']:.0%}<extra></extra>"
                           if np.isfinite(r["completeness"]) else
                           f"{name}: not available<br>status {st}<extra></extra>")))
    fig.add_traces(traces)
    el_units = " / ".join(axis.format(el=e) for e in ("S", "N")) if "{el}" in axis else axis
    fig.update_layout(barmode="stack", title=f"{site} · {receptor} · {period}",
                      yaxis_title=el_units, xaxis_title="element",
                      legend_title="pathway and species", template="simple_white")
    return fig
