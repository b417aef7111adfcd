"""The reported units and the budget tables of one site and receptor: the rates of
the components and totals (:func:`component_rates`, :func:`total_rates`,
:func:`mean_totals`), the dry NH3 sentence (:func:`nh3_line`) and the monthly amounts.
Pure functions, a result Dataset in, a DataFrame out.  :mod:`.summaries` re-exports
these names.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from ..tables_budget import total_note_rows
from ..units import element_deposition_in
from .no_effect import component_reason
from .summaries_change import _fmt

#: Reported units: label -> (deposition unit key of
#: :func:`workbench.units.element_deposition_in`, axis text of a yearly rate, axis text
#: of a monthly amount).  ``{el}`` is the element where the unit counts it.
UNITS = {
    "kg/ha/yr": ("kg_ha", "kg {el} ha-1 yr-1", "kg {el} ha-1 month-1"),
    "eq/ha/yr": ("eq_ha", "eq ha-1 yr-1", "eq ha-1 month-1"),
    "keq/ha/yr": ("keq_ha", "keq ha-1 yr-1", "keq ha-1 month-1"),
    "mmol/m2/yr": ("mmol_m2", "mmol {el} m-2 yr-1", "mmol {el} m-2 month-1"),
}
#: Statuses that may be ranked beside each other (the whole set of species is there).
RANKABLE = ("complete", "filled")


#: A total's name (``S_wet``...) in words, as the headings of the tables say it.
PATHWAY_WORDS = {"wet": "wet deposition", "dry": "dry deposition", "total": "total"}


def total_heading(name: str, unit: str) -> str:
    """Heading of a total in a table, in words with its unit.

    >>> total_heading("S_wet", "mmol/m2/yr"), total_heading("N_total", "kg/ha/yr")
    ('S wet deposition [mmol/m2/yr]', 'N total [kg/ha/yr]')
    """
    el, _, pw = str(name).partition("_")
    return f"{el} {PATHWAY_WORDS.get(pw, pw)} [{unit}]" if pw else f"{name} [{unit}]"


def axis_text(unit: str, monthly: bool = False, element: str | None = None) -> str:
    """Axis title of a unit, e.g. ``kg S / N ha-1 yr-1`` [text]."""
    text = UNITS[unit][2 if monthly else 1]
    if "{el}" not in text:
        return text
    return text.format(el=element if element else "S / N")


def axis_title(quantity: str, unit: str, monthly: bool = False,
               element: str | None = None, wrap: bool = False) -> str:
    """Axis title of a deposition axis: the quantity, its unit in square brackets
    (:func:`axis_text`) [text].  An axis titled by its unit alone, ``kg S ha-1 yr-1``,
    named no quantity and no unit by the brackets the other axes use.

    >>> axis_title("S total", "kg/ha/yr", element="S")
    'S total [kg S ha-1 yr-1]'
    >>> axis_title("deposition", "eq/ha/yr", monthly=True)
    'deposition [eq ha-1 month-1]'

    `wrap` puts the unit on a line of its own (``<br>``): the y title of a panel of a
    few hundred pixels stacked over another one (the monthly and network figures),
    where one line ran past the panel.
    """
    return f"{quantity}{'<br>' if wrap else ' '}[{axis_text(unit, monthly, element)}]"


def rate_unit(element: str, unit: str) -> str:
    """The unit of a yearly rate of `element` as a sentence says it: the element after
    an amount that is one of that element, none after an equivalent (charge).

    >>> rate_unit("S", "kg/ha/yr"), rate_unit("N", "eq/ha/yr"), rate_unit("N", "mmol/m2/yr")
    ('kg S/ha/yr', 'eq/ha/yr', 'mmol N/m2/yr')
    """
    amount, _, rest = unit.partition("/")
    return f"{amount} {element}/{rest}" if amount in ("kg", "mmol") else unit


def to_unit(amount, element, unit: str):
    """Deposition of an element [mol m-2] in a reported unit (see :data:`UNITS`)."""
    return element_deposition_in(amount, element, UNITS[unit][0])


def _as_list(periods, ds):
    if periods is None:
        return [str(p) for p in ds["period"].values]
    if isinstance(periods, str):
        return [periods]
    return [str(p) for p in periods]


def _picker(ds: xr.Dataset, site, receptor, labels=None):
    """Plain-numpy selection of one site and receptor (and some periods) of a Dataset.

    ``ds.sel`` costs about a millisecond a call; the figures of an app read a dozen
    variables on every change, so they index the arrays directly.  Returns a function
    ``pick(name)`` giving the variable's values with the site and receptor dimensions
    removed and the period dimension first (in the order of `labels`).
    """
    i_site = ds.indexes["site"].get_loc(site)
    i_rec = ds.indexes["receptor"].get_loc(receptor)
    i_per = None if labels is None else ds.indexes["period"].get_indexer(labels)
    if i_per is not None and (i_per < 0).any():
        missing = [lab for lab, i in zip(labels, i_per) if i < 0]
        raise KeyError(f"periods not in the budget: {missing}")

    def pick(name):
        v = ds.variables[name]
        idx = tuple(i_site if d == "site" else i_rec if d == "receptor" else
                    (slice(None) if i_per is None else i_per) if d == "period" else slice(None)
                    for d in v.dims)
        return np.asarray(v.values[idx])
    return pick


def component_rates(ds: xr.Dataset, site, receptor, periods=None, unit="kg/ha/yr") -> pd.DataFrame:
    """Yearly rate of each budget component of one site and receptor.

    Parameters
    ----------
    ds : xarray.Dataset
        A budget (``Result.budget`` or ``Result.years``).
    site, receptor : str
    periods : str or list of str, optional
        Period labels (default: all).
    unit : str
        A key of :data:`UNITS`.

    Returns
    -------
    pandas.DataFrame
        ``period, element, pathway, species, value`` [unit], ``status``,
        ``completeness`` [1], ``note`` (the budget's note of the component: e.g. not
        measured at the site, caught by a bulk collector; empty when none); NaN value
        where the component is missing.
    """
    labels = _as_list(periods, ds)
    pick = _picker(ds, site, receptor, labels)
    dep = pick("deposition")                                     # (period, component)
    el = pick("element").astype(str)
    fac = pick("annual_factor")[:, None]
    value = np.where(el == "S", to_unit(dep, "S", unit), to_unit(dep, "N", unit)) * fac
    n_p, n_c = dep.shape
    return pd.DataFrame({
        "period": np.repeat(labels, n_c), "element": np.tile(el, n_p),
        "pathway": np.tile(pick("pathway").astype(str), n_p),
        "species": np.tile(pick("species").astype(str), n_p),
        "value": value.reshape(-1),
        "status": pick("status").reshape(-1).astype(str),
        "completeness": pick("completeness").reshape(-1),
        "note": (pick("note").reshape(-1).astype(str) if "note" in ds.variables
                 else np.full(n_p * n_c, "", dtype=object))})


def total_rates(ds: xr.Dataset, site, receptor, periods=None, unit="kg/ha/yr") -> pd.DataFrame:
    """Yearly rate of each total (``S_wet`` ... ``N_total``) of one site and receptor.

    Returns
    -------
    pandas.DataFrame
        ``period, total, element, pathway, value`` [unit], ``status``,
        ``missing`` (components without data, space-separated), ``passes`` (the total
        passes completeness; a ``flagged`` one may, or may fail) and ``failure`` (where
        it fails: the first criterion failed, with its share and minimum).
    """
    labels = _as_list(periods, ds)
    pick = _picker(ds, site, receptor, labels)
    names = pick("total").astype(str)
    el = np.array([n.split("_")[0] for n in names])
    dep = pick("total_deposition")                               # (period, total)
    fac = pick("annual_factor")[:, None]
    value = np.where(el == "S", to_unit(dep, "S", unit), to_unit(dep, "N", unit)) * fac
    n_p, n_t = dep.shape
    status = pick("total_status").reshape(-1).astype(str)
    passes = (pick("total_passes").reshape(-1).astype(bool) if "total_passes" in ds
              else ~np.isin(status, ("flagged", "missing")))
    failure = np.full(n_p * n_t, "", dtype=object)
    if "total_completeness_failure" in ds:
        failure = pick("total_completeness_failure").reshape(-1)
        failure = np.where(pd.isna(failure), "", failure).astype(str)
    return pd.DataFrame({
        "period": np.repeat(labels, n_t), "total": np.tile(names, n_p),
        "element": np.tile(el, n_p), "pathway": np.tile([n.split("_")[1] for n in names], n_p),
        "value": value.reshape(-1),
        "status": status,
        "missing": pick("total_missing_components").reshape(-1).astype(str),
        "passes": passes, "failure": failure})


def mean_totals(ds: xr.Dataset, site, receptor, periods=None, unit="kg/ha/yr") -> pd.DataFrame:
    """Mean yearly rate of each total over some periods, with the worst status.

    The mean is taken over every period given (not only those that pass completeness);
    the status says whether any of them is flagged, partial or filled, and ``missing``
    names the components without data in any of them (a flagged status hides a partial
    one: both can hold).

    Returns
    -------
    pandas.DataFrame
        Index ``total``; columns ``value`` [unit], ``status``, ``n_periods``,
        ``missing`` (space-separated component names, ``""`` when none), ``passes``
        (every period given passes completeness: a mean over a failing one is no
        complete figure, whatever its status says).
    """
    t = total_rates(ds, site, receptor, periods, unit)
    order = {"complete": 0, "filled": 1, "partial": 2, "flagged": 3, "missing": 4}
    g = t.groupby("total", sort=False)
    out = pd.DataFrame({"value": g["value"].mean(),
                        "status": g["status"].agg(lambda s: max(s, key=lambda v: order.get(v, 5))),
                        "n_periods": g["value"].size(),
                        "passes": g["passes"].all(),
                        "missing": g["missing"].agg(
                            lambda m: " ".join(dict.fromkeys(
                                n for v in m if isinstance(v, str) for n in v.split())))})
    return out


def gap_note(rows: pd.DataFrame, site, receptor, period) -> str:
    """The gaps behind the S and N totals of `period`, in the words of budget.csv: the
    ``note`` of each total row (pathway ``total``, species ``all``) of `rows`
    (:func:`workbench.tables.budget_table` of the yearly budget) that has one, after
    its element and status: ``Gaps behind the totals of 2016 (budget.csv notes): S
    total (complete): SO2 pSO4: met gaps in the period (...): wind speed without a
    value in 1008 h.``  Empty text where no total of the period has a note.  The
    reasons are the budget's own, not derived again.

    >>> rows = pd.DataFrame({"site": "a", "receptor": "grass", "period": "2016",
    ...     "pathway": ["total", "total", "dry"], "species": ["all", "all", "NH3"],
    ...     "element": ["S", "N", "N"], "status": "complete",
    ...     "note": ["", "NH3: NH3 blank in the samples of a-F1 from x", "x"]})
    >>> gap_note(rows, "a", "grass", 2016)
    'Gaps behind the totals of 2016 (budget.csv notes): N total (complete): NH3: NH3 blank in the samples of a-F1 from x.'
    """
    if rows is None or not len(rows) or "note" not in rows:
        return ""
    t = rows[(rows["site"].astype(str) == str(site))
             & (rows["receptor"].astype(str) == str(receptor))
             & (rows["period"].astype(str) == str(period))
             & (rows["pathway"] == "total") & (rows["species"] == "all")]
    note = t["note"].fillna("").astype(str).str.strip()
    t = t[note != ""].sort_values("element", key=lambda e: e.map({"S": 0, "N": 1}),
                                  kind="stable")                  # S first, as shown
    if not len(t):
        return ""
    parts = (t["element"].astype(str) + " total (" + t["status"].astype(str) + "): "
             + t["note"].astype(str).str.strip())
    return (f"Gaps behind the totals of {period} (budget.csv notes): "
            + "; ".join(parts) + ".")


def gap_lines(years: xr.Dataset, site, receptor, periods=None) -> list[str]:
    """The gap line (:func:`gap_note`) of each period of `periods` (default: every
    period of `years` whose S or N total has a note, in the budget's order) for `site`
    and `receptor`, the periods without one left out.  The rows are budget.csv's total
    rows with their notes (:func:`workbench.tables_budget.total_note_rows`: the same
    notes and statuses as :func:`workbench.tables.budget_table`'s, without building
    that table; about 0.3 ms a site's yearly budget, the table tens of ms).  What the
    site explorer writes under its change line and the critical-loads explorer above
    its deposition line, on every change (docs/performance.md, "The critical-loads
    gap line from the total rows")."""
    rows = total_note_rows(years)
    rows = rows[rows["note"] != ""]            # most totals have none
    if periods is None:
        periods = dict.fromkeys(rows["period"].astype(str))
    return [line for line in (gap_note(rows, site, receptor, p) for p in periods) if line]


def _nh3_not_measured(ds, pick) -> bool:
    """Whether the budget's note of the dry NH3 component says "not measured" in every
    period of `ds` (the site has no NH3 concentration at all, not a gap)."""
    if "note" not in ds.variables or "species" not in ds.variables:
        return False
    sp, pw = pick("species").astype(str), pick("pathway").astype(str)
    j = np.flatnonzero((sp == "NH3") & (pw == "dry"))
    if not j.size:
        return False
    notes = pick("note")[..., j[0]].reshape(-1)
    return bool(len(notes)) and all(component_reason(n) == "not measured" for n in notes)


def _nh3_masked(ds, pick, reason="every value masked") -> str:
    """The flag of the air reader where the budget's note of the dry NH3 component says
    "measured, every value masked" in every period of `ds` ("" otherwise); with `reason`
    "period masked": "every value of the period masked" in every period (the reason of
    the first)."""
    if "note" not in ds.variables or "species" not in ds.variables:
        return ""
    sp, pw = pick("species").astype(str), pick("pathway").astype(str)
    j = np.flatnonzero((sp == "NH3") & (pw == "dry"))
    if not j.size:
        return ""
    notes = [str(n) for n in pick("note")[..., j[0]].reshape(-1)]
    if not notes or not all(component_reason(n) == reason for n in notes):
        return ""
    return notes[0].split(": ", 1)[-1]


def nh3_line(ds: xr.Dataset, site, receptor, unit="kg/ha/yr") -> str:
    """One sentence on the dry NH3 figure of the budget: the net exchange beside the
    deposition-only figure, or that NH3 is counted as deposition only.

    Both are mean yearly rates over the periods of `ds` [unit]; empty text when the
    budget has no NH3 figures.
    """
    if "nh3_deposition_only" not in ds.variables:
        return ""
    pick = _picker(ds, site, receptor)
    fac = pick("annual_factor")
    only = to_unit(pick("nh3_deposition_only"), "N", unit) * fac
    net = to_unit(pick("nh3_net"), "N", unit) * fac
    if not np.isfinite(only).any():
        if _nh3_not_measured(ds, pick):
            return ("Dry NH3: not measured at this site (no NH3 concentration in the air "
                    "file); the N totals leave it out (partial).")
        lost = _nh3_masked(ds, pick)
        if lost:
            return (f"Dry NH3: measured at this site, every value masked ({lost}); the N "
                    "totals leave it out (partial).")
        lost = _nh3_masked(ds, pick, "period masked")
        if lost:
            return (f"Dry NH3: no figure (every NH3 value of these years masked: {lost}); "
                    "the N totals leave it out (partial).")
        return "Dry NH3: no figure (no NH3 concentrations in these years)."
    mo = float(np.nanmean(only))
    if ds.attrs.get("nh3_figure") != "net" or not np.isfinite(net).any():
        return (f"Dry NH3 (as N): {_fmt(mo)} {rate_unit('N', unit)}, deposition only "
                "(emission not modelled; "
                "'NH3 exchange' under 'ammonia' gives the net).")
    mn = float(np.nanmean(net))
    pct = 100.0 * (mo - mn) / mo if mo > 0 else float("nan")
    # one decimal under 1 %: a changed bar must not read "offsets 0 %"
    if np.isfinite(pct):
        share = f"emission offsets {pct:.1f} %" if abs(pct) < 1 else f"emission offsets {pct:.0f} %"
    else:       # no share of a deposition of 0 (it read "offsets n/a" without a reason)
        share = "no share offset by emission (no percent: the deposition only is 0)"
    return (f"Dry NH3 (as N): {_fmt(mn)} {rate_unit('N', unit)} net (deposition - emission) "
            f"against {_fmt(mo)} deposition only: {share}; the bars and the N totals use "
            "the net.")


def monthly_amounts(ds_month: xr.Dataset, site, receptor, unit="kg/ha/yr") -> pd.DataFrame:
    """Wet and dry deposition of S and N per month (amount in the month, not a rate).

    Parameters
    ----------
    ds_month : xarray.Dataset
        A budget at monthly resolution.

    Returns
    -------
    pandas.DataFrame
        ``period, start, element, pathway, value`` [unit without "/yr", per month],
        ``status``, ``why`` (the first completeness criterion the month fails, as
        budget.csv's ``completeness_failure``; "" where it passes).
    """
    pick = _picker(ds_month, site, receptor)
    labels = pick("period").astype(str)
    starts = pd.to_datetime(pick("period_start"))
    names = list(pick("total").astype(str))
    dep, status = pick("total_deposition"), pick("total_status").astype(str)
    why = (pick("total_completeness_failure").astype(object)
           if "total_completeness_failure" in ds_month else np.full(status.shape, "", object))
    why = np.where(pd.isna(why), "", why).astype(str)
    rows = []
    for el in ("S", "N"):
        for pw in ("wet", "dry"):
            j = names.index(f"{el}_{pw}")
            rows.append(pd.DataFrame({
                "period": labels, "start": starts, "element": el,
                "pathway": pw, "value": to_unit(dep[:, j], el, unit), "status": status[:, j],
                "why": why[:, j]}))
    return pd.concat(rows, ignore_index=True)
