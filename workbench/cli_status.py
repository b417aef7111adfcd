"""What ``workbench run`` prints after a run: the budgets' status counts, the notes on
the run's span and the sites whose totals are not complete.

Part of :mod:`workbench.cli`, which re-exports every name here.
"""
from __future__ import annotations


def status_lines(table, inputs) -> list[str]:
    """What a run's budgets hold, for the console: per element the status counts of the
    total budget of each site, receptor and period; with the coverage warnings when
    every one is missing (:func:`workbench.preflight.coverage_notes`)."""
    from .preflight import coverage_notes
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    if t.empty:
        return []
    parts = []
    els = sorted(t["element"].astype(str).unique(), key=lambda e: ("S", "N").index(e)
                 if e in ("S", "N") else 2)
    for el in els:
        g = t[t["element"].astype(str) == el]
        counts = g["status"].astype(str).value_counts()
        order = ["complete", "filled", "partial", "flagged", "missing"]
        keys = [k for k in order if k in counts] + [k for k in counts.index if k not in order]
        parts.append(f"{el}: " + ", ".join(f"{int(counts[k])} {k}" for k in keys))
    lines = ["budgets per site, receptor and period (total, summary.csv): " + "; ".join(parts)]
    if (t["status"].astype(str) == "missing").all():
        start = t["period_start"].min() if "period_start" in t else None
        end = t["period_end"].max() if "period_end" in t else None
        lines.append("warning: every budget is missing")
        if start is not None and end is not None:
            lines.extend("  " + c for c in coverage_notes(inputs, start, end))
    return lines


def run_span_notes(scenario, table, resolution=None, study=None) -> list[str]:
    """:func:`workbench.preflight.span_notes` for a finished run: its periods from
    `table` (budget rows), ``[period]`` start and end from the scenario file; with
    `study`, also the days of the record a default start or end left out
    (:meth:`workbench.pipeline.Study.span_notes`)."""
    from .preflight import span_notes
    from .scenario import load_scenario
    t = table[table["period"].astype(str) != "span"]
    if t.empty or "period_start" not in t:
        return []
    p = load_scenario(scenario).data["period"]
    left = [] if study is None else [
        "note: " + n.removeprefix("period: ") for n in study.span_notes(p.get("start"),
                                                                       p.get("end"))]
    return span_notes(p.get("start"), p.get("end"), t["period_start"].min(),
                      t["period_end"].max(), resolution or p["resolution"]) + left


def site_status_lines(table, min_sites=None) -> list[str]:
    """Where a network's totals are not complete, for the console: one line per element,
    status and set of missing components, naming the sites (with the periods, where not
    every period).  Empty for a run of at most `min_sites` sites (default
    :data:`workbench.report_network.NETWORK_SITES`), whose few sites the report shows
    one by one.

    A site counts when any of its receptors has that status in that period."""
    from .report_network import NETWORK_SITES, year_span
    min_sites = NETWORK_SITES if min_sites is None else min_sites
    t = table[(table["period"].astype(str) != "span") & (table["species"] == "all")
              & (table["pathway"] == "total")]
    if t.empty or t["site"].nunique() <= min_sites:
        return []
    every = set(t["period"].astype(str))
    miss = t["missing_components"].fillna("").astype(str) if "missing_components" in t \
        else ""
    t = t.assign(_miss=miss, _period=t["period"].astype(str), _status=t["status"].astype(str))
    words = {"partial": "partial", "flagged": "flagged (read with care: report.html says why)",
             "missing": "missing (no data)"}
    lines = []
    for el in ("S", "N"):
        for status, word in words.items():
            g = t[(t["element"] == el) & (t["_status"] == status)]
            if status != "partial":            # missing: every component; flagged: kept
                g = g.assign(_miss="")
            for m, gm in g.groupby("_miss", sort=True):
                sites = []
                for site, gs in gm.groupby("site", sort=False):
                    ps = set(gs["_period"])
                    sites.append(f"{site}" if ps == every else f"{site} ({year_span(ps)})")
                what = f"{el} {word}" + (f" without {', '.join(m.split())}" if m else "")
                lines.append(f"  {what}: {len(sites)} site{'s' if len(sites) > 1 else ''}: "
                             + ", ".join(sites))
    if lines:
        lines.insert(0, "sites whose totals are not complete (a site counts when any "
                     "receptor is; summary.csv has each; no period named = every period):")
    return lines
