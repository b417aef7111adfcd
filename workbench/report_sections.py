"""Sections of the report: critical-load exceedances, trends, the gas schemes and the
settings, the NH3 exchange, the notes of the dry N brackets, and how many sites have
figures; re-exported by :mod:`workbench.report`."""
from __future__ import annotations

import html
import re

import numpy as np
import pandas as pd

from .column_labels import COLUMN_LABELS
from .percent import no_percent_reason, percent_change
from .report_network import fold
from .report_numbers import number
from .report_tables import _table_html


#: Sites with figures of their own (budget bars, trends) in the report; a larger network
#: gets them for its first sites and a sentence saying where the rest is (common
#: practice: a report of a few hundred interactive figures is slow to write and to open).
MAX_SITE_FIGURES = 12


def _figures_limited(n_sites, shown, what) -> str:
    """The sentence telling the reader that figures were drawn for the first sites only."""
    if n_sites <= shown:
        return ""
    return (f"<p><b>Figures limited:</b> {what} drawn for the first {number(shown)} of "
            f"{number(n_sites)} "
            f"sites only. The numbers of every site are in the tables of this report and in "
            f"budget.csv and trends.csv of the run folder.</p>")


def _own_periods(result, years) -> bool:
    """The run's reporting periods differ from the calendar years (resolution month,
    season or hydro_year), so a figure may show them instead."""
    budget = getattr(result, "budget", None)
    if budget is None or budget is years or "period" not in budget.dims:
        return False
    return [str(v) for v in budget["period"].values] != [str(v) for v in years["period"].values]


def _totals_heading(result) -> list:
    """Heading of the totals per period; where a period is no year (months, seasons, a
    custom span) it says that its values are yearly rates, and how they are made (before,
    a month's 27.0 kg/ha/yr read as if deposited in the month)."""
    from .budget_axes import annual_factor
    periods = getattr(result, "periods", None)
    if periods is None or not len(periods) or np.allclose(annual_factor(periods), 1.0):
        return ["<h2>Totals per period [kg/ha/yr of S or N]</h2>"]
    kinds = sorted(set(periods["kind"].astype(str)))
    kind = {"month": "month", "season": "season", "custom": "custom period"}.get(
        kinds[0], "period") if len(kinds) == 1 else "period"
    return ["<h2>Totals per period as yearly rates [kg/ha/yr of S or N]</h2>",
            f"<p>Each {kind} is given as a yearly rate, the deposition of the {kind} "
            "times the hours of its year over its own hours (a 31-day month: x 8760/744 "
            f"= 11.8), so that {kind}s of different lengths and years compare; the "
            f"deposition of the {kind} itself is budget.csv's <code>flux_kg_ha</code> "
            "(kg/ha in the period), as in the bracket table below.</p>"]


def _exceedance_html(result, study, network=False, ex=None) -> list:
    """The span's critical-load exceedances (exceedance.csv has every year); folded when
    long in the `network` layout.  `ex`: the exceedance table, if already computed."""
    from .analysis.exceedance import REGIONS, exceedance_table
    if ex is None:
        ex = exceedance_table(result, study.catalogue())
    out = ["<h2>Critical-load exceedance of the mean deposition of the years that pass "
           "completeness [eq/ha/yr]</h2>"]
    span = ex[ex["period"] == "span"]
    if span.empty:
        if len(ex):
            return out + ["<p>No year passes completeness: each year's exceedance, with its "
                          "status and notes, is in exceedance.csv.</p>"]
        return out + ["<p>No critical loads in sites.toml, or no year passes completeness.</p>"]
    out.append("<p>Acidity: the sum of the S and N reductions to the nearest point of the "
               "critical load function (ICP Modelling and Mapping Manual); nutrient N: "
               "deposition above CLnutN. Regions: "
               + "; ".join(f"{k} {html.escape(v)}" for k, v in REGIONS.items()
                           if k >= 0 or (span["region"] == k).any())
               + ". The exceedance is not linear in the deposition: that of the mean "
               "deposition is not the mean of the years' exceedances (a year can exceed "
               "where the mean deposition does not). Every year, the loads used and the "
               "notes are in exceedance.csv; critical loads carry their own uncertainty.</p>")
    cols = ["site", "receptor", "s_dep_eq_ha_yr", "n_dep_eq_ha_yr", "ex_acidity_eq_ha_yr",
            "region", "ex_nutrient_n_eq_ha_yr", "status", "note"]
    drawn = ["p_exceed_acidity", "ex_acidity_eq_ha_yr_p05", "ex_acidity_eq_ha_yr_p95",
             "p_exceed_nutrient_n", "ex_nutrient_n_eq_ha_yr_p05", "ex_nutrient_n_eq_ha_yr_p95"]
    if all(c in span for c in drawn):
        out.append("<p>With the Monte Carlo (section Uncertainty): p is the share of the "
                   "draws of the S and N totals whose exceedance is above 0, and 5 % / 95 % "
                   "the quantiles of each exceedance over the same draws (each column its "
                   "own quantile; the critical loads are taken as exact, so p leaves out "
                   "their uncertainty). On a partial deposition (a lower bound) a p or a "
                   "quantile above 0 is at least that, and a 0 is not determined (empty). "
                   "p carries a Monte Carlo error of about sqrt(p (1 - p) / draws).</p>")
        cols = cols[:-2] + drawn + cols[-2:]
    table = _table_html(span[cols])
    out.append(fold(table, len(span), "the exceedance of every site and receptor")
               if network else table)
    return out


def _trend_html(result, study, first, max_sites=MAX_SITE_FIGURES, network=False) -> tuple:
    """Sen slopes of the annual S and N totals on each site's own surface, with a figure
    each for the first `max_sites` sites (trends.csv has every component, the monthly
    tests and the notes)."""
    import plotly.io as pio
    from .analysis.trends import MIN_YEARS, change_notes, trend_table
    from .tables import budget_table
    from .ui.figures_analysis import trend_figure
    t = budget_table(result.years, lean=True)
    cat = study.catalogue()
    own = {s.id: s.land_use for s in cat}
    tot = t[(t["pathway"] == "total") & (t["species"] == "all")
            & (t["receptor"] == t["site"].map(own))]
    out = ["<h2>Trends of the annual totals (Mann-Kendall, Sen slope)</h2>",
           f"<p>A trend is valid with at least {MIN_YEARS} complete years; the band is the "
           "95 % confidence interval of the slope. The slope in % per yr is relative to "
           "the median of the years used (the Sen line's level in the middle of the "
           "series), not to the first year; where that median is 0 or a value is below 0 "
           "there is no percent, and the note says why. The test takes every year's total "
           "as computed, filled years included; trends.csv has it also without the filled "
           "years, every component, the seasonal Kendall test on monthly values and the "
           "notes.</p>"]
    tr = trend_table(tot, changes=change_notes(cat, study.inputs))
    if tr.empty:
        return out + ["<p>No annual totals.</p>"], first
    tr = tr[tr["values"] == "all"]
    # a sentence's words, not Python's True/False; the rows shown are all of the
    # "values: all" variant, which the paragraph above says: the note keeps the reasons
    tr = tr.assign(valid=tr["valid"].map({True: "yes", False: "no"}).fillna("–"),
                   note=tr["note"].str.replace(r"^values: all(; |$)", "", regex=True))
    table = _table_html(tr[["site", "receptor", "element", "n_years", "tau", "p_value",
                            "sen_slope_per_yr", "sen_slope_pct_per_yr", "valid", "note"]])
    if network:       # the slopes are in the table of the sites; one figure per site
        return out + ["<p>Each site's slopes are in the table of the sites at the top; "   # no
                      "per-site trend figures in a network report.</p>",
                      fold(table, len(tr), "the trend test of every site")], first
    out.append(table)
    sites = list(dict.fromkeys(tot["site"]))
    shown = set(sites[:max_sites])
    out.append(_figures_limited(len(sites), len(shown), "Trend figures are"))
    for (site, el), g in tot.groupby(["site", "element"], sort=False):
        if site not in shown:
            continue
        row = tr[(tr["site"] == site) & (tr["element"] == el)]
        g = g.sort_values("period_start")
        fig = trend_figure(g["period_start"].dt.year, g["flux_kg_ha_yr"],
                           row.iloc[0].to_dict() if len(row) else None, g["status"].to_numpy(),
                           f"{el} total · {site} · {own.get(site, '')}", "kg/ha/yr")
        out.append(pio.to_html(fig, include_plotlyjs="inline" if first else False,
                               full_html=False))
        first = False
    return out, first


def scheme_title(scheme) -> str:
    """HTML words for a gas scheme's option value: its published source, then the value
    the scenario and budget.csv's ``scheme`` column use, e.g. ``Wesely (1989)
    (<code>gas_scheme = "wesely1989"</code>)``; an unknown value is shown as it is."""
    import importlib

    from .drydep.gas import SCHEMES
    key = html.escape(str(scheme))
    if scheme not in SCHEMES:
        return key
    ref = getattr(importlib.import_module(SCHEMES[scheme]), "REFERENCE", "")
    m = re.match(r".*?\(\d{4}\)", ref)          # the authors and year of the reference
    return (f"{html.escape(m.group(0))} (<code>gas_scheme = \"{key}\"</code>)" if m
            else key)


#: The bracket columns of the report's table that a bracket note explains.
_BRACKET_COLUMN = {"all_gas": "dry_N_all_gas_kg_ha", "all_particle": "dry_N_all_particle_kg_ha"}


def _bracket_notes_html(budget, frame: pd.DataFrame) -> str:
    """A list of the reasons of the bracket table's rows (budget.nc's ``bracket_*_note``):
    which column, which sites and receptors, which periods, why (e.g. a particle bracket of
    0 at a bulk-collector site, its pair counted in the wet deposition). Empty when no row
    of `frame` has a note."""
    names = [v for v in budget.data_vars if v.startswith("bracket_") and v.endswith("_note")]
    if not names or frame.empty:
        return ""
    notes = budget[names].to_dataframe().reset_index()
    notes = frame[["site", "receptor", "period"]].merge(notes, on=["site", "receptor", "period"],
                                                         how="inner")
    long = notes.melt(id_vars=["site", "receptor", "period"], value_vars=names,
                      var_name="var", value_name="note")
    long = long[long["note"].fillna("").astype(str).str.strip() != ""]
    if long.empty:
        return ""
    # bracket_nitrate_all_particle_note -> the table's column dry_N_all_particle_kg_ha
    long["column"] = long["var"].str.extract(r"_(all_gas|all_particle)_note$")[0].map(
        _BRACKET_COLUMN)
    n_periods = frame.groupby(["site", "receptor"])["period"].nunique()
    items = []
    for (col, note), g in long.groupby(["column", "note"], sort=False):
        where = []
        for (site, rec), h in g.groupby(["site", "receptor"], sort=False):
            periods = sorted(set(map(str, h["period"])))
            when = ("every period" if len(periods) == n_periods.get((site, rec), -1)
                    else ", ".join(periods))
            where.append(f"{site} · {rec} ({when})")
        items.append(f"<li><b>{html.escape(COLUMN_LABELS.get(col, col))}</b> "
                     f"(<code>{html.escape(col)}</code>) at {html.escape('; '.join(where))}: "
                     f"{html.escape(note)}</li>")
    return ("<p>Why a bracket is 0 or shown as – in the table above (budget.nc's "
            "bracket_*_note):</p><ul>" + "".join(items) + "</ul>")


def _settings_html(result, all_schemes) -> str:
    """The choices a reader must know before reading any number: gas scheme, NH3."""
    dry = result.options.get("dry")
    scheme = getattr(dry, "gas_scheme", "?")
    nh3 = getattr(dry, "nh3_treatment", "deposition_only")
    text = f"<b>Gas scheme:</b> {scheme_title(scheme)}"
    if all_schemes is not None:
        others = [scheme_title(s) for s in dict.fromkeys(all_schemes["scheme"]) if s != scheme]
        text += (f" (the tables below); also computed: {', '.join(others)}, "
                 "see <a href='#schemes'>Gas scheme comparison</a>")
    text += ". <b>NH3:</b> " + (
        "net exchange (canopy compensation point; an emission is negative), with the "
        "deposition-only figure beside it in <a href='#nh3'>NH3 net exchange</a>"
        if nh3 == "bidirectional" else "deposition only (no emission from the canopy)")
    return f"<p class='settings'>{text}.</p>"


def _schemes_html(all_schemes, network=False) -> list:
    """Whole-span S and N totals under each gas scheme, side by side (folded when long
    in the `network` layout)."""
    if all_schemes is None:
        return []
    t = all_schemes
    span = t[(t["species"] == "all") & (t["pathway"] == "total") & (t["period"] == "span")]
    key = ["site", "receptor", "element"]
    names = list(dict.fromkeys(t["scheme"]))
    rows = pd.MultiIndex.from_frame(span[key].drop_duplicates())   # the pairs that exist
    wide = span.set_index(key + ["scheme"])["flux_kg_ha_yr"].unstack("scheme") \
        .reindex(index=rows, columns=names)
    stat = span.set_index(key + ["scheme"])["status"].unstack("scheme") \
        .reindex(index=rows, columns=names)
    out = pd.DataFrame(index=wide.index)
    for n in names:
        out[f"{n} [kg/ha/yr]"] = wide[n]
        out[f"{n} status"] = stat[n].fillna("missing")
    if len(names) > 1:
        # a percent of the first scheme's total only where it is above 0 (a total of 0
        # read "inf", one below 0 had its sign flipped); the reason where there is none
        a, b = wide[names[0]].to_numpy(float), wide[names[1]].to_numpy(float)
        out[f"{names[1]} - {names[0]} [%]"] = percent_change(a, b)
        why = no_percent_reason(a, b, f"the total under {names[0]}",
                                f"the total under {names[1]}")
        if any(why):
            out["percent note"] = why
    return ["<h2 id='schemes'>Gas scheme comparison: whole-span totals [kg/ha/yr of S or N]</h2>",
            "<p>The same inputs under each gas scheme: the difference is a structural "
            "uncertainty of dry deposition (two published schemes, both defensible). "
            "budget.csv has every row of every scheme (column <code>scheme</code>); "
            "summary.csv, budget.nc and the rest of this report are the chosen scheme's.</p>",
            fold(_table_html(out.reset_index()), len(out), "every site and receptor")
            if network else _table_html(out.reset_index())]


def _nh3_html(result, network=False) -> list:
    """NH3 net exchange beside the deposition-only figure, per period (bidirectional;
    folded when long in the `network` layout)."""
    t = result.table
    if "nh3_deposition_only_kg_ha" not in t:
        return []
    rows = t[(t["species"] == "NH3") & (t["period"] != "span")]
    if rows.empty or not (rows.get("nh3_figure") == "net").any():
        return []
    cols = ["site", "receptor", "period", "flux_kg_ha", "nh3_deposition_only_kg_ha",
            "status", "note"]
    frame = rows[cols]
    heads = {"flux_kg_ha": "NH3 net [kg N/ha]"}
    return ["<h2 id='nh3'>NH3 net exchange beside deposition only [kg N/ha per period]</h2>",
            "<p>The N totals above use the net (negative: the canopy emits). A period whose "
            "net is an emission while its deposition-only figure is a deposition is "
            "<b>flagged</b> (<code>nh3_net_emission</code>): its total N is not "
            "deposition-only.</p>", fold(_table_html(frame, labels=heads), len(frame),
                                         "every period")
            if network else _table_html(frame, labels=heads)]
