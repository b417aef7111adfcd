"""The met gaps of each reporting period of a site, in words: the hours without a met
row and, among the others, without a value of each variable a deposition velocity
reads (the reason the budget gives where a period's dry part is filled, partial or
missing for want of met; docs/budget.md, "Met gaps per period").

Counted from the runs of :func:`workbench.io.metgaps.gap_runs` against the period
bounds, a (run x period) overlap with no loop over hours.
"""
from __future__ import annotations

import numpy as np

from .io.metgaps import NO_ROW, VD_INPUTS
from .periods import hour_bounds

#: The words that start a period's met gap note (``met gaps in the period (of its 744
#: h): wind speed without a value in 336 h``).
MET_GAPS_NOTE = "met gaps in the period"


def met_gap_hours(runs, times, starts, ends, hours, n_sites: int, n_kinds: int) -> np.ndarray:
    """Hours of each reporting period without a met row and, among those with one,
    without a value of each variable, per site [h].

    Parameters
    ----------
    runs : pandas.DataFrame
        :func:`workbench.io.metgaps.gap_runs` (``site``, ``kind``, ``a``, ``b``).
    times : ndarray of datetime64 (T,)
        The met's hour ends [UTC].
    starts, ends : ndarray of datetime64 (P,)
        The reporting periods [UTC].
    hours : ndarray (P,)
        Their lengths [h]: the hours outside the met's time axis count as without a row.
    n_sites, n_kinds : int
        Sites, and kinds of gap (1 + the variables of the runs).

    Returns
    -------
    ndarray of int (site, kind, period) [h]

    >>> import pandas as pd
    >>> t = np.arange(1, 11).astype("datetime64[h]").astype("datetime64[ns]")
    >>> runs = pd.DataFrame({"site": [0, 0], "kind": [0, 1], "a": [8, 2], "b": [10, 6]})
    >>> p0 = np.array(["1970-01-01T00", "1970-01-01T05"], "datetime64[ns]")
    >>> p1 = np.array(["1970-01-01T05", "1970-01-01T12"], "datetime64[ns]")
    >>> met_gap_hours(runs, t, p0, p1, np.array([5.0, 7.0]), 1, 2).tolist()
    [[[0, 4], [3, 1]]]
    """
    out = np.zeros((n_sites, n_kinds, len(starts)), dtype=np.int64)
    pa, pb = hour_bounds(times, starts, ends)
    # hours of the period off the met's time axis: no row there at any site
    out[:, 0, :] += np.maximum(np.rint(np.asarray(hours, float)).astype(np.int64)
                               - (pb - pa), 0)[None, :]
    if len(runs):
        a, b = runs["a"].to_numpy()[:, None], runs["b"].to_numpy()[:, None]
        over = np.clip(np.minimum(b, pb[None, :]) - np.maximum(a, pa[None, :]), 0, None)
        np.add.at(out, (runs["site"].to_numpy(), runs["kind"].to_numpy()), over)
    return out


def met_gap_words(counts, hours, names=VD_INPUTS) -> np.ndarray:
    """The met gaps of each (site, period) in words, "" where none.

    Parameters
    ----------
    counts : ndarray of int (site, kind, period) [h]
        :func:`met_gap_hours`; kind 0 the hours without a row, 1 + i those without a
        value of ``names[i]`` among the hours with a row.
    hours : ndarray (period,) [h]
    names : tuple of str

    Returns
    -------
    ndarray of str (site, period)

    >>> c = np.array([[[0, 8759], [1008, 0], [24, 0]]])
    >>> met_gap_words(c, np.array([8760, 8760]), ("wind_speed", "temperature")).tolist()[0][0]
    'met gaps in the period (of its 8760 h): wind speed without a value in 1008 h, temperature in 24 h'
    >>> met_gap_words(c, np.array([8760, 8760]), ("wind_speed", "temperature")).tolist()[0][1]
    'met gaps in the period (of its 8760 h): no met row in 8759 h'
    """
    counts = np.asarray(counts)
    n_s, _, n_p = counts.shape
    out = np.full((n_s, n_p), "", dtype=object)
    hp = np.rint(np.asarray(hours, float)).astype(int)
    labels = [NO_ROW] + [n.replace("_", " ") for n in names]
    sites, periods = np.nonzero(counts.sum(axis=1) > 0)
    for s, p in zip(sites, periods):       # the (site, period) cells with a gap
        parts = []
        if counts[s, 0, p]:
            parts.append(f"no met {labels[0]} in {counts[s, 0, p]} h")
        vals = [(labels[k], counts[s, k, p]) for k in range(1, counts.shape[1])
                if counts[s, k, p]]
        if vals:
            parts.append(", ".join([f"{vals[0][0]} without a value in {vals[0][1]} h"]
                                   + [f"{n} in {h} h" for n, h in vals[1:]]))
        out[s, p] = f"{MET_GAPS_NOTE} (of its {hp[p]} h): " + "; ".join(parts)
    return out
