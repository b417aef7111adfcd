"""The tables of a network: every site's annual totals on its own surface
(:func:`network_table`), the whole-span totals (:func:`network_span`) and the ranking
(:func:`network_ranking`).  :mod:`.summaries` re-exports these names.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .summaries_budget import RANKABLE, to_unit, total_rates

def network_table(year_ds: xr.Dataset, catalogue=None, unit="kg/ha/yr",
                  span=None) -> pd.DataFrame:
    """Annual totals of every site on its own surface, over the years.

    Parameters
    ----------
    year_ds : xarray.Dataset
        ``Result.years`` of a run over several sites.
    catalogue : SiteCatalogue, optional
        Gives each site's own land use (the receptor shown); default the first active
        receptor of the site.
    span : pandas.DataFrame, optional
        :func:`network_span` rows: ``rankable`` is then the ranking's own rule, the
        years its whole-span total averages (``years_used``).  Without it, a year
        whose total is ``complete`` or ``filled`` (:data:`RANKABLE`).

    Returns
    -------
    pandas.DataFrame
        ``site, receptor, period, element, value`` [unit], ``status``, ``missing``,
        ``rankable`` (bool: the year enters the whole-span total that ranks the site:
        it holds every component the used years hold and passes completeness; a
        ``flagged`` year may, with a caution), ``passes`` and ``failure``
        (:func:`workbench.ui.summaries.total_rates`).
    """
    rows = []
    for site in year_ds["site"].values.astype(str):
        if catalogue is not None and site in catalogue.ids:
            rec = catalogue[site].land_use
        else:
            act = year_ds["active"].sel(site=site).values
            rec = str(year_ds["receptor"].values[np.flatnonzero(act)[0]])
        t = total_rates(year_ds, site, rec, None, unit)
        t = t[t["pathway"] == "total"].assign(site=site, receptor=rec)
        rows.append(t)
    t = pd.concat(rows, ignore_index=True)
    if span is None:
        t["rankable"] = t["status"].isin(RANKABLE) & np.isfinite(t["value"])
    else:       # the years of each site's whole-span total: those the ranking averages
        used = {(str(r.site), str(r.element)): set(str(r.years_used).split())
                for r in span.itertuples() if isinstance(r.years_used, str)}
        t["rankable"] = np.array([str(p) in used.get((str(s), str(e)), ()) for s, e, p in
                                  zip(t["site"], t["element"], t["period"])], dtype=bool) \
            & np.isfinite(t["value"].astype(float))
    return t[["site", "receptor", "period", "element", "value", "status", "missing", "rankable",
              "passes", "failure"]]


def network_span(results, catalogue=None) -> pd.DataFrame:
    """Whole-span totals of every site on its own surface: the span rows of budget.csv.

    Parameters
    ----------
    results : iterable of Result
        The runs (one per site, or one of them all).
    catalogue : SiteCatalogue, optional
        Gives each site's own land use; default its first receptor.

    Returns
    -------
    pandas.DataFrame
        The span rows of the S and N totals (``flux_kg_ha_yr`` [kg/ha/yr], ``status``,
        ``missing_components``, ``years_used``...), one receptor per site.
    """
    from ..ranking import own_surface_rows
    t = pd.concat([r.table for r in results], ignore_index=True)
    span = t[(t["period"] == "span") & (t["species"] == "all") & (t["pathway"] == "total")]
    if span.empty:
        return span
    if catalogue is None:
        first = span.groupby("site", sort=False)["receptor"].transform("first")
        return span[span["receptor"] == first]
    return own_surface_rows(span, catalogue)


def network_ranking(span: pd.DataFrame, element: str, unit="kg/ha/yr", n_periods=None,
                    sites=None) -> pd.DataFrame:
    """Sites ranked by their whole-span total: the report's rule
    (:func:`workbench.ranking.ranking`), in the unit shown.

    Totals holding every component (complete, filled or flagged) are ranked together,
    partial ones apart per set of missing components, sites without a total last.

    Parameters
    ----------
    span : pandas.DataFrame
        :func:`network_span` rows.
    unit : str
        A key of :data:`UNITS`.
    n_periods : int, optional
        Years of the run (to say "1 of 2").
    sites : list of str, optional
        Every site shown (those without a span row are listed unranked).

    Returns
    -------
    pandas.DataFrame
        ``group, rank, site, value`` [unit], ``status``, ``years used``.
    """
    from ..ranking import ranking
    # kg/ha/yr of the element -> unit: the ratio of the two for one mol m-2
    factor = {el: to_unit(1.0, el, unit) / to_unit(1.0, el, "kg/ha/yr") for el in ("S", "N")}
    v = span.assign(_value=span["flux_kg_ha_yr"].astype(float)
                    * span["element"].map(factor).astype(float))
    return ranking(v, element, n_periods, sites, value="_value")
