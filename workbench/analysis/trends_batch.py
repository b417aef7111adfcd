"""The trend statistics of many series at once (arrays of series), for the table of a run.

:func:`mann_kendall_batch` and :func:`seasonal_kendall_batch` compute, for every row of
an array of series, exactly the numbers of :func:`workbench.analysis.trends.mann_kendall`
and :func:`~workbench.analysis.trends.seasonal_kendall` on that row (the same equations
and the same floating-point operations: integer-valued sums, medians as the mean of the
two middle values, the interval by linear interpolation between ranks as ``np.interp``
does), without a Python call per series.  The series share one axis of years; a year a
series has no value in is NaN and enters no pair, as a missing value does in the
per-series functions.  Series are taken in chunks so that the arrays of pairs stay
small [about :data:`CHUNK_CELLS` values].
"""
from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np

#: Largest number of (series x pairs [x seasons]) values held at once [1].
CHUNK_CELLS = 2_000_000
#: Largest number of values whose Mann-Kendall p comes from the exact distribution of S
#: when no two values are tied; the normal approximation is used from n = 10 on and with
#: ties (Gilbert 1987, ch. 16, exact tables for small n; Kendall 1975; from memory).
EXACT_MAX_N = 9
#: Share of its seasons a year needs values in to count as one of the years of a
#: seasonal trend [1] (re-exported by :mod:`.trends`).  Our choice (no published
#: rule known to us): a year of one usable month counted as a whole year, so ten
#: such years made a "valid" trend of ten monthly values; with half the seasons a
#: counted year carries at least 6 of its 12 within-month comparisons.  The test
#: itself uses every month that has a value.
SEASON_SHARE = 0.5
#: Relative tolerance under which two detrended values are one tie [1]: x_i - b t_i
#: and x_j - b t_j equal in exact arithmetic (tied values, a slope of whole steps)
#: can differ in the last bits; rounded to this share of the largest, they tie.
TIE_RTOL = 1e-9


def _detrended(x, slope, t):
    """x - slope t rounded to :data:`TIE_RTOL` of the largest |value| (last axis), so
    that ties of exact arithmetic stay ties [unit of x]."""
    d = x - slope[..., None] * t if np.ndim(slope) else x - slope * t
    # a row without any value (a series of the batch with no year): no scale, and no
    # "All-NaN slice" warning (it reached the network overview's notebook output)
    a = np.abs(d)
    scale = np.max(np.where(np.isnan(a), -np.inf, a), axis=-1, keepdims=True) \
        if d.size else d
    scale = np.where(np.isfinite(scale) & (scale > 0), scale, 1.0) * TIE_RTOL
    return np.round(d / scale) * scale


def _average_ranks(v):
    """Ranks 1..n of the values of `v` (last axis), ties given their mean rank, NaN
    ranked not at all (NaN) [1]: the number of values below plus (number equal + 1)/2."""
    v = np.asarray(v, float)
    below = np.sum(v[..., None, :] < v[..., :, None], axis=-1)
    equal = np.sum(v[..., None, :] == v[..., :, None], axis=-1)
    return np.where(np.isnan(v), np.nan, below + (equal + 1) / 2.0)


def seasonal_years(valid):
    """Years that count towards the ten of a valid seasonal trend
    (:data:`workbench.analysis.trends.MIN_YEARS`): those with a value in at least half
    their seasons (6 of 12 months), :data:`SEASON_SHARE`.

    Parameters
    ----------
    valid : ndarray of bool, shape (..., years, seasons)

    Returns
    -------
    int or ndarray of int, shape (...)
    """
    valid = np.asarray(valid, bool)
    need = math.ceil(SEASON_SHARE * valid.shape[-1])
    counted = np.sum(np.sum(valid, axis=-1) >= need, axis=-1)
    return int(counted) if np.ndim(counted) == 0 else counted.astype(np.int64)


def _exact_p_table(n_max: int = EXACT_MAX_N) -> np.ndarray:
    """Two-sided exact p of the Mann-Kendall score without ties, ``table[n, |S|]`` [1].

    Under no trend every order of n distinct values is equally likely; S = N - 2K with
    N = n(n - 1)/2 pairs and K the inversions, whose counts over the n! orders follow
    the recursion c_n(k) = sum_{j<n} c_{n-1}(k - j) (Kendall 1975).  p = min(1,
    2 P(S >= |S|)), as scipy.stats.kendalltau(method="exact") computes it.
    """
    pairs_max = n_max * (n_max - 1) // 2
    table = np.full((n_max + 1, pairs_max + 1), np.nan)
    counts = np.array([1.0])                             # n = 1: one order, no inversion
    for n in range(2, n_max + 1):
        new = np.zeros(counts.size + n - 1)
        for j in range(n):                               # the n-th value adds j inversions
            new[j:j + counts.size] += counts
        counts = new
        pairs = n * (n - 1) // 2
        cdf = np.cumsum(counts) / counts.sum()           # P(K <= k)
        s = np.arange(pairs + 1)
        table[n, :pairs + 1] = np.minimum(1.0, 2.0 * cdf[(pairs - s) // 2])
    return table


_EXACT_P = _exact_p_table()


def exact_p(n, s, var_s):
    """The exact two-sided p where it applies (2 <= n <= :data:`EXACT_MAX_N`, no ties:
    Var(S) = n(n-1)(2n+5)/18), else NaN; arrays or scalars [1]."""
    n, s, var_s = np.broadcast_arrays(np.asarray(n), np.asarray(s, float),
                                      np.asarray(var_s, float))
    no_ties = var_s == n * (n - 1) * (2 * n + 5) / 18.0
    ok = (n >= 2) & (n <= EXACT_MAX_N) & no_ties & np.isfinite(s)
    ni = np.where(ok, n, 2).astype(np.int64)
    si = np.where(ok, np.abs(np.nan_to_num(s)), 0).astype(np.int64)
    return np.where(ok, _EXACT_P[ni, np.minimum(si, _EXACT_P.shape[1] - 1)], np.nan)


def exact_min_p(x):
    """The smallest two-sided p that the exact permutation distribution of the
    Mann-Kendall S allows for the values of `x` (each row, last axis; NaN left out) [1].

    Under no trend every order of the n values is equally likely; of the n!/prod(u_p!)
    distinct orders of values with tie groups of sizes u_p, one is increasing and one
    decreasing, the two with the largest |S|.  The smallest p an order can have is
    therefore ``min(1, 2 prod(u_p!) / n!)``: 2/n! without ties (2/720 = 0.0028 for six
    values), the p of :func:`exact_p`'s table at the largest |S|
    (tests/analysis/test_trend_min_p.py enumerates the orders).  NaN with fewer than
    2 values or all values tied (no test).  With tied times (several values in one
    year) more orders reach the largest |S|, so the value is then a lower bound of the
    smallest p.

    >>> float(exact_min_p([5.0, 4.0, 4.0, 3.0, 3.0, 2.0])) * 720     # 2 x 2! x 2!
    8.0
    """
    a = np.atleast_2d(np.asarray(x, float))
    n = np.sum(~np.isnan(a), axis=1)
    m = a.shape[-1]
    log_fact = np.concatenate([[0.0], np.cumsum(np.log(np.arange(1, m + 1)))])
    out = np.full(a.shape[0], np.nan)
    if m:
        s = np.sort(a, axis=1)                                   # NaN last
        valid = ~np.isnan(s)
        start = np.ones(s.shape, bool)
        start[:, 1:] = s[:, 1:] != s[:, :-1]
        run = np.cumsum(start, axis=1) - 1
        rows = a.shape[0]
        gid = (np.arange(rows)[:, None] * m + run)[valid]
        u = np.bincount(gid, minlength=rows * m).reshape(rows, m)
        groups = np.sum(u > 0, axis=1)
        log_p = np.log(2.0) + np.sum(log_fact[u], axis=1) - log_fact[n]
        out = np.where((n >= 2) & (groups >= 2), np.minimum(1.0, np.exp(log_p)), np.nan)
    return float(out[0]) if np.ndim(x) <= 1 else out


def median_rows(a) -> np.ndarray:
    """Median of the values of each row, NaN left out (NaN for a row without values).

    The same number as ``np.median`` of the row's values: the middle value of the
    sorted values, or the mean ``(low + high) / 2`` of the two middle ones.
    """
    a = np.asarray(a, float)
    if a.shape[1] == 0:
        return np.full(a.shape[0], np.nan)
    s = np.sort(a, axis=1)                                  # NaN sort last
    k = np.sum(~np.isnan(a), axis=1)
    rows = np.arange(a.shape[0])
    lo = s[rows, np.clip((k - 1) // 2, 0, None)]
    hi = s[rows, np.clip(k // 2, 0, a.shape[1] - 1)]
    med = np.where(k % 2 == 1, hi, (lo + hi) / 2.0)
    return np.where(k > 0, med, np.nan)


def _interp_ranks(x, q, m) -> np.ndarray:
    """``np.interp(x[r], arange(1, m[r] + 1), q[r, :m[r]])`` for every row r (q sorted)."""
    out = np.full(x.shape, np.nan)
    rows = np.arange(x.shape[0])
    if q.shape[1] == 0:
        return out
    first = q[:, 0]
    last = q[rows, np.clip(m - 1, 0, None)]
    j = np.clip(np.floor(np.nan_to_num(x, nan=1.0)).astype(np.int64) - 1, 0,
                max(q.shape[1] - 2, 0))
    qj = q[rows, j]
    qj1 = q[rows, np.minimum(j + 1, q.shape[1] - 1)]
    xj = (j + 1).astype(float)
    with np.errstate(invalid="ignore"):
        inner = (qj1 - qj) * (x - xj) + qj
        retry = (qj1 - qj) * (x - (xj + 1.0)) + qj1        # np.interp's second try on NaN
        inner = np.where(np.isnan(inner), np.where(np.isnan(retry) & (qj == qj1), qj, retry),
                         inner)
    inner = np.where(x == xj, qj, inner)
    res = np.where(x < 1.0, first, np.where(x >= m, last, inner))
    res = np.where(np.isnan(x), np.nan, res)
    res = np.where(m == 1, first, res)                      # one slope: np.interp's case
    return np.where(m > 0, res, out)


def _slope_interval(slopes, var_s, alpha):
    """Low and high ends of Sen's slope interval for each row of slopes (NaN: no pair);
    see :func:`workbench.analysis.trends._slope_interval`."""
    q = np.sort(slopes, axis=1)
    m = np.sum(~np.isnan(slopes), axis=1)
    zc = NormalDist().inv_cdf(1.0 - alpha / 2.0)
    c = zc * np.sqrt(np.maximum(var_s, 0.0))
    return _interp_ranks((m - c) / 2.0, q, m), _interp_ranks((m + c) / 2.0 + 1.0, q, m)


def _z_p(s, var_s):
    """Continuity-corrected normal score and its two-sided p (as trends._z and _p)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        z = np.where((var_s > 0) & (s != 0), (s - np.sign(s)) / np.sqrt(np.where(
            var_s > 0, var_s, 1.0)), 0.0)
    root2 = math.sqrt(2.0)
    p = np.array([math.erfc(v) for v in (np.abs(z) / root2).tolist()], float)
    return z, p


def _tie_term(x):
    """sum_p t_p (t_p - 1)(2 t_p + 5) over the groups of tied values of each row [1]."""
    s = np.sort(x, axis=1)
    valid = ~np.isnan(s)
    n_rows, n = s.shape
    if n == 0:
        return np.zeros(n_rows, np.int64)
    start = np.ones(s.shape, bool)
    start[:, 1:] = s[:, 1:] != s[:, :-1]
    run = np.cumsum(start, axis=1) - 1
    gid = (np.arange(n_rows)[:, None] * n + run)[valid]
    t = np.bincount(gid, minlength=n_rows * n).reshape(n_rows, n).astype(np.int64)
    return np.sum(t * (t - 1) * (2 * t + 5), axis=1)


def _chunks(n_series, per_series):
    step = max(1, CHUNK_CELLS // max(per_series, 1))
    return [slice(a, min(a + step, n_series)) for a in range(0, n_series, step)]


def mann_kendall_batch(x, t, alpha) -> dict:
    """Mann-Kendall test and Sen's slope of every row of `x`.

    Parameters
    ----------
    x : ndarray, shape (series, years)
        Values [any unit]; NaN missing.
    t : ndarray, shape (years,)
        Times of the columns [yr], increasing.
    alpha : float
        Two-sided level of the slope's confidence interval [1].

    Returns
    -------
    dict of ndarray, shape (series,)
        The fields of :class:`workbench.analysis.trends.TrendResult` (slopes
        [unit yr-1]), the median and the smallest of the values ``median``, ``min``
        [unit] and the first and last time with a value ``t_first``, ``t_last`` [yr]
        (NaN: none).  All values tied (Var(S) = 0): z and p are NaN (no test).
    """
    x = np.asarray(x, float)
    t = np.asarray(t, float)
    n_series, n_t = x.shape
    i, j = np.triu_indices(n_t, 1)
    dt = t[j] - t[i]
    valid = ~np.isnan(x)
    n = valid.sum(axis=1).astype(np.int64)
    var_s = (n * (n - 1) * (2 * n + 5) - _tie_term(x)) / 18.0
    out = {k: np.full(n_series, np.nan) for k in ("s", "slope", "slope_low", "slope_high")}
    for sl in _chunks(n_series, i.size):
        dx = x[sl][:, j] - x[sl][:, i]
        out["s"][sl] = np.where(np.isnan(dx), 0.0, np.sign(dx)).sum(axis=1)
        slopes = dx / dt
        out["slope"][sl] = median_rows(slopes)
        out["slope_low"][sl], out["slope_high"][sl] = _slope_interval(slopes, var_s[sl], alpha)
    s = out["s"]
    z, p = _z_p(s, var_s)
    none = n < 2                         # no pair of values: no test (not p = 1)
    s, var_s, z, p = (np.where(none, np.nan, v) for v in (s, var_s, z, p))
    z, p = (np.where(var_s == 0, np.nan, v) for v in (z, p))   # all values tied: no test
    exact = exact_p(n, s, var_s)                   # few values, no ties: the exact p
    p = np.where(np.isnan(exact), p, exact)
    with np.errstate(invalid="ignore", divide="ignore"):
        tau = np.where(n > 1, s / np.where(n > 1, n * (n - 1) / 2, 1.0), np.nan)
    med = median_rows(x)
    tt = np.where(valid, t, np.nan)
    icpt = np.where(n > 0, med - out["slope"] * median_rows(tt), np.nan)
    with np.errstate(invalid="ignore"):
        first, last = np.nanmin(np.where(valid, t, np.inf), axis=1), np.nanmax(
            np.where(valid, t, -np.inf), axis=1)
    return {"n": n, "s": s, "var_s": var_s, "z": z, "p_value": p, "tau": tau,
            "slope": out["slope"], "slope_low": out["slope_low"],
            "slope_high": out["slope_high"], "intercept": icpt, "median": med,
            "min": np.where(n > 0, np.min(np.where(valid, x, np.inf), axis=1), np.nan),
            "t_first": np.where(n > 0, first, np.nan), "t_last": np.where(n > 0, last, np.nan)}


def seasonal_kendall_batch(x, t, alpha) -> dict:
    """Seasonal Kendall test with the Hirsch-Slack covariance, every series at once.

    Parameters
    ----------
    x : ndarray, shape (series, years, seasons)
        Values [any unit]; NaN missing.
    t : ndarray, shape (years,)
        The years of the rows [yr], increasing.
    alpha : float
        Two-sided level of the slope's confidence interval [1].

    Returns
    -------
    dict of ndarray, shape (series,)
        As :func:`mann_kendall_batch` (``n``: years with values in at least half the
        seasons, :func:`workbench.analysis.trends.seasonal_years`), the same
        numbers as :func:`workbench.analysis.trends.seasonal_kendall` with
        ``correct=True`` on each series.
    """
    x = np.asarray(x, float)
    t = np.asarray(t, float)
    n_series, n_t, n_g = x.shape
    i, j = np.triu_indices(n_t, 1)
    dt = t[j] - t[i]
    inc = np.zeros((n_t, i.size))                            # c = inc @ d (centred ranks)
    inc[j, np.arange(i.size)] = 1.0
    inc[i, np.arange(i.size)] = -1.0
    keys = ("s", "var_s", "slope", "slope_low", "slope_high")
    out = {k: np.full(n_series, np.nan) for k in keys}
    for sl in _chunks(n_series, i.size * n_g):
        dx = x[sl][:, j, :] - x[sl][:, i, :]                  # (series, pairs, seasons)
        ok = ~np.isnan(dx)
        d = np.where(ok, np.sign(dx), 0.0)
        out["s"][sl] = d.reshape(d.shape[0], -1).sum(axis=1)
        k = np.matmul(d.transpose(0, 2, 1), d)               # K_gh over pairs i < j
        c = np.matmul(inc, d)                                 # (series, years, seasons)
        cov = (k + np.matmul(c.transpose(0, 2, 1), c)) / 3.0
        out["var_s"][sl] = [row.sum() for row in cov]         # as cov.sum() of one series
        slopes = (dx / dt[None, :, None]).reshape(dx.shape[0], -1)
        out["slope"][sl] = median_rows(slopes)
        lo, hi = _slope_interval(slopes, out["var_s"][sl], alpha)
        out["slope_low"][sl], out["slope_high"][sl] = lo, hi
    s, var_s = out["s"], out["var_s"]
    z, p = _z_p(s, var_s)
    valid = ~np.isnan(x)
    counts = valid.sum(axis=1)
    pairs = np.sum(counts * (counts - 1) / 2, axis=1)
    s, var_s, z, p = (np.where(pairs == 0, np.nan, v) for v in (s, var_s, z, p))
    z, p = (np.where(var_s == 0, np.nan, v) for v in (z, p))   # all values tied: no test
    with np.errstate(invalid="ignore", divide="ignore"):
        tau = np.where(pairs != 0, s / np.where(pairs != 0, pairs, 1.0), np.nan)
    flat = x.reshape(n_series, -1)
    med = median_rows(flat)
    tt = np.where(valid, t[None, :, None], np.nan).reshape(n_series, -1)
    has = valid.any(axis=2)
    icpt = np.where(has.any(axis=1), med - out["slope"] * median_rows(tt), np.nan)
    with np.errstate(invalid="ignore"):
        first = np.min(np.where(has, t, np.inf), axis=1)
        last = np.max(np.where(has, t, -np.inf), axis=1)
    n = seasonal_years(valid)
    any_ = has.any(axis=1)                  # a series with any value (first, last, min)
    return {"n": n, "s": s, "var_s": var_s, "z": z, "p_value": p, "tau": tau,
            "slope": out["slope"], "slope_low": out["slope_low"],
            "slope_high": out["slope_high"], "intercept": icpt, "median": med,
            "min": np.where(any_, np.min(np.where(valid, x, np.inf).reshape(n_series, -1),
                                         axis=1), np.nan),
            "t_first": np.where(any_, first, np.nan), "t_last": np.where(any_, last, np.nan)}


def hamed_rao_batch(x, t, plain, alpha) -> dict:
    """Hamed and Rao (1998) correction of every row's Mann-Kendall test: the numbers of
    :func:`workbench.analysis.trends.hamed_rao` on each row, without a call per series.

    Parameters
    ----------
    x : ndarray, shape (series, years)
        Values [any unit]; NaN missing.
    t : ndarray, shape (years,)
        Times of the columns [yr], increasing.
    plain : dict
        :func:`mann_kendall_batch` of the same `x`, `t` and `alpha`.
    alpha : float
        Two-sided level of the lags' significance and of the test [1].

    Returns
    -------
    dict of ndarray, shape (series,)
        ``factor`` (n/n* [1]), ``var_s``, ``z``, ``p_value`` of the corrected test
        (NaN: no test), the p never below ``p_min`` (:func:`exact_min_p`, the smallest
        p any order of the row's values allows); ``p_held`` (bool: the corrected p was
        below it and is held there) and ``p_raw`` (the corrected p before that).
    """
    x = np.asarray(x, float)
    t = np.asarray(t, float)
    n_series, n_t = x.shape
    n = plain["n"].astype(np.int64)
    factor = np.full(n_series, np.nan)
    zc = NormalDist().inv_cdf(1.0 - alpha / 2.0)
    i, j = np.triu_indices(n_t)                                # lag 0 included
    lag = j - i
    onehot = np.zeros((i.size, n_t))
    onehot[np.arange(i.size), lag] = 1.0
    for sl in _chunks(n_series, n_t * n_t):
        xs = x[sl]
        valid = ~np.isnan(xs)
        # the values of each row in time order, closed up (present first), NaN after
        order = np.argsort(~valid, axis=1, kind="stable")
        vals = np.take_along_axis(xs, order, axis=1)
        times = np.take_along_axis(np.broadcast_to(t, xs.shape), order, axis=1)
        nn = n[sl]
        t0 = times[:, :1]
        d = _detrended(vals, plain["slope"][sl], times - t0)
        r = _average_ranks(d)
        y = np.where(np.isnan(r), 0.0, r - np.where(nn > 0, (nn + 1) / 2.0, 0.0)[:, None])
        acov = (y[:, i] * y[:, j]) @ onehot / np.maximum(nn, 1)[:, None]   # (rows, lags)
        with np.errstate(invalid="ignore", divide="ignore"):
            rho = acov[:, 1:] / acov[:, :1]
            k = np.arange(1, n_t)[None, :]
            bound = zc / np.sqrt(np.maximum(nn, 1))[:, None]
            sig = (np.abs(rho) > bound) & (k < nn[:, None])
            w = (nn[:, None] - k) * (nn[:, None] - k - 1) * (nn[:, None] - k - 2.0)
            total = np.sum(np.where(sig, w * rho, 0.0), axis=1)
            f = 1.0 + 2.0 / (nn * (nn - 1) * (nn - 2.0)) * total
        ok = (nn >= 3) & np.isfinite(plain["var_s"][sl]) & (plain["var_s"][sl] > 0)
        f = np.where(acov[:, 0] > 0, f, 1.0)        # an exact line: nothing to correlate
        factor[sl] = np.where(ok, f, np.nan)
    with np.errstate(invalid="ignore"):
        var_s = np.where(factor > 0, plain["var_s"] * factor, np.nan)
    s = np.nan_to_num(plain["s"])
    z, p = _z_p(s, np.nan_to_num(var_s))
    same = factor == 1.0                    # no lag counts: the plain test (its exact p)
    z = np.where(same, plain["z"], np.where(np.isnan(var_s), np.nan, z))
    p = np.where(same, plain["p_value"], np.where(np.isnan(var_s), np.nan, p))
    p_min = exact_min_p(x)
    held = np.isfinite(p) & (p < p_min)     # below what any order of the values allows
    return {"factor": factor, "var_s": var_s, "z": z, "p_value": np.where(held, p_min, p),
            "p_min": p_min, "p_held": held, "p_raw": p}
