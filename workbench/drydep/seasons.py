"""Wesely's seasonal category of the surface, hour by hour.

Categories (Wesely 1989, Table 1): 1 midsummer with lush vegetation; 2 autumn
with unharvested cropland; 3 late autumn after frost, no snow; 4 winter, snow on
ground and subfreezing; 5 transitional spring with partially green short annuals.
They are distinct from the calendar seasons of the wet-deposition chain.

Rule, in order of precedence (ours, documented in docs/methods_dry.md):

1. the user's category (one for all hours, or one per calendar month);
2. snow on the ground (``snow_cover`` = 1) and air temperature below 0 degC -> 4;
3. in the autumn months, every hour after the first frost of that autumn (air
   temperature below 0 degC) -> 3;
4. otherwise by month: Dec-Feb 3 (winter without snow), Mar-May 5, Jun-Aug 1,
   Sep-Nov 2 in the northern hemisphere, shifted by six months in the southern;
   within the tropics (|latitude| < 23.44 degrees) 1 all year.

With ``DryOptions.season_rule = "surface_state"`` (the default) step 4 takes the
site's own leaf-area index where it varies over the year (green, greening, browning,
dormant) and the month only where it does not; ``"month"`` keeps step 4 as above.
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..constants import HALF_HOUR, OBLIQUITY, ZERO_CELSIUS
from ..surface._array import where

#: Category by calendar month (index 0 = January), northern mid-latitudes (ours).
MONTH_CATEGORY_NORTH = (3, 3, 5, 5, 5, 1, 1, 1, 2, 2, 2, 3)
#: Months shift by this many in the southern hemisphere.
HEMISPHERE_SHIFT = 6
#: The autumn category, which turns into the late-autumn one after a frost.
AUTUMN, LATE_AUTUMN, WINTER_SNOW, MIDSUMMER = 2, 3, 4, 1
#: Rules of ``DryOptions.season_rule``.
SEASON_RULES = ("month", "surface_state")
#: LAI rule: share of the year's LAI range above which the canopy counts as lush
#: (category 1) and below which as dormant (3); in between greening (5) or browning (2)
#: by the sign of the LAI change (ours, documented in docs/methods_dry.md).
LUSH_SHARE = 0.75
DORMANT_SHARE = 0.25
#: Decimals the LAI share is rounded to before the thresholds (numerical device) [-].
SHARE_DECIMALS = 9
#: Codes of ``seasonal_source``.
SOURCE = {0: "month and latitude", 1: "after first autumn frost", 2: "snow and frozen",
          3: "set by the user", 4: "leaf-area index of the site's surface"}
MONTHS_PER_YEAR = 12


def category_from_month(month, latitude):
    """Seasonal category from the calendar month and latitude [-].

    Parameters
    ----------
    month : array_like of int
        1-12.
    latitude : array_like
        [degree north]

    Returns
    -------
    category : array_like of float
        1-5.

    >>> int(category_from_month(7, 50.0)), int(category_from_month(7, -40.0)), int(category_from_month(1, 5.0))
    (1, 3, 1)
    """
    table = np.array(MONTH_CATEGORY_NORTH, dtype=float)
    south = latitude < 0
    m_local = where(south, (month - 1 + HEMISPHERE_SHIFT) % MONTHS_PER_YEAR, month - 1)
    if isinstance(m_local, xr.DataArray) and m_local.chunks is None:
        cat = m_local.copy(data=table[m_local.values.astype(int)])
        cat.attrs = {}
    elif isinstance(m_local, xr.DataArray):
        cat = xr.apply_ufunc(lambda i: table[i], m_local.astype(int), dask="parallelized",
                             output_dtypes=[float])
    else:
        cat = table[np.asarray(m_local).astype(int)]
    tropics = np.abs(latitude) < OBLIQUITY
    return where(tropics, float(MIDSUMMER), cat)


def autumn_frost_seen(time, latitude, temperature, base=None):
    """True from the first autumn frost of each year on, within the autumn months.

    Parameters
    ----------
    time : DataArray of datetime64
        The hourly axis (dimension ``time``).
    latitude : DataArray
        Per site. [degree north]
    temperature : DataArray
        (site, time). [K]
    base : DataArray, optional
        The category before the frost rule (site, time), when not the month rule
        (e.g. :func:`category_from_lai`).

    Returns
    -------
    seen : DataArray of bool
        (site, time); lazy when `temperature` is dask-backed. Autumn (Sep-Nov in the
        north, Mar-May in the south) lies within one calendar year, so the count of
        frost hours restarts each year.
    """
    month, year = _month_and_year(time)      # of each hour's middle
    if base is None:
        base = category_from_month(month, latitude)
    autumn = base == AUTUMN
    frost = (temperature < ZERO_CELSIUS) & autumn
    if frost.chunks is None and year is not None:
        seen = frost.copy(data=_seen_by_year(frost.values, frost.get_axis_num("time"),
                                             year.values))
    else:
        seen = frost.astype(float).groupby((time - HALF_HOUR).dt.year).cumsum("time") > 0
    return (seen & autumn).drop_vars("year", errors="ignore")


def autumn_frost_seen_array(base, temperature, year, axis=-1):
    """:func:`autumn_frost_seen` on numpy arrays of the whole record.

    Parameters
    ----------
    base : numpy.ndarray
        :func:`category_from_month` of each hour (not NaN where the temperature is). [-]
    temperature : numpy.ndarray
        [K]
    year : numpy.ndarray of int
        Calendar year of each hour, along `axis` (broadcasts). [year]
    axis : int
        The time axis.

    Returns
    -------
    seen : numpy.ndarray of bool
        True from the first frost (temperature below 0 degC) of each autumn on,
        within the autumn months.
    """
    autumn = base == AUTUMN
    frost = (temperature < ZERO_CELSIUS) & autumn
    years = np.moveaxis(np.broadcast_to(year, frost.shape), axis, -1).reshape(-1, frost.shape[axis])
    if not (years == years[:1]).all():
        raise ValueError("year must vary along the time axis only")
    return _seen_by_year(frost, axis, years[0]) & autumn


def calendar_month(times):
    """Calendar month of datetime64 values [1-12].

    Parameters
    ----------
    times : numpy.ndarray of datetime64
        No NaT.

    Returns
    -------
    month : numpy.ndarray of int64
        1-12, the shape of `times` (as pandas' ``.dt.month``).
    """
    return times.astype("datetime64[M]").astype(np.int64) % MONTHS_PER_YEAR + 1


def _month_and_year(time):
    """Month and year of the middle of each hour of an hour-ending axis (the hour
    ending at 00:00 on 1 January belongs to December): ``.dt.month`` and ``.dt.year``
    of ``time - 30 min`` (the year None when lazy or irregular).

    Parameters
    ----------
    time : DataArray of datetime64
        The hourly axis.

    Returns
    -------
    month : DataArray of int
        1-12.
    year : DataArray of int or None
        Calendar year. [year]
    """
    mid = time - HALF_HOUR
    t = mid.values if mid.chunks is None else None
    if (t is None or time.dims != ("time",) or not np.issubdtype(t.dtype, np.datetime64)
            or np.isnat(t).any()):
        return mid.dt.month, (None if time.chunks is not None or time.dims != ("time",)
                              else mid.dt.year)
    coords = {"time": time["time"]} if "time" in time.coords else None
    month = xr.DataArray(calendar_month(t), dims=("time",), coords=coords, name="month")
    year = xr.DataArray(t.astype("datetime64[Y]").astype(np.int64) + 1970, dims=("time",),
                        coords=coords, name="year")
    return month, year


def _seen_by_year(frost, axis, years):
    """True from the first True of each year on, along `axis` (numpy).

    Parameters
    ----------
    frost : numpy.ndarray of bool
    axis : int
        The time axis of `frost`.
    years : numpy.ndarray of int
        Calendar year of each time step. [year]

    Returns
    -------
    seen : numpy.ndarray of bool
        Shape of `frost`; the running count of True within each year is > 0.
    """
    f = np.moveaxis(frost, axis, -1)
    seen = np.empty(f.shape, dtype=bool)
    for year in np.unique(years):  # a loop over the few years, not over hours
        idx = np.flatnonzero(years == year)
        seen[..., idx] = np.cumsum(f[..., idx], axis=-1) > 0
    seen = np.moveaxis(seen, -1, axis)
    return seen


def category_from_state(base, frost_seen, temperature, snow_cover=None):
    """Apply the surface-state rules to the month-and-latitude category [-].

    Parameters
    ----------
    base : array_like
        From :func:`category_from_month`.
    frost_seen : array_like of bool
        From :func:`autumn_frost_seen`.
    temperature : array_like
        [K]
    snow_cover : array_like, optional
        0/1; NaN: unknown.

    Returns
    -------
    category, source : array_like
        Category 1-5 and the codes of :data:`SOURCE`.
    """
    cat = where(frost_seen, float(LATE_AUTUMN), base)
    source = where(frost_seen, 1.0, 0.0) + 0.0 * base
    if snow_cover is not None:
        snowy = (snow_cover > 0.5) & (temperature < ZERO_CELSIUS)
        cat = where(snowy, float(WINTER_SNOW), cat)
        source = where(snowy, 2.0, source)
    return cat, source


def category_override(month, override):
    """The user's category for each hour (an int, or 12 values by month) [-]."""
    if isinstance(override, (int, np.integer)):
        return float(override) + 0.0 * month
    tab = np.asarray(override, dtype=float)
    if isinstance(month, xr.DataArray):
        return xr.apply_ufunc(lambda m: tab[m - 1], month, dask="parallelized",
                              output_dtypes=[float])
    return tab[np.asarray(month).astype(int) - 1]


def seasonal_category(time, latitude, temperature, snow_cover=None, override=None):
    """Seasonal category for each site and hour, and why [-].

    Parameters
    ----------
    time : DataArray of datetime64
        The hourly axis (dimension ``time``).
    latitude : DataArray
        Per site. [degree north]
    temperature : DataArray
        Air temperature (site, time). [K]
    snow_cover : DataArray, optional
        0/1 (site, time); NaN or absent: unknown (no snow rule).
    override : None, int or sequence of 12 ints

    Returns
    -------
    category : DataArray
        (site, time), 1-5, float.
    source : DataArray
        (site, time) code, see :data:`SOURCE`.
    """
    if override is not None:
        cat = category_override((time - HALF_HOUR).dt.month, override) + 0.0 * temperature
        return cat, 3.0 + 0.0 * cat
    base = category_from_month((time - HALF_HOUR).dt.month, latitude) + 0.0 * temperature
    seen = autumn_frost_seen(time, latitude, temperature)
    return category_from_state(base, seen, temperature, snow_cover)


def category_from_lai(monthly_lai, month_category):
    """Seasonal category of each month from the canopy's leaf-area index cycle [-].

    Parameters
    ----------
    monthly_lai : numpy.ndarray
        LAI of each calendar month, last axis of length 12. [m2 m-2]
    month_category : numpy.ndarray
        :func:`category_from_month` of each month (same shape), used where the LAI
        does not vary through the year (evergreen, bare) or is unknown.

    Returns
    -------
    category, source : numpy.ndarray
        1-5, and 4 (LAI rule) or 0 (month rule) of :data:`SOURCE`.

    Notes
    -----
    Share s = (LAI - min)/(max - min) of the year's range: s >= 0.75 -> 1 (midsummer,
    lush); s <= 0.25 -> 3 (dormant, no snow); between, 5 (spring) while the LAI
    grows (next month above the previous) and 2 (autumn) while it falls.  Ours
    (docs/methods_dry.md section 7), after Wesely's (1989) descriptions of the
    categories.

    >>> lai = np.array([1, 1, 1.5, 2.5, 3.5, 4, 4, 3.5, 2.5, 1.5, 1, 1.0])
    >>> category_from_lai(lai, np.full(12, 3.0))[0].astype(int).tolist()
    [3, 3, 3, 5, 1, 1, 1, 1, 2, 3, 3, 3]
    """
    lai = np.asarray(monthly_lai, dtype=float)
    lo, hi = np.nanmin(lai, axis=-1, keepdims=True), np.nanmax(lai, axis=-1, keepdims=True)
    span = hi - lo
    varies = np.isfinite(span) & (span > 0)
    # rounded to 1e-9 so that a month exactly on a threshold falls on the documented
    # side whatever the last bit: the seasonal cosine puts March, May, September and
    # November at shares of exactly 0.25 and 0.75, which came out as 0.2500000000000001
    # or 0.7499999999999999 for some LAI ranges and not for others (a month's category
    # then depended on the class's LAI range through rounding alone)
    share = np.round((lai - lo) / np.where(varies, span, 1.0), SHARE_DECIMALS)
    rising = np.roll(lai, -1, axis=-1) > np.roll(lai, 1, axis=-1)
    cat = np.where(share >= LUSH_SHARE, float(MIDSUMMER),
                   np.where(share <= DORMANT_SHARE, float(LATE_AUTUMN),
                            np.where(rising, 5.0, float(AUTUMN))))
    use = varies & np.isfinite(lai)
    return np.where(use, cat, month_category), np.where(use, 4.0, 0.0)
