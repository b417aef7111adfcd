"""One rule for ranking sites by their whole-span totals, shared by the HTML report
(:mod:`workbench.report_network`) and the notebook's network overview
(:mod:`workbench.ui.apps_more`), so that both rank the same sites in the same order.

The rule (docs/budget.md, "Status" and "Whole span"): a whole-span total that holds every
component (status ``complete``, ``filled`` or ``flagged``: a flagged span row holds every
component and passes completeness, it carries kept flagged samples or a sulfate
fallback) is ranked with the others of its kind; a ``partial`` total is ranked apart, in
one group per set of missing components ("without NO2"), never beside a full one; a site
without a total (no year passes completeness) is listed last, unranked.

Imports only numpy and pandas: any module of the package may import it.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: Statuses whose whole-span totals hold every component (``flagged`` span rows hold
#: every component and pass completeness; they carry kept flagged samples or a
#: fallback, docs/budget.md "Whole span"); ``partial`` ones lack a component.
FULL_SET = ("complete", "filled", "flagged")
#: Name of the group of totals that hold every component.
EVERY_COMPONENT = "every component"
#: Name of the group of sites without a total (unranked).
NO_TOTAL = "no total"


def year_span(years) -> str:
    """``2016-2019, 2021``: years as text, runs of consecutive years joined.

    >>> year_span([2016, 2017, 2018, 2021]), year_span([]), year_span(["span"])
    ('2016-2018, 2021', '', 'span')
    """
    try:
        ys = sorted({int(str(y)) for y in years})
    except ValueError:                      # months, seasons: as they are
        return ", ".join(dict.fromkeys(map(str, years)))
    runs = []
    for y in ys:
        if runs and y == runs[-1][1] + 1:
            runs[-1][1] = y
        else:
            runs.append([y, y])
    return ", ".join(f"{a}" if a == b else f"{a}-{b}" for a, b in runs)


def years_of(text) -> list:
    """The years of a ``years_used`` cell (space-separated; none when not text)."""
    return [] if not isinstance(text, str) else text.split()


def own_surface_rows(frame: pd.DataFrame, catalogue) -> pd.DataFrame:
    """The rows of `frame` on each site's own land use (its first receptor in `frame`
    where the catalogue's land use is not among them).

    `catalogue` iterates over sites with ``id`` and ``land_use``."""
    own = {s.id: s.land_use for s in catalogue}
    have = frame.groupby("site", sort=False)["receptor"].agg(list)
    pick = {site: own.get(site) if own.get(site) in recs else recs[0]
            for site, recs in have.items()}
    return frame[frame["receptor"] == frame["site"].map(pick)]


def ranking(span: pd.DataFrame, element: str, n_periods=None, sites=None,
            value: str = "flux_kg_ha_yr") -> pd.DataFrame:
    """Sites ranked by their whole-span total of `element`, on equal footing only.

    Totals holding every component (:data:`FULL_SET`) are ranked together; partial
    totals are ranked apart, in one group per set of missing components (sites without
    NO2 among themselves); a site without a total is listed last, unranked, and so is
    each of `sites` (the run's) without a span row (no year passes completeness).

    Parameters
    ----------
    span : pandas.DataFrame
        Span rows of the totals (``species == "all"``, ``pathway == "total"``,
        ``period == "span"`` of budget.csv), one receptor per site: ``site, element,
        status, missing_components, years_used`` and the column `value`.
    element : {"S", "N"}
    n_periods : int, optional
        Number of reporting periods of the run (to say "7 of 10").
    sites : list of str, optional
        The run's sites.
    value : str
        Column of the total to rank [its unit; default kg/ha/yr].

    Returns
    -------
    pandas.DataFrame
        ``group, rank, site, value`` [unit of `value`], ``status``, ``years used``
        ("2019-2025 (7 of 10)" with `n_periods`); `rank` (text) counts within the group,
        highest first (empty for the unranked). Groups in the order: every component,
        the partial groups by name, no total.
    """
    e = span[span["element"] == element].copy()
    absent = [s for s in (sites or []) if s not in set(e["site"].astype(str))]
    if absent:
        e = pd.concat([e, pd.DataFrame({"site": absent, "element": element,
                                        value: np.nan, "status": "missing",
                                        "years_used": None})], ignore_index=True)
    miss = e["missing_components"].astype(object).fillna("").astype(str) \
        if "missing_components" in e \
        else pd.Series("", index=e.index)
    v = e[value].astype(float)
    full = e["status"].astype(str).isin(FULL_SET) & np.isfinite(v) & (miss.str.strip() == "")
    part = ((e["status"].astype(str) == "partial") | e["status"].astype(str).isin(FULL_SET)) \
        & np.isfinite(v) & ~full    # a flagged span row without NH3 is partial too
    e["group"] = np.where(full, EVERY_COMPONENT,
                          np.where(part, "partial: without " + miss.str.split().str.join(", "),
                                   NO_TOTAL))
    order = {EVERY_COMPONENT: 0}
    e["_g"] = e["group"].map(lambda g: order.get(g, 2 if g == NO_TOTAL else 1))
    e = e.sort_values(["_g", "group", value], ascending=[True, True, False], kind="stable")
    e["rank"] = e.groupby("group").cumcount() + 1
    e.loc[e["group"] == NO_TOTAL, "rank"] = np.nan
    n = e["years_used"].map(lambda t: len(years_of(t)))
    of = f" of {n_periods}" if n_periods else ""
    e["years used"] = [f"{year_span(years_of(t))} ({k}{of})" if k else "none"
                       for t, k in zip(e["years_used"], n)]
    out = e.drop(columns=["value"], errors="ignore").rename(columns={value: "value"})
    out["rank"] = out["rank"].map(lambda r: "" if not np.isfinite(r) else f"{int(r)}")
    return out[["group", "rank", "site", "value", "status", "years used"]].reset_index(drop=True)
