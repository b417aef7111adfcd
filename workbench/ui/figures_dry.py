"""Figures of the dry chain: mean diurnal cycle of Vd and the resistance breakdown.

Pure functions: the Dataset of :func:`workbench.drydep.velocities` in, a plotly
figure out.  Hours are local standard time (the site's ``utc_offset_h``), the middle
of each hour.
"""
from __future__ import annotations

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
    t = diurnal_velocity(vel, site, receptor, list(species), utc_offset_h)
    fig = _season_panels()
    for sp in species:
        g_sp = t[t["species"] == sp]
        if g_sp.empty:
            continue
        for col, season in enumerate(SEASON_NAMES, start=1):
            g = g_sp[g_sp["season"] == season]
            fig.add_trace(go.Scatter(
                x=g["hour"], y=g["value"], mode="lines", name=sp, legendgroup=sp,
                showlegend=col == 1,
                line=dict(color=SPECIES_COLOURS.get(sp), dash="dot" if sp.startswith("p") else "solid"),
                customdata=g["n"],
                hovertemplate=(f"{sp} {season} %{{x}} h: %{{y:.3g}} cm s-1"
                               "<br>mean of %{customdata} hours<extra></extra>")), row=1, col=col)
            fig.update_xaxes(title_text=_local(utc_offset_h) if col == 1 else "", row=1, col=col,
                             range=[0, 23], dtick=6)
    fig.update_yaxes(title_text="mean Vd [cm s-1]", row=1, col=1, rangemode="tozero")
    fig.update_layout(title=f"Deposition velocity, mean diurnal cycle · {site} · {receptor}",
                      template=template, height=HEIGHT, legend_title="species")
    return fig


def resistance_breakdown(vel, site, receptor, gas="SO2", utc_offset_h=0.0, template=TEMPLATE):
    """Median Ra, Rb, Rc (and their sum) of one gas by hour of day, per season.

    Medians are shown because a mean resistance is dominated by the calm night hours
    (Ra near its cap); the curves tell which resistance limits Vd at each hour.

    Returns
    -------
    plotly.graph_objects.Figure
        One trace per resistance (ra, rb, rc, total) and season; log y axis [s m-1].
    """
    t = resistance_medians(vel, site, receptor, gas, utc_offset_h)
    fig = _season_panels()
    for name, label in RESISTANCE_NAMES.items():
        g_r = t[t["resistance"] == name]
        for col, season in enumerate(SEASON_NAMES, start=1):
            g = g_r[g_r["season"] == season]
            fig.add_trace(go.Scatter(
                x=g["hour"], y=[v if np.isfinite(v) and v > 0 else None for v in g["value"]],
                mode="lines", name=label, legendgroup=name, showlegend=col == 1,
                line=dict(color=RESISTANCE_COLOURS[name], width=3 if name == "total" else 2,
                          dash="dash" if name == "total" else "solid"),
                hovertemplate=f"{label} {season} %{{x}} h: median %{{y:.3g}} s m-1<extra></extra>"),
                row=1, col=col)
            fig.update_xaxes(title_text=_local(utc_offset_h) if col == 1 else "", row=1, col=col,
                             range=[0, 23], dtick=6)
    fig.update_yaxes(type="log", row=1)
    fig.update_yaxes(title_text="median resistance [s m-1]", row=1, col=1)
    fig.update_layout(title=f"Resistances of {gas} (medians by hour) · {site} · {receptor}",
                      template=template, height=HEIGHT, legend_title="resistance")
    return fig
