"""Figures of the gas schemes side by side: Vd by species and season, budget difference.

Pure functions: the velocities Datasets of each scheme (or a budget table with a
``scheme`` column, as ``[dry] compare_schemes = true`` writes it) in, a plotly figure
spec out.  The difference between two published schemes is a structural uncertainty
of dry deposition that no option within one scheme shows.
"""
from __future__ import annotations

import json

import numpy as np
import pandas as pd

from ..percent import no_percent_reason, percent_change
from ..periods import MONTH_SEASON, SEASON_NAMES
from .figure_period import with_period
from .figures import from_spec, subplot_layout
from .palette import TEMPLATE

#: Gases compared (particles do not depend on the gas scheme).
GASES = ("SO2", "HNO3", "NH3", "NO2", "O3")
#: Colour of each scheme (Okabe-Ito blue and vermillion; colour-blind safe).
SCHEME_COLOURS = {"wesely1989": "#0072B2", "zhang2003": "#D55E00"}
CM_PER_M = 100.0
HEIGHT = 380
#: Most ticks on the Vd axis of a season panel (about 80 px wide in the site
#: explorer's 520 px figure): three numbers stand level without touching the next
#: panel's.
VD_TICKS = 3


def seasonal_vd(vd_by_scheme: dict, site, receptor, gases=GASES) -> pd.DataFrame:
    """Mean Vd of each gas, season and scheme at one site and receptor [cm s-1].

    Parameters
    ----------
    vd_by_scheme : dict
        scheme name -> velocities Dataset of :func:`workbench.drydep.velocities`
        (``vd_<gas>`` in [m s-1]).
    site, receptor : str
    gases : sequence of str

    Returns
    -------
    pandas.DataFrame
        Columns scheme, season (DJF, MAM, JJA, SON), species, vd_cm_s, hours.
    """
    rows = []
    for scheme, ds in vd_by_scheme.items():
        month = ds["time"].values.astype("datetime64[M]").astype(np.int64) % 12 + 1
        season = MONTH_SEASON[month]
        i_s = ds.indexes["site"].get_loc(site)
        i_r = ds.indexes["receptor"].get_loc(receptor)
        for g in gases:
            v = ds[f"vd_{g}"].transpose("site", "receptor", "time").values[i_s, i_r]
            for s in SEASON_NAMES:
                x = v[season == s]
                ok = np.isfinite(x)
                rows.append((scheme, s, g, float(x[ok].mean() * CM_PER_M) if ok.any() else np.nan,
                             int(ok.sum())))
    return pd.DataFrame(rows, columns=["scheme", "season", "species", "vd_cm_s", "hours"])


def scheme_vd_spec(vd_by_scheme: dict, site, receptor, gases=GASES, period="") -> dict:
    """Spec of grouped horizontal bars: mean Vd by gas, one panel per season, one colour
    per scheme.

    The gases stand on the shared y axis, read level (upright bars in four panels of a
    660 px figure left each panel about 130 px for five names, and plotly stood them
    on end), the first gas on top.  Parameters as :func:`seasonal_vd`; `period` the
    years the velocities cover, for the title (``2021``, ``2019–2021``:
    :func:`workbench.ui.figure_period.span_label`), as the other site figures write it.
    """
    t = seasonal_vd(vd_by_scheme, site, receptor, gases)
    base, axes = subplot_layout(1, len(SEASON_NAMES), shared_yaxes=True,
                                subplot_titles=tuple(SEASON_NAMES), horizontal_spacing=0.05)
    layout = json.loads(base)
    data = []
    v = t["vd_cm_s"].to_numpy(dtype=float)
    top = float(np.nanmax(v)) * 1.05 if np.isfinite(v).any() else 1.0
    for col, season in enumerate(SEASON_NAMES):
        xname, yname = axes[col]
        for scheme in vd_by_scheme:
            sel = t[(t.season == season) & (t.scheme == scheme)].set_index("species")
            x = [None if not np.isfinite(sel.loc[g, "vd_cm_s"]) else float(sel.loc[g, "vd_cm_s"])
                 for g in gases]
            data.append({"type": "bar", "orientation": "h", "name": scheme, "x": x,
                         "y": list(gases), "legendgroup": scheme, "showlegend": col == 0,
                         "marker": {"color": SCHEME_COLOURS.get(scheme, "#999999")},
                         "hovertemplate": f"{season} · %{{y}} · {scheme}: %{{x:.3g}} cm s-1"
                                          "<extra></extra>",
                         "xaxis": xname.replace("axis", ""), "yaxis": yname.replace("axis", "")})
        # one scale in every season (read across); few numbers, level
        layout[xname].update(tickangle=0, nticks=VD_TICKS, range=[0, top])
        layout[yname].update(autorange="reversed", tickangle=0)
    layout[axes[0][1]]["title"] = {"text": "gas"}
    layout["annotations"] = layout.get("annotations", []) + [{
        "text": "mean Vd [cm s-1]", "xref": "paper", "yref": "paper", "x": 0.5, "y": 0,
        "yshift": -40, "showarrow": False, "xanchor": "center", "yanchor": "top"}]
    layout.update(barmode="group", height=HEIGHT, legend={"title": {"text": "gas scheme"}},
                  margin={"b": 70},
                  title={"text": with_period(f"Deposition velocity by gas scheme · {site} · "
                                             f"{receptor}", period)})
    return {"data": data, "layout": layout}


def budget_difference(table: pd.DataFrame, site, receptor, period="span") -> pd.DataFrame:
    """Dry deposition of each gas by scheme and its difference, from budget.csv rows.

    Parameters
    ----------
    table : pandas.DataFrame
        The rows of budget.csv with a ``scheme`` column (``compare_schemes``).
    site, receptor : str
    period : str
        The ``period`` label (default the whole-span mean).

    Returns
    -------
    pandas.DataFrame
        Index species; one column per scheme [kg ha-1 yr-1 of S or N] and
        ``difference`` (second scheme minus first, the first being the chosen one).
    """
    if "scheme" not in table:
        raise ValueError("the table has no 'scheme' column: run with [dry] compare_schemes = true")
    sel = table[(table["site"] == site) & (table["receptor"] == receptor)
                & (table["pathway"] == "dry") & (table["species"].isin(GASES))
                & (table["period"].astype(str) == str(period))]
    wide = sel.pivot_table(index="species", columns="scheme", values="flux_kg_ha_yr",
                           aggfunc="first")
    schemes = list(dict.fromkeys(table["scheme"]))
    wide = wide.reindex(columns=schemes)
    if len(schemes) >= 2:
        wide["difference"] = wide[schemes[1]] - wide[schemes[0]]
    return wide


def budget_difference_spec(table: pd.DataFrame, site, receptor, period="span") -> dict:
    """Spec of bars: the dry deposition of each gas under each scheme [kg ha-1 yr-1]."""
    wide = budget_difference(table, site, receptor, period)
    data = [{"type": "bar", "name": s, "x": list(wide.index),
             "y": [None if not np.isfinite(v) else float(v) for v in wide[s]],
             "marker": {"color": SCHEME_COLOURS.get(s, "#999999")}}
            for s in wide.columns if s != "difference"]
    return {"data": data, "layout": {
        "barmode": "group", "height": HEIGHT,
        "title": {"text": with_period(f"Dry deposition by gas scheme · {site} · {receptor}",
                                      "whole span" if str(period) == "span" else str(period))},
        "yaxis": {"title": {"text": "dry deposition [kg S or N ha-1 yr-1]"}},
        "legend": {"title": {"text": "gas scheme"}}}}


def scheme_vd(vd_by_scheme: dict, site, receptor, gases=GASES, template=TEMPLATE, period=""):
    """The figure of :func:`scheme_vd_spec` (plotly Figure)."""
    return from_spec(scheme_vd_spec(vd_by_scheme, site, receptor, gases, period), template)


def budget_difference_figure(table, site, receptor, period="span", template=TEMPLATE):
    """The figure of :func:`budget_difference_spec` (plotly Figure)."""
    return from_spec(budget_difference_spec(table, site, receptor, period), template)


# ---------------------------------------------------------------------- site explorer
#: Totals of the budget compared between schemes (names of ``Result.years["total"]``).
COMPARED_TOTALS = ("S_dry", "S_total", "N_dry", "N_total")


def in_years(vd, start, end):
    """The hours of a velocities Dataset inside [start, end).

    Parameters
    ----------
    vd : xarray.Dataset
        Hourly velocities (an hour labelled by its end, so the hours labelled in
        (start, end] are kept); values keep their units (Vd in [m s-1]).
    start, end : str
        ISO dates [UTC].

    Returns
    -------
    xarray.Dataset
    """
    t = vd["time"].values
    keep = (t > np.datetime64(start)) & (t <= np.datetime64(end))
    return vd.isel(time=np.flatnonzero(keep))


def scheme_budget_table(years_by_scheme: dict, site, receptor, unit="kg/ha/yr") -> pd.DataFrame:
    """Budget of each gas scheme and its difference, mean over the years.

    Parameters
    ----------
    years_by_scheme : dict
        scheme -> yearly budget (``Result.years``); the first is the reference (A), the
        second the one compared (B).
    site, receptor : str
    unit : str
        A key of :data:`workbench.ui.summaries.UNITS`.

    Returns
    -------
    pandas.DataFrame
        One row per total (``S dry``, ``S total``, ``N dry``, ``N total``) then per dry
        component (``dry SO2`` ...); columns ``element``, one per scheme [unit],
        ``difference`` (B minus A) [unit], ``percent`` (of A, where A is above 0;
        NaN from 0, below 0 or missing: :mod:`workbench.percent`) [%] and
        ``percent_note`` (why there is no percent; empty where there is one).
    """
    from .summaries import component_rates, mean_totals
    schemes = list(years_by_scheme)
    if len(schemes) != 2:
        raise ValueError(f"two schemes are compared, got {schemes}")
    cols, element = {}, {}
    for scheme, ds in years_by_scheme.items():
        tot = mean_totals(ds, site, receptor, None, unit)["value"]
        comp = component_rates(ds, site, receptor, None, unit)
        comp = comp[comp["pathway"] == "dry"]
        dry = comp.groupby(["element", "species"], sort=False)["value"].mean()
        vals = {}
        for name in COMPARED_TOTALS:
            label = name.replace("_", " ")
            vals[label] = float(tot.get(name, np.nan))
            element[label] = name.split("_")[0]
        for (el, sp), v in dry.items():
            vals[f"dry {sp}"] = float(v)
            element[f"dry {sp}"] = el
        cols[scheme] = pd.Series(vals)
    out = pd.DataFrame(cols)
    a, b = schemes
    out.insert(0, "element", pd.Series(element))
    out["difference"] = out[b] - out[a]
    # a percent of A only where A is above 0 (workbench.percent): a dry N below 0 (net
    # NH3 emission) flipped its sign, and a 0 under A left the bar without a word
    out["percent"] = percent_change(out[a].to_numpy(float), out[b].to_numpy(float))
    out["percent_note"] = no_percent_reason(out[a].to_numpy(float), out[b].to_numpy(float),
                                            f"the value under {a}", f"the value under {b}")
    return out


def percent_text(p: float, sign=True) -> str:
    """A percentage as read beside a bar or in a sentence: whole from 1 % up, two
    significant digits below (a -0.08 % change read "-0 %", and 0.55 % "1 %"), 0 as
    ``0 %`` without a sign.

    >>> [percent_text(v) for v in (-17.08, -0.078, 0.0, 0.553)]
    ['-17 %', '-0.078 %', '0 %', '+0.55 %']
    """
    if p == 0:
        return "0 %"
    body = f"{abs(p):.0f}" if abs(p) >= 1 else f"{abs(p):.2g}"
    return f"{('-' if p < 0 else '+') if sign else ''}{body} %"


def amount_text(v: float) -> str:
    """A signed difference to three significant digits (``-0.00377``: two decimals read
    "-0.00" for dry S) [the unit of `v`]."""
    return "0" if v == 0 else f"{v:+.3g}"


def _scheme_columns(table: pd.DataFrame) -> list:
    """The two schemes' columns of a :func:`scheme_budget_table` (A, B)."""
    return [c for c in table.columns
            if c not in ("element", "difference", "percent", "percent_note")]


def _percent_notes(table: pd.DataFrame) -> pd.Series:
    """``percent_note`` of the table, made from A and B where a table has none."""
    if "percent_note" in table:
        return table["percent_note"].fillna("").astype(str)
    a, b = _scheme_columns(table)
    return pd.Series(no_percent_reason(table[a].to_numpy(float), table[b].to_numpy(float),
                                       f"the value under {a}", f"the value under {b}"),
                     index=table.index)


def spread_sentence(table: pd.DataFrame, unit="kg/ha/yr") -> str:
    """One plain sentence on how far the two schemes' dry N and dry S lie apart.

    `table` as :func:`scheme_budget_table` gives it.  An element without a percent
    (its value under A is 0, below 0 or missing: :mod:`workbench.percent`) is named
    with the reason, its difference in the unit beside the others'.
    """
    from .summaries import axis_text
    a, b = _scheme_columns(table)
    notes = _percent_notes(table)
    known = [(el, table.loc[f"{el} dry", "percent"], table.loc[f"{el} dry", "difference"],
              notes.loc[f"{el} dry"])
             for el in ("N", "S") if np.isfinite(table.loc[f"{el} dry", "difference"])]
    if not known:
        return (f"Dry N and S cannot be compared between the two published gas schemes "
                f"(none under both {a} and {b}).")

    def by(p, note):
        return f"by {percent_text(p, sign=False)}" if np.isfinite(p) else f"({note})"
    words = [f"Dry {el} differs {by(p, note)}" if i == 0 else f"dry {el} {by(p, note)}"
             for i, (el, p, _, note) in enumerate(known)]
    amounts = [f"{amount_text(d)} {axis_text(unit, element=el)}" for el, _, d, _ in known]
    return (f"{' and '.join(words)} between the two published gas schemes "
            f"({b} minus {a}: {', '.join(amounts)}).")


#: The text beside a bar without a percent (its hover gives the reason).
NO_PERCENT_TEXT = "no %"


def budget_change_spec(table: pd.DataFrame, site, receptor, unit="kg/ha/yr",
                       period="") -> dict:
    """Spec of horizontal bars: budget of scheme B minus scheme A, each total and dry
    component [unit], with the percentage of A beside each bar (``no %`` where A is 0,
    below 0 or missing, the reason in the bar's hover); `period` the years of the
    table's means, for the title (as :func:`scheme_vd_spec`)."""
    from .summaries import axis_text, axis_title
    a, b = _scheme_columns(table)
    rows = list(table.index)[::-1]                        # the totals on top
    t = table.loc[rows]
    notes = _percent_notes(t)
    x = [None if not np.isfinite(v) else float(v) for v in t["difference"]]
    # no percent (A 0, below 0 or missing): "no %" beside the bar, the reason in its hover
    text = [NO_PERCENT_TEXT if not np.isfinite(p) else percent_text(p) for p in t["percent"]]
    hover = [percent_text(p) if np.isfinite(p) else n for p, n in zip(t["percent"], notes)]
    custom = [[float(t.loc[r, a]), float(t.loc[r, b]), axis_text(unit, element=t.loc[r, "element"]),
               h] for r, h in zip(rows, hover)]
    colours = [SCHEME_COLOURS.get(b, "#999999") if (v or 0) >= 0 else SCHEME_COLOURS.get(a, "#999999")
               for v in x]
    trace = {"type": "bar", "orientation": "h", "y": rows, "x": x, "text": text,
             "textposition": "outside", "name": f"{b} minus {a}", "customdata": custom,
             "marker": {"color": colours},
             "hovertemplate": (f"%{{y}}: {a} %{{customdata[0]:.3g}}, {b} %{{customdata[1]:.3g}} "
                               f"%{{customdata[2]}}; difference %{{x:.3g}} (%{{customdata[3]}})<extra></extra>")}
    return {"data": [trace], "layout": {
        "height": 60 + 26 * len(rows), "showlegend": False,
        "title": {"text": with_period(f"Budget under {b} minus under {a} · {site} · "
                                      f"{receptor}", period)},
        "xaxis": {"title": {"text": axis_title(f"{b} minus {a}", unit)}, "zeroline": True,
                  "range": label_room(x)},
        "margin": {"l": 90}}}


#: Share of the bars' span kept free on each side for the labels outside the bars [1]
#: (seen in the browser: "+11 %" cut at the right edge, "-15 %" over the tick labels).
LABEL_ROOM = 0.22


def label_room(x) -> list | None:
    """x range [unit] holding the bars and the percentages written outside their ends."""
    v = [float(u) for u in x if u is not None and np.isfinite(u)]
    if not v:
        return None
    lo, hi = min(0.0, min(v)), max(0.0, max(v))
    pad = LABEL_ROOM * ((hi - lo) or 1.0)
    return [lo - (pad if lo < 0 else 0.3 * pad), hi + (pad if hi > 0 else 0.3 * pad)]
