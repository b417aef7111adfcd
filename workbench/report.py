"""The self-contained HTML report of a run (viewable offline: plotly is inlined)."""
from __future__ import annotations

import html
import json
import re
from pathlib import Path

import numpy as np
import pandas as pd

from . import __version__
from .budget import OMISSIONS
from .column_labels import COLUMN_LABELS, header_cell
from .percent import no_percent_reason, percent_change
from .runpaths import scenario_base, shown_path, shown_text
from .report_numbers import DIGITS, ROUNDING_FLOOR, number, plain, table_formatters  # noqa: F401
from .report_network import (NETWORK_SITES, fold, grouped_free_notes, grouped_notes,
                             network_section)

CAUTION = (
    "Deposition estimates are model-based and uncertain. Dry deposition is inferred from "
    "concentrations and a resistance model whose parameters are uncertain by tens of "
    "percent; wet deposition depends on sampling efficiency and on how gaps are filled. "
    "Read the completeness and status of each number and the list of what is left out "
    "before comparing sites or years. For regulatory or compliance work, follow the "
    "methods your authority requires; these estimates do not replace local rules or "
    "accredited laboratory and network practice.")

#: report.html's pointer to the caution file of the CSV files (workbench.csvcaution).
CSV_CAUTION_LINE = ("The CSV files of this folder carry no caution line of their own (so "
                    "that pandas and spreadsheets read them as they are): CAUTION.txt "
                    "beside them holds it; hand it on with them.")


#: Sites with figures of their own (budget bars, trends) in the report; a larger network
#: gets them for its first sites and a sentence saying where the rest is (common
#: practice: a report of a few hundred interactive figures is slow to write and to open).
MAX_SITE_FIGURES = 12


def _periods_text(periods) -> str:
    """`` (2017, whole span)``: the periods of a note, the whole span last."""
    named = sorted(p for p in periods if p != "span")
    named += ["whole span"] if "span" in periods else []
    return f" ({', '.join(named)})" if named else ""


def _figures_limited(n_sites, shown, what) -> str:
    """The sentence telling the reader that figures were drawn for the first sites only."""
    if n_sites <= shown:
        return ""
    return (f"<p><b>Figures limited:</b> {what} drawn for the first {number(shown)} of "
            f"{number(n_sites)} "
            f"sites only. The numbers of every site are in the tables of this report and in "
            f"budget.csv and trends.csv of the run folder.</p>")


def _table_html(frame: pd.DataFrame, float_format=None, labels=None) -> str:
    """A table of the report: its CSV columns headed in words with units and their CSV
    name (:mod:`workbench.column_labels`; `labels` maps a column to this table's own
    words), the numbers by :func:`workbench.report_numbers.number` (a quantity, its
    thousands separated: counts of rows and samples too, which printed 280344) or as they
    are where the column names something (a year, a code: ``table_formatters``)."""
    fmt = plain if float_format is None else (lambda v: float_format.format(v))
    # a named column axis (a pivot's "status") is written as an empty column of its own
    frame = frame.rename_axis(columns=None)
    text = frame.to_html(index=False, border=0, classes="tab", na_rep="–", float_format=fmt,
                         formatters=table_formatters(frame, float_format))
    return _headed(text, frame.columns, labels)


def _headed(text: str, columns, labels=None) -> str:
    """`text` (one table of pandas' ``to_html``) with its header row made by
    :func:`workbench.column_labels.header_cell`."""
    labels = labels or {}
    row = "".join(header_cell(c, labels.get(c)) for c in columns)
    return re.sub(r"<thead>.*?</thead>", lambda m: f"<thead><tr>{row}</tr></thead>", text,
                  count=1, flags=re.S)


_MARK = {"complete": "", "flagged": " f", "partial": " p", "filled": " ~", "missing": ""}
#: The mark of a total that fails completeness (``passes`` false).
_FAILS_MARK = " x"


def _lacks(row) -> bool:
    """The row's sum lacks a component (a flagged total may: flagged wins over partial)."""
    m = row.get("missing_components")
    return isinstance(m, str) and m.strip() != ""


def _fails(row) -> bool:
    """The row's total fails completeness (budget.csv's ``passes`` false, not missing):
    a flagged total that is no complete figure for its period, apart from one flagged
    only to be read with care."""
    p = row.get("passes")
    return (p is not None and not pd.isna(p) and str(p).lower() not in ("true", "1")
            and row.get("status") != "missing")


def _pivot_html(per: pd.DataFrame) -> str:
    """Rows site/receptor/element, one column per period, value with a status mark; a
    total that fails completeness is marked ``x`` (not ``f``, which is left to a
    passing total flagged to be read with care)."""
    if per.empty:
        return "<p>No periods.</p>"
    cell = per.apply(lambda r: "–" if not np.isfinite(r["flux_kg_ha_yr"]) else
                     f"{plain(r['flux_kg_ha_yr'])}"
                     + (_FAILS_MARK if _fails(r) else _MARK.get(r['status'], '?'))
                     + (" p" if r["status"] != "partial" and _lacks(r) else ""), axis=1)
    wide = per.assign(cell=cell).pivot_table(index=["site", "receptor", "element"],
                                             columns="period", values="cell", aggfunc="first")
    wide.columns.name = None
    wide = wide.reset_index()
    return _headed(wide.to_html(index=False, border=0, classes="tab", na_rep="–"), wide.columns)


#: Reporting periods drawn in a site's budget figure when it shows the scenario's own
#: periods (the last ones; our choice: a year of months).
MAX_FIGURE_PERIODS = 12


#: Headings of the count columns of the rows read (the ledger's summary, not a column of
#: input_rows.csv, which has a row per file and status).
LEDGER_WORDS = {"read": "Rows read", "accepted": "Accepted", "flagged": "Flagged",
                "rejected": "Rejected"}
#: Width the report's budget figures arrange their period labels for [px]: the page's
#: width in a 1,000 px window (the body less its padding and a scroll bar, ~950 px)
#: with room to spare; wider pages draw them as wide as the page.
REPORT_FIGURE_PX = 900


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


def _shown_files(frame: pd.DataFrame, base) -> pd.DataFrame:
    """`frame` with its ``file`` column relative to the scenario's folder `base`."""
    if base is None or "file" not in frame:
        return frame
    return frame.assign(file=[shown_path(f, base) for f in frame["file"]])


def _run_line(scenario) -> str:
    """Scenario file and time of writing: which run a printed page belongs to."""
    import datetime as dt
    now = dt.datetime.now(dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    path = getattr(scenario, "path", None)      # its name: the same page wherever it ran
    where = f" · scenario {html.escape(Path(path).name)}" if path else ""
    return (f"{where} · written {now} · inputs with their SHA-256 and every option in "
            "provenance.json")


def render_report(result, study, scenario=None, max_site_figures=MAX_SITE_FIGURES,
                  network_sites=NETWORK_SITES) -> str:
    """HTML text of the report: budget tables, figures, QA summary, omissions, cautions.

    Figures of single sites are drawn for the first `max_site_figures` sites [1]; the
    tables keep every site.  With more than `network_sites` sites the report opens with
    the network sections (:mod:`workbench.report_network`: a table of the sites, the
    rankings, a figure of every site), groups the notes by cause and folds the long
    tables; it draws no per-site figures then."""
    import plotly.io as pio
    from .ui.figures import budget_bars
    from .comparison import chosen_scheme
    result, all_schemes = chosen_scheme(result)
    parts = [_settings_html(result, all_schemes)]
    t = result.table
    totals = t[(t["species"] == "all") & (t["pathway"] == "total")]
    span = totals[totals["period"] == "span"]
    network = len(result.years["site"]) > network_sites
    ex = None
    if network:
        from .analysis.exceedance import exceedance_table
        ex = exceedance_table(result, study.catalogue())
        net, first = network_section(result, study, span, ex, _table_html)
        parts.extend(net)
    whole = ("<p>No year passes completeness.</p>" if span.empty else _table_html(
        span[["site", "receptor", "element", "flux_kg_ha_yr", "flux_eq_ha_yr", "status",
              "missing_components", "years_used", "years_excluded"]]))
    parts.append("<h2>Whole span: mean of the years that pass completeness</h2>")
    if not span.empty:
        from .tables import SPAN_STATUS_WORDS
        parts.append("<p>Status of a whole-span row: " + html.escape(SPAN_STATUS_WORDS)
                     + ".</p>")
    parts.append(fold(whole, len(span), "every site and receptor") if network else whole)
    parts.extend(_exceedance_html(result, study, network, ex))
    parts.extend(_totals_heading(result))
    parts.append("<p>Marks: <b>x</b> fails completeness (no complete figure for the "
                 "period, never in the whole-span mean: the notes below and summary.csv's "
                 "<code>S_total_completeness_failure</code> say why), <b>f</b> flagged but "
                 "passing (holds something to read with care: the notes below say what), "
                 "<b>p</b> partial (a "
                 "component has no data), <b>~</b> filled, <b>–</b> missing. Exact values, "
                 "eq/ha and every component are in budget.csv.</p>")
    per = totals[totals["period"] != "span"]
    pivot = _pivot_html(per)
    parts.append(fold(pivot, per[["site", "receptor", "element"]].drop_duplicates().shape[0],
                      "the totals of every site, receptor and period") if network else pivot)
    parts.extend(_schemes_html(all_schemes, network))
    parts.extend(_nh3_html(result, network))
    from .analysis.uncertainty import bulk_state, nh3_gamma_state, report_section
    parts.extend(report_section(t, _table_html,
                                getattr(result.options.get("uncertainty"), "options", None),
                                bulk_state(result), nh3_gamma_state(result)))
    from .analysis.range_shares import report_section as shares_section
    parts.extend(shares_section(getattr(result, "range_shares", None), _table_html))
    parts.append("<h2>Dry nitrogen: the gas/particle bracket [kg N/ha per period]</h2>")
    parts.append("<p>Ammonium nitrate on filters shifts mass between HNO3 and pNO3 and between "
                 "NH3 and pNH4; HNO3 deposits far faster than pNO3. The bracket puts each pair "
                 "all in the gas and all in the particle phase: each member is deposited over "
                 "its own sampling periods with that phase's deposition velocity, so members "
                 "from different samplers (e.g. NH3 on monthly passive samplers, pNH4 on weekly "
                 "filters) are combined; the run notes name them.</p>")
    dv = result.derived
    if "dry_N_all_gas_kg_ha" in dv:
        cols = [c for c in ("dry_N_all_gas_kg_ha", "dry_N_all_gas_status",
                            "dry_N_all_particle_kg_ha", "dry_N_all_particle_status") if c in dv]
        frame = dv[cols].to_dataframe().reset_index()
        meas = t[(t["element"] == "N") & (t["pathway"] == "dry") & (t["species"] == "all")
                 & (t["period"] != "span")][["site", "receptor", "period", "flux_kg_ha",
                                              "status", "missing_components"]]
        frame = frame.merge(meas, on=["site", "receptor", "period"], how="inner")
        parts.append("<p>The status and missing components are those of the measured dry N; "
                     "each bracket has its own status, no better than the weaker member of a "
                     "pair (docs/budget.md); a bracket shown as – has a pair member without "
                     "data in that period (budget.nc's bracket_*_note says which reason); the "
                     "measured figure stands.</p>")
        # budget.csv's flux_kg_ha of the dry N sum, as measured
        bracket = _table_html(frame[["site", "receptor", "period", "flux_kg_ha",
                                     "status", "missing_components", *cols]],
                              labels={"flux_kg_ha": "Dry N as measured [kg N/ha]"})
        parts.append(fold(bracket, len(frame), "the bracket of every site, receptor and period")
                     if network else bracket)
        parts.append(_bracket_notes_html(result.budget, frame))
    notes_col = t["note"].dropna() if "note" in t else pd.Series(dtype=str)
    # the components' own notes: a sum row (species "all") gathers them again
    notes_col = notes_col[(notes_col != "") & (t.loc[notes_col.index, "species"] != "all")]
    if len(notes_col) and network:
        parts.append("<h2>Notes on components</h2><p>Grouped by species and cause, the "
                     "sites and periods each holds for; every note is in budget.csv.</p><ul>")
        parts.extend(grouped_notes(t.loc[notes_col.index]))
        parts.append("</ul>")
    elif len(notes_col):
        parts.append("<h2>Notes on components</h2><ul>")
        for (site, sp, note), g in t.loc[notes_col.index].groupby(["site", "species", "note"]):
            # the periods it holds for: the same words with other numbers read as repeats
            when = _periods_text(g["period"].astype(str).unique())
            parts.append(f"<li>{html.escape(site)} {html.escape(sp)}{html.escape(when)}: "
                         f"{html.escape(note)}</li>")
        parts.append("</ul>")
    ds = result.years
    last_year = str(ds["period"].values[-1])
    sites = ds["site"].values
    if not network:
        parts.append("<h2>Figures</h2>")
        first = True
        parts.append(_figures_limited(len(sites), min(len(sites), max_site_figures),
                                      "Budget figures are"))
    for site in ([] if network else sites[:max_site_figures]):
        rec = [r for r in ds["receptor"].values if bool(ds["active"].sel(site=site, receptor=r))]
        for r in rec[:1]:
            shown, year = ds, last_year
            passes = ds["total_passes"].sel(site=site, receptor=r, total="S_total").values
            if passes.any():
                year = str(ds["period"].values[np.flatnonzero(passes)[-1]])
            elif _own_periods(result, ds):
                # no calendar year passes (a study of some months): the scenario's own
                # periods, as in the table above, not a year of mostly unsampled months
                shown = result.budget
                year = [str(v) for v in shown["period"].values[-MAX_FIGURE_PERIODS:]]
            fig = budget_bars(shown, site, r, year, width=REPORT_FIGURE_PX)
            parts.append(pio.to_html(fig, include_plotlyjs="inline" if first else False,
                                     full_html=False))
            first = False
    trend_parts, first = _trend_html(result, study, first, max_site_figures, network)
    parts.extend(trend_parts)
    from .report_coverage import coverage_section    # gaps within the thresholds, too
    parts.extend(coverage_section(t, _table_html))
    parts.append("<h2>Precipitation-chemistry QA</h2>")
    if result.screened is not None:
        # counts of samples.csv's rows (no column of their own): headed in words
        st = pd.Series(result.screened["status"].values).value_counts().rename_axis("status") \
            .reset_index(name="Samples")
        parts.append("<p>Samples by status (samples.csv's <code>status</code>):</p>")
        parts.append(_table_html(st))
        reasons = pd.Series(result.screened["reasons"].values.astype(str))
        reasons = reasons[reasons != ""].str.split("; ").explode().value_counts() \
            .rename_axis("reason").reset_index(name="Samples")
        parts.append("<p>Reasons of the samples flagged or excluded (a sample may have "
                     "several; samples.csv's <code>reasons</code>):</p>")
        parts.append(_table_html(reasons))
    else:
        parts.append("<p>No precipitation file.</p>")
    parts.append("<h2>Input rows</h2>")
    base = scenario_base(scenario)             # files named as the scenario names them
    parts.append("<p>Files relative to the scenario's folder.</p>" if base is not None else "")
    parts.append(_table_html(_shown_files(study.inputs.ledger.summary(), base).rename(
        columns=LEDGER_WORDS)))
    reasons = study.inputs.ledger.reasons()   # why rows were flagged or rejected, per file
    if len(reasons):
        parts.append("<p>Reasons of the flagged and rejected rows (a row may have several; "
                     "samples.csv has them per precipitation sample):</p>")
        parts.append(_table_html(_shown_files(reasons, base)))
    led_notes = [shown_text(str(n), base) for n in study.inputs.ledger.notes]
    if led_notes and network:
        led_notes = grouped_free_notes(led_notes, sites.astype(str))
    if led_notes:
        parts.append("<ul>" + "".join(f"<li>{html.escape(n)}</li>" for n in led_notes) + "</ul>")
    parts.append("<h2>What the budget leaves out</h2><ul>")
    parts.extend(f"<li><b>{html.escape(a)}</b>: {html.escape(b)}</li>" for a, b in OMISSIONS)
    parts.append("</ul>")
    run_notes = [shown_text(str(n), base) for n in result.notes]
    if run_notes and network:
        run_notes = grouped_free_notes(run_notes, sites.astype(str))
    if run_notes:
        parts.append("<h2>Notes</h2><ul>" + "".join(f"<li>{html.escape(n)}</li>" for n in run_notes) + "</ul>")
    from .scenario import _plain
    opts = {k: _plain(getattr(v, "options", v) if k == "uncertainty" else v)
            for k, v in result.options.items()}    # the draws' options, not their arrays
    parts.append("<h2>Options in force</h2><details><summary>Show the options of this run "
                 "(as in provenance.json)</summary><pre>"
                 + html.escape(json.dumps(opts, indent=1, default=str)) + "</pre></details>")
    body = "\n".join(parts)
    title = "Deposition budget report"
    style = ("body{font-family:sans-serif;max-width:1100px;margin:auto;padding:1em;color:#222}"
             ".tab{border-collapse:collapse;font-size:85%;display:block;max-width:100%;"
             "overflow-x:auto}.tab td,.tab th{padding:2px 6px;"
             "border-bottom:1px solid #ddd}.tab th{text-align:left;vertical-align:bottom}"
             ".tab th .csv{font-weight:normal;font-size:85%;color:#666;font-family:monospace}"
             ".caution{background:#fff6e0;border-left:4px solid "
             "#E69F00;padding:.6em 1em}.settings{background:#eef4fa;padding:.4em 1em}"
             "@media print{body{max-width:none;font-size:10pt}.tab{font-size:8pt;display:table}"
             "tr,.js-plotly-plot{break-inside:avoid}details{display:block}}")
    return _numbered_figures(
        f"<!DOCTYPE html><html><head><meta charset='utf-8'><title>{title}</title>"
        f"<style>{style}</style></head><body><h1>{title}</h1>"
        f"<p>deposition workbench {__version__}{_run_line(scenario)}</p>"
        f"<p class='caution'><b>Caution.</b> {html.escape(CAUTION)}</p>{body}"
        f"<p class='caution'>{html.escape(CAUTION)} {CSV_CAUTION_LINE}</p></body></html>")


#: The random id plotly gives the div of a figure (a UUID4).
_FIGURE_ID = re.compile(r'<div id="([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-'
                        r'[0-9a-f]{12})" class="plotly-graph-div"')


def _numbered_figures(text: str) -> str:
    """`text` with plotly's random figure ids replaced by ``figure-1``, ``figure-2``, ...
    in page order, so that the same run writes the same page."""
    for i, fid in enumerate(dict.fromkeys(_FIGURE_ID.findall(text)), start=1):
        text = text.replace(fid, f"figure-{i}")
    return text
