"""Tables behind the figures: pure functions, a result Dataset in, a DataFrame out.

The figures draw these tables and the apps print them, so that a number on screen can
always be traced to a row here.  Rates are annual rates of the element (kg S or N per
hectare per year, ...) as in ``budget.csv``; monthly amounts are per month.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from ..percent import emission_words, no_percent_reason, percent_change
from ..periods import MONTH_SEASON, SEASON_NAMES
from ..units import element_deposition_in
from .no_effect import PARTICLES, no_effect_text  # noqa: F401  (its home before)
from .no_effect import IN_BULK_WET, NOT_MEASURED, component_reason  # noqa: F401

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
#: Centimetres per metre (Vd is shown in cm s-1).
CM_PER_M = 100.0
#: Half an hour: the middle of an hour labelled by its end [ns].
HALF_HOUR = np.timedelta64(30, "m")


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
        ``missing`` (components without data, space-separated).
    """
    labels = _as_list(periods, ds)
    pick = _picker(ds, site, receptor, labels)
    names = pick("total").astype(str)
    el = np.array([n.split("_")[0] for n in names])
    dep = pick("total_deposition")                               # (period, total)
    fac = pick("annual_factor")[:, None]
    value = np.where(el == "S", to_unit(dep, "S", unit), to_unit(dep, "N", unit)) * fac
    n_p, n_t = dep.shape
    return pd.DataFrame({
        "period": np.repeat(labels, n_t), "total": np.tile(names, n_p),
        "element": np.tile(el, n_p), "pathway": np.tile([n.split("_")[1] for n in names], n_p),
        "value": value.reshape(-1),
        "status": pick("total_status").reshape(-1).astype(str),
        "missing": pick("total_missing_components").reshape(-1).astype(str)})


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
        ``missing`` (space-separated component names, ``""`` when none).
    """
    t = total_rates(ds, site, receptor, periods, unit)
    order = {"complete": 0, "filled": 1, "partial": 2, "flagged": 3, "missing": 4}
    g = t.groupby("total", sort=False)
    out = pd.DataFrame({"value": g["value"].mean(),
                        "status": g["status"].agg(lambda s: max(s, key=lambda v: order.get(v, 5))),
                        "n_periods": g["value"].size(),
                        "missing": g["missing"].agg(
                            lambda m: " ".join(dict.fromkeys(
                                n for v in m if isinstance(v, str) for n in v.split())))})
    return out


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
        return "Dry NH3: no figure (no NH3 concentrations in these years)."
    mo = float(np.nanmean(only))
    if ds.attrs.get("nh3_figure") != "net" or not np.isfinite(net).any():
        return (f"Dry NH3 {_fmt(mo)} {unit} N: deposition only (emission not modelled; "
                "'NH3 exchange' under 'ammonia' gives the net).")
    mn = float(np.nanmean(net))
    pct = 100.0 * (mo - mn) / mo if mo > 0 else float("nan")
    # one decimal under 1 %: a changed bar must not read "offsets 0 %"
    if np.isfinite(pct):
        share = f"emission offsets {pct:.1f} %" if abs(pct) < 1 else f"emission offsets {pct:.0f} %"
    else:       # no share of a deposition of 0 (it read "offsets n/a" without a reason)
        share = "no share offset by emission (no percent: the deposition only is 0)"
    return (f"Dry NH3 {_fmt(mn)} {unit} N net (deposition - emission) against {_fmt(mo)} "
            f"deposition only: {share}; the bars and the N totals use the net.")


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
        ``status``.
    """
    pick = _picker(ds_month, site, receptor)
    labels = pick("period").astype(str)
    starts = pd.to_datetime(pick("period_start"))
    names = list(pick("total").astype(str))
    dep, status = pick("total_deposition"), pick("total_status").astype(str)
    rows = []
    for el in ("S", "N"):
        for pw in ("wet", "dry"):
            j = names.index(f"{el}_{pw}")
            rows.append(pd.DataFrame({
                "period": labels, "start": starts, "element": el,
                "pathway": pw, "value": to_unit(dep[:, j], el, unit), "status": status[:, j]}))
    return pd.concat(rows, ignore_index=True)


def local_hour_and_season(times, utc_offset_h: float):
    """Hour of day (0-23, local standard time, middle of the hour) and season.

    Parameters
    ----------
    times : array of datetime64
        Ends of the hours (UTC).
    utc_offset_h : float
        Offset of local standard time from UTC [h].

    Returns
    -------
    hour : ndarray of int
    season : ndarray of str
        ``DJF``, ``MAM``, ``JJA`` or ``SON`` of the local date.
    """
    mid = pd.DatetimeIndex(np.asarray(times, "datetime64[ns]") - HALF_HOUR)
    # at a fractional offset (+9.5 h) the readers moved each measured hour 15 or 30 min
    # to the whole UTC hour, so its middle can fall on a local whole hour (10:00 for the
    # hour measured 09:00-10:00): the instant before it keeps the hour measured
    local = mid + pd.to_timedelta(float(utc_offset_h), unit="h") - pd.Timedelta(1, "ns")
    return local.hour.to_numpy(), MONTH_SEASON[local.month.to_numpy()]


def hour_season_slots(hour, season) -> np.ndarray:
    """Slot of each hour: season index (order of ``SEASON_NAMES``) x 24 + hour; -1 where
    the season is unknown."""
    s_idx = pd.Index(SEASON_NAMES).get_indexer(np.asarray(season))
    return np.where(s_idx >= 0, s_idx * 24 + np.asarray(hour), -1)


def slot_statistic(values, slot, how: str):
    """Mean or median of `values` per (season, hour) slot, NaN left out.

    Parameters
    ----------
    values : ndarray
        One value per hour (any unit; the result has the same).
    slot : ndarray of int
        From :func:`hour_season_slots`.
    how : {"mean", "median"}
        The median of an even count is the mean of the two middle values.

    Returns
    -------
    value, n : ndarray (96,)
        The statistic (NaN where a slot has no value) and the number of values.
    """
    values = np.asarray(values, dtype=float)
    ok = np.isfinite(values) & (slot >= 0)
    v, sl = values[ok], slot[ok]
    n_slots = len(SEASON_NAMES) * 24
    n = np.bincount(sl, minlength=n_slots)
    if how == "median":
        if not len(v):
            return np.full(n_slots, np.nan), n
        vs = v[np.lexsort((v, sl))]
        first = np.concatenate([[0], np.cumsum(n)[:-1]])
        lo = np.clip(first + (n - 1) // 2, 0, len(vs) - 1)
        hi = np.clip(first + n // 2, 0, len(vs) - 1)
        value = 0.5 * (vs[lo] + vs[hi])
    elif how == "mean":
        value = np.bincount(sl, weights=v, minlength=n_slots) / np.maximum(n, 1)
    else:
        raise ValueError(f"unknown statistic {how!r}")
    return np.where(n > 0, value, np.nan), n


def _by_hour_season(values: np.ndarray, hour, season, how: str):
    """Statistic of `values` per (season, hour): DataFrame season, hour, value, n.

    NaN values are left out; slots without a value are not listed (as a pandas
    groupby does).  See :func:`slot_statistic`.
    """
    value, n = slot_statistic(values, hour_season_slots(hour, season), how)
    idx = np.flatnonzero(n > 0)
    return pd.DataFrame({
        "season": pd.Categorical(np.asarray(SEASON_NAMES)[idx // 24], SEASON_NAMES, ordered=True),
        "hour": idx % 24, "value": value[idx], "n": n[idx]})


def hourly_series(vel: xr.Dataset, site, receptor):
    """``get(name)``: the hourly values of a (site, receptor, time) variable of one site
    and receptor as floats, without ``Dataset.sel`` (see :func:`_picker`)."""
    pick = _picker(vel, site, receptor)
    return lambda name: np.asarray(pick(name), dtype=float)


def diurnal_velocity(vel: xr.Dataset, site, receptor, species, utc_offset_h=0.0) -> pd.DataFrame:
    """Mean deposition velocity by hour of day and season, per species.

    The mean of Vd (not of a resistance) is the flux-relevant average: the flux is
    C Vd, so a mean Vd weights each hour as the flux does for a steady C.

    Parameters
    ----------
    vel : xarray.Dataset
        Output of :func:`workbench.drydep.velocities` (``vd_<species>`` [m s-1]).
    site, receptor : str
    species : list of str
    utc_offset_h : float
        Local standard time minus UTC [h].

    Returns
    -------
    pandas.DataFrame
        ``species, season, hour, value`` [cm s-1], ``n`` (hours averaged).
    """
    get = hourly_series(vel, site, receptor)
    hour, season = local_hour_and_season(vel["time"].values, utc_offset_h)
    parts = []
    for sp in species:
        if f"vd_{sp}" not in vel:
            continue
        t = _by_hour_season(get(f"vd_{sp}") * CM_PER_M, hour, season, "mean")
        t.insert(0, "species", sp)
        parts.append(t)
    if not parts:
        return pd.DataFrame(columns=["species", "season", "hour", "value", "n"])
    return pd.concat(parts, ignore_index=True)


def resistance_medians(vel: xr.Dataset, site, receptor, gas, utc_offset_h=0.0) -> pd.DataFrame:
    """Median Ra, Rb, Rc and total resistance of a gas by hour of day and season.

    Medians, not means: one calm night hour with Ra near its cap dominates a mean
    resistance, while the median shows the typical hour (a mean resistance is
    dominated by the night hours).

    Returns
    -------
    pandas.DataFrame
        ``resistance`` (``ra``, ``rb``, ``rc``, ``total``), ``season, hour, value``
        [s m-1], ``n``.
    """
    get = hourly_series(vel, site, receptor)
    hour, season = local_hour_and_season(vel["time"].values, utc_offset_h)
    parts = {"ra": get("ra"), "rb": get(f"rb_{gas}"), "rc": get(f"rc_{gas}")}
    parts["total"] = parts["ra"] + parts["rb"] + parts["rc"]
    out = []
    for name, values in parts.items():
        t = _by_hour_season(values, hour, season, "median")
        t.insert(0, "resistance", name)
        out.append(t)
    return pd.concat(out, ignore_index=True)


def in_span(screened: xr.Dataset, site=None, start=None, end=None) -> np.ndarray:
    """Samples of `site` (all when None) that overlap [start, end) (bool per sample)."""
    keep = np.ones(screened.sizes["sample"], bool)
    if site is not None:
        keep &= screened["site"].values.astype(str) == site
    if start is not None:
        keep &= screened["end"].values > np.datetime64(start)
    if end is not None:
        keep &= screened["start"].values < np.datetime64(end)
    return keep


def excluded_samples(screened: xr.Dataset, site=None, statuses=("excluded", "flagged"),
                     start=None, end=None) -> pd.DataFrame:
    """Samples not used as they are, with their reasons (one row per sample).

    Only samples of `site` that overlap [`start`, `end`) when these are given.

    Returns
    -------
    pandas.DataFrame
        ``site, start, end, line, status, reasons, gauge_depth`` [mm].
    """
    if screened is None:
        return pd.DataFrame(columns=["site", "start", "end", "line", "status", "reasons",
                                     "gauge_depth"])
    frame = pd.DataFrame({
        "site": screened["site"].values.astype(str),
        "start": pd.to_datetime(screened["start"].values),
        "end": pd.to_datetime(screened["end"].values),
        "line": screened["line"].values,
        "status": screened["status"].values.astype(str),
        "reasons": screened["reasons"].values.astype(str),
        "gauge_depth": screened["gauge_depth"].values.astype(float)})
    keep = frame["status"].isin(statuses).to_numpy() & in_span(screened, site, start, end)
    order = {s: i for i, s in enumerate(statuses)}
    frame = frame[keep].copy()
    frame["_o"] = frame["status"].map(order)
    return frame.sort_values(["_o", "start"]).drop(columns="_o").reset_index(drop=True)


def reason_counts(screened: xr.Dataset, site=None, start=None, end=None) -> pd.DataFrame:
    """Samples per reason and status (a sample with two reasons counts under both).

    Returns
    -------
    pandas.DataFrame
        ``reason, status, samples``.
    """
    t = excluded_samples(screened, site, start=start, end=end)
    if t.empty:
        return pd.DataFrame(columns=["reason", "status", "samples"])
    t = t.assign(reason=t["reasons"].where(t["reasons"] != "", "(no reason given)")
                 .str.split("; ")).explode("reason")
    return (t.groupby(["reason", "status"]).size().rename("samples").reset_index()
            .sort_values("samples", ascending=False, kind="stable").reset_index(drop=True))


#: Decimals of the change line: at least this many, more until the two numbers
#: differ (up to the most); numbers of 1000 and more are shown whole.
DECIMALS, MAX_DECIMALS = 1, 4
#: From this size on a number is shown without decimals.
WHOLE_FROM = 1000.0


def _fmt(v: float, decimals=DECIMALS) -> str:
    """`v` as the apps write it; a value that rounds to zero is "0.0", never "-0.0"
    (a sum of components cancelling to -1e-17 read as a negative deposition)."""
    if not np.isfinite(v):
        return "n/a"
    text = f"{v:,.0f}" if abs(v) >= WHOLE_FROM else f"{v:.{decimals}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.,") else text


def _decimals(old: float, new: float) -> int:
    """Fewest decimals (from :data:`DECIMALS`) that tell `old` and `new` apart."""
    for d in range(DECIMALS, MAX_DECIMALS + 1):
        if _fmt(old, d) != _fmt(new, d):
            return d
    return DECIMALS


def change_line(before: pd.DataFrame | None, after: pd.DataFrame, unit="kg/ha/yr",
                totals=("S_total", "N_total")) -> str:
    """One line of text with the change of each total, e.g.
    ``S total 8.3 -> 7.9 kg/ha/yr, -4.8 %``.

    The percent is of the value before, and only where it is above 0
    (:mod:`workbench.percent`); from 0, from below 0 (a net emission: dry NH3 with
    bidirectional exchange) or from a missing value the line gives the absolute change
    and why there is no percent: ``N dry -2.0 -> -1.0 kg/ha/yr, +1.0 kg/ha/yr (less net
    emission; no percent: the value before is below 0, a net emission)``.  Before the
    2026-12 review a base below 0 flipped the sign (-50 % for that rise) and a base of 0
    gave nothing.

    Parameters
    ----------
    before, after : pandas.DataFrame
        Outputs of :func:`mean_totals` (index ``total``) before and after a change;
        `before` None gives the current values only.

    >>> a = pd.DataFrame({"value": [8.3], "status": ["complete"]}, index=["S_total"])
    >>> b = pd.DataFrame({"value": [7.9], "status": ["complete"]}, index=["S_total"])
    >>> change_line(a, b, totals=("S_total",))
    'S total 8.3 -> 7.9 kg/ha/yr, -4.8 %'
    """
    parts = []
    for name in totals:
        el, pw = name.split("_")
        label = f"{el} {pw}"
        new = float(after.loc[name, "value"]) if name in after.index else np.nan
        st = after.loc[name, "status"] if name in after.index else "missing"
        miss = (str(after.loc[name, "missing"]).split()
                if name in after.index and "missing" in after else [])
        # a flagged total lacking a component (flagged wins in the status of a sum)
        # names the component, as a partial one does
        words = [w for w in (st if st != "complete" else "",
                             f"no {', '.join(miss)}" if miss and st != "missing" else "") if w]
        tail = f" ({', '.join(words)})" if words else ""
        if before is None or name not in before.index:
            parts.append(f"{label} {_fmt(new)} {unit}{tail}")
            continue
        old = float(before.loc[name, "value"])
        d = _decimals(old, new) if np.isfinite(old) and np.isfinite(new) else DECIMALS
        parts.append(f"{label} {_fmt(old, d)} -> {_fmt(new, d)} {unit}"
                     f"{_change_words(old, new, d, unit)}{tail}")
    return "; ".join(parts)


def _change_words(old: float, new: float, decimals: int, unit: str) -> str:
    """The change of :func:`change_line` after the two values: ``, -4.8 %`` from a base
    above 0; ``, no change``; else the absolute change [unit] and why there is no
    percent (a base of 0, below 0: a net emission, or missing; workbench.percent)."""
    if np.isfinite(old) and np.isfinite(new) and new == old:
        return ", no change" if old <= 0 else f", {percent_change(old, new):+.1f} %"
    pct = percent_change(old, new)
    if np.isfinite(pct):
        return f", {pct:+.1f} %"
    reason = no_percent_reason(old, new, "the value before", "the value after")
    if not (np.isfinite(old) and np.isfinite(new)):
        return f" ({reason})"
    words = emission_words(old, new)
    step = _fmt(new - old, decimals)
    step = step if step.startswith("-") else "+" + step
    return f", {step} {unit} ({words + '; ' if words else ''}{reason})"


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
        ``flagged`` year may, with a caution).
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
    return t[["site", "receptor", "period", "element", "value", "status", "missing", "rankable"]]


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
