"""Figures of the network: every site's totals year by year (with the ticks of the
years fitted to the plot's width) and the ranking of the sites.

Moved from :mod:`workbench.ui.figures` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from .figures_budget import ELEMENTS, legend_height
from .palette import ENVELOPE_FILL, OKABE_ITO, SITE_CYCLE, TEMPLATE
from .summaries import axis_text, axis_title


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
        fig.update_yaxes(title_text=axis_title(f"{el} total", unit, element=el, wrap=True),
                         row=col, col=1,
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
                      xaxis_title=axis_title(f"{element} total", unit, element=element),
                      yaxis_title="rank · site",
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
