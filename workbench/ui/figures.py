"""Figures: pure functions, a budget Dataset (or table) in, a plotly figure out.

Every figure keeps the same traces for the same kind of input (one per component,
season, site ...), so that an app can copy a new figure's data into a displayed
``FigureWidget`` in one batched update (see :func:`workbench.ui.apps.refresh`).
Deposition-velocity figures are in :mod:`workbench.ui.figures_dry`, precipitation
chemistry QA in :mod:`workbench.ui.figures_wet`.
"""
from __future__ import annotations

import functools
import json

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from .palette import (COMPONENT_COLOURS, ELEMENT_DASH, ENVELOPE_FILL, OKABE_ITO,
                      PATHWAY_COLOURS, SITE_CYCLE, STATUS_OPACITY, STATUS_PATTERN, TEMPLATE)
from .summaries import (axis_text, component_rates, component_reason, monthly_amounts,
                        total_rates)

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
        if component_reason(note) == "not measured":        # the note says it
            return f"{wrap_text(note, NOTE_CHARS * 2)} (status {status})"
        return f"no data (status {status}){why}"
    comp = f"{completeness:.0%}" if np.isfinite(completeness) else "n/a"
    return f"{value:.3g} {axis}<br>status {status}, completeness {comp}{why}"


def budget_bars_spec(ds, site, receptor, period=None, unit="kg/ha/yr") -> dict:
    """The budget bars of :func:`budget_bars` as plain plotly JSON (no template).

    ``{"data": [trace dicts], "layout": dict}``: an app copies it into a displayed
    ``FigureWidget`` with :func:`workbench.ui.controls.refresh`, which sends only what
    changed (building and validating plotly objects costs tens of milliseconds).
    """
    comp = component_rates(ds, site, receptor, period, unit)
    tot = total_rates(ds, site, receptor, period, unit)
    periods = list(pd.unique(comp["period"]))
    traces = []
    titled = set()
    why = {}                       # trace name -> the same reason in every period
    unmeasured = {(p, sp) for p, sp, n in zip(comp["period"], comp["species"], comp["note"])
                  if component_reason(n) == "not measured"}
    for (el, pw, sp), g in comp.groupby(["element", "pathway", "species"], sort=False):
        name = f"{pw} {sp}"
        axis = axis_text(unit, element=el)
        st = g["status"].to_numpy()
        vals = g["value"].to_numpy()
        trace = {
            "type": "bar", "x": [[el] * len(g), g["period"].tolist()],
            "y": [float(v) if np.isfinite(v) else None for v in vals],
            "name": name, "legendgroup": el,
            "marker": {"color": COMPONENT_COLOURS[f"{pw}/{sp}"],
                       "opacity": [STATUS_OPACITY.get(x, 1.0) for x in st],
                       "pattern": {"shape": [STATUS_PATTERN.get(x, "") for x in st]},
                       "line": {"color": OKABE_ITO["black"], "width": 0.5}},
            "customdata": [_hover_value(v, x, c, axis, n) for v, x, c, n in
                           zip(vals, st, g["completeness"].to_numpy(), g["note"].to_numpy())],
            "hovertemplate": f"{el} {name} %{{x[1]}}: %{{customdata}}<extra></extra>"}
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
    xs_el, xs_p, ys, text, sym = [], [], [], [], []
    for el in ELEMENTS:
        for p in periods:
            i = rows[(el, p)]
            v, stt = float(value[i]), str(status[i])
            xs_el.append(el)
            xs_p.append(p)
            ys.append(v if np.isfinite(v) else None)
            miss = _missing_text(str(missing[i]), p, unmeasured)
            text.append(f"{el} total {p}: {v:.3g} {axis_text(unit, element=el)}"
                        f"<br>status {stt}{miss}")
            sym.append(TOTAL_SYMBOL[stt in ("complete", "filled")])
    traces.append({
        "type": "scatter", "x": [xs_el, xs_p], "y": ys, "mode": "markers", "name": "total",
        "legendgroup": "total",
        "marker": {"symbol": sym, "size": 11, "color": OKABE_ITO["black"],
                   "line": {"color": OKABE_ITO["black"], "width": 1.5}},
        "customdata": text, "hovertemplate": "%{customdata}<extra></extra>"})
    layout = {"barmode": "stack", "title": {"text": f"Budget · {site} · {receptor}"},
              "yaxis": {"title": {"text": axis_text(unit)}},
              "xaxis": {"title": {"text": "element and period"}},
              "legend": {"title": {"text": "pathway and species"}, "groupclick": "toggleitem"},
              "annotations": [legend_note(traces, sym, why)]}
    # the note under the legend takes room too: a long one must not leave the figure
    note_lines = layout["annotations"][0]["text"].count("<br>") + 1
    layout["height"] = legend_height(len(traces) + len(titled) + max(0, note_lines - 2))
    return {"data": traces, "layout": layout}


def _missing_text(missing: str, period, unmeasured) -> str:
    """Hover line of a total's components without data: those not measured at the site
    apart from those without data in the period."""
    names = missing.split()
    gone = [m for m in names if (period, m) in unmeasured]
    rest = [m for m in names if (period, m) not in unmeasured]
    return (("<br>not measured at the site: " + " ".join(gone) if gone else "")
            + ("<br>no data for " + " ".join(rest) if rest else ""))


def legend_note(traces, symbols, why=None) -> dict:
    """A note under the budget's legend on what the legend cannot say: an open diamond is
    a total that is partial or flagged, and a component listed without a bar has no data
    (its entry otherwise reads as a part of the stack): not measured at the site, counted
    in a bulk collector's wet deposition (a bar of 0), or no data in the periods shown.
    `why` maps a trace name to its reason (:func:`summaries.component_reason`).  Empty
    text when none of these."""
    why = why or {}
    lines = []
    if TOTAL_SYMBOL[False] in symbols:
        lines.append("◇ total partial or flagged")
    bars = [t for t in traces if t.get("type") == "bar"]
    gone = [t["name"] for t in bars if why.get(t["name"]) == "not measured"]
    caught = [t["name"] for t in bars if why.get(t["name"]) == "in the bulk wet"]
    empty = [t["name"] for t in bars if all(v is None for v in t["y"])
             and t["name"] not in gone and t["name"] not in caught]
    for head, names in (("not measured: ", gone), ("in the bulk collector's wet: ", caught),
                        ("no data: ", empty)):
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


def budget_bars(ds, site, receptor, period=None, unit="kg/ha/yr", fig=None, template=TEMPLATE):
    """Stacked bars of the wet and dry parts by species, S and N side by side.

    One bar per element and period (x axis: element, then period).  Bars of
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

    Returns
    -------
    plotly.graph_objects.Figure
        Ten bar traces (one per component, in the budget's order) and one scatter
        trace of the totals.
    """
    return from_spec(budget_bars_spec(ds, site, receptor, period, unit), template, fig)


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
                "customdata": st.tolist(),
                "hovertemplate": (f"{el} {pw} %{{x|%Y-%m}}: %{{y:.3g}} "
                                  f"{axis_text(unit, True, el)}<br>status "
                                  "%{customdata}<extra></extra>"),
                "xaxis": xname.replace("axis", ""), "yaxis": yname.replace("axis", "")})
        layout[yname].update({"title": {"text": axis_text(unit, True, el)}, "rangemode": "tozero"})
    layout[axes[1][0]]["title"] = {"text": "month (UTC)"}
    layout.update({"title": {"text": f"Monthly deposition · {site} · {receptor}"},
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


#: Width of a baseline line [px]: the template's shape default is 0 (invisible).
BASELINE_WIDTH = 1.5


def baseline_line() -> dict:
    """Line of a baseline marker (dotted grey, with an explicit width)."""
    return {"color": OKABE_ITO["grey"], "dash": "dot", "width": BASELINE_WIDTH}


#: Most characters on one line of a panel's axis title and of a figure's title (a
#: 660 px figure of two panels): longer text wraps at a space (it ran into the other
#: panel's title, or past the figure's edge).
AXIS_CHARS, TITLE_CHARS = 30, 70


def wrap_text(text: str, width: int) -> str:
    """`text` broken at spaces into lines of at most `width` characters (plotly's
    ``<br>``), e.g. a long assumption name under a narrow panel."""
    import textwrap
    return "<br>".join(textwrap.wrap(str(text), width)) if len(str(text)) > width else str(text)


def title_room(title: str) -> int:
    """Top margin [px] for a title of one or more ``<br>`` lines above subplot titles
    (plotly centres the title in the margin: its default 100 px holds two lines, and a
    third ran into "sulfur")."""
    return 100 + 50 * max(0, str(title).count("<br>") - 1)


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
        fig.update_yaxes(title_text=axis_text(unit, element=el), row=1, col=col, rangemode="tozero")
        fig.update_xaxes(title_text=wrap_text(label, AXIS_CHARS), row=1, col=col)
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


def network_totals(table: pd.DataFrame, unit="kg/ha/yr", template=TEMPLATE, width=None):
    """Annual S and N totals of every site over the years.

    Filled markers are the years that enter the site's whole-span total, the one the
    ranking ranks (``rankable``: :func:`workbench.ui.summaries.network_table` with the
    span rows), a diamond where that year is ``flagged`` (used with a caution); the
    other years (partial, or failing completeness) are drawn with open markers, named
    "not in the whole-span total" (a flagged year read "not ranked" while its site was
    ranked first on it).  The lines join only the years used.

    Parameters
    ----------
    table : pandas.DataFrame
        Output of :func:`workbench.ui.summaries.network_table`.
    width : int, optional
        Width of the figure [px] (the network overview's
        :data:`~workbench.ui.figure_open.PAGE_FIGURE_WIDTH`); the years are then thinned
        to fit a panel of that width.  None: no width (plotly's choice), the years
        thinned for an output area of :data:`NOTEBOOK_PX`.

    Returns
    -------
    plotly.graph_objects.Figure
        Per site and element: one trace of rankable years and one of the others.
    """
    # one panel above the other, each the figure's width: side by side beside the
    # legend, each panel had ~150 px at a 1,000 px window and plotly turned the years on
    # end (a browser pass of the demo's 8 years)
    fig = make_subplots(rows=2, cols=1, subplot_titles=("sulfur", "nitrogen"),
                        vertical_spacing=TOTALS_GAP)
    sites = list(pd.unique(table["site"]))
    # more sites than colours: each round of the colours gets its own dash, so that no
    # two sites look alike; the open markers share one note instead of a legend entry
    # each (30 sites gave 60 entries behind a scroll bar)
    many = len(sites) > len(SITE_CYCLE)
    # a site with no open marker in either panel gets no "(partial ...)" legend entry:
    # the entry read as if the site had such totals
    unranked = set(table.loc[~table["rankable"].astype(bool) & np.isfinite(
        table["value"].astype(float)), "site"])
    for col, el in enumerate(ELEMENTS, start=1):
        for i, site in enumerate(sites):
            g = table[(table["site"] == site) & (table["element"] == el)]
            colour = SITE_CYCLE[i % len(SITE_CYCLE)]
            dash = SITE_DASHES[(i // len(SITE_CYCLE)) % len(SITE_DASHES)]
            for ok in (True, False):
                v = np.where(g["rankable"] == ok, g["value"], np.nan)
                used = ("in the whole-span total" if ok else
                        "not in the whole-span total (partial or failing completeness)")
                why = [f"{s}" + (f", no data for {m}" if m else "") + f": {used}"
                       for s, m in zip(g["status"], g["missing"])]
                symbol = (np.where(g["status"].astype(str) == "flagged", "diamond",
                                   "circle").tolist() if ok else "circle-open")
                fig.add_trace(go.Scatter(
                    x=g["period"], y=[x if np.isfinite(x) else None for x in v],
                    mode="lines+markers" if ok else "markers",
                    name=f"{site}" if ok else f"{site} {OPEN_NAME}",
                    legendgroup=site,
                    showlegend=col == 1 and (ok or (not many and site in unranked)),
                    line=dict(color=colour, dash=dash), connectgaps=False,
                    marker=dict(color=colour, size=9, symbol=symbol),
                    customdata=why,
                    hovertemplate=(f"{site} {el} total %{{x}}: %{{y:.3g}} "
                                   f"{axis_text(unit, element=el)}<br>%{{customdata}}"
                                   "<extra></extra>")), row=col, col=1)
        fig.update_yaxes(title_text=axis_text(unit, element=el), row=col, col=1,
                         rangemode="tozero")
        fig.update_xaxes(type="category", row=col, col=1, **year_ticks(table["period"]))
    fig.update_xaxes(title_text="year", row=2, col=1)
    fig.update_layout(title="Annual totals of the network (each site on its own surface)",
                      template=template, legend_title="site",
                      height=legend_height(len(sites) + 1, TOTALS_HEIGHT) if many
                      else TOTALS_HEIGHT)
    if width is not None:
        # the years that fit a panel of this width (at the 700 px plotly fell back to,
        # or at NOTEBOOK_PX, more years were named than a 540 px figure holds)
        fig.update_layout(width=width)
    fig.update_xaxes(**year_ticks(table["period"], totals_plot_px(fig, width or NOTEBOOK_PX)))
    if many:
        # one legend group per site: plotly's 10 px gap between groups made 30 entries
        # half as tall again as the room for them (a scroll bar after 22 sites)
        fig.update_layout(legend_tracegroupgap=0)
        fig.add_annotation(text=MARKER_NOTE,
                           xref="paper", yref="paper", x=0, y=0, yshift=-50,
                           showarrow=False, xanchor="left", yanchor="top",
                           font=dict(size=11))
    return fig


#: Legend name of a site's years left out of its whole-span total (after the site's id).
#: On two lines: on one, a site's entry made the legend ~250 px wide.
OPEN_NAME = "(open: not in the<br>whole-span total)"
#: The note of the markers of :func:`network_totals` with many sites (no legend entry
#: per site for the open markers): the ranking's rule in one line.
MARKER_NOTE = ("● a year in the whole-span total that ranks the site (◆ flagged: used "
               "with a caution) · ○ open: a year left out of it (partial or failing "
               "completeness)")
#: Height of the network's annual totals, two panels one above the other [px].
TOTALS_HEIGHT = 640
#: Gap between the sulfur and the nitrogen panel of the annual totals [share of the
#: height]: room for the sulfur panel's years and the nitrogen panel's title.
TOTALS_GAP = 0.12
#: Width of a notebook's output area in a 1,000 px browser window, JupyterLab's side
#: bar closed [px] (measured in chromium, JupyterLab 4.6); the width at which the
#: annual totals must write their years level.
NOTEBOOK_PX = 800
#: Room of a year label on a category axis [px]: four digits at plotly's 12 px font
#: (~7 px each) and a gap; plotly turns labels on end when they do not fit.
YEAR_LABEL_PX = 40


#: Most years a category axis of years names one by one (turned at
#: :data:`YEAR_ANGLE` where they do not fit level); more years are named every k-th
#: (:data:`YEAR_STEPS`).
EVERY_YEAR_MAX = 15
#: Steps of the years named on a long axis: the first that leaves at most
#: :data:`EVERY_YEAR_MAX` names, each a multiple of the step where the years allow
#: (2000, 2005, 2010 ...), common practice of axes of years.
YEAR_STEPS = (2, 5, 10, 20, 50, 100)
#: Angle of year labels that do not fit level [degrees]: slanted, read without turning
#: the head (plotly's own choice was 90 degrees, on end).
YEAR_ANGLE = -45
#: plotly's default left and right margins [px] (the legend, right of the plot, takes
#: the right margin when it is wider).
PLOTLY_MARGIN_PX = 80


def totals_plot_px(fig, notebook_px: int = NOTEBOOK_PX) -> float:
    """Width of a panel's plot area of :func:`network_totals` [px] in an output area
    `notebook_px` wide: the figure's width less plotly's left margin (80 px) and the
    right one, which the legend takes when it is wider than 80 px (its longest line at
    ~7 px a character, and 40 px of symbol and padding, set 2 % of the plot past it).

    Defect: the legend was taken off beside both 80 px margins; measured in chromium
    (the demo's 4 sites, a 540 px figure) the plot was 375 px, not the 305 px
    estimated, and 8 years were named every other one."""
    import re
    names = [t.name for t in fig.data if t.showlegend is not False] + ["site"]
    longest = max(len(line) for n in names for line in re.split("<br>", str(n)))
    legend = 40 + 7 * longest
    dom = fig.layout.xaxis.domain or (0, 1)
    right = max(PLOTLY_MARGIN_PX, legend + 0.02 * (notebook_px - PLOTLY_MARGIN_PX - legend))
    return (notebook_px - PLOTLY_MARGIN_PX - right) * (dom[1] - dom[0])


def year_ticks(periods, plot_px: float | None = None) -> dict:
    """Ticks of a category axis of years: every year up to :data:`EVERY_YEAR_MAX` years,
    level where they fit side by side in `plot_px` (default: a panel of the annual
    totals at :data:`NOTEBOOK_PX` with a legend of short site names), else slanted at
    :data:`YEAR_ANGLE`; more years every k-th (k of :data:`YEAR_STEPS`, the years
    named multiples of k where any is), level where they fit.

    >>> year_ticks(range(2016, 2024), 375)["tickvals"][:3], year_ticks(range(2016, 2024), 375)["tickangle"]
    (['2016', '2017', '2018'], 0)
    >>> year_ticks(range(1995, 2025), 300)["tickvals"][:3]
    ['1995', '2000', '2005']
    """
    years = sorted(pd.unique(pd.Series(periods).astype(str)))
    room = (NOTEBOOK_PX - 2 * PLOTLY_MARGIN_PX - 75) if plot_px is None else plot_px
    shown = years
    if len(years) > EVERY_YEAR_MAX:
        fit = max(1, int(room // YEAR_LABEL_PX))
        for step in YEAR_STEPS:
            if -(-len(years) // step) <= min(EVERY_YEAR_MAX, max(fit, 2)):
                break
        numeric = all(y.isdigit() for y in years)
        shown = [y for y in years if numeric and int(y) % step == 0]
        if len(shown) < 2:
            shown = years[::step]
    level = len(shown) * YEAR_LABEL_PX <= room
    return {"tickmode": "array", "tickvals": shown, "ticktext": shown,
            "tickangle": 0 if level else YEAR_ANGLE,
            "categoryorder": "array", "categoryarray": years}


#: Line dashes of the sites past the first round of :data:`SITE_CYCLE`.
SITE_DASHES = ("solid", "dot", "dash", "dashdot", "longdash")
#: Height of a bar of the ranking, tick label included [px] (every site named: plotly
#: skips category labels that do not fit, and a 30-site ranking named every third bar).
RANK_BAR_PX = 17


#: Bar colours of the ranking groups: every component first, then the partial groups.
RANKING_COLOURS = (OKABE_ITO["blue"], OKABE_ITO["orange"], OKABE_ITO["reddish_purple"],
                   OKABE_ITO["bluish_green"], OKABE_ITO["vermillion"], OKABE_ITO["sky_blue"])


def _rank_label(rank, site, group_tail, status) -> str:
    """``2 · ridge (flagged)``, ``1 · b (without NO2)``: the bar's label, its group (past
    the first) and a flagged status beside the rank."""
    extra = [x for x in (group_tail, "flagged" if status == "flagged" else "") if x]
    return f"{rank} · {site}" + (f" ({', '.join(extra)})" if extra else "")


def network_ranking_bars(ranking: pd.DataFrame, element: str, unit="kg/ha/yr",
                         template=TEMPLATE):
    """Sites ranked by their whole-span total, in the groups of the report's ranking.

    Parameters
    ----------
    ranking : pandas.DataFrame
        Output of :func:`workbench.ui.summaries.network_ranking` (``group, rank, site,
        value`` [unit], ``status``, ``years used``).

    Returns
    -------
    plotly.graph_objects.Figure
        One bar trace per ranked group (totals with every component; partial totals
        "without NO2", ranked apart, with their own colour and ranks); the sites
        without a total are named in a note, unranked.
    """
    from ..ranking import NO_TOTAL
    ranked = ranking[ranking["group"] != NO_TOTAL]
    fig = go.Figure()
    labels = []
    for k, (group, g) in enumerate(ranked.groupby("group", sort=False)):
        tail = "" if k == 0 and not group.startswith("partial") else \
            group.removeprefix('partial: ')
        # a flagged total is ranked (it holds every component of its group and passes
        # completeness) and says so beside its rank: used with a caution
        y = [_rank_label(r, s, tail, st)
             for r, s, st in zip(g["rank"], g["site"], g["status"].astype(str))]
        labels += y
        fig.add_trace(go.Bar(
            y=y, x=g["value"], orientation="h", name=group,
            marker=dict(color=RANKING_COLOURS[k % len(RANKING_COLOURS)]),
            customdata=np.stack([g["status"], g["years used"]], axis=-1),
            hovertemplate="%{y}: %{x:.3g}<br>%{customdata[0]}, years %{customdata[1]}"
                          "<extra></extra>"))
    none = ranking.loc[ranking["group"] == NO_TOTAL, "site"]
    if len(none):
        fig.add_annotation(text="No total (no year passes completeness), not ranked:<br>"
                                + ", ".join(none),
                           xref="paper", yref="paper", x=0, y=0, yshift=-RANK_AXIS_PX,
                           showarrow=False,
                           align="left", xanchor="left", yanchor="top",
                           bgcolor=ENVELOPE_FILL)
    if not len(ranked):              # say so in the plot, not an empty pair of axes
        fig.add_annotation(text=f"No site has a whole-span {element} total:<br>"
                                "nothing to rank (the sites are named below)",
                           xref="paper", yref="paper", x=0.5, y=0.5, showarrow=False)
        fig.update_xaxes(visible=False)
        fig.update_yaxes(visible=False)
    fig.update_layout(title=f"{element} total, whole span: ranked on equal footing<br>"
                            "<sup>partial totals apart, per missing set; flagged: ranked, "
                            "used with a caution</sup>",
                      xaxis_title=axis_text(unit, element=element), yaxis_title="rank · site",
                      yaxis=dict(autorange="reversed", categoryorder="array",
                                 categoryarray=labels, tickmode="array", tickvals=labels,
                                 ticktext=labels, automargin=True),
                      showlegend=False,        # each bar's label names its group
                      template=template)
    fig.update_layout(**ranking_size(len(labels), 2 if len(none) else 0))
    return fig


#: Top margin of the ranking [px]: its title and the line under it.
RANK_TOP_PX = 90
#: Room under the ranking's bars [px]: the value axis' numbers and title.
RANK_AXIS_PX = 60
#: Height of a line of the note under the ranking (the sites not ranked) [px].
RANK_NOTE_LINE_PX = 20
#: Least height of the ranking's plot area [px] (two or three bars stay bars).
RANK_PLOT_MIN_PX = 120


def ranking_size(n_bars: int, note_lines: int = 0) -> dict:
    """Height and margins [px] of a ranking of `n_bars` bars, with a note of
    `note_lines` lines under its axis: sized to what it holds.

    Defect: a fixed bottom margin of 160 px (room for a note that most rankings do not
    have) and a height of at least 420 px left about 150 px of white under the
    network overview's rankings.
    """
    bottom = RANK_AXIS_PX + (RANK_NOTE_LINE_PX * note_lines + 20 if note_lines else 0)
    plot = max(RANK_PLOT_MIN_PX, RANK_BAR_PX * n_bars)
    return {"height": RANK_TOP_PX + plot + bottom,
            "margin": {"t": RANK_TOP_PX, "b": bottom}}
