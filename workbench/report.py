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
from .runpaths import scenario_base, shown_path, shown_text
from .report_network import (NETWORK_SITES, fold, grouped_free_notes, grouped_notes,
                             network_section)
# the report's parts, re-exported here (imports of workbench.report keep working)
from .report_sections import (_BRACKET_COLUMN, MAX_SITE_FIGURES,  # noqa: F401
                              _bracket_notes_html, _exceedance_html, _figures_limited,
                              _nh3_html, _own_periods, _schemes_html, _settings_html,
                              _totals_heading, _trend_html, scheme_title)
from .report_numbers import number, table_formatters  # noqa: F401
from .report_tables import (_FAILS_MARK, _MARK, DIGITS, ROUNDING_FLOOR,  # noqa: F401
                            _headed, _pivot_html, _table_html, plain)

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


def _periods_text(periods) -> str:
    """`` (2017, whole span)``: the periods of a note, the whole span last."""
    named = sorted(p for p in periods if p != "span")
    named += ["whole span"] if "span" in periods else []
    return f" ({', '.join(named)})" if named else ""


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
    from .report_derived import derived_section       # oxidized/reduced N, acidity
    parts.extend(derived_section(result, network))
    parts.extend(_schemes_html(all_schemes, network))
    parts.extend(_nh3_html(result, network))
    from .analysis.uncertainty import (air_vd_held_state, air_vd_state, bulk_state,
                                       nh3_gamma_state, report_section)
    parts.extend(report_section(t, _table_html,
                                getattr(result.options.get("uncertainty"), "options", None),
                                bulk_state(result), nh3_gamma_state(result),
                                air_vd_state(result), air_vd_held_state(result)))
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
    unc = opts.get("uncertainty")
    if isinstance(unc, dict) and unc.get("vd_follows_air") is False:
        del unc["vd_follows_air"]            # as provenance.json: written only when on
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
