"""Sums of hourly meteorology over sample windows, and the precipitation type.

Hourly records carry the END of their hour as time stamp (``docs/data_model.md``):
the record stamped *t* covers ``[t - 1 h, t)``.  A window ``[s, e)`` holds the hours
whose middle lies in it (:func:`workbench.periods.hour_bounds`, as the dry chain): for
windows on whole hours :math:`s + 1\\,h \\le t \\le e`.

All sums use cumulative sums along time and binary search, so any number of
windows costs one pass over the hourly record (no loop over samples or hours).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from ..constants import HALF_HOUR
from ..periods import hour_bounds

_ONE_HOUR = np.timedelta64(1, "h")


def site_positions(sample_sites, met_sites) -> np.ndarray:
    """Position of each sample's site on the met ``site`` axis, -1 when absent.

    >>> site_positions(["b", "x", "a"], ["a", "b"]).tolist()
    [1, -1, 0]
    """
    index = pd.Index(np.asarray(met_sites).astype(str))
    return index.get_indexer(np.asarray(sample_sites).astype(str))


def window_sums(values: xr.DataArray, site_pos, starts, ends):
    """Sum of an hourly variable over windows ``[start, end)``.

    Parameters
    ----------
    values : xarray.DataArray
        Hourly values, dims (``site``, ``time``), time = end of hour. [any unit]
    site_pos : array of int
        Position of each window's site on ``values.site`` (-1: no record).
    starts, ends : array of datetime64
        Windows. [UTC]

    Returns
    -------
    total : ndarray
        Sum of the finite hourly values in each window [unit of `values` x 1];
        NaN where the site has no record.
    n_valid : ndarray of int
        Hours with a finite value in the window.
    n_hours : ndarray of int
        Hours of the window: the hours whose middle lies in ``[start, end)``
        (:math:`(e - s)/1\\,h` for windows on whole hours).

    Notes
    -----
    An hour belongs to the window when its middle does, as in the dry chain: for
    windows on whole hours these are the hours inside it; a window with edges on the
    half hour (a site of a fractional UTC offset, whose met hours were moved to the
    whole UTC hour) takes its 168 hours a week, each half inside, not 167.
    A record out of time order is sorted first (a time stamp given twice is an error).
    With :math:`C_k = \\sum_{j<k} x_j` (NaN counted as 0), the sum over hours
    :math:`k_0 \\le k < k_1` is :math:`C_{k_1} - C_{k_0}`.
    """
    times = values["time"].values.astype("datetime64[ns]")
    if len(times) > 1 and not (times[1:] > times[:-1]).all():
        # binary search needs the record in time order (a Dataset concatenated out of
        # order); a time stamp given twice has no single value
        order = np.argsort(times, kind="stable")
        times = times[order]
        if (times[1:] == times[:-1]).any():
            t = times[1:][times[1:] == times[:-1]][0]
            raise ValueError(f"hourly record: time {t} repeated; expected one value per "
                             "site and hour")
        values = values.isel(time=order)
    v = values.transpose("site", "time").values.astype(float)
    valid = np.isfinite(v)
    cs = np.concatenate([np.zeros((v.shape[0], 1)), np.cumsum(np.where(valid, v, 0.0), axis=1)],
                        axis=1)
    cn = np.concatenate([np.zeros((v.shape[0], 1), dtype=np.int64),
                         np.cumsum(valid, axis=1)], axis=1)
    s = np.asarray(starts, dtype="datetime64[ns]")
    e = np.asarray(ends, dtype="datetime64[ns]")
    lo, hi = hour_bounds(times, s, e)                  # the hours whose middle is inside
    hi = np.maximum(hi, lo)
    pos = np.asarray(site_pos)
    has = pos >= 0
    p = np.where(has, pos, 0)
    total = np.where(has, cs[p, hi] - cs[p, lo], np.nan) if v.shape[0] else \
        np.full(len(s), np.nan)
    n_valid = np.where(has, cn[p, hi] - cn[p, lo], 0) if v.shape[0] else np.zeros(len(s), int)
    h = _ONE_HOUR.astype("timedelta64[ns]").astype(np.int64)
    first = -((-(s + HALF_HOUR).astype(np.int64)) // h)          # ceil, in hours
    last = -((-(e + HALF_HOUR).astype(np.int64)) // h)
    n_hours = np.maximum(last - first, 0).astype(int)
    return total, n_valid.astype(int), n_hours


def met_precipitation(met: xr.Dataset, sites, starts, ends):
    """Hourly met precipitation summed over windows, NaN unless every hour is present.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly meteorology with ``precipitation`` [mm], dims (site, time).
    sites : array of str
        Site of each window.
    starts, ends : array of datetime64
        Windows. [UTC]

    Returns
    -------
    ndarray
        Precipitation of each window [mm]; NaN when an hour is missing or the site
        has no record.
    """
    pos = site_positions(sites, met["site"].values)
    total, n_valid, n_hours = window_sums(met["precipitation"], pos, starts, ends)
    return np.where((n_valid == n_hours) & (n_hours > 0), total, np.nan)


def snow_share(met: xr.Dataset, sites, starts, ends, snow_temperature):
    """Share of a window's precipitation that fell in hours cold enough for snow [1].

    Parameters
    ----------
    met : xarray.Dataset
        Hourly ``temperature`` [K] and, optionally, ``precipitation`` [mm].
    sites, starts, ends : arrays
        Windows. [UTC]
    snow_temperature : float
        Hours at or below this temperature count as snow. [K]

    Returns
    -------
    ndarray
        Precipitation-weighted share of snow hours; where the window had no
        hourly precipitation (or none was recorded), the share of its hours with a
        temperature that were snow hours; NaN without temperatures. [1]

    Notes
    -----
    .. math:: s = \\frac{\\sum_h P_h\\,[T_h \\le T_s]}{\\sum_h P_h}
    """
    pos = site_positions(sites, met["site"].values)
    temp = met["temperature"]
    cold = xr.where(temp.notnull(), (temp <= snow_temperature).astype(float), np.nan)
    n_cold, n_t, _ = window_sums(cold, pos, starts, ends)
    with np.errstate(invalid="ignore", divide="ignore"):
        by_hours = np.where(n_t > 0, n_cold / np.maximum(n_t, 1), np.nan)
    if "precipitation" not in met:
        return by_hours
    precip = met["precipitation"].where(temp.notnull())
    p_cold, _, _ = window_sums(precip * cold, pos, starts, ends)
    p_all, _, _ = window_sums(precip, pos, starts, ends)
    with np.errstate(invalid="ignore", divide="ignore"):
        by_precip = p_cold / p_all
    return np.where(np.isfinite(p_all) & (p_all > 0), by_precip, by_hours)
