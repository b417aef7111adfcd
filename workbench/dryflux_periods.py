"""Dry deposition of the sampling periods shared among reporting periods
(:func:`share_to_periods`, :func:`to_periods`) and the mean over reporting periods
(:func:`period_mean`) (split from :mod:`workbench.dryflux`, which re-exports every
name).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import xarray as xr

from .dryflux_sums import no_hour_inside
from .periods import hour_bounds


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
