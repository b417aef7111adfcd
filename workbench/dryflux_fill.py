"""Hours without a valid Vd filled from the site's mean diurnal cycle of Vd for the same
month (:func:`fill_diurnal`) and the (year, month, hour-of-day) slots of the hours
(split from :mod:`workbench.dryflux`, which re-exports every name).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr


_HALF_HOUR = np.timedelta64(30, "m")

#: Fewest valid hours in a (year, month, hour-of-day) slot for its own mean to fill a gap
#: (common practice: about a week of the month; else the all-years slot is used).
MIN_SLOT_HOURS = 7


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
