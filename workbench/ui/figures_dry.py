"""Figures of the dry chain: mean diurnal cycle of Vd and the resistance breakdown.

Pure functions: the Dataset of :func:`workbench.drydep.velocities` in, a plotly
figure out.  Hours are local standard time (the site's ``utc_offset_h``), the middle
of each hour.
"""
from __future__ import annotations

import functools
import json

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from ..periods import SEASON_NAMES
from .palette import RESISTANCE_COLOURS, SPECIES_COLOURS, TEMPLATE
from .summaries import diurnal_velocity, resistance_medians

#: Species drawn by default (the budget's dry species).
DRY_SPECIES = ("SO2", "HNO3", "NH3", "NO2", "pSO4", "pNO3", "pNH4")
#: Names of the resistances in the legend.
RESISTANCE_NAMES = {"ra": "Ra aerodynamic", "rb": "Rb quasi-laminar", "rc": "Rc surface",
                    "total": "Ra + Rb + Rc"}
#: Height of the four-panel figures [px].
HEIGHT = 380


def _local(utc_offset_h):
    return f"hour of day (UTC{float(utc_offset_h):+g} h)"


def _season_panels():
    return make_subplots(rows=1, cols=len(SEASON_NAMES), shared_yaxes=True,
                         subplot_titles=SEASON_NAMES, horizontal_spacing=0.03)


@functools.lru_cache(maxsize=None)
def _season_panels_layout() -> tuple:
    """Layout JSON of the four season panels (plotly's make_subplots, once) and the
    (x, y) axis names of each panel."""
    fig = _season_panels()
    axes = []
    for col in range(1, len(SEASON_NAMES) + 1):
        sub = fig.get_subplot(1, col)
        axes.append((sub.xaxis.plotly_name, sub.yaxis.plotly_name))
    return json.dumps(fig.layout.to_plotly_json()), tuple(axes)


def _panels(traces_by_panel, utc_offset_h, y_axis: dict, title: str, legend: str) -> dict:
    """Spec of the four season panels: traces given per panel, axes titled."""
    base, axes = _season_panels_layout()
    layout = json.loads(base)
    data = []
    for (xname, yname), traces in zip(axes, traces_by_panel):
        for t in traces:
            t.update(xaxis=xname.replace("axis", ""), yaxis=yname.replace("axis", ""))
            data.append(t)
        layout[xname].update(range=[0, 23], dtick=6)
    layout[axes[0][0]]["title"] = {"text": _local(utc_offset_h)}
    for _, yname in axes:
        layout[yname].update(y_axis.get("all", {}))
    layout[axes[0][1]].update(y_axis.get("first", {}))
    layout.update(title={"text": title}, height=HEIGHT, legend={"title": {"text": legend}})
    return {"data": data, "layout": layout}


def _finite(values):
    return [float(v) if np.isfinite(v) else None for v in np.asarray(values, float)]


def velocity_diurnal_spec(vel, site, receptor, species=DRY_SPECIES, utc_offset_h=0.0) -> dict:
    """The figure of :func:`velocity_diurnal` as plain plotly JSON (no template)."""
    t = diurnal_velocity(vel, site, receptor, list(species), utc_offset_h)
    panels = [[] for _ in SEASON_NAMES]
    for sp in species:
        g_sp = t[t["species"] == sp]
        if g_sp.empty:
            continue
        for col, season in enumerate(SEASON_NAMES):
            g = g_sp[g_sp["season"] == season]
            panels[col].append({
                "type": "scatter", "x": g["hour"].tolist(), "y": _finite(g["value"]),
                "mode": "lines", "name": sp, "legendgroup": sp, "showlegend": col == 0,
                "line": {"color": SPECIES_COLOURS.get(sp),
                         "dash": "dot" if sp.startswith("p") else "solid"},
                "customdata": g["n"].tolist(),
                "hovertemplate": (f"{sp} {season} %{{x}} h: %{{y:.3g}} cm s-1"
                                  "<br>mean of %{customdata} hours<extra></extra>")})
    return _panels(panels, utc_offset_h,
                   {"first": {"title": {"text": "mean Vd [cm s-1]"}, "rangemode": "tozero"}},
                   f"Deposition velocity, mean diurnal cycle · {site} · {receptor}", "species")


def velocity_diurnal(vel, site, receptor, species=DRY_SPECIES, utc_offset_h=0.0, template=TEMPLATE):
    """Mean deposition velocity by hour of day, one panel per season, per species.

    Parameters
    ----------
    vel : xarray.Dataset
        ``vd_<species>`` [m s-1] on (site, receptor, time).
    site, receptor : str
    species : sequence of str
    utc_offset_h : float
        Local standard time minus UTC [h].

    Returns
    -------
    plotly.graph_objects.Figure
        One trace per species and season (in that order), Vd in cm s-1.
    """
    spec = velocity_diurnal_spec(vel, site, receptor, species, utc_offset_h)
    return go.Figure(spec["data"], spec["layout"]).update_layout(template=template)


def resistance_breakdown_spec(vel, site, receptor, gas="SO2", utc_offset_h=0.0) -> dict:
    """The figure of :func:`resistance_breakdown` as plain plotly JSON (no template)."""
    t = resistance_medians(vel, site, receptor, gas, utc_offset_h)
    panels = [[] for _ in SEASON_NAMES]
    for name, label in RESISTANCE_NAMES.items():
        g_r = t[t["resistance"] == name]
        for col, season in enumerate(SEASON_NAMES):
            g = g_r[g_r["season"] == season]
            panels[col].append({
                "type": "scatter", "x": g["hour"].tolist(),
                "y": [float(v) if np.isfinite(v) and v > 0 else None for v in g["value"]],
                "mode": "lines", "name": label, "legendgroup": name, "showlegend": col == 0,
                "line": {"color": RESISTANCE_COLOURS[name], "width": 3 if name == "total" else 2,
                         "dash": "dash" if name == "total" else "solid"},
                "hovertemplate": f"{label} {season} %{{x}} h: median %{{y:.3g}} s m-1<extra></extra>"})
    return _panels(panels, utc_offset_h,
                   {"all": {"type": "log"},
                    "first": {"title": {"text": "median resistance [s m-1]"}}},
                   f"Resistances of {gas} (medians by hour) · {site} · {receptor}", "resistance")


def resistance_breakdown(vel, site, receptor, gas="SO2", utc_offset_h=0.0, template=TEMPLATE):
    """Median Ra, Rb, Rc (and their sum) of one gas by hour of day, per season.

    Medians are shown because a mean resistance is dominated by the calm night hours
    (Ra near its cap); the curves tell which resistance limits Vd at each hour.

    Parameters
    ----------
    vel : xarray.Dataset
        ``ra``, ``rb_<gas>``, ``rc_<gas>`` [s m-1] on (site, receptor, time).
    site, receptor, gas : str
    utc_offset_h : float
        Local standard time minus UTC [h].

    Returns
    -------
    plotly.graph_objects.Figure
        One trace per resistance (ra, rb, rc, total) and season; log y axis [s m-1].
    """
    spec = resistance_breakdown_spec(vel, site, receptor, gas, utc_offset_h)
    return go.Figure(spec["data"], spec["layout"]).update_layout(template=template)
