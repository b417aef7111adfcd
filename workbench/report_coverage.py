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


def coverage_why(table: pd.DataFrame, gaps: pd.DataFrame) -> pd.DataFrame:
    """What lies behind each listed site-period's lowest coverage: the species with the
    lowest air coverage, where not every species shares it (``air_species``: "NH3"; a
    month of one species blank while its sampler ran was a bare "92%"; "" for a
    sampler out of service) and the period's met gaps from its dry rows' note
    (``met_gaps``: "wind speed without a value in 1008 h"; "" where the note has none).

    Parameters
    ----------
    table : DataFrame
        budget.csv rows (``species``, ``pathway``, ``air_coverage``, ``note``).
    gaps : DataFrame
        :func:`coverage_gaps` of `table`.

    Returns
    -------
    DataFrame
        ``air_species`` and ``met_gaps`` on the rows of `gaps`.
    """
    from .drymetgaps import MET_GAPS_NOTE
    keys = ["site", "period"]
    out = pd.DataFrame({"air_species": "", "met_gaps": ""}, index=gaps.index)
    if gaps.empty or "species" not in table:
        return out
    t = table[(table["period"].astype(str) != "span") & (table["species"] != "all")]
    at = pd.MultiIndex.from_frame(gaps[keys].astype(str))
    if "air_coverage" in t:
        a = t[t["air_coverage"].notna()].drop_duplicates(keys + ["species"])
        lowest = a.groupby(keys, sort=False)["air_coverage"].transform("min")
        at_min = (a["air_coverage"] - lowest).abs() < 1e-9
        # the species at the lowest coverage, where not every species is (a sampler
        # out of service lowers them all: no species to name)
        named = a[at_min].groupby(keys, sort=False)["species"].agg(" ".join)
        n_low = at_min.groupby([a[k] for k in keys], sort=False).sum()
        n_all = a.groupby(keys, sort=False)["species"].size()
        named = named[(n_low < n_all).reindex(named.index).fillna(False).to_numpy(bool)]
        named.index = pd.MultiIndex.from_arrays(
            [named.index.get_level_values(k).astype(str) for k in keys], names=keys)
        out["air_species"] = named.reindex(at).fillna("").to_numpy(dtype=object)
    if "note" in t:
        note = t["note"].fillna("").astype(str)
        part = note.str.extract("(" + MET_GAPS_NOTE + r" \(of its \d+ h\): [^;]*)",
                                expand=False).fillna("")
        m = t.assign(_m=part)[part != ""].drop_duplicates(keys)
        m = m.set_index(pd.MultiIndex.from_frame(m[keys].astype(str)))["_m"]
        out["met_gaps"] = m.reindex(at).fillna("").str.replace(
            MET_GAPS_NOTE + r" \(of its \d+ h\): ", "", regex=True).to_numpy(dtype=object)
    return out


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
                 "weeks stand for the period), so it is said here, with the species of the "
                 "lowest air coverage and the period's met gaps. The input notes below "
                 "name the weeks; quality.csv has every coverage.</p>")
    shown = gaps.copy()
    for c in _COLS:
        if c in shown:
            shown[c] = shown[c].map(lambda v: "–" if pd.isna(v) else f"{v:.0%}")
    # which species is lowest, and the met gaps behind a low Vd coverage, in the cell
    why = coverage_why(table, gaps)
    if "air_coverage" in shown:
        low = (gaps["air_coverage"] < SHOW_BELOW) & (why["air_species"] != "")
        shown.loc[low, "air_coverage"] = (shown.loc[low, "air_coverage"] + " ("
                                          + why.loc[low, "air_species"] + ")")
    if "vd_coverage" in shown:
        low = (gaps["vd_coverage"] < SHOW_BELOW) & (why["met_gaps"] != "")
        shown.loc[low, "vd_coverage"] = (shown.loc[low, "vd_coverage"] + " ("
                                         + why.loc[low, "met_gaps"] + ")")
    parts.append(table_html(shown))
    return parts
