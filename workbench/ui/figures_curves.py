"""The curves of a total against one option varied (the Sobol figures are in
:mod:`workbench.ui.figures_sensitivity`), with the baseline marked and a note of the
statuses of the values drawn.

Moved from :mod:`workbench.ui.figures` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from .figure_period import fit_title
from .figures_budget import ELEMENTS, HEIGHT, PANEL_GAP, wrap_text
from .palette import OKABE_ITO, PATHWAY_COLOURS, TEMPLATE
from .summaries import axis_text, axis_title


#: Width of a baseline line [px]: the template's shape default is 0 (invisible).
BASELINE_WIDTH = 1.5


def baseline_line() -> dict:
    """Line of a baseline marker (dotted grey, with an explicit width)."""
    return {"color": OKABE_ITO["grey"], "dash": "dot", "width": BASELINE_WIDTH}


#: Most characters on one line of a panel's axis title and of a figure's title (a
#: 660 px figure of two panels): longer text wraps at a space (it ran into the other
#: panel's title, or past the figure's edge).
AXIS_CHARS, TITLE_CHARS = 30, 70
#: Most characters on a line of a sweep's axis title: the explorer's figure is 540 px
#: wide with its legend beside the panels, whose titles' centres stand about 160 px
#: apart ("every season has air data", 25 characters in 160 px, ran into the other
#: panel's title at 30).
SWEEP_AXIS_CHARS = 18


def title_room(title: str) -> int:
    """Top margin [px] for a title of one or more ``<br>`` lines above subplot titles
    (plotly centres the title in the margin: its default 100 px holds two lines, and a
    third ran into "sulfur")."""
    return 100 + 50 * max(0, str(title).count("<br>") - 1)


def fitted_layout(layout: dict, width: int) -> dict:
    """`layout` at `width` [px] with its title fitted to that width
    (:func:`~workbench.ui.figure_period.fit_title`) and a top margin that holds its
    lines (:func:`title_room`): the velocity and resistance tabs'
    titles ran past the 520 px figure's edge ("... · conifer_forest · 2023" cut)."""
    out = {**layout, "width": width}
    title = (layout.get("title") or {}).get("text")
    if title:
        fitted = fit_title(title, width)
        if fitted != title:
            margin = dict(layout.get("margin") or {})
            margin["t"] = max(margin.get("t", 0), title_room(fitted))
            out.update(title={**layout["title"], "text": fitted}, margin=margin)
    return out


#: Statuses of a total that may be ranked and read as whole.
WHOLE = ("complete", "filled")


def status_note(statuses, missing=()) -> str:
    """`` (partial)``, `` (flagged, partial)`` ...: the statuses among `statuses` that are
    not complete or filled, for a legend entry or a column heading; ``""`` when none.

    `missing`: the components without data of the same totals (space-separated names
    each); they are named (`` (flagged, no NO2)``), so that a total both flagged and
    lacking a component (flagged wins in the status of a sum) does not read as merely
    flagged.

    >>> status_note(["complete", "flagged"], ["", "NO2"])
    ' (flagged, no NO2)'
    """
    bad = sorted({str(x) for x in statuses} - set(WHOLE))
    names = list(dict.fromkeys(n for m in missing if isinstance(m, str) for n in m.split()))
    if names and {str(x) for x in statuses} - {"missing"}:   # a total with a number
        bad.append("no " + ", ".join(names))
    return f" ({', '.join(bad)})" if bad else ""


def sensitivity_curves(table: pd.DataFrame, label: str, baseline, unit="kg/ha/yr", template=TEMPLATE,
                       model_baseline=None):
    """Response of each total to one assumption, the baseline marked.

    Parameters
    ----------
    table : pandas.DataFrame
        ``value`` (the assumption's setting), ``total`` (``S_total`` ...),
        ``rate`` [unit], ``status`` (see :func:`workbench.ui.session.Session.sweep`).
        A point whose total is not complete or filled has an open marker, and its
        curve's legend entry names the status (``N total (partial)``).
    label : str
        The assumption's name with its unit (x axis title).
    baseline : object
        The scenario's setting (marked by a vertical line and open markers).
    model_baseline : dict, optional
        ``{"S": rate, "N": rate}`` [unit]: the totals of the run whose setting is left to
        the model or the catalogue (no `baseline` value on the x axis), drawn as a
        dotted horizontal line in each panel and named in the legend ("baseline
        (model)"), not by a label on the line: a label there sat on the total's curve,
        which runs along that line wherever the total does not respond.

    Returns
    -------
    plotly.graph_objects.Figure
        Six traces (S and N: wet, dry, total) and two of the baseline points; with
        `model_baseline`, one more trace: the legend entry of its lines.
    """
    fig = make_subplots(rows=1, cols=2, subplot_titles=("sulfur", "nitrogen"),
                        horizontal_spacing=PANEL_GAP)
    cat = not all(isinstance(v, (int, float, np.number)) and not isinstance(v, bool)
                  for v in table["value"])
    xs = [str(v) for v in table["value"]] if cat else table["value"].tolist()
    t = table.assign(x=xs)
    base_x = str(baseline) if cat else baseline
    for col, el in enumerate(ELEMENTS, start=1):
        for pw in ("wet", "dry", "total"):
            g = t[t["total"] == f"{el}_{pw}"]
            fig.add_trace(go.Scatter(
                x=g["x"], y=[v if np.isfinite(v) else None for v in g["rate"]],
                mode="lines+markers",
                name=f"{el} {pw}{status_note(g['status'], g.get('missing', ()))}",
                legendgroup=pw,
                marker=dict(symbol=["circle" if x in WHOLE else "circle-open"
                                    for x in g["status"]]),
                line=dict(color=PATHWAY_COLOURS[pw], width=3 if pw == "total" else 1.5),
                customdata=g["status"],
                hovertemplate=(f"{el} {pw} at %{{x}}: %{{y:.3g}} {axis_text(unit, element=el)}"
                               "<br>status %{customdata}<extra></extra>")), row=1, col=col)
        g = t[(t["total"] == f"{el}_total") & (t["x"] == base_x)]
        fig.add_trace(go.Scatter(
            x=g["x"], y=g["rate"], mode="markers", name="baseline", legendgroup="baseline",
            showlegend=col == 1, marker=dict(symbol="star", size=14, color=OKABE_ITO["black"]),
            hovertemplate="baseline %{x}: %{y:.3g}<extra></extra>"), row=1, col=col)
        fig.update_yaxes(title_text=axis_title(f"{el} deposition", unit, element=el), row=1, col=col, rangemode="tozero")
        # lines enough: the margin grows to hold them (automargin)
        fig.update_xaxes(title_text=wrap_text(label, SWEEP_AXIS_CHARS), automargin=True,
                         row=1, col=col)
    if not cat and baseline is not None:
        fig.add_vline(x=baseline, line=baseline_line())
    drawn = False
    for col, el in enumerate(ELEMENTS, start=1):
        v = (model_baseline or {}).get(el)
        if v is not None and np.isfinite(v):
            fig.add_hline(y=v, line=baseline_line(), row=1, col=col)
            drawn = True
    if drawn:                   # the lines' name: a legend entry, clear of every curve
        fig.add_trace(go.Scatter(x=[None], y=[None], mode="lines", line=baseline_line(),
                                 name="baseline (model)", legendgroup="baseline",
                                 hoverinfo="skip"), row=1, col=1)
    title = wrap_text(f"Sensitivity of the totals to {label}", TITLE_CHARS)
    fig.update_layout(title=title, template=template, height=HEIGHT,
                      margin=dict(t=title_room(title)))
    return fig
