"""The report's table of sampling coverage: the site-periods whose precipitation, air or
Vd record has a gap, even when the gap stays within the completeness thresholds (status
``complete``; docs/budget.md), so that a filter pack out of service for 10 weeks is seen
beside the number it lowers the weight of.
"""
from __future__ import annotations

import pandas as pd

#: A coverage below this is shown [1]: about 2.5 weeks of a year, a week of a month;
#: a weekly sample across the year's edge (0.98) is not (our choice).
SHOW_BELOW = 0.95

#: The coverage columns of budget.csv shown (their headings: workbench.column_labels,
#: as every table of the report).
_COLS = ("wet_coverage_fraction", "air_coverage", "vd_coverage")


def coverage_gaps(table: pd.DataFrame, below: float = SHOW_BELOW) -> pd.DataFrame:
    """Per site and reporting period, the lowest coverage of each kind, for the periods
    where one is below `below`.

    Parameters
    ----------
    table : DataFrame
        budget.csv rows (``Result.table``): ``wet_coverage_fraction``, ``air_coverage``,
        ``vd_coverage`` [1] per component; the ``span`` rows are left out.
    below : float
        Coverage under which a site-period is listed [1].

    Returns
    -------
    DataFrame
        site, period and one column per coverage [1] (NaN: not measured), sorted by site
        and period; empty when every coverage reaches `below`.
    """
    cols = [c for c in _COLS if c in table]
    t = table[table["period"].astype(str) != "span"]
    if not cols or t.empty:
        return pd.DataFrame(columns=["site", "period", *cols])
    low = t.groupby(["site", "period"], sort=False)[cols].min().reset_index()
    keep = (low[cols] < below).any(axis=1)
    return low[keep].sort_values(["site", "period"], kind="stable").reset_index(drop=True)


def coverage_section(table: pd.DataFrame, table_html) -> list:
    """HTML parts of the report's "Sampling coverage" section (a line when every
    coverage reaches :data:`SHOW_BELOW`)."""
    gaps = coverage_gaps(table)
    parts = ["<h2>Sampling coverage</h2>"]
    if gaps.empty:
        parts.append(f"<p>Every site and period has at least {SHOW_BELOW:.0%} of its hours "
                     "sampled (precipitation, air) and with a modelled Vd.</p>")
        return parts
    parts.append(f"<p>Site-periods with less than {SHOW_BELOW:.0%} of their hours sampled "
                 "or with a modelled Vd, whatever their status: a gap within the "
                 "completeness thresholds keeps a budget <b>complete</b> (the covered "
                 "weeks stand for the period), so it is said here. The input notes below "
                 "name the weeks; quality.csv has every coverage.</p>")
    shown = gaps.copy()
    for c in _COLS:
        if c in shown:
            shown[c] = shown[c].map(lambda v: "–" if pd.isna(v) else f"{v:.0%}")
    parts.append(table_html(shown))
    return parts
