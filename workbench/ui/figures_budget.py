"""Figures of one site's budget: the bars of a period and the monthly fluxes, with the
parts every figure shares (the elements, the legend and its note, a figure from its
spec, a subplot grid's layout, text wrapped at a space).

Moved from :mod:`workbench.ui.figures` (which re-exports every name here).
"""
from __future__ import annotations

import functools
import json

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from .figure_period import period_ticks, span_label, with_period
from .palette import (COMPONENT_COLOURS, ELEMENT_DASH, OKABE_ITO, PATHWAY_COLOURS,
                      STATUS_OPACITY, STATUS_PATTERN, TEMPLATE)
from .summaries import (axis_text, axis_title, component_rates, component_reason,
                        monthly_amounts, total_rates)


#: Order of the elements side by side.
ELEMENTS = ("S", "N")
#: Legend titles of the elements.
ELEMENT_NAMES = {"S": "sulfur", "N": "nitrogen"}
#: Marker of a total: filled where rankable, open where partial or failing.
TOTAL_SYMBOL = {True: "diamond", False: "diamond-open"}
#: Height of a figure [px].
HEIGHT = 420


def annual_rate(ds, site, receptor, period, unit="kg/ha/yr"):
    """Yearly rate of each component of one site, receptor and period.

    Returns
    -------
    pandas.DataFrame
        ``element, pathway, species, value`` [unit], ``status``, ``completeness``.
    """
    t = component_rates(ds, site, receptor, period, unit)
    return t.drop(columns="period")


def _hover_value(value, status, completeness, axis, note=""):
    why = f"<br>{wrap_text(note, NOTE_CHARS * 2)}" if note else ""
    if not np.isfinite(value):
        if component_reason(note) in ("not measured", "every value masked",
                                      "period masked"):              # the note says it
            return f"{wrap_text(note, NOTE_CHARS * 2)} (status {status})"
        return f"no data (status {status}){why}"
    comp = f"{completeness:.0%}" if np.isfinite(completeness) else "n/a"
    return f"{value:.3g} {axis}<br>status {status}, completeness {comp}{why}"


def budget_bars_spec(ds, site, receptor, period=None, unit="kg/ha/yr", width=None) -> dict:
    """The budget bars of :func:`budget_bars` as plain plotly JSON (no template).

    ``{"data": [trace dicts], "layout": dict}``: an app copies it into a displayed
    ``FigureWidget`` with :func:`workbench.ui.controls.refresh`, which sends only what
    changed (building and validating plotly objects costs tens of milliseconds).

    Sulfur and nitrogen side by side in two panels on one y axis, each with a category
    axis of the periods, named by :func:`~workbench.ui.figure_period.period_ticks` for a
    figure `width` px wide (default :data:`NARROWEST_PX`; the layout's width is left to
    the caller): level, slanted or every k-th, never touching (a multi-category axis
    turned the years of an explorer 520 px wide on end or at 30 degrees across its
    group lines).
    """
    comp = component_rates(ds, site, receptor, period, unit)
    tot = total_rates(ds, site, receptor, period, unit)
    periods = list(pd.unique(comp["period"]))
    traces = []
    titled = set()
    why = {}                       # trace name -> the same reason in every period
    unmeasured = {(p, sp) for p, sp, n in zip(comp["period"], comp["species"], comp["note"])
                  if component_reason(n) == "not measured"}
    masked = {(p, sp) for p, sp, n in zip(comp["period"], comp["species"], comp["note"])
              if component_reason(n) == "every value masked"}
    masked_p = {(p, sp) for p, sp, n in zip(comp["period"], comp["species"], comp["note"])
                if component_reason(n) == "period masked"}
    for (el, pw, sp), g in comp.groupby(["element", "pathway", "species"], sort=False):
        name = f"{pw} {sp}"
        axis = axis_text(unit, element=el)
        st = g["status"].to_numpy()
        vals = g["value"].to_numpy()
        trace = {
            "type": "bar", "x": g["period"].tolist(), "xaxis": ELEMENT_AXIS[el], "yaxis": "y",
            "y": [float(v) if np.isfinite(v) else None for v in vals],
            "name": name, "legendgroup": el,
            "marker": {"color": COMPONENT_COLOURS[f"{pw}/{sp}"],
                       "opacity": [STATUS_OPACITY.get(x, 1.0) for x in st],
                       "pattern": {"shape": [STATUS_PATTERN.get(x, "") for x in st]},
                       "line": {"color": OKABE_ITO["black"], "width": 0.5}},
            "customdata": [_hover_value(v, x, c, axis, n) for v, x, c, n in
                           zip(vals, st, g["completeness"].to_numpy(), g["note"].to_numpy())],
            "hovertemplate": f"{el} {name} %{{x}}: %{{customdata}}<extra></extra>"}
        reasons = {component_reason(n) for n in g["note"]}
        if len(reasons) == 1 and reasons != {""}:
            why[name] = reasons.pop()
        if el not in titled:
            trace["legendgrouptitle"] = {"text": ELEMENT_NAMES[el]}
        titled.add(el)
        traces.append(trace)
    t = tot[tot["pathway"] == "total"]
    rows = {(e, p): i for i, (e, p) in enumerate(zip(t["element"], t["period"]))}
    value, status, missing = t["value"].to_numpy(), t["status"].to_numpy(), t["missing"].to_numpy()
    fails = ~t["passes"].to_numpy(bool) & (status != "missing")
    failure = t["failure"].to_numpy()
    symbols = []
    for el in ELEMENTS:             # one trace of totals per panel, one legend entry
        ys, text, sym = [], [], []
        for p in periods:
            i = rows[(el, p)]
            v, stt = float(value[i]), str(status[i])
            ys.append(v if np.isfinite(v) else None)
            miss = _missing_text(str(missing[i]), p, unmeasured, masked, masked_p)
            # a total failing completeness says so (a flagged one may also pass)
            fail = (f"<br>fails completeness: {failure[i] or 'see the notes'}" if fails[i]
                    else "")
            text.append(f"{el} total {p}: {v:.3g} {axis_text(unit, element=el)}"
                        f"<br>status {stt}{miss}{fail}")
            sym.append(TOTAL_SYMBOL[stt in ("complete", "filled")])
        symbols += sym
        traces.append({
            "type": "scatter", "x": list(periods), "y": ys, "mode": "markers", "name": "total",
            "legendgroup": "total", "showlegend": el == ELEMENTS[0],
            "xaxis": ELEMENT_AXIS[el], "yaxis": "y", "meta": {"element": el},
            "marker": {"symbol": sym, "size": 11, "color": OKABE_ITO["black"],
                       "line": {"color": OKABE_ITO["black"], "width": 1.5}},
            "customdata": text, "hovertemplate": "%{customdata}<extra></extra>"})
    room = panel_px(width or NARROWEST_PX)
    layout = {"barmode": "stack", "title": {"text": with_period(f"Budget · {site} · {receptor}",
                                                                  span_label(periods))},
              "yaxis": {"title": {"text": axis_title("deposition", unit)}, "anchor": "x"},
              "legend": {"title": {"text": "pathway and species"}, "groupclick": "toggleitem"},
              "annotations": [legend_note(traces, symbols, why)]}
    for el, dom in zip(ELEMENTS, ((0, 0.5 - BUDGET_PANEL_GAP / 2), (0.5 + BUDGET_PANEL_GAP / 2, 1))):
        name = "xaxis" + ELEMENT_AXIS[el][1:]
        layout[name] = {"domain": list(dom), "anchor": "y", "title": {"text": ELEMENT_NAMES[el]},
                        **period_ticks(periods, room)}
    # the note under the legend takes room too: a long one must not leave the figure
    note_lines = layout["annotations"][0]["text"].count("<br>") + 1
    shown = [t for t in traces if t.get("showlegend", True) is not False]
    layout["height"] = legend_height(len(shown) + len(titled) + max(0, note_lines - 2))
    return {"data": traces, "layout": layout}


#: The x axis of each element's panel in :func:`budget_bars_spec`.
ELEMENT_AXIS = {"S": "x", "N": "x2"}
#: Gap between the sulfur and the nitrogen panel of the budget bars [share of the plot].
BUDGET_PANEL_GAP = 0.08
#: Narrowest width of the budget bars [px]: the site explorer's figures in the output
#: area beside JupyterLab's open file browser (workbench.ui.apps.FIGURE_WIDTH).
NARROWEST_PX = 520
#: Right of the budget's plot area [px]: its legend ("pathway and species", 19 characters
#: at ~7 px, 40 px of symbol and padding) with plotly's gap (measured in chromium: the
#: plot ended 179 px before the right edge of a 520 px figure).
BUDGET_LEGEND_PX = 180
#: Left of the plot area [px]: plotly's margin of 80 px (the y title within it).
BUDGET_LEFT_PX = 80


def panel_px(width: float) -> float:
    """Width of one element's panel of the budget bars [px] in a figure `width` px wide."""
    return (width - BUDGET_LEFT_PX - BUDGET_LEGEND_PX) * (0.5 - BUDGET_PANEL_GAP / 2)


def _missing_text(missing: str, period, unmeasured, masked=(), masked_period=()) -> str:
    """Hover line of a total's components without data: those not measured at the site,
    those measured whose every value was masked (`masked`), those whose samples of the
    period were all masked (`masked_period`), apart from those without data in the
    period."""
    names = missing.split()
    gone = [m for m in names if (period, m) in unmeasured]
    lost = [m for m in names if (period, m) in masked]
    lost_p = [m for m in names if (period, m) in masked_period]
    rest = [m for m in names if (period, m) not in unmeasured and (period, m) not in masked
            and (period, m) not in masked_period]
    return (("<br>not measured at the site: " + " ".join(gone) if gone else "")
            + ("<br>measured, every value masked: " + " ".join(lost) if lost else "")
            + ("<br>every value of the period masked: " + " ".join(lost_p) if lost_p else "")
            + ("<br>no data for " + " ".join(rest) if rest else ""))


def legend_note(traces, symbols, why=None) -> dict:
    """A note under the budget's legend on what the legend cannot say: an open diamond is
    a total that is partial or flagged, and a component listed without a bar has no data
    (its entry otherwise reads as a part of the stack): not measured at the site,
    measured but every value masked by the air reader (at the site, or in each period
    shown), counted in a bulk collector's wet
    deposition (a bar of 0), or no data in the periods shown.
    `why` maps a trace name to its reason (:func:`summaries.component_reason`).  Empty
    text when none of these."""
    why = why or {}
    lines = []
    if TOTAL_SYMBOL[False] in symbols:
        lines.append("◇ total partial or flagged")
    bars = [t for t in traces if t.get("type") == "bar"]
    gone = [t["name"] for t in bars if why.get(t["name"]) == "not measured"]
    lost = [t["name"] for t in bars if why.get(t["name"]) == "every value masked"]
    lost_p = [t["name"] for t in bars if why.get(t["name"]) == "period masked"]
    caught = [t["name"] for t in bars if why.get(t["name"]) == "in the bulk wet"]
    empty = [t["name"] for t in bars if all(v is None for v in t["y"])
             and t["name"] not in gone + lost + lost_p + caught]
    for head, names in (("not measured: ", gone), ("measured, every value masked: ", lost),
                        ("every value of these periods masked: ", lost_p),
                        ("in the bulk collector's wet: ", caught), ("no data: ", empty)):
        if names:
            lines.append(wrap_text(head + ", ".join(names), NOTE_CHARS))
    return {"text": "<br>".join(lines), "showarrow": False, "xref": "paper", "yref": "paper",
            "x": 1.02, "y": 0, "xanchor": "left", "yanchor": "top", "align": "left",
            "font": {"size": 11}}


#: Most characters on a line of the note under the budget's legend.
NOTE_CHARS = 24


#: Height of a legend line [px] and the figure's height outside the plot area with the
#: gaps between legend groups [px] (plotly's defaults at font size 12, measured in the
#: browser: a budget of 11 components had its last entries behind a legend scroll bar).
LEGEND_LINE_PX, LEGEND_FRAME_PX = 20, 220


def legend_height(lines: int, least: int = HEIGHT) -> int:
    """Figure height [px] at which a vertical legend of `lines` lines (entries and group
    titles) shows whole, never below `least` [px] (default :data:`HEIGHT`)."""
    return max(least, LEGEND_FRAME_PX + LEGEND_LINE_PX * (lines + 1))


def legend_lines(traces) -> int:
    """Lines of the vertical legend of `traces` (plotly JSON): its title and one per
    shown legend group or name."""
    shown = {t.get("legendgroup") or t.get("name") for t in traces
             if t.get("showlegend", True) is not False and (t.get("legendgroup") or t.get("name"))}
    return len(shown) + 1


def from_spec(spec: dict, template=TEMPLATE, fig=None) -> go.Figure:
    """A plotly Figure (validated) from a spec of a ``*_spec`` function, with the
    template (traces and layout added to `fig` when given)."""
    if fig is None:
        fig = go.Figure(data=spec["data"], layout=spec["layout"])
    else:
        fig.add_traces(spec["data"])
        fig.update_layout(spec["layout"])
    fig.update_layout(template=template)
    return fig


#: Gap between the sulfur and the nitrogen panel [share of the width]: room for the
#: nitrogen panel's tick labels and axis title ("mmol N m-2 yr-1" beside "250" ran over
#: the ticks at plotly's default 0.1 in a 700 px figure).
PANEL_GAP = 0.18


@functools.lru_cache(maxsize=None)
def subplot_layout(rows: int, cols: int, **options) -> tuple:
    """Layout JSON of ``make_subplots(rows, cols, **options)`` (built once per set of
    options; they must be hashable) and the (x, y) axis names (``"xaxis2"`` ...) of
    each subplot, row by row."""
    fig = make_subplots(rows=rows, cols=cols, **options)
    axes = []
    for row in range(1, rows + 1):
        for col in range(1, cols + 1):
            sub = fig.get_subplot(row, col)
            axes.append((sub.xaxis.plotly_name, sub.yaxis.plotly_name))
    return json.dumps(fig.layout.to_plotly_json()), tuple(axes)


def budget_bars(ds, site, receptor, period=None, unit="kg/ha/yr", fig=None, template=TEMPLATE,
                width=None):
    """Stacked bars of the wet and dry parts by species, S and N side by side.

    One bar per element and period (a panel per element, the periods along its x
    axis, one y axis).  Bars of
    components that are not complete are faded and patterned by status
    (:data:`~workbench.ui.palette.STATUS_OPACITY`, ``STATUS_PATTERN``); a diamond on
    each stack marks the total, open where the total is partial, flagged or missing.
    Hover text gives every number, its status and completeness.

    Parameters
    ----------
    ds : xarray.Dataset
        A budget (``Result.years`` or ``Result.budget``).
    site, receptor : str
    period : str or list of str, optional
        Period labels (default: every period of `ds`).
    unit : str
        A key of :data:`workbench.ui.summaries.UNITS`.
    fig : plotly Figure, optional
        Traces are added to this figure.
    width : float, optional
        Width of the figure [px] its period labels are arranged for (default
        :data:`NARROWEST_PX`); the layout's width is not set.

    Returns
    -------
    plotly.graph_objects.Figure
        Ten bar traces (one per component, in the budget's order) and two scatter
        traces of the totals (S, then N; one legend entry).
    """
    return from_spec(budget_bars_spec(ds, site, receptor, period, unit, width), template, fig)


def monthly_fluxes_spec(ds_month, site, receptor, unit="kg/ha/yr") -> dict:
    """The figure of :func:`monthly_fluxes` as plain plotly JSON (no template)."""
    t = monthly_amounts(ds_month, site, receptor, unit)
    base, axes = subplot_layout(2, 1, shared_xaxes=True, vertical_spacing=0.08,
                                subplot_titles=("sulfur", "nitrogen"))
    layout = json.loads(base)
    traces = []
    for (xname, yname), el in zip(axes, ELEMENTS):
        for pw in ("wet", "dry"):
            g = t[(t["element"] == el) & (t["pathway"] == pw)]
            st = g["status"].to_numpy()
            traces.append({
                "type": "scatter", "x": g["start"].dt.strftime("%Y-%m-%d").tolist(),
                "y": [float(v) if np.isfinite(v) else None for v in g["value"].to_numpy()],
                "mode": "lines+markers", "name": f"{el} {pw}", "legendgroup": pw,
                "line": {"color": PATHWAY_COLOURS[pw], "dash": ELEMENT_DASH[el]},
                "marker": {"symbol": ["circle" if x == "complete" else "circle-open" for x in st],
                           "size": 6, "color": PATHWAY_COLOURS[pw]},
                # the status, and why a month fails completeness (which sample, which
                # share: the words of budget.csv's completeness_failure)
                "customdata": [[x, "<br>" + wrap_text(w, 70) if w else ""]
                               for x, w in zip(st.tolist(), g["why"].tolist())],
                "hovertemplate": (f"{el} {pw} %{{x|%Y-%m}}: %{{y:.3g}} "
                                  f"{axis_text(unit, True, el)}<br>status "
                                  "%{customdata[0]}%{customdata[1]}<extra></extra>"),
                "xaxis": xname.replace("axis", ""), "yaxis": yname.replace("axis", "")})
        title = axis_title(f"{el} deposition", unit, True, el, wrap=True)
        layout[yname].update({"title": {"text": title}, "rangemode": "tozero"})
    layout[axes[1][0]]["title"] = {"text": "month (UTC)"}
    years = t["start"].dt.year.astype(str) if len(t) else []
    layout.update({"title": {"text": with_period(f"Monthly deposition · {site} · {receptor}",
                                                 span_label(years))},
                   "height": HEIGHT + 100, "legend": {"title": {"text": "element and pathway"}}})
    return {"data": traces, "layout": layout}


def monthly_fluxes(ds_month, site, receptor, unit="kg/ha/yr", template=TEMPLATE):
    """Monthly wet and dry deposition of S (top) and N (bottom) over the years.

    Months whose part is not complete are drawn with open markers (hover: status).

    Parameters
    ----------
    ds_month : xarray.Dataset
        A budget at monthly resolution (``Result.budget`` of a ``"month"`` run).
    site, receptor : str
    unit : str
        A key of :data:`workbench.ui.summaries.UNITS` (amounts per month).

    Returns
    -------
    plotly.graph_objects.Figure
        Four traces: S wet, S dry, N wet, N dry.
    """
    return from_spec(monthly_fluxes_spec(ds_month, site, receptor, unit), template)


def wrap_text(text: str, width: int) -> str:
    """`text` broken at spaces into lines of at most `width` characters (plotly's
    ``<br>``), e.g. a long assumption name under a narrow panel."""
    import textwrap
    return "<br>".join(textwrap.wrap(str(text), width)) if len(str(text)) > width else str(text)
