"""The corrected p of the Hamed and Rao (1998) test is never below the smallest p the
exact permutation distribution of S allows for the values (review of the trends: six
values 5, 4, 4, 3, 3, 2 got a corrected p of 1e-8, pymannkendall's
``hamed_rao_modification_test`` the same, where no order of six values goes below
2/720).

References: the permutation distribution is enumerated here from its definition (every
order of the values equally likely; itertools over the 6! = 720 orders of six values, a
test of the definition, not of another implementation); scipy.stats.kendalltau with
``method="exact"`` (a general reference library) for the p of an increasing series
without ties; pymannkendall 1.4 (Hussain and Mahmud 2019) for long records, where the
correction must still agree.  Series invented.
"""
import itertools
import math

import numpy as np
import pandas as pd
import pytest
from scipy.stats import kendalltau

from workbench.analysis.trends import (P_HELD, exact_min_p, hamed_rao, mann_kendall,
                                       trend_table)
from workbench.analysis.trends_batch import hamed_rao_batch, mann_kendall_batch

mk = pytest.importorskip("pymannkendall")

#: The six values of the review: S = -13, ties 4 4 and 3 3.
REVIEW = np.array([5.0, 4.0, 4.0, 3.0, 3.0, 2.0])


def _s(values) -> int:
    """Mann-Kendall S of values in time order, from its definition."""
    v = list(values)
    return sum(int(np.sign(v[j] - v[i])) for i in range(len(v)) for j in range(i + 1, len(v)))


def _min_p_by_enumeration(values) -> float:
    """Smallest two-sided exact p over all orders: P(|S| >= max |S|) under the
    permutation distribution, every one of the n! orders equally likely."""
    s = np.array([_s(p) for p in itertools.permutations(values)])
    top = np.abs(s).max()
    return float(np.mean(np.abs(s) >= top))


def test_min_p_of_the_review_series_by_enumeration():
    """720 orders of 5, 4, 4, 3, 3, 2: 8 reach |S| = 13 (the increasing and decreasing
    sequences, each 2! x 2! times): the smallest p is 8/720 = 0.0111."""
    assert _min_p_by_enumeration(REVIEW) == pytest.approx(8 / 720, rel=1e-15)
    assert exact_min_p(REVIEW) == pytest.approx(8 / 720, rel=1e-12)
    distinct = np.array([6.0, 5.0, 4.0, 3.0, 2.0, 1.0])
    assert _min_p_by_enumeration(distinct) == pytest.approx(2 / 720, rel=1e-15)
    assert exact_min_p(distinct) == pytest.approx(2 / 720, rel=1e-12)


@pytest.mark.parametrize("n", range(2, 10))
def test_min_p_without_ties_is_scipys_exact_p_of_a_monotone_series(n):
    """2/n!: scipy.stats.kendalltau(method="exact") of an increasing series."""
    ref = kendalltau(np.arange(n), np.arange(n), method="exact").pvalue
    assert exact_min_p(np.arange(n, dtype=float)) == pytest.approx(ref, rel=1e-12)
    assert exact_min_p(np.arange(n, dtype=float)) == pytest.approx(2 / math.factorial(n),
                                                                  rel=1e-12)


def test_min_p_edges():
    """Fewer than 2 values or all tied: no test (NaN); NaN values are left out; rows
    of a batch each get their own."""
    assert np.isnan(exact_min_p([1.0])) and np.isnan(exact_min_p([2.0, 2.0, 2.0]))
    assert exact_min_p([1.0, np.nan, 2.0]) == pytest.approx(1.0)           # 2/2! = 1
    rows = np.array([REVIEW, [1.0, 2.0, 3.0, np.nan, np.nan, np.nan]])
    np.testing.assert_allclose(exact_min_p(rows), [8 / 720, 2 / 6], rtol=1e-12)


def test_the_review_series_is_held_at_its_smallest_p():
    """pymannkendall gives 1e-8 (the defect as found); ours holds the p at 8/720 and
    the table's note says so.  Var(S) and z are the corrected ones, as pymannkendall's.
    Old code: p 1.0e-8 and no note."""
    ref = mk.hamed_rao_modification_test(REVIEW)
    assert ref.p < 1e-7                                      # the impossible p
    factor, var_s, z, p = hamed_rao(REVIEW)
    assert var_s == pytest.approx(ref.var_s, rel=1e-12) and z == pytest.approx(ref.z, rel=1e-12)
    assert p == pytest.approx(8 / 720, rel=1e-12)
    # the plain test (ties: the normal p, 0.019 as the docs say) lies above the floor
    assert mann_kendall(REVIEW).p_value == pytest.approx(mk.original_test(REVIEW).p, rel=1e-9)
    assert mann_kendall(REVIEW).p_value > 8 / 720
    years = np.arange(2001, 2007)
    rows = pd.DataFrame({"site": "alpha", "receptor": "grass", "element": "S",
                         "pathway": "wet", "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": REVIEW, "status": "complete"})
    t = trend_table(rows, serial_correction="hamed_rao")
    r = t[t["values"] == "all"].iloc[0]
    assert r["p_value_hamed_rao"] == pytest.approx(8 / 720, rel=1e-12)
    assert r["p_min_exact"] == pytest.approx(8 / 720, rel=1e-12)
    assert ("corrected p (Hamed-Rao) held at 0.011, the smallest p any order of these 6 "
            "values allows") in r["note"]
    # the per-series path (a year with two rows elsewhere in the table) says the same
    other = rows.assign(site="beta")
    two = pd.concat([rows, other, other.iloc[[2]]], ignore_index=True)
    t2 = trend_table(two, serial_correction="hamed_rao")
    r2 = t2[(t2["site"] == "alpha") & (t2["values"] == "all")].iloc[0]
    assert r2["p_value_hamed_rao"] == pytest.approx(8 / 720, rel=1e-12)
    assert P_HELD.split("{")[0] in r2["note"]


def test_batch_holds_the_same_p():
    t = np.arange(6.0)
    x = np.array([REVIEW, [1.0, 3.0, 2.0, 5.0, 4.0, 6.0]])
    b = hamed_rao_batch(x, t, mann_kendall_batch(x, t, 0.05), 0.05)
    for k in range(2):
        np.testing.assert_allclose((b["factor"][k], b["var_s"][k], b["z"][k], b["p_value"][k]),
                                   hamed_rao(x[k], t), rtol=1e-12, equal_nan=True)
    assert b["p_held"].tolist() == [True, False]
    assert b["p_raw"][0] == pytest.approx(mk.hamed_rao_modification_test(REVIEW).p, rel=1e-9)


def _ar1(seed, n, phi):
    rng = np.random.default_rng(seed)
    e = np.zeros(n)
    for i in range(1, n):                      # the years of one invented series
        e[i] = phi * e[i - 1] + rng.normal()
    return 10.0 + 0.05 * np.arange(n) + e


@pytest.mark.parametrize("seed, n, phi", [(7, 28, -0.5), (0, 40, 0.8), (4, 30, -0.6),
                                          (9, 50, 0.3)])
def test_long_records_still_agree_with_pymannkendall(seed, n, phi):
    """On 28-50 years the smallest p any order allows is below 1e-28, far under any p
    the correction gives: the p is pymannkendall's."""
    x = _ar1(seed, n, phi)
    assert exact_min_p(x) < 1e-28
    ref = mk.hamed_rao_modification_test(x)
    assert hamed_rao(x)[3] == pytest.approx(ref.p, rel=1e-9, abs=1e-15)


@pytest.mark.parametrize("n", [10, 20])
def test_the_floor_is_not_of_short_records_alone(n):
    """An increasing zig-zag x_t = t + 0.4 (-1)^t (lag-1 residuals of opposite signs):
    the normal p of the correction is far below 2/n! at 10 and 20 values too, so an
    empty p below a number of years would not cover it; held at 2/n!."""
    t = np.arange(n, dtype=float)
    x = t + 0.4 * (-1.0) ** t
    p = hamed_rao(x)[3]
    assert p == pytest.approx(2 / math.factorial(n), rel=1e-12, abs=0)
