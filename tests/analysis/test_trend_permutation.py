"""Var(S) and the Hirsch-Slack covariances against the permutation distribution itself.

Reference: the null hypothesis of the Mann-Kendall and seasonal Kendall tests is that
every order of the years is equally likely (Mann 1945; Kendall 1975, Rank Correlation
Methods, ch. 4; for several seasons the years are permuted together, the months of a
year staying together: Dietz and Killeen 1981, J. Am. Stat. Assoc. 76, 169, whose
covariance Hirsch and Slack 1984, Water Resour. Res. 20, 727, use; from memory).  With
six years there are 720 orders, few enough to enumerate: the variance and the
covariances of the seasons' scores over all of them are the exact moments under the
null, ties and missing values included.  The tie-corrected variance (Gilbert 1987,
eq. 16.4) and the Hirsch-Slack covariance with a missing value given the middle rank
must equal them, whatever the data; no number here is typed in.
"""
import itertools

import numpy as np
import pytest

from workbench.analysis.trends import hirsch_slack_covariance, mann_kendall, seasonal_kendall
from workbench.analysis.trends_batch import mann_kendall_batch, seasonal_kendall_batch

N_YEARS = 6
ORDERS = np.array(list(itertools.permutations(range(N_YEARS))))       # (720, 6)


def _scores(x):
    """S of every season (column) of x (years, seasons) under every order of the years,
    missing values entering no pair: (orders, seasons)."""
    xp = x[ORDERS]                                                   # (orders, years, seasons)
    i, j = np.triu_indices(N_YEARS, 1)
    d = np.sign(xp[:, j] - xp[:, i])
    return np.nansum(d, axis=1)


def _data(seed, ties, missing, seasons=3):
    rng = np.random.default_rng(seed)
    x = rng.normal(0.0, 1.0, (N_YEARS, seasons))
    x[:, 1] = x[:, 0] + 0.5 * rng.normal(0.0, 1.0, N_YEARS)         # seasons 0, 1 alike
    if ties:
        x = np.round(2.0 * x)                                        # groups of ties
    if missing:
        x[1, 1] = np.nan
        x[4, 2] = np.nan
    return x


@pytest.mark.parametrize("ties", [False, True])
@pytest.mark.parametrize("missing", [False, True])
@pytest.mark.parametrize("seed", [1, 2, 3])
def test_hirsch_slack_covariance_is_the_permutation_covariance(seed, ties, missing):
    x = _data(seed, ties, missing)
    s = _scores(x)
    exact = np.cov(s.T, bias=True)                                   # over all 720 orders
    np.testing.assert_allclose(hirsch_slack_covariance(x), exact, rtol=1e-12, atol=1e-9)
    assert np.allclose(s.mean(axis=0), 0.0)                          # E(S) = 0 under the null
    r = seasonal_kendall(x, correct=True)
    assert r.var_s == pytest.approx(exact.sum(), rel=1e-12)
    assert seasonal_kendall(x, correct=False).var_s == pytest.approx(np.trace(exact), rel=1e-12)
    batch = seasonal_kendall_batch(x[None], np.arange(N_YEARS, dtype=float), 0.05)
    assert batch["var_s"][0] == pytest.approx(exact.sum(), rel=1e-12)


@pytest.mark.parametrize("ties", [False, True])
@pytest.mark.parametrize("missing", [False, True])
@pytest.mark.parametrize("seed", [4, 5, 6])
def test_tie_corrected_variance_is_the_permutation_variance(seed, ties, missing):
    x = _data(seed, ties, missing)[:, 2 if missing else 0]
    s = _scores(x[:, None])[:, 0]
    r = mann_kendall(x, np.arange(2001, 2001 + N_YEARS, dtype=float))
    assert r.var_s == pytest.approx(s.var(), rel=1e-12)
    batch = mann_kendall_batch(x[None], np.arange(2001, 2001 + N_YEARS, dtype=float), 0.05)
    assert batch["var_s"][0] == pytest.approx(s.var(), rel=1e-12)
    if not ties:   # the exact p is the share of orders with |S| at least the observed
        assert r.p_value == pytest.approx(np.mean(np.abs(s) >= abs(r.s)), rel=1e-12)
