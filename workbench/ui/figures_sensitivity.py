"""Figures of the global sensitivity analysis: Sobol bars beside a tornado.

Pure functions: tables of :mod:`workbench.analysis.sensitivity` in, a plotly spec (and
a Figure built from it) out.
"""
from __future__ import annotations

import json
import re

import pandas as pd

from ..analysis.sensitivity_design import factor_label
from .figures import from_spec, subplot_layout
from .figures_budget import wrap_text
from .palette import OKABE_ITO, TEMPLATE

#: Thickness of each Sobol bar [fraction of a factor's row]: first order and total side
#: by side.
SOBOL_BAR = 0.4


def _pick(frame, site, receptor, period, element, quantity):
    return frame[(frame["site"] == site) & (frame["receptor"] == receptor)
                 & (frame["period"].astype(str) == str(period)) & (frame["element"] == element)
                 & (frame["quantity"] == quantity)]


#: Characters a line of a factor's name on the axis (wrapped at spaces beyond).
LABEL_CHARS = 26


def _labels(frames) -> dict:
    """factor -> its axis label in words with the unit (:func:`workbench.analysis.
    sensitivity_design.factor_label`; the key is in the bars' hover): ``Vd of NO2
    (multiplier) (no data)`` where the rows' ``note`` says the
    factor reaches only components without data at the site (any factor tied to a
    species: ``vd_``, ``fine_fraction_``, ``fine_mmd_``, ``rc_scale_``, ``nh3_gamma_``), ``(no effect)`` where it
    says the factor has nothing to act on (no bulk-collector samples).  Before, such a
    factor's empty bar looked like a measured nil effect; the note was in the CSV only."""
    out = {}
    for frame in frames:
        if "note" not in frame:
            continue
        for factor, note in zip(frame["factor"], frame["note"].fillna("").astype(str)):
            if "for want of data" in note:
                out[factor] = f"{factor_label(factor)} (no data)"
            elif note.startswith("no effect"):
                out.setdefault(factor, f"{factor_label(factor)} (no effect)")
    return out


def _lacks(frames) -> str:
    """The components the shown total lacks, from the rows' notes ("" when complete)."""
    for frame in frames:
        if "note" not in frame:
            continue
        for note in frame["note"].fillna("").astype(str):
            m = re.search(r"the total lacks ([^:]+): ", note)
            if m:
                return m.group(1).strip()
    return ""


def sensitivity_spec(sobol: pd.DataFrame, tornado: pd.DataFrame, site, receptor, period,
                     element="N", quantity="total", resolution="year") -> dict:
    """Plotly spec: first-order and total Sobol indices (with their 95 % bootstrap
    intervals) by factor, and the one-at-a-time low/high outputs around the base.  A
    factor whose rows' note says it had no data to act on is labelled so (``vd_NO2 (no
    data)``), and a total lacking components says so in the title (:func:`_labels`,
    :func:`_lacks`).

    Parameters
    ----------
    sobol : pandas.DataFrame
        Output of :func:`workbench.analysis.sensitivity.sobol`.
    tornado : pandas.DataFrame
        Output of :func:`workbench.analysis.sensitivity.tornado`.
    site, receptor, period, element, quantity : str
        The output shown (``element`` S, N or S+N; ``quantity`` wet, dry, total or
        potential_acidity).
    resolution : str
        The reporting resolution of the periods, for the tornado's unit when its rows
        do not name it (their ``unit`` column, :func:`~workbench.analysis.sensitivity.
        output_unit`, is used when present).
    """
    from ..analysis.sensitivity_options import output_unit
    layout_json, axes = subplot_layout(1, 2, horizontal_spacing=0.1,
                                       subplot_titles=("Sobol indices [1]", "One at a time"))
    layout = json.loads(layout_json)
    s = _pick(sobol, site, receptor, period, element, quantity).sort_values("ST")
    t = _pick(tornado, site, receptor, period, element, quantity)
    label = _labels((s, t))
    # the factors in words, broken into short lines: one axis of names for both panels
    # (the tornado's rows in the Sobol order), the key in each bar's hover
    def words(f):
        return wrap_text(label.get(f, factor_label(f)), LABEL_CHARS)
    s = s.assign(key=s["factor"], factor=s["factor"].map(words))
    t = t.assign(key=t["factor"], factor=t["factor"].map(words))
    lacks = _lacks((s, t))
    traces = []
    (x1, y1), (x2, y2) = axes
    # side by side in each factor's row (the panel overlays bars for the tornado: the
    # total bar, drawn second, hid the first-order one under it)
    for col, name, colour, offset in (("S1", "first order", OKABE_ITO["blue"], 0.0),
                                      ("ST", "total", OKABE_ITO["orange"], -SOBOL_BAR)):
        traces.append({"type": "bar", "orientation": "h", "name": name,
                       "width": SOBOL_BAR, "offset": offset,
                       "x": s[col].tolist(), "y": s["factor"].tolist(),
                       "customdata": s["key"].tolist(),
                       "hovertemplate": f"%{{y}} (option %{{customdata}}): {name} "
                                        "%{x:.3f}<extra></extra>",
                       "error_x": {"type": "data", "array": s[f"{col}_conf"].tolist()},
                       "marker": {"color": colour}, "xaxis": x1.replace("axis", ""),
                       "yaxis": y1.replace("axis", "")})
    # the unit the numbers are in: "kg S ha-1 yr-1" for years (it said "kg S/ha per
    # period", the period being a year)
    unit = (str(t["unit"].iloc[0]) if len(t) and "unit" in t
            else output_unit(element, resolution))
    if len(t):
        base = float(t["output_base"].iloc[0])
        t = t.assign(_span=(t["output_high"] - t["output_low"]).abs()).sort_values("_span")
        for col, end, colour in (("output_low", "low", OKABE_ITO["sky_blue"]),
                                 ("output_high", "high", OKABE_ITO["vermillion"])):
            traces.append({"type": "bar", "orientation": "h", "name": f"factor {end}",
                           "base": base, "x": (t[col] - base).tolist(),
                           "y": t["factor"].tolist(),
                           "customdata": list(zip(t["key"].astype(str), t[end].astype(str))),
                           "hovertemplate": f"%{{y}} (option %{{customdata[0]}}) {end} = "
                                            "%{customdata[1]}: "
                                            f"%{{x:+.3g}} {unit}<extra></extra>",
                           "marker": {"color": colour}, "xaxis": x2.replace("axis", ""),
                           "yaxis": y2.replace("axis", "")})
        # the baseline as the tables write it ("1,890", not "1.89e+03")
        shown = f"{base:,.0f}" if abs(base) >= 1000 else f"{base:.3g}"
        layout[x2]["title"] = {"text": f"{unit} (base {shown})"}
    # a row as tall as the most lines of a name (28 px held one line)
    lines = 1 + max([f.count("<br>") for f in list(s["factor"]) + list(t["factor"])] or [0])
    row = max(28, 14 * lines + 10)
    layout.update({"barmode": "overlay", "height": 120 + row * max(len(s), len(t), 4),
                   "title": {"text": f"Sensitivity of {element} {quantity.replace('_', ' ')} · "
                                     f"{site} · "
                                     f"{receptor} · {period}"
                                     + (f" (lacks {lacks}: indices of its measured part)"
                                        if lacks else "")}})
    layout[x1]["range"] = [0, 1.05]
    # every axis named (the index axis had its panel's title only)
    layout[x1]["title"] = {"text": "Sobol index [1]"}
    layout[y1]["title"] = {"text": "factor"}
    order = list(s["factor"]) + [f for f in t["factor"] if f not in set(s["factor"])]
    layout[y1].update({"categoryorder": "array", "categoryarray": order, "automargin": True})
    if len(s):      # the tornado's rows beside the same factor's Sobol bars, named once
        layout[y2].update({"categoryorder": "array", "categoryarray": order,
                           "showticklabels": False})
    if len(t) == 0:                 # no tornado rows: still say what the axis would hold
        layout[x2]["title"] = {"text": unit}
    return {"data": traces, "layout": layout}


def sensitivity_figure(sobol, tornado, site, receptor, period, element="N", quantity="total",
                       template=TEMPLATE, resolution="year"):
    """The Figure of :func:`sensitivity_spec`."""
    return from_spec(sensitivity_spec(sobol, tornado, site, receptor, period, element,
                                      quantity, resolution), template)
