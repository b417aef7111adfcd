"""Dry deposition over air-sampling periods: concentration x hourly deposition velocity.

The inferential flux of a species over one air-sampling period is

.. math:: D = C \\, \\overline{V_d} \\, \\Delta t

with :math:`\\overline{V_d}` the arithmetic mean of the hourly deposition velocities
(conductances, never the inverse of a mean resistance) over the hours of the period.
A concentration given as a mixing ratio :math:`\\chi` becomes a flux hour by hour with
that hour's molar density of air, :math:`D = \\chi\\,\\overline{n_{air} V_d}\\,\\Delta t`.
Hourly concentrations are the same formula with one hour per period.

Hours without a valid Vd are filled from the site's mean diurnal cycle of Vd for the
same month (of the same year when that slot has enough hours, else of all years); each
filled hour is counted.  Everything here is vectorized over sites, receptors, periods
and hours through cumulative sums along time: no Python loop over hours or periods.

Units: concentrations [mol m-3] or [mol mol-1]; Vd [m s-1]; deposition [mol m-2].
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import xarray as xr

from .periods import hour_bounds
from .units import molar_density_air

HOUR_S = 3600.0
_HALF_HOUR = np.timedelta64(30, "m")

#: Fewest valid hours in a (year, month, hour-of-day) slot for its own mean to fill a gap
#: (common practice: about a week of the month; else the all-years slot is used).
MIN_SLOT_HOURS = 7


@dataclass(frozen=True)
class DryFluxOptions:
    """Options of the dry-flux integration.

    Attributes
    ----------
    censored : {"half", "limit", "zero"}
        Value used for a concentration below detection: half the limit (default,
        common practice), the limit, or zero.
    min_slot_hours : int
        See :data:`MIN_SLOT_HOURS`.
    diurnal_profile : dict
        species -> 24 relative concentrations by hour of local day (normalized here to
        a mean of 1); a sensitivity for the covariance of C and Vd that a period-mean
        concentration leaves out.  Empty by default (constant within a period).
    preferred_method : dict
        species -> method name to use when several samplers measure one species at a
        site; by default the sampler covering the most hours is used.
    """

    censored: str = "half"
    min_slot_hours: int = MIN_SLOT_HOURS
    diurnal_profile: dict = field(default_factory=dict)
    preferred_method: dict = field(default_factory=dict)


def fill_diurnal(vd: xr.DataArray, min_slot_hours: int = MIN_SLOT_HOURS, slots=None,
                 classes=None):
    """Fill missing hourly Vd from the mean diurnal cycle of the same month.

    Parameters
    ----------
    vd : xarray.DataArray
        Deposition velocity with a ``time`` dimension (end-of-hour labels) and any
        other dimensions (site, receptor). [m s-1]
    min_slot_hours : int
        Fewest valid hours of a (year, month, hour) slot for it to be used.
    slots : tuple, optional
        :func:`hour_slots` of ``vd["time"]`` when the caller has them (default:
        computed here, about 0.6 ms a year of hours).
    classes : xarray.DataArray or ndarray of int, optional
        The land-use class in force over each hour (``land_use_in_force`` of a site
        whose surface changed, :func:`workbench.surfacehistory.in_force`), with the dims
        of `vd`: an hour is filled from the hours of its own class only (both slots),
        never from those of the class before or after a change in the same month.
        Default: one class per row.

    Returns
    -------
    filled : xarray.DataArray
        Same shape; NaN only where neither slot has data. [m s-1]
    was_filled : xarray.DataArray of bool
        True where a value was filled.
    """
    other = [d for d in vd.dims if d != "time"]
    v = vd if vd.dims[-1] == "time" else vd.transpose(*other, "time")
    arr = np.asarray(v.values, dtype=float)
    shape = arr.shape
    rows = arr.reshape(-1, shape[-1])
    valid = np.isfinite(rows)
    if valid.all():                                   # nothing to fill
        out, was = rows, np.zeros(rows.shape, bool)
    else:
        slot_y, month_hour, n_years = (hour_slots(v["time"].values) if slots is None
                                       else slots)
        n_rows, n_t = rows.shape
        base = np.arange(n_rows)[:, None]
        if classes is not None:
            # each (row, class in force) its own group of slots: the hours of another
            # class never fill this one's (docs/methods_dry.md, the diurnal fill)
            c = classes if not isinstance(classes, xr.DataArray) else (
                classes.transpose(*v.dims) if set(classes.dims) == set(v.dims) else classes)
            c = np.broadcast_to(np.asarray(getattr(c, "values", c)), shape).reshape(n_rows, n_t)
            _, code = np.unique(c, return_inverse=True)
            code = code.reshape(n_rows, n_t)
            n_cls = int(code.max()) + 1 if code.size else 1
            base = base * n_cls + code
            n_rows_g = n_rows * n_cls
        else:
            n_rows_g = n_rows

        def slot_mean(slot, n_slots):
            idx = (base * n_slots + slot[None, :]).ravel()
            w = np.where(valid, rows, 0.0).ravel()
            s = np.bincount(idx, weights=w, minlength=n_rows_g * n_slots)
            c = np.bincount(idx, weights=valid.ravel().astype(float),
                            minlength=n_rows_g * n_slots)
            return s, c, idx

        s_y, c_y, i_y = slot_mean(slot_y, n_years * 288)
        s_a, c_a, i_a = slot_mean(month_hour, 288)
        with np.errstate(invalid="ignore", divide="ignore"):
            mean_y = np.where(c_y >= min_slot_hours, s_y / c_y, np.nan)
            mean_a = np.where(c_a > 0, s_a / c_a, np.nan)
        fill_y = mean_y[i_y].reshape(n_rows, n_t)
        fill_a = mean_a[i_a].reshape(n_rows, n_t)
        fill = np.where(np.isfinite(fill_y), fill_y, fill_a)
        out = np.where(valid, rows, fill)
        was = ~valid & np.isfinite(out)
    filled = v.copy(deep=False, data=out.reshape(shape))
    was_filled = v.copy(deep=False, data=was.reshape(shape))
    if v is not vd:
        filled, was_filled = filled.transpose(*vd.dims), was_filled.transpose(*vd.dims)
    filled.attrs = dict(vd.attrs)
    return filled, was_filled


def hour_slots(times):
    """The (year, month, hour) slot and the (month, hour) slot of each hour.

    Parameters
    ----------
    times : array of datetime64
        End-of-hour labels [UTC].

    Returns
    -------
    tuple
        (year-month-hour slot [1], month-hour slot [1], number of years [1]); the
        slots of an hour are those of its midpoint.  Every species of a study shares
        one time axis: :class:`workbench.pipeline.Study` runs this once per met record
        as the ``hour_slots`` stage of the graph and hands it to :func:`fill_diurnal`.
    """
    t = np.asarray(times, dtype="datetime64[ns]")
    mid = pd.DatetimeIndex(t - _HALF_HOUR)
    years = mid.year.to_numpy()
    y0 = years.min() if len(years) else 0
    month_hour = (mid.month.to_numpy() - 1) * 24 + mid.hour.to_numpy()
    n_years = int(years.max() - y0 + 1) if len(years) else 0
    return (years - y0) * 288 + month_hour, month_hour, n_years


def _cumulative(x, finite=None):
    """Cumulative sum along the last axis with a leading zero (NaN counted as 0).

    `finite` is ``np.isfinite(x)`` when the caller has it already; where every value is
    finite the sum runs on `x` itself (the same additions, no cleaned copy)."""
    if finite is None:
        finite = np.isfinite(x)
    clean = x if finite.all() else np.where(finite, x, 0.0)
    if clean.dtype != np.float64:            # (the sum in its own dtype, then float64)
        z = np.zeros(x.shape[:-1] + (1,))
        return np.concatenate([z, np.cumsum(clean, axis=-1)], axis=-1)
    out = np.empty(clean.shape[:-1] + (clean.shape[-1] + 1,))
    out[..., 0] = 0.0
    np.cumsum(clean, axis=-1, out=out[..., 1:])      # the same additions, no second copy
    return out


def _count_cumulative(mask):
    """Cumulative count of the true elements along the last axis, with a leading zero.

    Parameters
    ----------
    mask : ndarray of bool (..., T)

    Returns
    -------
    ndarray of float64 (..., T + 1)
        Element k is the number of true elements among the first k [1]: the same
        numbers as :func:`_cumulative` of ``mask.astype(float)`` (whole numbers, exact in
        float64), in one pass and without the float copy of the mask.

    >>> _count_cumulative(np.array([True, False, True])).tolist()
    [0.0, 1.0, 1.0, 2.0]
    """
    mask = np.asarray(mask, dtype=bool)
    out = np.empty(mask.shape[:-1] + (mask.shape[-1] + 1,))
    out[..., 0] = 0.0
    np.cumsum(mask, axis=-1, dtype=np.float64, out=out[..., 1:])
    return out


def _censored_values(air, species, how):
    v = air[species].values.astype(float)
    c = air[f"{species}_censored"].values if f"{species}_censored" in air else np.zeros(len(v), bool)
    dl = air[f"{species}_detection_limit"].values if f"{species}_detection_limit" in air \
        else np.full(len(v), np.nan)
    factor = {"half": 0.5, "limit": 1.0, "zero": 0.0}[how]
    sub = np.where(np.isfinite(dl), dl * factor, 0.0)
    return np.where(c, sub, v), c


def select_samplers(air: xr.Dataset, species: str, preferred_method=None):
    """Rows of `air` used for a species where several samplers measure it at one site.

    Samplers that follow each other (a replaced instrument) are all used.  Where
    samplers overlap in time, the primary one (the preferred method, else the one
    covering the most hours) is used and the others' rows that overlap it are left
    out; their rows outside its periods fill its gaps, in the same order of rank (a
    row of a back-up sampler overlapping a kept row of a higher-ranked back-up is left
    out too, so no hour is counted twice).

    Returns
    -------
    used : ndarray of bool
        Per row of `air`.
    notes : list of str
        Which rows were left out.
    """
    v = air[species].values
    has = np.isfinite(v) | (air[f"{species}_censored"].values if f"{species}_censored" in air
                            else False)
    sites = air["site"].values.astype(str)
    samplers = air["sampler_id"].values.astype(str)
    method = air[f"{species}_method"].values.astype(str) if f"{species}_method" in air \
        else np.full(len(v), "", object)
    start, end = air["start"].values, air["end"].values
    used = has.copy()
    notes = []
    for site in np.unique(sites[has]):
        here = has & (sites == site)
        names = np.unique(samplers[here])
        if len(names) <= 1:
            continue
        hours = pd.Series((end - start)[here] / np.timedelta64(1, "h")).groupby(samplers[here]).sum()
        # rank: the preferred method's sampler, then by hours covered (ties by name)
        rank = sorted((str(n) for n in names), key=lambda n: (-hours[n], n))
        if preferred_method and preferred_method.get(species):
            pref = np.unique(samplers[here & (method == preferred_method[species])])
            if len(pref):
                rank.remove(str(pref[0]))
                rank.insert(0, str(pref[0]))
        choice = rank[0]
        # each sampler in rank order fills only the hours that no higher-ranked one
        # covers: a row overlapping a kept row of a higher-ranked sampler is left out,
        # so that no hour is counted twice (two back-up samplers in one gap of the
        # primary would otherwise both count, and the coverage pass on double hours)
        kept = np.flatnonzero(here & (samplers == choice))
        dropped = []
        for name in rank[1:]:
            order = kept[np.argsort(start[kept], kind="stable")]
            ks, ke = start[order], end[order]
            mine = np.flatnonzero(here & (samplers == name))
            k = np.searchsorted(ks, end[mine], side="left") - 1   # last kept row starting before end
            # kept rows do not overlap each other, so their ends rise with their starts
            overlap = (k >= 0) & (ke[np.clip(k, 0, None)] > start[mine]) if len(ks) else \
                np.zeros(len(mine), bool)
            dropped.append(mine[overlap])
            kept = np.concatenate([kept, mine[~overlap]])
        dropped = np.concatenate(dropped) if dropped else np.zeros(0, int)
        used[dropped] = False
        if len(dropped):
            notes.append(f"{species} at {site}: sampler {choice!r} is primary; {len(dropped)} "
                         f"overlapping rows of {', '.join(n for n in names if n != choice)} left out")
    return used, notes


def deposition_rows(conc, quantity, site_index, starts, ends, times, vd, n_air=None, weight=None):
    """Deposition over each sampling period (numpy core of :func:`period_deposition`).

    Parameters
    ----------
    conc : ndarray (n,)
        Concentrations [mol m-3] or mixing ratios [mol mol-1].
    quantity : {"amount_density", "mixing_ratio"}
    site_index : ndarray of int (n,)
        Row of each period in the site axis of `vd`.
    starts, ends : ndarray of datetime64 (n,)
    times : ndarray of datetime64 (T,)
        End-of-hour labels of `vd`.
    vd : ndarray (S, R, T)
        Hourly deposition velocity [m s-1] (gap-filled).
    n_air : ndarray (S, T), optional
        Molar density of air [mol m-3]; needed for mixing ratios.
    weight : ndarray (T,), optional
        Relative concentration by hour (diurnal profile), mean 1.

    Returns
    -------
    dict
        ``deposition`` (n, R) [mol m-2], ``mean_eff`` (n, R) [m s-1 or mol m-2 s-1],
        ``n_valid`` (n, R), ``hours`` (n,), ``a``, ``b`` (hour index bounds),
        ``cs`` (S, R, T + 1) cumulative effective Vd, ``cn`` (S, R, T + 1) cumulative
        count of its finite hours (None when every hour is finite), for
        :func:`share_to_periods`.
    """
    eff = vd if weight is None else vd * weight
    if quantity == "mixing_ratio":
        if n_air is None:
            raise ValueError("a mixing ratio needs the hourly molar density of air")
        eff = eff * n_air[:, None, :]
    finite = np.isfinite(eff)
    cs = _cumulative(eff, finite)
    a, b = hour_bounds(times, starts, ends)
    total = cs[site_index, :, b] - cs[site_index, :, a]
    if finite.all():        # every hour counts: the count of [a, b) is b - a
        n_valid = np.repeat((b - a).astype(float)[:, None], eff.shape[1], axis=1)
        cn = None
    else:
        cn = _count_cumulative(finite)
        n_valid = cn[site_index, :, b] - cn[site_index, :, a]
    hours = (ends - starts) / np.timedelta64(1, "h")
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_eff = np.where(n_valid > 0, total / n_valid, np.nan)
    dep = conc[:, None] * mean_eff * hours[:, None] * HOUR_S
    return {"deposition": dep, "mean_eff": mean_eff, "n_valid": n_valid, "hours": hours,
            "a": a, "b": b, "cs": cs, "cn": cn, "start": starts, "end": ends}


def no_hour_inside(starts, ends, a, b):
    """The samples shorter than an hour whose interval holds no hour's middle [bool].

    Such a sample has no hour of Vd (:func:`~workbench.periods.hour_bounds`), so no
    flux, and adds no covered hours either (:func:`share_to_periods`).

    Parameters
    ----------
    starts, ends : ndarray of datetime64 (n,)
    a, b : ndarray of int (n,)
        Their hour bounds on the hour axis.
    """
    return (b <= a) & ((ends - starts) < np.timedelta64(1, "h"))


def short_sample_notes(species, starts, ends, lines, times) -> list:
    """The note of the samples of `species` with no hour inside (:func:`no_hour_inside`),
    naming their file lines ([] for none)."""
    from .io.ledger import compact_lines
    a, b = hour_bounds(times, starts, ends)
    none = no_hour_inside(starts, ends, a, b)
    if not none.any():
        return []
    n = int(none.sum())
    return [f"{species}: {n} air sample{'s' * (n > 1)} shorter than an hour "
            f"hold{'s' * (n == 1)} no hour's middle (hh:30) ({compact_lines(lines[none])}): "
            "no deposition, and not counted in the covered hours"]


def _inputs_for(air, species, vd: xr.DataArray, met, options):
    """Rows used, their concentrations and the numpy arrays for one species."""
    used, notes = select_samplers(air, species, options.preferred_method)
    rows = np.flatnonzero(used)
    conc, cens = _censored_values(air, species, options.censored)
    sites_vd = [str(s) for s in vd["site"].values]
    site_of = air["site"].values.astype(str)[rows]
    known = np.isin(site_of, sites_vd)
    rows, site_of = rows[known], site_of[known]
    times = vd["time"].values
    weight = None
    if species in options.diurnal_profile:
        prof = np.asarray(options.diurnal_profile[species], float)
        prof = prof / prof.mean()
        weight = prof[pd.DatetimeIndex(times - _HALF_HOUR).hour.to_numpy()]  # UTC hours
    notes = notes + short_sample_notes(species, air["start"].values[rows],
                                       air["end"].values[rows], air["line"].values[rows], times)
    quantity = air[species].attrs.get("quantity", "amount_density")
    n_air = None
    if quantity == "mixing_ratio":
        if met is None:
            raise ValueError(f"{species} is a mixing ratio: hourly temperature and pressure are needed")
        m = met[["temperature", "pressure"]].reindex(site=sites_vd, time=times)
        n_air = molar_density_air(m["temperature"].values, m["pressure"].values)
    return rows, site_of, conc, cens, quantity, weight, n_air, notes


def period_deposition(air: xr.Dataset, species: str, vd: xr.DataArray, met: xr.Dataset | None,
                      options: DryFluxOptions = DryFluxOptions()):
    """Deposition of one species over each of its air-sampling periods, per receptor.

    Parameters
    ----------
    air : xarray.Dataset
        Air concentrations (dim ``period``; see docs/data_model.md).
    species : str
        Species name (a variable of `air`).
    vd : xarray.DataArray
        Hourly deposition velocity (site, receptor, time), already gap-filled. [m s-1]
    met : xarray.Dataset or None
        Hourly temperature [K] and pressure [Pa], needed for mixing ratios.
    options : DryFluxOptions

    Returns
    -------
    rows : xarray.Dataset
        Dims (``row``, ``receptor``) over the rows of `air` used for the species:
        ``deposition`` [mol m-2], ``mean_vd`` [m s-1] (NaN for mixing ratios, whose
        mean is of n_air Vd), ``vd_hours`` (hours with a valid Vd), ``hours``, and
        the row's ``site``, ``start``, ``end``, ``line``, ``censored``; where some
        hours lack a Vd, ``vd_hours_cumulative`` (vd_site, receptor, hour_edge), the
        running count of the hours with one, which :func:`to_periods` reads.
    cs : ndarray
        Cumulative effective Vd (site, receptor, time + 1), for :func:`to_periods`.
    """
    rows, site_of, conc, cens, quantity, weight, n_air, notes = _inputs_for(air, species, vd, met, options)
    sites_vd = [str(s) for s in vd["site"].values]
    v = vd.transpose("site", "receptor", "time").values
    r = deposition_rows(conc[rows], quantity, pd.Index(sites_vd).get_indexer(site_of),
                        air["start"].values[rows], air["end"].values[rows], vd["time"].values,
                        v, n_air, weight)
    ds = xr.Dataset(
        {
            "deposition": (("row", "receptor"), r["deposition"], {"units": "mol m-2",
                           "long_name": f"dry deposition of {species} over the sampling period"}),
            "mean_vd": (("row", "receptor"), r["mean_eff"] if quantity != "mixing_ratio"
                        else np.full_like(r["mean_eff"], np.nan),
                        {"units": "m s-1", "long_name": "mean deposition velocity over the period"}),
            "vd_hours": (("row", "receptor"), r["n_valid"]),
            "hours": ("row", r["hours"], {"units": "h"}),
            "site": ("row", site_of),
            "start": ("row", air["start"].values[rows]),
            "end": ("row", air["end"].values[rows]),
            "line": ("row", air["line"].values[rows]),
            "censored": ("row", cens[rows]),
            "hour_start": ("row", r["a"]),
            "hour_end": ("row", r["b"]),
        },
        coords={"receptor": vd["receptor"].values},
        attrs={"species": species, "quantity": quantity, "notes": "; ".join(notes)},
    )
    if r.get("cn") is not None:
        ds["vd_hours_cumulative"] = (("vd_site", "receptor", "hour_edge"), r["cn"],
                                     {"long_name": "running count of the hours with a Vd "
                                      "(site order of vd), for to_periods"})
    return ds, r["cs"]


@dataclass(frozen=True)
class PeriodAxes:
    """The arrays of a period table that the numpy cores read: ``start``, ``end``
    (datetime64[ns]) and ``hours`` [h].  Made once by :func:`period_axes` where the
    cores are called many times (a DataFrame column read costs tens of microseconds)."""

    start: np.ndarray
    end: np.ndarray
    hours: np.ndarray

    def __len__(self):
        return len(self.start)


def period_axes(periods) -> PeriodAxes:
    """:class:`PeriodAxes` of a period table (a PeriodAxes passes through)."""
    if isinstance(periods, PeriodAxes):
        return periods
    return PeriodAxes(periods["start"].values, periods["end"].values,
                      periods["hours"].to_numpy(dtype=float))


def share_to_periods(site_index, a, b, deposition, cs, n_sites, periods, times,
                     starts=None, ends=None, per_row=False, cn=None):
    """Numpy core of :func:`to_periods`.

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds (on the hour axis) of each sampling period.
    deposition : ndarray (n, R)
        Deposition over each sampling period [mol m-2].
    cs : ndarray (S, R, T + 1)
        Cumulative effective Vd.
    n_sites : int
    periods : pandas.DataFrame or PeriodAxes
    times : ndarray of datetime64 (T,)
    starts, ends : ndarray of datetime64 (n,), optional
        The sampling periods' real bounds.  Where a period reaches beyond the hour axis
        (a record that starts or ends inside it), its hours outside the axis take the
        mean Vd of its hours inside, so that the split among reporting periods and the
        coverage follow the real overlap.

    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (``deposition_rows``'
        ``cn``; None: every hour finite).  An hour without Vd inside a sampling period
        takes the mean Vd of the period's hours with one, in the split as in the
        period's deposition (D = C mean(Vd) dt), so that a gap on one side of a month
        end does not move the deposition to the other side.
    per_row : bool
        Also return each sampling period's part of the result (for the Monte Carlo of
        :mod:`workbench.analysis.uncertainty`, which draws errors per sampling period).

    Returns
    -------
    deposition : ndarray (S, R, P) [mol m-2], scaled to the whole period from the
        hours of the sampling periods that have a flux (NaN where none has one)
    coverage : ndarray (S, P) [1]
        Share of the period's hours with a concentration (a sample shorter than an
        hour that holds no hour's middle adds none: :func:`no_hour_inside`).
    covered_hours : ndarray (S, P) [h]
    flux_hours : ndarray (S, R, P) [h]
        Hours of the period in sampling periods whose deposition is known (a
        concentration and at least one hour with a deposition velocity and, for a
        mixing ratio, the molar density of air); at most `covered_hours`.
    rows : ndarray (n, P, R) [mol m-2], only with `per_row` (a fifth value)
        Each sampling period's contribution to `deposition` (its site's row), so that
        ``deposition[s] == rows[site_index == s].sum(0).T`` where covered.
    """
    periods = period_axes(periods)
    n_r, n_p = cs.shape[1], len(periods)
    p_start, p_end = periods.start, periods.end
    pa, pb = hour_bounds(times, p_start, p_end)
    dep_out = np.zeros((n_sites, n_r, n_p))
    cov_hours = np.zeros((n_sites, n_p))
    flux_hours = np.zeros((n_sites, n_r, n_p))
    if len(a):
        lo = np.maximum(a[:, None], pa[None, :])          # (row, period) on the hour axis
        hi = np.minimum(b[:, None], pb[None, :])
        ov = np.clip(hi - lo, 0, None).astype(float)
        lo_c = np.minimum(lo, hi)
        part = cs[site_index[:, None], :, hi] - cs[site_index[:, None], :, lo_c]  # (row, period, R)
        whole = (cs[site_index, :, b] - cs[site_index, :, a])[:, None, :]
        inside = np.maximum(b - a, 0).astype(float)
        if cn is not None:       # hours without Vd take the row's mean Vd of its valid hours
            n_part = cn[site_index[:, None], :, hi] - cn[site_index[:, None], :, lo_c]
            n_whole = (cn[site_index, :, b] - cn[site_index, :, a])[:, None, :]
            with np.errstate(invalid="ignore", divide="ignore"):
                mean_v = np.where(n_whole > 0, whole / n_whole, 0.0)        # (row, 1, R)
            part = part + (ov[:, :, None] - n_part) * mean_v
            whole = whole + (inside[:, None, None] - n_whole) * mean_v
        if starts is not None:
            hour = np.timedelta64(1, "h")
            ov_real = np.clip((np.minimum(ends[:, None], p_end[None, :])
                               - np.maximum(starts[:, None], p_start[None, :])) / hour, 0, None)
            total_real = (ends - starts) / hour
            with np.errstate(invalid="ignore", divide="ignore"):
                mean = np.where(inside[:, None] > 0, whole[:, 0, :] / inside[:, None], 0.0)
            part = part + (ov_real - ov)[:, :, None] * mean[:, None, :]
            whole = whole + ((total_real - inside)[:, None] * mean)[:, None, :]
            ov, inside = ov_real, total_real
            # a sample shorter than an hour holding no hour's middle: no flux, no hours
            none = no_hour_inside(starts, ends, a, b)
            if none.any():
                ov = np.where(none[:, None], 0.0, ov)
        with np.errstate(invalid="ignore", divide="ignore"):
            share = np.where(whole > 0, part / whole,
                             ov[:, :, None] / np.maximum(inside, 1)[:, None, None])
        dep = deposition[:, None, :] * share
        known = np.isfinite(dep)                          # a row without a flux adds no hours
        dep = np.where(known, dep, 0.0)
        acc = np.zeros((n_sites, n_p, n_r))
        np.add.at(acc, site_index, dep)
        dep_out = acc.transpose(0, 2, 1)
        np.add.at(cov_hours, site_index, ov)
        fh = np.zeros((n_sites, n_p, n_r))
        np.add.at(fh, site_index, np.where(known, ov[:, :, None], 0.0))
        flux_hours = fh.transpose(0, 2, 1)
    period_hours = periods.hours
    with np.errstate(invalid="ignore", divide="ignore"):
        scale = np.where(flux_hours > 0, period_hours[None, None, :] / flux_hours, np.nan)
    coverage = np.clip(cov_hours / np.maximum(period_hours[None, :], 1), 0, 1)
    flux_hours = np.minimum(flux_hours, cov_hours[:, None, :])
    if per_row:
        rows = (dep * scale[site_index].transpose(0, 2, 1) if len(a)
                else np.zeros((0, n_p, n_r)))
        return dep_out * scale, coverage, cov_hours, flux_hours, rows
    return dep_out * scale, coverage, cov_hours, flux_hours


def to_periods(rows: xr.Dataset, cs, sites, periods: pd.DataFrame, times, cn=None):
    """Share period depositions among reporting periods and scale to full coverage.

    An air period that straddles a boundary is split by the sum of hourly (effective)
    Vd in each part.  A reporting period's deposition is the mean flux rate over its
    covered hours times its length:

    with :math:`H_{cov}` the hours of the period in sampling periods whose deposition
    is known (a row without any hour of Vd, or of air density for a mixing ratio,
    adds neither deposition nor hours: its period is missing rather than zero):

    .. math:: D_P = \\frac{H_P}{H_{cov}} \\sum_a D_a \\frac{\\sum_{h \\in a \\cap P} V_d}
              {\\sum_{h \\in a} V_d}

    Parameters
    ----------
    rows : xarray.Dataset
        Output of :func:`period_deposition`.
    cs : ndarray
        Cumulative effective Vd (site, receptor, time + 1) from the same call.
    sites : list of str
        Site order of `cs`.
    periods : pandas.DataFrame
        Reporting periods (``workbench.periods.make_periods``).
    times : ndarray of datetime64
        Hour axis of `cs`.
    cn : ndarray, optional
        Cumulative count of the finite hours of the same Vd (the ``cn`` of
        :func:`deposition_rows`); None: ``rows["vd_hours_cumulative"]`` where present,
        else every hour counts as finite.  See :func:`share_to_periods`.

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, period): ``deposition`` [mol m-2] scaled to the whole
        period, ``coverage`` [1] (share of the period's hours with a concentration),
        ``covered_hours`` [h].
    """
    si = pd.Index(list(sites)).get_indexer(rows["site"].values.astype(str))
    if cn is None and "vd_hours_cumulative" in rows:
        cn = rows["vd_hours_cumulative"].values
    dep, coverage, cov_hours, _ = share_to_periods(
        si, rows["hour_start"].values, rows["hour_end"].values, rows["deposition"].values,
        cs, len(sites), periods, times, rows["start"].values, rows["end"].values, cn=cn)
    return xr.Dataset(
        {
            "deposition": (("site", "receptor", "period"), dep,
                           {"units": "mol m-2", "long_name": "dry deposition over the period, "
                            "scaled from the hours with a known flux"}),
            "coverage": (("site", "period"), coverage,
                         {"units": "1", "long_name": "share of the period's hours with a concentration"}),
            "covered_hours": (("site", "period"), cov_hours, {"units": "h"}),
        },
        coords={"site": list(sites), "receptor": rows["receptor"].values,
                "period": periods["label"].values},
    )


def period_mean(site_index, starts, ends, values, n_sites, periods):
    """Time-weighted mean of interval values (concentrations) over reporting periods.

    Parameters
    ----------
    site_index : ndarray of int (n,)
    starts, ends : ndarray of datetime64 (n,)
    values : ndarray (n,)
        E.g. concentrations [mol m-3].
    n_sites : int
    periods : pandas.DataFrame or PeriodAxes

    Returns
    -------
    ndarray (S, P)
        Mean over the covered hours of each period (NaN where none), same unit.
    """
    periods = period_axes(periods)
    hour = np.timedelta64(1, "h")
    ov = np.clip((np.minimum(ends[:, None], periods.end[None, :])
                  - np.maximum(starts[:, None], periods.start[None, :])) / hour, 0, None)
    ok = np.isfinite(values)
    w = np.where(ok[:, None], ov, 0.0)
    num = np.zeros((n_sites, len(periods)))
    den = np.zeros((n_sites, len(periods)))
    np.add.at(num, site_index, w * np.where(ok, values, 0.0)[:, None])
    np.add.at(den, site_index, w)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(den > 0, num / den, np.nan)
