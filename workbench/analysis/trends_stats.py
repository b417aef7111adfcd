"""The trend tests of one series: Mann-Kendall with Sen's slope (:func:`mann_kendall`),
its Hamed and Rao (1998) variance correction for serial correlation (:func:`hamed_rao`),
and the seasonal Kendall test on monthly values with the Hirsch and Slack (1984)
correction for serial dependence among the seasons (:func:`seasonal_kendall`).

Vectorized over the pairs of values (broadcast differences); the reference of
:mod:`.trends_batch`, which gives the same numbers for many series at once.
:mod:`.trends` re-exports these names.
"""
from __future__ import annotations

import math
from statistics import NormalDist
from typing import NamedTuple

import numpy as np

from .trends_batch import _average_ranks, _detrended, exact_min_p, exact_p, seasonal_years

#: Fewest complete years for a trend to be called valid.  The normal approximation of
#: the Mann-Kendall statistic is used from n = 10 on (Gilbert 1987, Statistical Methods
#: for Environmental Pollution Monitoring, ch. 16, which gives exact tables below that;
#: from memory), and trend assessments of deposition networks commonly ask for ten
#: years or more (common practice).
MIN_YEARS = 10
#: Two-sided significance level of the slope's confidence band [1]; 0.05, the 95 %
#: band of Gilbert (1987), ch. 16 (common practice; from memory).
ALPHA = 0.05
class TrendResult(NamedTuple):
    """One trend test.  Slopes in the series' unit per year."""

    n: int                 #: values used (annual) or years with values in at least
    #: half the seasons (seasonal, :func:`seasonal_years`) [1]
    s: float               #: Mann-Kendall score S [1]
    var_s: float           #: variance of S (ties; Hirsch-Slack covariances if asked) [1]
    z: float               #: standard normal score (continuity-corrected) [1]
    p_value: float         #: two-sided p [1] (exact for n <= EXACT_MAX_N without ties)
    tau: float             #: Kendall's tau, S / number of pairs [1]
    slope: float           #: Sen's slope [unit yr-1]
    slope_low: float       #: lower end of its 1 - ALPHA confidence interval [unit yr-1]
    slope_high: float      #: upper end [unit yr-1]
    intercept: float       #: median(x) - slope median(t) [unit]


def _pairs(x, t):
    """Signs and slopes of all pairs i < j with both values present.

    The sign of a pair is sgn(x_j - x_i) sgn(t_j - t_i), Kendall's score between the
    times and the values, so that the times need not be in order, and two values of the
    same time score 0 and give no slope (Gilbert 1987, section 16.4.1, several values per
    time period; Sen 1968; from memory).  Before the 2026-12 audit such a pair scored the
    sign of its difference and gave an infinite slope (the per-series path of
    :func:`trend_table`, for a series with two rows in one year, gave an infinite upper
    end of the slope's interval), and times out of order scored against the order of
    the rows.
    """
    i, j = np.triu_indices(len(x), 1)
    ok = ~(np.isnan(x[i]) | np.isnan(x[j]))
    i, j = i[ok], j[ok]
    dx, dt = x[j] - x[i], t[j] - t[i]
    timed = dt != 0
    return np.sign(dx) * np.sign(dt), dx[timed] / dt[timed]


def _tie_sums(v):
    """Sums over the groups of tied values of sizes u: u(u-1), u(u-1)(u-2), u(u-1)(2u+5)."""
    _, u = np.unique(v, return_counts=True)
    u = u.astype(float)
    return np.sum(u * (u - 1)), np.sum(u * (u - 1) * (u - 2)), np.sum(u * (u - 1) * (2 * u + 5))


def _tie_variance(x, t=None) -> float:
    """Var(S) without serial dependence, corrected for ties (Kendall 1975; Gilbert 1987,
    eq. 16.4): [n(n-1)(2n+5) - sum_p t_p(t_p-1)(2t_p+5)] / 18.

    With times `t` given, groups of equal times (several values in one time period)
    add Kendall's (1975, ch. 4) terms for ties in both rankings (Gilbert 1987, eq. 16.6;
    from memory): [n(n-1)(2n+5) - sum_p t_p(t_p-1)(2t_p+5) - sum_q u_q(u_q-1)(2u_q+5)]
    / 18 + sum_p t_p(t_p-1)(t_p-2) sum_q u_q(u_q-1)(u_q-2) / [9 n(n-1)(n-2)]
    + sum_p t_p(t_p-1) sum_q u_q(u_q-1) / [2 n(n-1)]; with distinct times (the usual
    series of years) the extra terms are 0.
    """
    ok = ~np.isnan(x)
    n = int(ok.sum())
    a1, a2, a5 = _tie_sums(x[ok])
    if t is None:
        return float((n * (n - 1) * (2 * n + 5) - a5) / 18.0)
    b1, b2, b5 = _tie_sums(np.asarray(t, float)[ok])
    if b1 == 0:                       # distinct times: the same number as without them
        return float((n * (n - 1) * (2 * n + 5) - a5) / 18.0)
    out = (n * (n - 1) * (2 * n + 5) - a5 - b5) / 18.0 + a1 * b1 / (2.0 * n * (n - 1))
    if n > 2:
        out += a2 * b2 / (9.0 * n * (n - 1) * (n - 2))
    return float(out)


def _z(s, var_s) -> float:
    """Continuity-corrected normal score (S - sgn S) / sqrt(Var S) (Gilbert 1987, eq. 16.5)."""
    if var_s <= 0 or s == 0:
        return 0.0
    return float((s - np.sign(s)) / math.sqrt(var_s))


def _p(z) -> float:
    """Two-sided p of a standard normal score (NaN for NaN: no test)."""
    return float(math.erfc(abs(z) / math.sqrt(2.0))) if np.isfinite(z) else np.nan


def _slope_interval(slopes, var_s, alpha):
    """Confidence interval of Sen's slope (Gilbert 1987, eqs. 6.7-6.9, from memory):
    C = z_{1-alpha/2} sqrt(Var S), M1 = (N' - C)/2, M2 = (N' + C)/2; the interval is the
    M1-th and (M2 + 1)-th largest of the N' ordered slopes (interpolated)."""
    m = slopes.size
    if m == 0:
        return np.nan, np.nan
    q = np.sort(slopes)
    c = NormalDist().inv_cdf(1.0 - alpha / 2.0) * math.sqrt(max(var_s, 0.0))
    ranks = np.arange(1, m + 1)
    low = np.interp((m - c) / 2.0, ranks, q)
    high = np.interp((m + c) / 2.0 + 1.0, ranks, q)
    return float(low), float(high)


def mann_kendall(x, t=None, alpha=ALPHA) -> TrendResult:
    """Mann-Kendall test and Sen's slope of one series.

    Parameters
    ----------
    x : array_like
        Values [any unit]; NaN marks a missing value (left out).
    t : array_like, optional
        Times [yr] (default 0, 1, 2, ...).
    alpha : float
        Two-sided level of the slope's confidence interval [1].

    Returns
    -------
    TrendResult

    References
    ----------
    Mann (1945) Econometrica 13, 245; Kendall (1975) Rank Correlation Methods; Sen (1968)
    J. Am. Stat. Assoc. 63, 1379; Gilbert (1987) Statistical Methods for Environmental
    Pollution Monitoring, ch. 16.

    >>> r = mann_kendall([1.0, 2.0, 3.0, 4.0, 6.0])
    >>> r.s, r.slope
    (10.0, 1.0)
    """
    x = np.asarray(x, float)
    t = np.arange(x.size, dtype=float) if t is None else np.asarray(t, float)
    sign, slopes = _pairs(x, t)
    n = int(np.sum(~np.isnan(x)))
    s = float(sign.sum())
    var_s = _tie_variance(x, t)
    z = _z(s, var_s)
    slope = float(np.median(slopes)) if slopes.size else np.nan
    lo, hi = _slope_interval(slopes, var_s, alpha)
    ok = ~np.isnan(x)
    icpt = float(np.median(x[ok]) - slope * np.median(t[ok])) if n else np.nan
    if not slopes.size:                 # no pair of values: no test (not p = 1)
        s = var_s = z = np.nan
    elif var_s == 0:                    # every value tied: no test (not p = 1)
        z = np.nan
    p = float(exact_p(n, s, var_s))     # few values, no ties: the exact p
    p = _p(z) if np.isnan(p) else p
    return TrendResult(n, s, var_s, z, p, s / (n * (n - 1) / 2) if n > 1 else np.nan,
                       slope, lo, hi, icpt)


def hamed_rao(x, t=None, alpha=ALPHA):
    """Hamed and Rao (1998) variance correction of the Mann-Kendall test for serial
    correlation.

    The values are detrended with Sen's slope (x - slope t, t from the first year,
    rounded so that exact ties stay ties: :data:`TIE_RTOL`), ranked, and the
    autocorrelation rho_k of the ranks computed at every lag k = 1 .. n-1 of the values
    in time order (a missing year is closed up, as the skipped values of the reference
    library; the lag counts values, not years).  Only the lags with |rho_k| above
    z_{1-alpha/2}/sqrt(n) count; the variance of S is multiplied by
    n/n* = 1 + 2/[n(n-1)(n-2)] sum_k (n-k)(n-k-1)(n-k-2) rho_k.

    Parameters
    ----------
    x : array_like
        Values [any unit]; NaN missing.
    t : array_like, optional
        Times [yr] (default 0, 1, 2, ...).
    alpha : float
        Two-sided level of the lags' significance and of the test [1].

    Returns
    -------
    factor, var_s, z, p : float
        n/n* [1], the corrected Var(S) [1], its continuity-corrected normal score and
        two-sided p [1].  Where no lag counts (factor exactly 1) p is the plain test's
        p (exact for few values), and so on an exact straight line (the detrended
        values all equal: no autocorrelation to measure); fewer than 3 values, all
        values equal, or a factor <= 0 (strong negative correlation): NaN (no test).
        The p is never below :func:`exact_min_p` of the values, the smallest p any
        order of them allows: a strong negative correlation of few values shrinks
        Var(S) so far that the normal p fell below it (six values 5, 4, 4, 3, 3, 2 gave
        1e-8, as pymannkendall does, where no order of them goes below 8/720); such a
        p is held there (z is the corrected score as computed).

    References
    ----------
    Hamed, K.H., Rao, A.R. (1998) A modified Mann-Kendall trend test for autocorrelated
    data. J. Hydrol. 204, 182-196 (eq. of n/n* as above; from memory, checked against
    pymannkendall's ``hamed_rao_modification_test`` in tests/analysis/test_trend_hamed_rao.py).
    """
    factor, var_s, z, p = _hamed_rao(x, t, alpha)
    p_min = exact_min_p(np.asarray(x, float))
    return factor, var_s, z, (p_min if np.isfinite(p) and p < p_min else p)


def _hamed_rao(x, t=None, alpha=ALPHA):
    """:func:`hamed_rao` before its p is held at :func:`exact_min_p`."""
    x = np.asarray(x, float)
    t = np.arange(x.size, dtype=float) if t is None else np.asarray(t, float)
    plain = mann_kendall(x, t, alpha)
    ok = ~np.isnan(x)
    order = np.argsort(t[ok], kind="stable")
    xs, ts = x[ok][order], t[ok][order]
    n = xs.size
    if n < 3 or not np.isfinite(plain.var_s) or plain.var_s <= 0:
        return (np.nan,) * 4
    r = _average_ranks(_detrended(xs, plain.slope, ts - ts[0]))
    y = r - r.mean()
    acov = np.correlate(y, y, "full")[n - 1:] / n            # lags 0 .. n-1
    if acov[0] <= 0:                 # an exact line: nothing left to correlate
        return 1.0, plain.var_s, plain.z, plain.p_value
    rho = acov[1:] / acov[0]
    k = np.arange(1, n)
    bound = NormalDist().inv_cdf(1.0 - alpha / 2.0) / math.sqrt(n)
    sig = np.abs(rho) > bound
    w = (n - k) * (n - k - 1) * (n - k - 2.0)
    factor = float(1.0 + 2.0 / (n * (n - 1) * (n - 2)) * np.sum(np.where(sig, w * rho, 0.0)))
    if factor <= 0:
        return factor, np.nan, np.nan, np.nan
    var_s = plain.var_s * factor
    if factor == 1.0:
        return factor, var_s, plain.z, plain.p_value
    z = _z(plain.s, var_s)
    return factor, var_s, z, _p(z)


def hirsch_slack_covariance(x) -> np.ndarray:
    """Covariances of the Mann-Kendall scores of the seasons, over the same years.

    Parameters
    ----------
    x : ndarray, shape (years, seasons)
        Values [any unit]; NaN missing.

    Returns
    -------
    ndarray, shape (seasons, seasons)
        :math:`\\mathrm{cov}(S_g, S_h) = [K_{gh} + 4 \\sum_i R_{ig} R_{ih} - n(n+1)^2] / 3`
        with :math:`K_{gh} = \\sum_{i<j} \\mathrm{sgn}[(x_{jg} - x_{ig})(x_{jh} - x_{ih})]`
        and ranks :math:`R_{ig} = (n + 1 + \\sum_j \\mathrm{sgn}(x_{ig} - x_{jg}))/2`, a
        missing value getting :math:`(n+1)/2` and counting in no pair (Hirsch and Slack
        1984, Water Resour. Res. 20, 727; from memory).  With the centred ranks
        :math:`c_{ig} = \\sum_j \\mathrm{sgn}(x_{ig} - x_{jg})` this is
        :math:`(K_{gh} + \\sum_i c_{ig} c_{ih}) / 3`; its diagonal is the tie-corrected
        variance of each season's score.
    """
    x = np.asarray(x, float)
    d = np.sign(x[:, None, :] - x[None, :, :])           # d[i, j, g] = sgn(x_ig - x_jg)
    d = np.nan_to_num(d, nan=0.0)
    k = 0.5 * np.einsum("ijg,ijh->gh", d, d)                # pairs i < j (d antisymmetric)
    c = d.sum(axis=1)                                       # (years, seasons)
    return (k + c.T @ c) / 3.0


def seasonal_kendall(x, years=None, correct=True, alpha=ALPHA) -> TrendResult:
    """Seasonal Kendall test and seasonal Sen slope.

    Parameters
    ----------
    x : array_like, shape (years, seasons)
        Values [any unit]; NaN missing.  Seasons are usually the 12 months.
    years : array_like, optional
        The years of the rows [yr] (default 0, 1, ...).
    correct : bool
        Add the covariances of the seasons' scores (Hirsch and Slack 1984), so that the
        test holds under serial dependence; without, the seasons count as independent
        (Hirsch, Slack and Smith 1982).
    alpha : float
        Two-sided level of the slope's confidence interval [1].

    Returns
    -------
    TrendResult
        ``n`` is the number of years with values in at least half the seasons
        (:func:`seasonal_years`; before 2026-12 any year with one value counted); the
        slope is the median
        of the within-season slopes [unit yr-1].

    References
    ----------
    Hirsch, R.M., Slack, J.R., Smith, R.A. (1982) Water Resour. Res. 18, 107-121.
    Hirsch, R.M., Slack, J.R. (1984) Water Resour. Res. 20, 727-732.
    """
    x = np.asarray(x, float)
    n_years, n_seasons = x.shape
    t = np.arange(n_years, dtype=float) if years is None else np.asarray(years, float)
    i, j = np.triu_indices(n_years, 1)             # pairs of years, all seasons at once
    dx = x[j] - x[i]                               # (pairs, seasons); NaN: a value missing
    ok = ~np.isnan(dx)
    s = float(np.sign(dx[ok]).sum())
    cov = hirsch_slack_covariance(x)
    var_s = float(cov.sum() if correct else np.trace(cov))
    z = _z(s, var_s)
    slopes = (dx / (t[j] - t[i])[:, None])[ok]
    slope = float(np.median(slopes)) if slopes.size else np.nan
    lo, hi = _slope_interval(slopes, var_s, alpha)
    counts = np.sum(~np.isnan(x), axis=0)
    pairs = float(np.sum(counts * (counts - 1) / 2))
    if not slopes.size:                 # no pair of values: no test (not p = 1)
        s = var_s = z = np.nan
    elif var_s == 0:                    # every value tied: no test (not p = 1)
        z = np.nan
    ok = ~np.isnan(x)
    tt = np.broadcast_to(t[:, None], x.shape)
    icpt = float(np.median(x[ok]) - slope * np.median(tt[ok])) if ok.any() else np.nan
    return TrendResult(seasonal_years(ok), s, var_s, z, _p(z),
                       s / pairs if pairs else np.nan, slope, lo, hi, icpt)
