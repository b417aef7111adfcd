"""The bulk-collector factor of each ion and their correlation
(``[uncertainty] bulk_factor_ion_correlation``, docs/methods_uncertainty.md, "The
bulk-collector factor").

Each ion X of a site takes u_X = 1 + sd (sqrt(rho) z + sqrt(1 - rho) z_X) with z
shared by the site's ions and z_X its own, so corr(u_X, u_Y) = rho and Var u_X = sd^2.
On the invented network of test_uncertainty_shared_systematics.py (``threl`` under a
bulk collector all year, so the bulk part of each of its wet ions is b = 1; ``ousby``
wet-only), with every other factor off, threl's N total is
N = NO3 u_NO3 + NH4 u_NH4 + HNO3 and

    Var N = sd^2 (NO3^2 + NH4^2 + 2 rho NO3 NH4)

(the law of propagation for correlated inputs, JCGM 100:2008, 5.2.2; equation number
from memory).  Tolerances: a standard deviation of N draws within 5/sqrt(2 N) relative,
a correlation within 5 standard errors of Fisher's z, 1/sqrt(N - 3) (common practice).
"""
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from test_uncertainty_shared_systematics import OFF, _part, _write  # noqa: E402

from workbench.analysis import noise as NZ  # noqa: E402
from workbench.analysis import uncertainty as U  # noqa: E402
from workbench.pipeline import Study  # noqa: E402
from workbench.scenario import load_scenario  # noqa: E402

N = 20000
TOL = 5 / np.sqrt(2 * N)
BULK = {"threl": 'collector = "bulk"\n'}


@pytest.mark.parametrize("rho", [0.0, 0.3, 0.7, 1.0])
def test_the_drawn_correlation_between_ions_is_the_option(rho):
    opt = U.UncertaintyOptions(draws=N, seed=5, bulk_factor_ion_correlation=rho)
    key = NZ._stream_key((5, "threl"))
    u = NZ.bulk_factors(opt, key, 0.1, N, 2, 2019)
    if rho == 1.0:                     # one factor shared by the ions, as before
        assert not isinstance(u, dict) and u.shape == (N, 2)
        return
    assert sorted(u) == ["NH4", "NO3", "SO4"]
    se = 1 / np.sqrt(N - 3)
    for a, b in (("SO4", "NO3"), ("SO4", "NH4"), ("NO3", "NH4")):
        r = np.corrcoef(u[a][:, 0], u[b][:, 0])[0, 1]
        assert np.arctanh(r) == pytest.approx(np.arctanh(rho), abs=5 * se), (a, b)
    for x in u.values():
        assert x[:, 0].std() == pytest.approx(0.1, rel=TOL)
        assert x[:, 0].mean() == pytest.approx(1.0, abs=5 * 0.1 / np.sqrt(N))
        np.testing.assert_array_equal(x[:, 0], x[:, 1])      # shared by the years


def test_rho_one_draws_the_numbers_of_a_shared_factor():
    """rho = 1: the factor of before, max(0, 1 + sd z) from the site's stream, for every
    ion; rho < 1 keeps that z as the shared part (a site's draws move continuously)."""
    key = NZ._stream_key((5, "threl"))
    z = np.random.default_rng(key + [NZ.RECORD_STREAM, NZ.BULK_FACTOR]).standard_normal(50)
    one = NZ.bulk_factors(U.UncertaintyOptions(bulk_factor_ion_correlation=1.0), key, 0.1,
                          50, 1, 2019)
    np.testing.assert_array_equal(one[:, 0], np.maximum(1.0 + 0.1 * z, 0.0))
    half = NZ.bulk_factors(U.UncertaintyOptions(bulk_factor_ion_correlation=0.5), key, 0.1,
                           50, 1, 2019)
    own = (half["NO3"][:, 0] - 1.0) / 0.1 - np.sqrt(0.5) * z
    np.testing.assert_allclose(own / np.sqrt(0.5), np.random.default_rng(
        key + [NZ.RECORD_STREAM, NZ.BULK_FACTOR] + NZ._stream_key(("NO3",))).standard_normal(50),
        rtol=1e-9, atol=1e-12)


@pytest.fixture(scope="module")
def bulk_run(tmp_path_factory):
    path = _write(tmp_path_factory.mktemp("bulkions"), BULK, 'bulk_correction = "scale_wet"\n')
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    o = sc.options
    res = study.run(o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year")
    return res, study


@pytest.mark.parametrize("rho", [0.0, 0.5, 1.0])
def test_the_spread_of_the_s_and_n_totals_by_hand(bulk_run, rho):
    res, study = bulk_run
    sd = 0.1
    q = U.monte_carlo(res, study, U.UncertaintyOptions(
        draws=N, seed=7, **{**OFF, "bulk_factor_rel_sd": sd,
                            "bulk_factor_ion_correlation": rho}))
    sites = [str(s) for s in q.total_draws["site"].values]
    k = sites.index("threl")
    point = res.years["deposition"].sel(receptor="grass").isel(period=0).values
    comps = [f"{p}:{sp}" for _, p, sp in U.COMPONENTS]
    no3, nh4 = _part(point, comps, "wet:NO3")[k], _part(point, comps, "wet:NH4")[k]
    n_all = no3 + nh4 + _part(point, comps, "dry:HNO3")[k]
    so4 = _part(point, comps, "wet:SO4")[k]
    s_all = so4 + _part(point, comps, "dry:SO2")[k] + _part(point, comps, "dry:pSO4")[k]
    x = q.total_draws["n_dep_eq_ha_yr"].sel(receptor="grass", period="2019").values[:, k]
    want = sd * np.sqrt(no3 ** 2 + nh4 ** 2 + 2 * rho * no3 * nh4) / n_all
    assert x.std() / x.mean() == pytest.approx(want, rel=TOL)
    # S holds one bulk ion: its spread does not depend on rho
    s = q.total_draws["s_dep_eq_ha_yr"].sel(receptor="grass", period="2019").values[:, k]
    assert s.std() / s.mean() == pytest.approx(sd * so4 / s_all, rel=TOL)
    # the wet-only site: no spread at all
    j = sites.index("ousby")
    y = q.total_draws["n_dep_eq_ha_yr"].sel(receptor="grass", period="2019").values[:, j]
    assert np.ptp(y) == 0.0


def test_a_site_without_bulk_samples_draws_the_same_numbers(bulk_run):
    """The option draws nothing at a site without bulk samples: its draws are the same
    bit for bit whatever rho (and the same as before the option)."""
    res, study = bulk_run
    opt = dict(draws=500, seed=3)
    a = U.monte_carlo(res, study, U.UncertaintyOptions(**opt, bulk_factor_ion_correlation=0.0))
    b = U.monte_carlo(res, study, U.UncertaintyOptions(**opt, bulk_factor_ion_correlation=1.0))
    for site in ("gars", "ousby"):
        for v in ("s_dep_eq_ha_yr", "n_dep_eq_ha_yr"):
            np.testing.assert_array_equal(a.total_draws[v].sel(site=site).values,
                                          b.total_draws[v].sel(site=site).values)
    x, y = (q.total_draws["n_dep_eq_ha_yr"].sel(site="threl").values for q in (a, b))
    assert not np.array_equal(x, y)


def test_a_bad_correlation_is_refused():
    for bad in (-0.1, 1.5, True, "high"):
        with pytest.raises(ValueError, match="bulk_factor_ion_correlation"):
            U.UncertaintyOptions(bulk_factor_ion_correlation=bad)
