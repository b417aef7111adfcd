"""Tables by hour of day and season: the mean deposition velocity
(:func:`diurnal_velocity`) and the median resistances (:func:`resistance_medians`) of
one site and receptor, and the local hours and season slots they rest on.
:mod:`.summaries` re-exports these names.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from ..periods import MONTH_SEASON, SEASON_NAMES
from .summaries_budget import _picker

#: Centimetres per metre (Vd is shown in cm s-1).
CM_PER_M = 100.0
#: Half an hour: the middle of an hour labelled by its end [ns].
HALF_HOUR = np.timedelta64(30, "m")


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
