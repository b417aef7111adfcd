"""Figures of the analyses: the critical load function with the deposition (and its
5-95 % range when the run has Monte Carlo draws) and a what-if path, and a trend over the years with its Sen slope and confidence band.

Pure functions: numbers in, plain plotly JSON (``*_spec``) or a plotly Figure out.
"""
from __future__ import annotations

import numpy as np

from ..analysis.trends import VARIANTS
from ..analysis.whatif import percent_up
from .figures import LEGEND_LINE_PX, TITLE_CHARS, from_spec, wrap_text
from .palette import ENVELOPE_FILL, OKABE_ITO, TEMPLATE

#: Height of an analysis figure [px].
HEIGHT = 460
#: Characters of a line of the trend figure's legend (a 460 px legend at 12 px: it
#: fits a figure of 520 px, the narrowest a report or a notebook output gives it).
LEGEND_CHARS = 70
#: Room around the largest point of the critical load figure [1].
HEADROOM = 1.15


def _num(v) -> float:
    return float(v) if v is not None else float("nan")


def _range(ranges, name):
    """(p05, p95) of `name` in a row of exceedance.csv, or None [eq ha-1 yr-1]."""
    if ranges is None:
        return None
    lo, hi = (_num(ranges.get(f"{name}_p{q}")) for q in ("05", "95"))
    return (lo, hi) if np.isfinite([lo, hi]).all() else None


def clf_spec(loads: dict, s_dep=None, n_dep=None, path=None, title="", mode_text="",
             ranges=None) -> dict:
    """The critical load function of acidity with the deposition and a what-if path.

    Parameters
    ----------
    loads : dict
        ``cl_max_s``, ``cl_min_n``, ``cl_max_n`` and optionally ``cl_nut_n``
        [eq ha-1 yr-1].
    s_dep, n_dep : float, optional
        The deposition point [eq ha-1 yr-1].
    path : DataFrame, optional
        :func:`workbench.analysis.whatif.path_table` (``s_dep_eq_ha_yr``,
        ``n_dep_eq_ha_yr``, ``ex_acidity_eq_ha_yr``, ``fraction``).
    title, mode_text : str
        Title, and the label of the cuts' mode shown in the path's legend entry.
    ranges : mapping, optional
        A row of ``exceedance.csv`` of a run with ``[uncertainty] draws > 0``:
        ``s_dep_eq_ha_yr_p05``/``_p95`` and ``n_dep_eq_ha_yr_p05``/``_p95``
        [eq ha-1 yr-1] become error bars of the deposition point (the 5-95 % range of
        the Monte Carlo draws), and ``p_exceed_acidity`` [1], if given, goes into its
        legend entry.

    Returns
    -------
    dict
        ``{"data": [...], "layout": {...}}``; x is N and y is S deposition [eq/ha/yr].
    """
    cs, c0, c1 = (_num(loads.get(k)) for k in ("cl_max_s", "cl_min_n", "cl_max_n"))
    cn = _num(loads.get("cl_nut_n"))
    data = []
    if np.isfinite([cs, c0, c1]).all():
        data.append({"type": "scatter", "x": [0, 0, c0, c1, 0], "y": [0, cs, cs, 0, 0],
                     "mode": "lines", "fill": "toself", "fillcolor": ENVELOPE_FILL,
                     "line": {"color": OKABE_ITO["black"], "width": 2},
                     "name": "critical load function (no exceedance inside)",
                     "hovertemplate": "N %{x:.0f}, S %{y:.0f} eq/ha/yr<extra></extra>"})
    s_rng, n_rng = _range(ranges, "s_dep_eq_ha_yr"), _range(ranges, "n_dep_eq_ha_yr")
    xmax = max(v for v in (c1, cn, _num(n_dep), (n_rng or (1.0, 1.0))[1], 1.0)
               if np.isfinite(v)) * HEADROOM
    ymax = max(v for v in (cs, _num(s_dep), (s_rng or (1.0, 1.0))[1], 1.0)
               if np.isfinite(v)) * HEADROOM
    if np.isfinite(cn):
        data.append({"type": "scatter", "x": [cn, cn], "y": [0, ymax], "mode": "lines",
                     "line": {"color": OKABE_ITO["bluish_green"], "dash": "dash"},
                     "name": f"nutrient-N critical load ({cn:.0f} eq/ha/yr)",
                     "hovertemplate": "CLnutN %{x:.0f} eq/ha/yr<extra></extra>"})
    if path is not None and len(path):
        ex = np.asarray(path["ex_acidity_eq_ha_yr"], float)
        data.append({"type": "scatter", "x": list(np.asarray(path["n_dep_eq_ha_yr"], float)),
                     "y": list(np.asarray(path["s_dep_eq_ha_yr"], float)),
                     "mode": "lines+markers", "marker": {"size": 5},
                     "line": {"color": OKABE_ITO["vermillion"]},
                     "name": "what-if path" + (f" ({mode_text})" if mode_text else ""),
                     "customdata": [[f, e] for f, e in zip(np.asarray(path["fraction"], float), ex)],
                     "hovertemplate": "fraction %{customdata[0]:.2f} of the cuts<br>N %{x:.0f}, "
                                      "S %{y:.0f}<br>exceedance %{customdata[1]:.0f} eq/ha/yr"
                                      "<extra></extra>"})
        zero = np.flatnonzero(ex <= 0)
        if zero.size and zero[0] > 0:
            i = int(zero[0])
            data.append({"type": "scatter", "x": [float(path["n_dep_eq_ha_yr"].iloc[i])],
                         "y": [float(path["s_dep_eq_ha_yr"].iloc[i])], "mode": "markers",
                         "marker": {"size": 12, "symbol": "star", "color": OKABE_ITO["vermillion"]},
                         "name": f"exceedance ends ({percent_up(path['fraction'].iloc[i])} % "
                                 "of the cuts)"})
    if s_dep is not None and n_dep is not None and np.isfinite([_num(s_dep), _num(n_dep)]).all():
        point = {"type": "scatter", "x": [float(n_dep)], "y": [float(s_dep)], "mode": "markers",
                 "marker": {"size": 12, "color": OKABE_ITO["blue"], "symbol": "circle"},
                 "name": "deposition",
                 "hovertemplate": "N %{x:.0f}, S %{y:.0f} eq/ha/yr<extra></extra>"}
        for axis, rng, v in (("x", n_rng, float(n_dep)), ("y", s_rng, float(s_dep))):
            if rng is not None:
                point[f"error_{axis}"] = {"type": "data", "symmetric": False,
                                          "array": [max(rng[1] - v, 0.0)],
                                          "arrayminus": [max(v - rng[0], 0.0)],
                                          "color": OKABE_ITO["blue"], "thickness": 1.5}
        if s_rng or n_rng:
            p = _num(ranges.get("p_exceed_acidity"))
            point["name"] = ("deposition with the 5-95 % range of the draws"
                             + (f" (probability of acidity exceedance {p:.2f})"
                                if np.isfinite(p) else ""))
            point["hovertemplate"] = ("N %{x:.0f}, S %{y:.0f} eq/ha/yr<br>5-95 %: N "
                                      + ("{:.0f}-{:.0f}".format(*n_rng) if n_rng else "n/a")
                                      + ", S " + ("{:.0f}-{:.0f}".format(*s_rng) if s_rng else "n/a")
                                      + "<extra></extra>")
        data.append(point)
    layout = {"title": {"text": title or "Critical load function of acidity"},
              "xaxis": {"title": {"text": "N deposition [eq/ha/yr]"}, "range": [0, xmax]},
              "yaxis": {"title": {"text": "S deposition [eq/ha/yr]"}, "range": [0, ymax]},
              "height": HEIGHT}
    legend_below(layout, data)
    return {"data": data, "layout": layout}


#: Room under a plot for its x tick labels and axis title [px] (plotly's 12 px ticks,
#: the title's standoff and line, measured in chromium: ~50 px, and a gap).
AXIS_TITLE_PX = 70


def legend_below(layout: dict, data: list) -> dict:
    """Put a horizontal legend at the foot of the figure, under the x axis title, with
    room for one line per entry (a line more per ``<br>``); the figure grows by that
    room.  At ``y = -0.2`` of the plot (plotly's paper units) the legend's first line
    sat on "N deposition [eq/ha/yr]" in a 460 px figure: the gap shrinks with the plot.
    Changes and returns `layout`."""
    lines = sum(1 + str(t.get("name", "")).count("<br>") for t in data
                if t.get("showlegend", True) is not False and t.get("name"))
    room = LEGEND_LINE_PX * lines + 10
    layout["legend"] = {"orientation": "h", "yref": "container", "y": 0,
                        "yanchor": "bottom", "x": 0, "xanchor": "left"}
    layout.setdefault("margin", {})["b"] = AXIS_TITLE_PX + room
    layout["height"] = layout.get("height", HEIGHT) + room
    return layout


def clf_figure(loads, s_dep=None, n_dep=None, path=None, title="", mode_text="",
               template=TEMPLATE, ranges=None):
    """:func:`clf_spec` as a plotly Figure."""
    return from_spec(clf_spec(loads, s_dep, n_dep, path, title, mode_text, ranges), template)


def trend_spec(years, values, row=None, status=None, title="", unit="kg/ha/yr") -> dict:
    """Annual values over the years with the Sen slope and its confidence band.

    Parameters
    ----------
    years : array_like
        Calendar years [yr].
    values : array_like
        Annual values [`unit`]; NaN missing.
    row : mapping, optional
        A row of ``trends.csv`` (``sen_slope_per_yr``, ``slope_low_per_yr``,
        ``slope_high_per_yr``, ``intercept``, ``p_value``, ``valid``, ``note``).
    status : array_like of str, optional
        Status of each year; years that are not ``complete`` get an open marker.

    Returns
    -------
    dict
        Plain plotly JSON.  The band is drawn between lines of the lower and upper
        slope through the point (median year, median value) of the values used
        (common practice for a Sen slope's band).
    """
    t = np.asarray(years, float)
    x = np.asarray(values, float)
    st = np.asarray(status if status is not None else ["complete"] * t.size, dtype=object)
    full = st == "complete"
    data = [{"type": "scatter", "x": list(t[full]), "y": list(x[full]), "mode": "markers",
             "marker": {"color": OKABE_ITO["blue"], "size": 9}, "name": "complete years"}]
    if (~full).any():
        data.append({"type": "scatter", "x": list(t[~full]), "y": list(x[~full]),
                     "mode": "markers", "name": "other years (status in hover)",
                     "marker": {"color": OKABE_ITO["blue"], "size": 9, "symbol": "circle-open"},
                     "customdata": list(st[~full]),
                     "hovertemplate": "%{x}: %{y:.3g} (%{customdata})<extra></extra>"})
    if row is not None and np.isfinite(_num(row.get("sen_slope_per_yr"))):
        slope, icpt = float(row["sen_slope_per_yr"]), float(row["intercept"])
        ends = np.array([np.nanmin(t), np.nanmax(t)])
        # the band's pivot is the median year of the values the trend used (the row's
        # variant: complete, or complete and filled): with every year that has a value,
        # a flagged or partial year left out of the trend moved the pivot off it
        used = VARIANTS.get(str(row.get("values", "all")), VARIANTS["all"])
        ok = np.isfinite(x) & np.isin(st.astype(str), used)
        ok = ok if ok.any() else np.isfinite(x)
        tm = float(np.median(t[ok])) if ok.any() else float(np.mean(ends))
        xm = icpt + slope * tm
        lo, hi = (_num(row.get(k)) for k in ("slope_low_per_yr", "slope_high_per_yr"))
        if np.isfinite([lo, hi]).all():
            a, b = xm + lo * (ends - tm), xm + hi * (ends - tm)
            data.append({"type": "scatter", "x": list(ends) + list(ends[::-1]),
                         "y": list(np.minimum(a, b)) + list(np.maximum(a, b)[::-1]),
                         "fill": "toself", "fillcolor": ENVELOPE_FILL, "mode": "lines",
                         "line": {"width": 0}, "name": "confidence band of the slope",
                         "hoverinfo": "skip"})
        p = _num(row.get("p_value"))
        valid = "" if row.get("valid", True) else "not valid: " + str(row.get("note", ""))
        head = (f"Sen slope {slope:.3g} {unit} per yr "
                f"({f'p = {p:.2g}' if np.isfinite(p) else 'no test'})")
        # the reasons on lines of their own: one line ran past the figure's edge and
        # was cut ("... precipitation sampler RDG-P1 -> R")
        name = head + ("<br>" + wrap_text(valid, LEGEND_CHARS) if valid else "")
        data.append({"type": "scatter", "x": list(ends), "y": list(icpt + slope * ends),
                     "mode": "lines", "line": {"color": OKABE_ITO["vermillion"], "width": 2},
                     "name": name, "hovertemplate": name + "<extra></extra>"})
    title = wrap_text(title or "Trend over the years", TITLE_CHARS)   # a long site name
    lines = sum(str(t.get("name", "")).count("<br>") for t in data)  # beyond one each
    layout = {"title": {"text": title},
              "xaxis": {"title": {"text": "year"}, "dtick": 1},
              "yaxis": {"title": {"text": unit}},
              "height": HEIGHT + 30 * title.count("<br>"),
              "margin": {"t": 60 + 30 * title.count("<br>")}}
    legend_below(layout, data)          # a line per entry and per <br> of a name
    return {"data": data, "layout": layout}


def trend_figure(years, values, row=None, status=None, title="", unit="kg/ha/yr",
                 template=TEMPLATE):
    """:func:`trend_spec` as a plotly Figure."""
    return from_spec(trend_spec(years, values, row, status, title, unit), template)
