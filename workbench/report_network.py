"""The network sections of report.html: one row per site, rankings on equal footing,
notes grouped by cause, long tables folded.

A report of more than :data:`NETWORK_SITES` sites opens with these sections: the reader of
a network wants the sites side by side first, and the per-site detail (every receptor,
every period) on demand.  A smaller report (the demo) keeps its layout.
"""
from __future__ import annotations

import html
import re

import numpy as np
import pandas as pd

# the one ranking rule of report and notebook (and the helpers it shares with them)
from .ranking import FULL_SET, own_surface_rows, ranking, year_span  # noqa: F401
from .ranking import years_of as _years
from .report_numbers import number

#: More sites than this give the report its network layout (common practice: up to a
#: handful of sites, a reader follows each one through every table).
NETWORK_SITES = 8
#: Tables longer than this many rows are folded (``<details>``) in the network layout.
FOLD_ROWS = 40


def fold(content: str, rows: int, what: str) -> str:
    """`content` inside a closed ``<details>`` whose summary says what and how many rows,
    when it has more than :data:`FOLD_ROWS` rows; as it is otherwise."""
    if rows <= FOLD_ROWS:
        return content
    return (f"<details><summary>Show {html.escape(what)} ({number(rows)} rows)</summary>"
            f"{content}</details>")


def site_summary(span: pd.DataFrame, catalogue, n_periods: int, trends=None,
                 exceedance=None, sites=None) -> pd.DataFrame:
    """One row per site on its own surface: whole-span S and N [kg/ha/yr] with status,
    the years used, the Sen slopes [% per yr] of the annual totals and the acidity
    exceedance [eq/ha/yr].

    Parameters
    ----------
    span : pandas.DataFrame
        The span rows of the totals (``species == "all"``, ``pathway == "total"``) of
        budget.csv, own surfaces only.
    n_periods : int
        Number of reporting periods of the run (to say "7 of 10").
    trends : pandas.DataFrame, optional
        :func:`workbench.analysis.trends.trend_table` rows (``values == "all"``).
    exceedance : pandas.DataFrame, optional
        Span rows of :func:`workbench.analysis.exceedance.exceedance_table`.
    sites : list of str, optional
        The run's sites: one without a span row (no year passes completeness) gets a
        row saying so, in this order.
    """
    names = {s.id: getattr(s, "name", "") or "" for s in catalogue}
    rows = []
    for site, g in span.groupby("site", sort=False):
        row = {"site": site, "name": names.get(site, ""), "surface": g["receptor"].iloc[0]}
        for el in ("S", "N"):
            e = g[g["element"] == el]
            if e.empty:
                continue
            r = e.iloc[0]
            used = _years(r.get("years_used"))
            status = str(r["status"])
            miss = r.get("missing_components")
            # a flagged total may lack a component too (flagged wins over partial in
            # the status of a sum): it read "flagged" alone, beside a ranking apart
            if status != "missing" and isinstance(miss, str) and miss.strip():
                status += f" (no {', '.join(miss.split())})"
            row[f"{el} [kg/ha/yr]"] = r["flux_kg_ha_yr"]
            row[f"{el} status"] = status
            row[f"{el} years"] = (f"{year_span(used)} ({number(len(used))} of {number(n_periods)})"
                                  if used else "none")
        if trends is not None:
            for el in ("S", "N"):
                tr = trends[(trends["site"] == site) & (trends["element"] == el)]
                if len(tr):
                    t = tr.iloc[0]
                    pct = t.get("sen_slope_pct_per_yr")
                    ok = bool(t.get("valid"))
                    # a valid trend without a percent (median 0, a value below 0)
                    # read "not valid"; trends.csv's note says why there is no percent
                    row[f"{el} trend [% per yr]"] = (
                        f"{pct:+.1f}" + ("" if ok else " (not valid)")
                        if pct is not None and np.isfinite(pct)
                        else "no percent (trends.csv says why)" if ok else "not valid")
        if exceedance is not None:
            ex = exceedance[exceedance["site"] == site]
            if len(ex):
                # of the span's mean deposition, not the mean of the years' exceedances
                row["acidity exceedance of the mean deposition [eq/ha/yr]"] = \
                    ex.iloc[0]["ex_acidity_eq_ha_yr"]
        rows.append(row)
    own = {s.id: s.land_use for s in catalogue}
    done = {r["site"] for r in rows}
    rows += [{"site": s, "name": names.get(s, ""), "surface": own.get(s, ""),
              "S status": "no total (no year passes completeness)",
              "N status": "no total (no year passes completeness)"}
             for s in (sites or []) if s not in done]
    if sites:
        order = {s: i for i, s in enumerate(sites)}
        rows.sort(key=lambda r: order.get(r["site"], len(order)))
    return pd.DataFrame(rows)


def ranking_html(span: pd.DataFrame, table_html, n_periods=None, sites=None) -> list:
    """The S and N rankings side by side, each group under its own heading."""
    out = ["<h2 id='ranking'>Ranking of the sites: whole-span totals on their own surface "
           "[kg/ha/yr of S or N]</h2>",
           "<p>Only totals on the same footing are ranked together: those holding every "
           "component (complete, filled, or flagged: used with a caution the notes give) in "
           "one ranking, and partial totals apart, one ranking per set of missing "
           "components; a partial total is lower than the full one would be and is never "
           "ranked beside it. Sites whose whole span rests on fewer years than the run "
           "holds (years used) average other years than the rest: read them with care.</p>",
           "<div style='display:flex;gap:2em;flex-wrap:wrap'>"]
    for el in ("S", "N"):
        r = ranking(span, el, n_periods, sites)
        out.append(f"<div><h3>{el}</h3>")
        for group, g in r.groupby("group", sort=False):
            out.append(f"<p><b>{html.escape(group)}</b> ({number(len(g))} site"
                       f"{'' if len(g) == 1 else 's'})</p>")
            out.append(table_html(g.drop(columns="group")))
        out.append("</div>")
    out.append("</div>")
    return out


_NUMBER = re.compile(r"\d+(\.\d+)?")


def grouped_notes(rows: pd.DataFrame) -> list:
    """Notes on components grouped by cause: one line per species and wording (numbers
    aside), with the sites and periods it holds for, most sites first.

    Parameters
    ----------
    rows : pandas.DataFrame
        Budget rows with a non-empty ``note``: ``site, species, period, note``.

    Returns
    -------
    list of str
        HTML ``<li>`` items.
    """
    r = rows.assign(key=rows["note"].astype(str).map(lambda n: _NUMBER.sub("#", n)))
    items = []
    for (sp, _), g in r.groupby(["species", "key"], sort=False):
        texts = list(dict.fromkeys(g["note"].astype(str)))
        sites = list(dict.fromkeys(g["site"].astype(str)))
        periods = [p for p in dict.fromkeys(g["period"].astype(str)) if p != "span"]
        when = year_span(periods) + (", whole span" if (g["period"].astype(str) == "span").any()
                                     else "")
        text = texts[0] + (f" (and {number(len(texts) - 1)} more with other numbers: budget.csv "
                           "has each)" if len(texts) > 1 else "")
        where = (f"{number(len(sites))} sites: " if len(sites) > 1 else "") + ", ".join(sites)
        items.append((len(sites), f"<li>{html.escape(str(sp))}: {html.escape(text)} — "
                                  f"<i>{html.escape(where)}</i> ({html.escape(when.strip(', '))})</li>"))
    items.sort(key=lambda x: -x[0])
    return [i for _, i in items]


def grouped_free_notes(notes, site_ids) -> list:
    """Free-text notes that differ only by their site as one line each: the first note
    as written, then "the same at N more sites: ..." (a note with other numbers or
    dates, a later start, stays a line of its own).

    Parameters
    ----------
    notes : list of str
    site_ids : iterable of str
        The ids of the run's sites; a note naming one (alone, or as the prefix of a
        sampler id ``v04-N1``) is grouped with the notes naming another.

    Returns
    -------
    list of str
        Plain text, in the order of first appearance.
    """
    ids = sorted({str(s) for s in site_ids}, key=len, reverse=True)
    pat = re.compile(r"(?<![\w-])(" + "|".join(map(re.escape, ids)) + r")(?=[-\s:,;.)]|$)") \
        if ids else None
    groups = {}
    for n in notes:
        found = list(dict.fromkeys(pat.findall(n))) if pat is not None else []
        key = pat.sub("\x00", n) if found else n
        g = groups.setdefault(key, [n, []])
        g[1].extend(s for s in found[:1] if s not in g[1])
    out = []
    for first, sites in groups.values():
        more = sites[1:]
        out.append(first + (f" — the same at {number(len(more))} more site"
                            f"{'s' if len(more) > 1 else ''}: {', '.join(more)}"
                            if more else ""))
    return out


def network_figure(span: pd.DataFrame):
    """Whole-span S and N totals of every site on its own surface: one horizontal bar per
    site (in catalogue order), totals holding every component filled, partial ones
    hatched and named "partial" in the legend.

    Parameters
    ----------
    span : pandas.DataFrame
        Own-surface span rows of the totals (``site, element, flux_kg_ha_yr, status,
        missing_components``) [kg/ha/yr].

    Returns
    -------
    plotly.graph_objects.Figure
    """
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots
    from .ui.palette import OKABE_ITO
    sites = list(dict.fromkeys(span["site"].astype(str)))
    fig = make_subplots(rows=1, cols=2, shared_yaxes=True, horizontal_spacing=0.04,
                        subplot_titles=("S total [kg S/ha/yr]", "N total [kg N/ha/yr]"))
    for col, el in enumerate(("S", "N"), start=1):
        e = span[span["element"] == el].set_index("site").reindex(sites)
        # the ranking's groups (workbench.ranking): a flagged total lacking a component
        # is drawn with the partial ones, as it is ranked (it was drawn as full)
        lacks = e["missing_components"].fillna("").astype(str).str.strip() != ""
        full = e["status"].astype(str).isin(FULL_SET) & ~lacks
        for mask, name, colour, shape in ((full, "every component", OKABE_ITO["blue"], ""),
                                          (~full, "partial (a component without data)",
                                           OKABE_ITO["orange"], "/")):
            fig.add_trace(go.Bar(
                y=sites, x=e["flux_kg_ha_yr"].where(mask), orientation="h", name=name,
                marker=dict(color=colour, pattern=dict(shape=shape)),
                legendgroup=name, showlegend=col == 1,
                customdata=np.stack([e["status"].astype(str),
                                     e["missing_components"].fillna("").astype(str)], -1),
                hovertemplate="%{y}: %{x:.3g}<br>%{customdata[0]} %{customdata[1]}"
                              "<extra></extra>"), row=1, col=col)
    fig.update_yaxes(autorange="reversed", title_text="site", row=1, col=1)
    plot_px = max(200, 18 * len(sites))            # the bars' own height [px]
    fig.update_layout(barmode="overlay", height=plot_px + 160, template="simple_white",
                      title="Whole-span totals of every site (mean of the years that pass "
                      "completeness)",      # the legend 45 px under the axes' tick labels
                      legend=dict(orientation="h", y=-45 / plot_px, yanchor="top"),
                      margin=dict(l=60, r=20, t=80, b=80))
    return fig


def network_section(result, study, span_all, exceedance, table_html) -> tuple:
    """The opening sections of a network report: the table of the sites, the rankings
    and the figure of every site.

    Parameters
    ----------
    span_all : pandas.DataFrame
        Span rows of the totals of every site and receptor (budget table).
    exceedance : pandas.DataFrame
        :func:`workbench.analysis.exceedance.exceedance_table` of the run.
    table_html : callable
        DataFrame -> HTML table (the report's).

    Returns
    -------
    (list of str, bool)
        The HTML parts, and whether plotly's script is still to be inlined (False once
        the figure carries it).
    """
    import plotly.io as pio
    from .analysis.trends import trend_table
    from .tables import budget_table
    cat = study.catalogue()
    span = own_surface_rows(span_all, cat)
    n_periods = int(result.years.sizes.get("period", 0))
    t = budget_table(result.years, lean=True)
    tot = own_surface_rows(t[(t["pathway"] == "total") & (t["species"] == "all")], cat)
    tr = trend_table(tot)
    tr = tr[tr["values"] == "all"] if len(tr) else None
    ex = own_surface_rows(exceedance[exceedance["period"] == "span"], cat) \
        if exceedance is not None and len(exceedance) else None
    sites = [str(s) for s in result.years["site"].values]
    summ = site_summary(span, cat, n_periods, tr, ex, sites)
    n_sites = len(summ)
    out = ["<h2 id='sites'>The sites of the network</h2>",
           f"<p>{number(n_sites)} sites, each on its own surface (its land use in sites.toml); "
           "whole-span totals are the mean of the years that pass completeness, with the "
           f"years used (of the run's {number(n_periods)}). Trends: Sen slope of the annual totals, "
           "\"not valid\" when too few complete years (the trend section below says why). "
           "Every receptor of every site is in the folded tables below and in budget.csv, "
           "summary.csv and exceedance.csv.</p>",
           table_html(summ)]
    out.extend(ranking_html(span, table_html, n_periods, sites))
    first = True
    if len(span):
        out.append(pio.to_html(network_figure(span), include_plotlyjs="inline",
                               full_html=False))
        first = False
    return out, first
