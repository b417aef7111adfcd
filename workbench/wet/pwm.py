"""Precipitation-weighted means and the interval arithmetic behind completeness.

Pure functions: the weighted mean itself, grouped sums, the multiplicity of
overlapping samples (collocated samplers) and the hours of a period covered by a
set of intervals.  :func:`workbench.wet.wet_deposition` assembles them.

References
----------
WMO (2004), Manual for the GAW Precipitation Chemistry Programme, GAW Report
No. 160, Section 8 (precipitation-weighted means; from memory).
"""
from __future__ import annotations

import numpy as np
import xarray as xr

_ONE_HOUR = np.timedelta64(1, "h")


def precipitation_weighted_mean(concentration, depth, dim=None, axis=-1, *, groups=None,
                                 n_groups=None, with_sums=False):
    """Precipitation-weighted mean of concentrations [unit of `concentration`].

    Parameters
    ----------
    concentration : array_like or xarray.DataArray
        Concentrations of the valid samples (NaN: not measured). [mol m-3]
    depth : array_like or xarray.DataArray
        Precipitation depth of each sample (its weight). [mm]
    dim : str, optional
        Dimension to average over (xarray inputs).
    axis : int
        Axis to average over (numpy inputs).
    groups : array_like of int, optional
        Group index of each sample (1-D `concentration` and `depth`): the mean is taken
        per group, for groups ``0 .. n_groups-1`` (the wet chain's (site, period) cells).
        A sample enters a group with the weight it is given; a depth of 0 or NaN leaves
        it out.
    n_groups : int, optional
        Number of groups (with `groups`).
    with_sums : bool
        With `groups`: also return the weighted sums :math:`\\sum C_i P_i` [mol m-3 mm]
        and :math:`\\sum P_i` [mm] per group (for pooled means and valid-ion fractions).

    Returns
    -------
    array_like
        :math:`\\bar C`; NaN where no sample has both a concentration and a
        positive depth. [mol m-3]  With `groups` and `with_sums`: ``(mean, num, den)``.

    Notes
    -----
    .. math:: \\bar C = \\frac{\\sum_i C_i P_i}{\\sum_i P_i}

    over the samples with a finite :math:`C_i`.  The free acidity is averaged as
    :math:`[H^+]`, never as pH (WMO GAW Report No. 160, 2004, from memory).

    >>> round(precipitation_weighted_mean(np.array([0.1, 0.01]), np.array([10.0, 10.0])), 12)
    0.055
    >>> precipitation_weighted_mean(np.array([1.0, 3.0, 5.0]), np.array([1.0, 1.0, 2.0]),
    ...                             groups=np.array([0, 0, 1]), n_groups=3).tolist()
    [2.0, 5.0, nan]
    """
    if groups is not None:
        c = np.asarray(concentration, dtype=float)
        p = np.asarray(depth, dtype=float)
        ok = np.isfinite(c) & np.isfinite(p)
        w = np.where(ok, p, 0.0)
        num = group_sums(w * np.where(ok, c, 0.0), groups, n_groups)
        den = group_sums(w, groups, n_groups)
        mean = num / np.where(den > 0, den, np.nan)
        return (mean, num, den) if with_sums else mean
    if isinstance(concentration, xr.DataArray) or isinstance(depth, xr.DataArray):
        ok = concentration.notnull() & depth.notnull()
        w = depth.where(ok, 0.0)
        num = (concentration.where(ok, 0.0) * w).sum(dim)
        den = w.sum(dim)
        return (num / den.where(den > 0)).rename(getattr(concentration, "name", None))
    c = np.asarray(concentration, dtype=float)
    p = np.broadcast_to(np.asarray(depth, dtype=float), c.shape)
    ok = np.isfinite(c) & np.isfinite(p)
    w = np.where(ok, p, 0.0)
    num = np.sum(np.where(ok, c, 0.0) * w, axis=axis)
    den = np.sum(w, axis=axis)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where(den > 0, num / np.where(den > 0, den, 1.0), np.nan)
    return out if np.ndim(out) else float(out)


def group_sums(values, group, n_groups: int):
    """Sum of `values` per group index [unit of `values`]; NaN values count as 0.

    >>> group_sums(np.array([1.0, 2.0, np.nan, 4.0]), np.array([0, 1, 1, 1]), 3).tolist()
    [1.0, 6.0, 0.0]
    """
    v = np.where(np.isfinite(values), values, 0.0)
    return np.bincount(np.asarray(group, dtype=np.int64), weights=v, minlength=n_groups)


def _site_axis(site_idx, start, end, origin):
    """Times as hours on one axis where each site has its own, non-overlapping range."""
    s = (np.asarray(start, dtype="datetime64[ns]") - origin) / _ONE_HOUR
    e = (np.asarray(end, dtype="datetime64[ns]") - origin) / _ONE_HOUR
    return s, e


class CoverageProfile:
    """Coverage of a time axis by a set of intervals, per site.

    For the intervals of each site, :math:`m(t)` is the number of intervals that
    cover instant *t*; the profile integrates :math:`m` and :math:`[m > 0]` so that
    mean multiplicities and covered hours follow by two look-ups each.

    Parameters
    ----------
    site_idx : array of int
        Site of each interval (0..n_sites-1).
    start, end : array of datetime64
        Intervals ``[start, end)``. [UTC]
    n_sites : int
        Number of sites.
    origin : numpy.datetime64
        Start of the time axis (no interval or period starts before it).
    span : float
        Length of the axis [h] (no interval or period ends after origin + span).
    """

    def __init__(self, site_idx, start, end, n_sites, origin, span):
        self.offset = float(span) + 1.0   # one spare hour between consecutive sites
        self.origin = origin
        s, e = _site_axis(site_idx, start, end, origin)
        off = np.asarray(site_idx, dtype=float) * self.offset
        s, e = s + off, e + off
        keep = e > s
        s, e = s[keep], e[keep]
        bounds = np.unique(np.concatenate([s, e, [0.0, n_sites * self.offset]]))
        left = bounds[:-1]
        m = (np.searchsorted(np.sort(s), left, side="right") -
             np.searchsorted(np.sort(e), left, side="right"))
        seg = np.diff(bounds)
        self.bounds = bounds
        self.cum_m = np.concatenate([[0.0], np.cumsum(m * seg)])
        self.cum_u = np.concatenate([[0.0], np.cumsum((m > 0) * seg)])
        inv = np.where(m > 0, 1.0 / np.maximum(m, 1), 0.0)
        self.cum_r = np.concatenate([[0.0], np.cumsum(inv * seg)])

    def _at(self, site_idx, times, cum):
        t, _ = _site_axis(site_idx, times, times, self.origin)
        t = t + np.asarray(site_idx, dtype=float) * self.offset
        return np.interp(t, self.bounds, cum)

    def mean_multiplicity(self, site_idx, start, end):
        """Mean number of intervals covering ``[start, end)`` [1] (1 for zero length).

        Notes
        -----
        .. math:: \\bar m = \\frac{1}{e - s}\\int_s^e m(t)\\,dt
        """
        a = self._at(site_idx, start, self.cum_m)
        b = self._at(site_idx, end, self.cum_m)
        s, e = _site_axis(site_idx, start, end, self.origin)
        length = e - s
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(length > 0, (b - a) / np.where(length > 0, length, 1.0), 1.0)

    def mean_inverse_multiplicity(self, site_idx, start, end):
        """Mean of 1/m over ``[start, end)`` [1] (1 for zero length or where no interval covers).

        The share of an interval's rain that is its own when the collocated samplers
        covering each instant are averaged: 1/2 where two ran, 1 where it ran alone.

        Notes
        -----
        .. math:: \\overline{m^{-1}} = \\frac{1}{e - s}\\int_s^e \\frac{[m(t) > 0]}{m(t)}\\,dt

        >>> p = CoverageProfile(np.zeros(2, int), np.array(["2021-01-01", "2021-01-01"],
        ...     dtype="datetime64[ns]"), np.array(["2021-01-08", "2021-01-04"],
        ...     dtype="datetime64[ns]"), 1, np.datetime64("2021-01-01", "ns"), 168.0)
        >>> float(p.mean_inverse_multiplicity(np.array([0]), np.array(["2021-01-01"],
        ...     dtype="datetime64[ns]"), np.array(["2021-01-08"], dtype="datetime64[ns]"))[0])
        0.7857142857142857
        """
        a = self._at(site_idx, start, self.cum_r)
        b = self._at(site_idx, end, self.cum_r)
        s, e = _site_axis(site_idx, start, end, self.origin)
        length = e - s
        with np.errstate(invalid="ignore", divide="ignore"):
            out = np.where(length > 0, (b - a) / np.where(length > 0, length, 1.0), 1.0)
        return np.where(out > 0, out, 1.0)

    def covered_hours(self, site_idx, start, end):
        """Hours of ``[start, end)`` covered by at least one interval [h].

        Notes
        -----
        .. math:: h = \\int_s^e [m(t) > 0]\\,dt
        """
        return self._at(site_idx, end, self.cum_u) - self._at(site_idx, start, self.cum_u)


def covered_share(table, site_idx, start, end, mask, n_site, origin, span):
    """Share of each (sample, period) piece's hours covered by the samples in `mask` [1].

    Parameters
    ----------
    table : pandas.DataFrame
        Pieces of :func:`workbench.wet.deposition.sample_weights` (``interval``,
        ``start``, ``end``, ``hours`` [h]).
    site_idx : ndarray of int
        Site of each sample.
    start, end : ndarray of datetime64
        Sample intervals. [UTC]
    mask : ndarray of bool
        Samples that cover (e.g. the used ones, or those with a value of one ion).
    n_site : int
    origin, span
        Hour axis of :class:`CoverageProfile` [h].

    Returns
    -------
    ndarray
        1 for a piece of a sample in `mask`; for another sample the share of its piece
        overlapped by samples in `mask` (a collocated sampler), 0 normally.  A piece of
        no length takes 1 or 0 by `mask`.

    Notes
    -----
    With :math:`h_{ip}` the hours of piece *ip* and :math:`c_{ip}` those of them covered
    by a sample in `mask` at the same site, the share is :math:`c_{ip}/h_{ip}` (uniform
    rain within a sample, as the share-of-hours split of section 4).
    """
    prof = CoverageProfile(site_idx[mask], start[mask], end[mask], n_site, origin, span)
    i = table["interval"].values
    length = table["hours"].values.astype(float)
    got = prof.covered_hours(site_idx[i], table["start"].values.astype("datetime64[ns]"),
                             table["end"].values.astype("datetime64[ns]"))
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(length > 0, got / np.where(length > 0, length, 1.0),
                         mask[i].astype(float))
    return np.clip(share, 0.0, 1.0)
