"""Figures of the dry chain: mean diurnal cycle of Vd and the resistance breakdown.

Pure functions: the Dataset of :func:`workbench.drydep.velocities` in, a plotly
figure out.  Hours are local standard time (the site's ``utc_offset_h``), the middle
of each hour.
"""
from __future__ import annotations

import json

import numpy as np

from ..periods import SEASON_NAMES
from .figure_period import with_period
from .figures import LEGEND_FRAME_PX, from_spec, legend_lines, subplot_layout
from .palette import RESISTANCE_COLOURS, SPECIES_COLOURS, TEMPLATE
from .summaries import (CM_PER_M, hour_season_slots, hourly_series, local_hour_and_season,
                        slot_statistic)

#: Species drawn by default (the budget's dry species).
DRY_SPECIES = ("SO2", "HNO3", "NH3", "NO2", "pSO4", "pNO3", "pNH4")
#: Names of the resistances in the legend.
RESISTANCE_NAMES = {"ra": "Ra aerodynamic", "rb": "Rb quasi-laminar", "rc": "Rc surface",
                    "total": "Ra + Rb + Rc"}
#: Height of the four-panel figures [px] (more where the legend needs it).
HEIGHT = 380
#: Height of a legend line of a line trace [px] (29 px apart, measured in the browser:
#: 7 species ran behind a legend scroll bar at 380 and at 400 px).
LINE_LEGEND_PX = 30


#: Labelled hours of each season panel: 6 and 18, a quarter of the day in from either
#: edge, so that the labels stand evenly spaced across the four panels.  At 0, 6, 12, 18
#: the last label of one panel ("18") stood about 15 px from the first of the next
#: ("0") in the site explorer's 520 px figures (seen in chromium beside an open file
#: browser), as close as the labels within a panel.
HOUR_TICKS = (6, 18)
#: Hours marked by an unlabelled tick in each panel [h].
HOUR_MINOR_DTICK = 6


def hour_axis() -> dict:
    """Settings of a season panel's hour axis: 0-23 h, :data:`HOUR_TICKS` labelled,
    every :data:`HOUR_MINOR_DTICK` hours ticked."""
    return {"range": [0, 23], "tickmode": "array", "tickvals": list(HOUR_TICKS),
            "ticktext": [str(h) for h in HOUR_TICKS],
            "minor": {"tick0": 0, "dtick": HOUR_MINOR_DTICK, "ticks": "outside"}}


def _local(utc_offset_h):
    return f"hour of day (UTC{float(utc_offset_h):+g} h)"


def _season_panels_layout() -> tuple:
    """Layout JSON of the four season panels and the (x, y) axis names of each."""
    return subplot_layout(1, len(SEASON_NAMES), shared_yaxes=True,
                          subplot_titles=tuple(SEASON_NAMES), horizontal_spacing=0.03)


def _panels(traces, utc_offset_h, y_axis: dict, title: str, legend: str) -> dict:
    """Spec of the four season panels from ``(panel index, trace)`` pairs (kept in
    their order), axes titled."""
    base, axes = _season_panels_layout()
    layout = json.loads(base)
    data = []
    for col, t in traces:
        xname, yname = axes[col]
        t.update(xaxis=xname.replace("axis", ""), yaxis=yname.replace("axis", ""))
        data.append(t)
    for xname, yname in axes:
        layout[xname].update(hour_axis())
        layout[yname].update(y_axis.get("all", {}))
    layout[axes[0][0]]["title"] = {"text": _local(utc_offset_h)}
    layout[axes[0][1]].update(y_axis.get("first", {}))
    height = max(HEIGHT, LEGEND_FRAME_PX + LINE_LEGEND_PX * legend_lines(data))
    layout.update(title={"text": title}, height=height,     # the whole legend, no scroll bar
                  legend={"title": {"text": legend}})
    return {"data": data, "layout": layout}


def _finite(values):
    return [float(v) if np.isfinite(v) else None for v in np.asarray(values, float)]


def _slots(vel, utc_offset_h):
    hour, season = local_hour_and_season(vel["time"].values, utc_offset_h)
    return hour_season_slots(hour, season)


def _season_traces(value, n, make):
    """One trace per season from 96 slot values: ``make(col, season, hours, values, n)``."""
    out = []
    for col, season in enumerate(SEASON_NAMES):
        sl = slice(24 * col, 24 * col + 24)
        keep = n[sl] > 0
        out.append(make(col, season, np.flatnonzero(keep).tolist(), value[sl][keep],
                        n[sl][keep].tolist()))
    return out


def velocity_diurnal_spec(vel, site, receptor, species=DRY_SPECIES, utc_offset_h=0.0,
                          period="") -> dict:
    """The figure of :func:`velocity_diurnal` as plain plotly JSON (no template);
    `period` (``2021``, ``2019–2021``) ends its title.

    The numbers are those of :func:`workbench.ui.summaries.diurnal_velocity`, computed
    here from the same slot statistics without the table.
    """
    get = hourly_series(vel, site, receptor)
    slot = _slots(vel, utc_offset_h)
    traces = []
    for sp in species:
        if f"vd_{sp}" not in vel:
            continue
        value, n = slot_statistic(get(f"vd_{sp}") * CM_PER_M, slot, "mean")
        if not n.any():
            continue

        def make(col, season, hours, values, counts, sp=sp):
            return {
                "type": "scatter", "x": hours, "y": _finite(values),
                "mode": "lines", "name": sp, "legendgroup": sp, "showlegend": col == 0,
                "line": {"color": SPECIES_COLOURS.get(sp),
                         "dash": "dot" if sp.startswith("p") else "solid"},
                "customdata": counts,
                "hovertemplate": (f"{sp} {season} %{{x}} h: %{{y:.3g}} cm s-1"
                                  "<br>mean of %{customdata} hours<extra></extra>")}
        traces.extend(enumerate(_season_traces(value, n, make)))
    return _panels(traces, utc_offset_h,
                   {"first": {"title": {"text": "mean Vd [cm s-1]"}, "rangemode": "tozero"}},
                   with_period(f"Deposition velocity, mean diurnal cycle · {site} · {receptor}",
                               period), "species")


def velocity_diurnal(vel, site, receptor, species=DRY_SPECIES, utc_offset_h=0.0, template=TEMPLATE,
                     period=""):
    """Mean deposition velocity by hour of day, one panel per season, per species.

    Parameters
    ----------
    vel : xarray.Dataset
        ``vd_<species>`` [m s-1] on (site, receptor, time).
    site, receptor : str
    species : sequence of str
    utc_offset_h : float
        Local standard time minus UTC [h].
    period : str
        The years of `vel` shown (``2021``, ``2019–2021``), at the end of the title.

    Returns
    -------
    plotly.graph_objects.Figure
        One trace per species and season (in that order), Vd in cm s-1.
    """
    return from_spec(velocity_diurnal_spec(vel, site, receptor, species, utc_offset_h, period),
                     template)


def resistance_breakdown_spec(vel, site, receptor, gas="SO2", utc_offset_h=0.0,
                              period="") -> dict:
    """The figure of :func:`resistance_breakdown` as plain plotly JSON (no template);
    `period` (``2021``, ``2019–2021``) ends its title.

    The numbers are those of :func:`workbench.ui.summaries.resistance_medians`.
    """
    get = hourly_series(vel, site, receptor)
    slot = _slots(vel, utc_offset_h)
    parts = {"ra": get("ra"), "rb": get(f"rb_{gas}"), "rc": get(f"rc_{gas}")}
    parts["total"] = parts["ra"] + parts["rb"] + parts["rc"]
    traces = []
    for name, label in RESISTANCE_NAMES.items():
        value, n = slot_statistic(parts[name], slot, "median")

        def make(col, season, hours, values, counts, name=name, label=label):
            return {
                "type": "scatter", "x": hours,
                "y": [float(v) if np.isfinite(v) and v > 0 else None for v in values],
                "mode": "lines", "name": label, "legendgroup": name, "showlegend": col == 0,
                "line": {"color": RESISTANCE_COLOURS[name], "width": 3 if name == "total" else 2,
                         "dash": "dash" if name == "total" else "solid"},
                "hovertemplate": f"{label} {season} %{{x}} h: median %{{y:.3g}} s m-1<extra></extra>"}
        traces.extend(enumerate(_season_traces(value, n, make)))
    return _panels(traces, utc_offset_h,
                   # 1-2-5 ticks written out whole ("20", "50", "200"): at powers of ten
                   # only, a day between 20 and 300 s m-1 had one label, "100"; plotly's
                   # own minor labels read as a stray "2", "5"
                   {"all": {"type": "log", "tickvals": LOG_TICKS,
                            "ticktext": [f"{v:g}" for v in LOG_TICKS]},
                    "first": {"title": {"text": "median resistance [s m-1]"}}},
                   with_period(f"Resistances of {gas} (medians by hour) · {site} · {receptor}",
                               period), "resistance")


#: Tick values of a log axis of resistances [s m-1]: 1, 2, 5, 10 ... 50,000.
LOG_TICKS = [m * 10 ** e for e in range(5) for m in (1, 2, 5)]


def resistance_breakdown(vel, site, receptor, gas="SO2", utc_offset_h=0.0, template=TEMPLATE,
                         period=""):
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
    period : str
        The years of `vel` shown (``2021``, ``2019–2021``), at the end of the title.

    Returns
    -------
    plotly.graph_objects.Figure
        One trace per resistance (ra, rb, rc, total) and season; log y axis [s m-1].
    """
    return from_spec(resistance_breakdown_spec(vel, site, receptor, gas, utc_offset_h, period),
                     template)
