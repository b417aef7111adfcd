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

from ..periods import MONTH_SEASON, SEASON_NAMES
from .figures import from_spec, subplot_layout
from .palette import TEMPLATE

#: Gases compared (particles do not depend on the gas scheme).
GASES = ("SO2", "HNO3", "NH3", "NO2", "O3")
#: Colour of each scheme (Okabe-Ito blue and vermillion; colour-blind safe).
SCHEME_COLOURS = {"wesely1989": "#0072B2", "zhang2003": "#D55E00"}
CM_PER_M = 100.0
HEIGHT = 380


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


def scheme_vd_spec(vd_by_scheme: dict, site, receptor, gases=GASES) -> dict:
    """Spec of grouped bars: mean Vd by gas, one panel per season, one colour per scheme.

    Parameters as :func:`seasonal_vd`.
    """
    t = seasonal_vd(vd_by_scheme, site, receptor, gases)
    base, axes = subplot_layout(1, len(SEASON_NAMES), shared_yaxes=True,
                                subplot_titles=tuple(SEASON_NAMES), horizontal_spacing=0.03)
    layout = json.loads(base)
    data = []
    for col, season in enumerate(SEASON_NAMES):
        xname, yname = axes[col]
        for scheme in vd_by_scheme:
            sel = t[(t.season == season) & (t.scheme == scheme)].set_index("species")
            y = [None if not np.isfinite(sel.loc[g, "vd_cm_s"]) else float(sel.loc[g, "vd_cm_s"])
                 for g in gases]
            data.append({"type": "bar", "name": scheme, "x": list(gases), "y": y,
                         "legendgroup": scheme, "showlegend": col == 0,
                         "marker": {"color": SCHEME_COLOURS.get(scheme, "#999999")},
                         "xaxis": xname.replace("axis", ""), "yaxis": yname.replace("axis", "")})
    layout[axes[0][1]]["title"] = {"text": "mean Vd (cm s-1)"}
    layout.update(barmode="group", height=HEIGHT, legend={"title": {"text": "gas scheme"}},
                  title={"text": f"{site}, {receptor}: deposition velocity by gas scheme"})
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
        "title": {"text": f"{site}, {receptor}: dry deposition by gas scheme ({period})"},
        "yaxis": {"title": {"text": "kg S or N ha-1 yr-1"}},
        "legend": {"title": {"text": "gas scheme"}}}}


def scheme_vd(vd_by_scheme: dict, site, receptor, gases=GASES, template=TEMPLATE):
    """The figure of :func:`scheme_vd_spec` (plotly Figure)."""
    return from_spec(scheme_vd_spec(vd_by_scheme, site, receptor, gases), template)


def budget_difference_figure(table, site, receptor, period="span", template=TEMPLATE):
    """The figure of :func:`budget_difference_spec` (plotly Figure)."""
    return from_spec(budget_difference_spec(table, site, receptor, period), template)
