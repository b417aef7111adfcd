"""Trends over the years: Mann-Kendall with Sen's slope on annual values, and the
seasonal Kendall test on monthly values with the Hirsch and Slack (1984) correction for
serial dependence among the seasons.

The statistics are vectorized over the pairs of values (broadcast differences).  The
table of a run (:func:`trend_table`) indexes all series at once (one groupby for the
series, one for the monthly grids) and computes every series' statistics in one batch
(:mod:`.trends_batch`, the same numbers as the functions here, which stay the
reference): a network has thousands of series, and a call per series used to dominate
the writing of a run.
"""
from __future__ import annotations

import math
from statistics import NormalDist
from typing import NamedTuple

import numpy as np

from .trend_changes import CHANGE_NOTE, _change_columns, change_notes  # noqa: F401
from .trends_batch import EXACT_MAX_N, exact_min_p, exact_p  # noqa: F401  (few values)
from .trends_batch import (SEASON_SHARE, TIE_RTOL, _average_ranks,  # noqa: F401
                           _detrended, seasonal_years)

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


# ------------------------------------------------------------------ the table of a run
TREND_COLUMNS = ("site", "receptor", "element", "pathway", "species", "series", "n_years",
                 "first_year", "last_year", "test", "tau", "p_value", "sen_slope_per_yr",
                 "sen_slope_pct_per_yr", "valid", "note")
#: Statuses of a year (or month) whose value enters a trend, per variant of the values.
VARIANTS = {"all": ("complete", "filled"), "without_filled": ("complete",)}
KEYS = ["site", "receptor", "element", "pathway", "species"]
#: Species of each (element, pathway) pair, for the detection-limit notes of the sums.
_SPECIES_OF = {("S", "wet"): ("SO4",), ("S", "dry"): ("SO2", "pSO4"),
               ("N", "wet"): ("NO3", "NH4"), ("N", "dry"): ("HNO3", "pNO3", "pNH4", "NH3", "NO2")}


def detection_limit_notes(inputs) -> dict:
    """(site, species) -> a note where the detection limit of a species changed.

    A detection limit is known where a value was written as ``<DL``; the note names the
    years in which the set of limits seen differs from the year before.
    """
    import pandas as pd
    notes = {}
    for ds in (getattr(inputs, "precipitation", None), getattr(inputs, "air", None)):
        if ds is None:
            continue
        year = pd.DatetimeIndex(ds["start"].values).year.to_numpy()
        site = ds["site"].values.astype(str)
        for v in ds.data_vars:
            if not v.endswith("_detection_limit"):
                continue
            a = ds[v].values
            ok = ~np.isnan(a)
            if not ok.any():
                continue
            f = pd.DataFrame({"site": site[ok], "year": year[ok],
                              "dl": np.round(a[ok] / np.nanmax(a[ok]), 6)})
            for s, g in f.groupby("site"):
                sets = g.groupby("year")["dl"].apply(lambda d: tuple(sorted(set(d))))
                if len(set(sets)) > 1:
                    changed = [int(y) for y, prev, cur in zip(sets.index[1:], sets.values[:-1],
                                                             sets.values[1:]) if prev != cur]
                    sp = v[: -len("_detection_limit")]
                    notes[(s, sp)] = (f"detection limit of {sp} changed (years with a new "
                                      f"set of limits: {' '.join(map(str, changed))})")
    return notes


def _dl_note(notes, site, element, pathway, species):
    if species != "all":
        names = (species,)
    elif pathway == "total":
        names = _SPECIES_OF[(element, "wet")] + _SPECIES_OF[(element, "dry")]
    else:
        names = _SPECIES_OF.get((element, pathway), ())
    return "; ".join(notes[(site, n)] for n in names if (site, n) in notes)


def _note(variant, few, min_years, excluded, dl, flags=()) -> str:
    """The note of one trend row: the values used, too few years, no test or no percent
    slope (`flags`), what was left out and the detection-limit note."""
    note = [f"values: {variant.replace('_', ' ')}"]
    if few:
        note.append(f"fewer than {min_years} complete years")
    note.extend(f for f in flags if f)
    if excluded:
        note.append(excluded)
    if dl:
        note.append(dl)
    return "; ".join(note)


#: Columns of trends.csv with ``serial_correction="hamed_rao"`` (annual rows; NaN on
#: the monthly rows, whose test has the Hirsch-Slack correction): column -> field of
#: :func:`.trends_batch.hamed_rao_batch` as stored beside the plain statistics.
HAMED_RAO_COLUMNS = {"hamed_rao_factor": "hr_factor", "var_s_hamed_rao": "hr_var_s",
                     "z_hamed_rao": "hr_z", "p_value_hamed_rao": "hr_p_value",
                     "p_min_exact": "hr_p_min"}
#: The note of a row whose corrected p was below the smallest p any order of its
#: values allows (:func:`exact_min_p`) and is held there.
P_HELD = ("corrected p (Hamed-Rao) held at {p_min:.2g}, the smallest p any order of "
          "these {n} values allows (exact permutation distribution of S); the correction "
          "gave {raw:.2g}, which {n} values cannot support")
#: Values of ``serial_correction`` of :func:`trend_table`.
SERIAL_CORRECTIONS = (None, "hamed_rao")

#: Why a row has no test or no percent slope (notes of trends.csv).
NO_TEST = "all values equal (Var S = 0): no test"
NO_PERCENT = "values below 0 (net emission): no percent slope"
#: The base of the percent slope is the median of the values used: a median of 0 (most
#: years 0) leaves the percent empty, and the note says why (it was empty without a word).
NO_PERCENT_ZERO = "median of the values 0: no percent slope (its base)"
GAP = "no row for {}"


def _flags(n, var_s, vmin, gaps="", median=np.nan):
    """The reasons of :data:`NO_TEST`, :data:`NO_PERCENT` and :data:`NO_PERCENT_ZERO`
    for one row."""
    return (NO_TEST if n >= 2 and var_s == 0 else "",
            NO_PERCENT if np.isfinite(vmin) and vmin < 0 else
            NO_PERCENT_ZERO if median == 0 else "", gaps)


def _row(key, series, variant, years, r, min_years, median, excluded, dl, vmin=np.nan,
         gaps=""):
    valid = r.n >= min_years and np.isfinite(r.p_value)
    pct = (100.0 * r.slope / median if median and np.isfinite(median) and median != 0
           and not vmin < 0 else np.nan)
    return {**dict(zip(KEYS, key)), "series": series, "n_years": r.n,
            "first_year": int(min(years)) if len(years) else None,
            "last_year": int(max(years)) if len(years) else None,
            "test": "mann_kendall" if series == "annual" else "seasonal_kendall_hirsch_slack",
            "tau": r.tau, "p_value": r.p_value, "sen_slope_per_yr": r.slope,
            "sen_slope_pct_per_yr": pct, "valid": bool(valid),
            "note": _note(variant, r.n < min_years, min_years, excluded, dl,
                          _flags(r.n, r.var_s, vmin, gaps, median)),
            "values": variant, "s": r.s, "var_s": r.var_s, "z": r.z,
            "slope_low_per_yr": r.slope_low, "slope_high_per_yr": r.slope_high,
            "intercept": r.intercept, "unit": "kg ha-1 yr-1", "method_changes": ""}


def _series_index(frame):
    """The series of a budget table: their keys (in order of first appearance, as
    ``groupby(KEYS, sort=False)``), the series code of each row (-1: a key is missing,
    the row is in no series, as in ``groupby``) and a stable order of the rows by series
    and period start."""
    import pandas as pd
    g = frame.groupby(KEYS, sort=False)
    code = g.ngroup().to_numpy()
    code = np.where(pd.isna(code), -1, code).astype(np.int64)
    first = pd.DataFrame({"c": code}).drop_duplicates("c")
    first = first[first["c"] >= 0].sort_values("c")
    keys = list(frame.iloc[first.index.to_numpy()][KEYS].itertuples(index=False, name=None))
    start = pd.DatetimeIndex(frame["period_start"]).to_numpy()
    order = np.lexsort((start, code))
    order = order[code[order] >= 0]
    return keys, code, order


def _left_out_notes(code, status, n_series) -> list:
    """'years left out: 2 flagged, 1 filled' of each series (most frequent status first,
    then the first seen), from the series code and status of the rows left out, in the
    order of the series' rows."""
    import pandas as pd
    notes = [""] * n_series
    if not code.size:
        return notes
    f = pd.DataFrame({"c": code, "st": status, "pos": np.arange(code.size)})
    g = f.groupby(["c", "st"], sort=False)["pos"].agg(["size", "min"]).reset_index()
    g = g.sort_values(["c", "size", "min"], ascending=[True, False, True], kind="stable")
    text = g["size"].astype(str) + " " + g["st"].astype(str)
    for c, parts in text.groupby(g["c"].to_numpy(), sort=False):
        notes[int(c)] = "years left out: " + ", ".join(parts)
    return notes


def _table_rows(keys, series, stats_by_variant, min_years, excluded, dl, gaps=None) -> dict:
    """Columns of trends.csv for every series and variant (series-major, variants in the
    order of :data:`VARIANTS`), as :func:`_row` makes them one at a time."""
    n_keys, variants = len(keys), list(VARIANTS)

    def order(a):                     # series-major: series 0 all, series 0 without, ...
        return np.stack([np.asarray(a[v]) for v in variants], axis=1).reshape(-1)
    st = {f: order({v: stats_by_variant[v][f] for v in variants})
          for f in stats_by_variant[variants[0]]}
    key_cols = list(zip(*keys)) if keys else [()] * len(KEYS)
    cols = {k: np.repeat(np.asarray(key_cols[i], dtype=object), len(variants))
            for i, k in enumerate(KEYS)}
    n = st["n"].astype(np.int64)
    valid = (n >= min_years) & np.isfinite(st["p_value"])
    variant = np.tile(np.asarray(variants, dtype=object), n_keys)
    exc = order(excluded)
    dl_rep = np.repeat(np.asarray(dl, dtype=object), len(variants))
    gap_rep = np.repeat(np.asarray(gaps if gaps is not None else [""] * n_keys, dtype=object),
                        len(variants))
    notes = [_note(va, few, min_years, ex, d, _flags(k, v, m, g, md))
             for va, few, ex, d, k, v, m, g, md
             in zip(variant.tolist(), (n < min_years).tolist(), exc.tolist(), dl_rep.tolist(),
                    n.tolist(), st["var_s"].tolist(), st["min"].tolist(), gap_rep.tolist(),
                    st["median"].tolist())]
    med = st["median"]
    with np.errstate(invalid="ignore", divide="ignore"):
        pct = np.where(np.isfinite(med) & (med != 0) & ~(st["min"] < 0),
                       100.0 * st["slope"] / np.where(med != 0, med, 1.0), np.nan)

    def year(v):
        if np.isnan(v).all():
            return np.full(v.shape, None, dtype=object)
        return v.astype(np.int64) if not np.isnan(v).any() else v
    cols.update({"series": np.full(n.size, series, dtype=object), "n_years": n,
                 "first_year": year(st["t_first"]), "last_year": year(st["t_last"]),
                 "test": np.full(n.size, "mann_kendall" if series == "annual"
                                 else "seasonal_kendall_hirsch_slack", dtype=object),
                 "tau": st["tau"], "p_value": st["p_value"], "sen_slope_per_yr": st["slope"],
                 "sen_slope_pct_per_yr": pct, "valid": valid,
                 "note": np.asarray(notes, dtype=object), "values": variant, "s": st["s"],
                 "var_s": st["var_s"], "z": st["z"], "slope_low_per_yr": st["slope_low"],
                 "slope_high_per_yr": st["slope_high"], "intercept": st["intercept"],
                 "unit": np.full(n.size, "kg ha-1 yr-1", dtype=object),
                 "method_changes": np.full(n.size, "", dtype=object)})
    if "hr_p_value" in st:
        cols.update({c: st[k] for c, k in HAMED_RAO_COLUMNS.items()})
        for i in np.flatnonzero(st["hr_p_held"].astype(bool)):
            cols["note"][i] += "; " + P_HELD.format(p_min=st["hr_p_min"][i], n=int(n[i]),
                                                    raw=st["hr_p_raw"][i])
    return cols


def _annual_columns(y, dl_notes, min_years, alpha, serial=None):
    """Mann-Kendall columns of :func:`trend_table`: the (series, year) grid of every
    series at once (:func:`.trends_batch.mann_kendall_batch`)."""
    import pandas as pd
    from .trends_batch import hamed_rao_batch, mann_kendall_batch
    keys, code, order = _series_index(y)
    code = code[order]
    year = pd.DatetimeIndex(y["period_start"]).year.to_numpy()[order]
    x = y["flux_kg_ha_yr"].to_numpy(float)[order]
    status = y["status"].astype(str).to_numpy()[order]
    all_years, yi = np.unique(year, return_inverse=True)
    if np.any(np.bincount(code * all_years.size + yi, minlength=len(keys) * all_years.size)
              > 1):
        return None                                  # a year twice in a series
    stats, excluded = {}, {}
    for variant, keep in VARIANTS.items():
        use = np.isin(status, keep) & np.isfinite(x)
        grid = np.full((len(keys), all_years.size), np.nan)
        grid[code[use], yi[use]] = x[use]
        stats[variant] = mann_kendall_batch(grid, all_years.astype(float), alpha)
        if serial == "hamed_rao":
            hr = hamed_rao_batch(grid, all_years.astype(float), stats[variant], alpha)
            stats[variant].update({f"hr_{k}": v for k, v in hr.items()})
        excluded[variant] = _left_out_notes(code[~use], status[~use], len(keys))
    dl = [_dl_note(dl_notes, *k[:1], *k[2:]) for k in keys]
    return _table_rows(keys, "annual", stats, min_years, excluded, dl,
                       _gap_notes(code, year, len(keys)))


def _gap_notes(code, year, n_series) -> list:
    """'no row for 2015' of each series that has no row at all for a year between its
    first and last (the spacing of the years is kept: Sen's slope uses the years)."""
    notes = [""] * n_series
    if not code.size:
        return notes
    y0 = int(year.min())
    has = np.zeros((n_series, int(year.max()) - y0 + 1), bool)
    has[code, year - y0] = True
    first = has.argmax(axis=1)
    last = has.shape[1] - 1 - has[:, ::-1].argmax(axis=1)
    cols = np.arange(has.shape[1])
    gap = ~has & (cols >= first[:, None]) & (cols <= last[:, None])
    for c in np.flatnonzero(gap.any(axis=1)):
        notes[c] = GAP.format(" ".join(str(y0 + int(i)) for i in np.flatnonzero(gap[c])))
    return notes


def _annual_rows_per_series(y, dl_notes, min_years, alpha, serial=None):
    """The annual rows one series at a time (a series with two rows in one year)."""
    import pandas as pd
    keys, code, order = _series_index(y)
    year = pd.DatetimeIndex(y["period_start"]).year.to_numpy()[order]
    x_all = y["flux_kg_ha_yr"].to_numpy(float)[order]
    status_all = y["status"].astype(str).to_numpy()[order]
    bounds = np.searchsorted(code[order], np.arange(len(keys) + 1))
    rows = []
    for c, key in enumerate(keys):
        sl = slice(bounds[c], bounds[c + 1])
        years, x, status = year[sl], x_all[sl], status_all[sl]
        dl = _dl_note(dl_notes, *key[:1], *key[2:])
        gaps = _gap_notes(np.zeros(years.size, np.int64), years, 1)[0]
        for variant, keep in VARIANTS.items():
            use = np.isin(status, keep) & np.isfinite(x)
            excluded = _left_out_notes(np.zeros(int((~use).sum()), np.int64), status[~use], 1)[0]
            r = mann_kendall(np.where(use, x, np.nan), years.astype(float), alpha)
            rows.append(_row(key, "annual", variant, years[use], r, min_years,
                             np.median(x[use]) if use.any() else np.nan, excluded, dl,
                             np.min(x[use]) if use.any() else np.nan, gaps))
            if serial == "hamed_rao":
                factor, var_s, z, raw = _hamed_rao(np.where(use, x, np.nan),
                                                   years.astype(float), alpha)
                p_min = exact_min_p(x[use])
                held = bool(np.isfinite(raw) and raw < p_min)
                rows[-1].update(zip(HAMED_RAO_COLUMNS, (factor, var_s, z,
                                                        p_min if held else raw, p_min)))
                if held:
                    rows[-1]["note"] += "; " + P_HELD.format(p_min=p_min, n=int(use.sum()),
                                                             raw=raw)
    return rows


def _monthly_columns(month_rows, dl_notes, min_years, alpha):
    """Seasonal Kendall columns of :func:`trend_table`.  The (series, year, month) grid
    of each variant is built once for all series (one groupby); a year a series has no
    row in is NaN and enters no pair (:func:`.trends_batch.seasonal_kendall_batch`)."""
    import pandas as pd
    from .trends_batch import seasonal_kendall_batch
    m = month_rows[month_rows["period"].astype(str) != "span"]
    keys, code, _ = _series_index(m)
    ps = pd.DatetimeIndex(m["period_start"])
    year, month = ps.year.to_numpy(), ps.month.to_numpy()
    flux = m["flux_kg_ha_yr"].to_numpy(float)
    status = m["status"].astype(str).to_numpy()
    inside = code >= 0
    all_years, yi = np.unique(year, return_inverse=True)
    stats, excluded = {}, {}
    for variant, keep in VARIANTS.items():
        ok = np.isin(status, keep) & np.isfinite(flux)
        n_out = np.bincount(code[inside & ~ok], minlength=len(keys))
        sel = inside & ok          # one groupby mean of repeated months, as pivot_table
        cell = pd.DataFrame({"c": code[sel], "y": yi[sel], "m": month[sel] - 1,
                             "f": flux[sel]}).groupby(["c", "y", "m"])["f"].mean()
        grid = np.full((len(keys), all_years.size, 12), np.nan)
        grid[tuple(np.asarray(cell.index.get_level_values(i)) for i in range(3))] = cell.to_numpy()
        stats[variant] = seasonal_kendall_batch(grid, all_years.astype(float), alpha)
        del grid
        excluded[variant] = [f"{n} months left out by status" if n else "" for n in n_out]
    dl = [_dl_note(dl_notes, *k[:1], *k[2:]) for k in keys]
    return _table_rows(keys, "monthly", stats, min_years, excluded, dl)


def trend_table(year_rows, month_rows=None, dl_notes=None, min_years=MIN_YEARS,
                alpha=ALPHA, changes=None, serial_correction=None):
    """``trends.csv``: a trend per site, receptor, element, pathway and species.

    Parameters
    ----------
    year_rows : DataFrame
        budget.csv rows of calendar years (:func:`workbench.tables.budget_table` of
        ``Result.years``): ``flux_kg_ha_yr`` [kg ha-1 yr-1] and ``status``.
    month_rows : DataFrame, optional
        The same for calendar months (seasonal Kendall test on them).
    dl_notes : dict, optional
        :func:`detection_limit_notes`.
    min_years : int
        Fewest complete years of a valid trend (:data:`MIN_YEARS`).
    changes : dict, optional
        :func:`change_notes`: a row whose years cross a change of method names it in
        ``method_changes`` and in its note.
    serial_correction : {None, "hamed_rao"}
        ``"hamed_rao"`` adds, beside the plain Mann-Kendall test of each annual row, the
        test with the Hamed and Rao (1998) variance correction for serial correlation
        (:func:`hamed_rao`): the columns of :data:`HAMED_RAO_COLUMNS` (NaN on the
        monthly rows).  The default leaves the table as it was.

    Returns
    -------
    DataFrame
        :data:`TREND_COLUMNS`, then ``values`` (``all`` or ``without_filled``), S,
        Var(S), z, the slope's confidence interval, the intercept, the unit and
        ``method_changes``.  A year enters when its status is complete (or filled, for
        ``all``); the note counts the years left out by status.
    """
    import pandas as pd
    if serial_correction not in SERIAL_CORRECTIONS:
        raise ValueError(f"serial_correction {serial_correction!r}: expected one of "
                         f"{SERIAL_CORRECTIONS}")
    dl_notes = dl_notes or {}
    y = year_rows[year_rows["period"].astype(str) != "span"]
    parts = []
    annual = _annual_columns(y, dl_notes, min_years, alpha, serial_correction)
    parts.append(pd.DataFrame(annual) if annual is not None
                 else pd.DataFrame(_annual_rows_per_series(y, dl_notes, min_years, alpha,
                                                           serial_correction)))
    if month_rows is not None and len(month_rows):
        parts.append(pd.DataFrame(_monthly_columns(month_rows, dl_notes, min_years, alpha)))
    parts = [p for p in parts if len(p)]
    if not parts:
        return pd.DataFrame(columns=list(TREND_COLUMNS) + ["method_changes"])
    table = parts[0] if len(parts) == 1 else pd.concat(parts, ignore_index=True)
    if serial_correction == "hamed_rao":           # monthly rows: NaN, columns last
        table = table.reindex(columns=[c for c in table.columns if c not in
                                       HAMED_RAO_COLUMNS] + list(HAMED_RAO_COLUMNS))
    crossed, note = _change_columns(table, changes)
    return table.assign(note=note, method_changes=crossed)
