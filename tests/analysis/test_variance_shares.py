"""Each drawn factor's share of the variance of the Monte Carlo draws
(workbench.analysis.variance_shares), on cases with a known answer.

References: the first-order (Sobol) index of a linear model with independent inputs,
S_i = b_i^2 Var X_i / sum_j b_j^2 Var X_j (Saltelli et al. 2008, Global Sensitivity
Analysis: The Primer, ch. 1; from memory); scipy.stats (a general-purpose reference
library) for the normal and log-normal distributions and their variances.

Tolerances come from the number of draws n (common practice): a ratio of two sample
variances of normal draws has a relative standard error of about sqrt(2 / n) each; of
log-normal draws with log-SD s about sqrt((kappa + 2) / n), kappa the log-normal's
excess kurtosis (scipy.stats.lognorm.stats(moments="k")); five of them.
"""
import dataclasses
import warnings

import numpy as np
import pytest
from scipy import stats

from analysis.tiny_site import OFF
from workbench.analysis import uncertainty as U
from workbench.analysis.uncertainty_options import UncertaintyOptions
from workbench.analysis.variance_shares import (COLUMNS, FACTORS, first_order_shares,
                                                variance_shares)

N = 20000


def test_linear_model_two_independent_factors():
    """Y = 3 + 2 X1 + 0.5 X2, X1 ~ N(0, 1), X2 ~ N(0, 2^2) (scipy.stats.norm): the
    first-order shares are 4 / 5 and 1 / 5 and nothing is left for the factors
    together."""
    n = 200_000
    x1 = stats.norm(0, 1).rvs(n, random_state=1)
    x2 = stats.norm(0, 2).rvs(n, random_state=2)
    full = 3 + 2 * x1 + 0.5 * x2
    shares, rest = first_order_shares(full, {"x1": 3 + 2 * x1, "x2": 3 + 0.5 * x2})
    tol = 5 * np.sqrt(2 / n) * 2            # two variances in the ratio, five SE
    assert shares["x1"] == pytest.approx(0.8, abs=tol)
    assert shares["x2"] == pytest.approx(0.2, abs=tol)
    assert rest == pytest.approx(0.0, abs=tol)


def test_product_of_log_normal_factors_shares_the_log_variance():
    """Y = 5 F1 F2, ln F_i ~ N(0, s_i^2) (scipy.stats.lognorm): ln Y is a sum, so the
    shares of its variance are s_i^2 / (s_1^2 + s_2^2); the linear variance is not
    additive (its shares leave a part for the factors together)."""
    n = 200_000
    s1, s2 = np.log(2.0), np.log(1.2)
    f1 = stats.lognorm(s=s1).rvs(n, random_state=3)
    f2 = stats.lognorm(s=s2).rvs(n, random_state=4)
    shares, rest = first_order_shares(5 * f1 * f2, {"f1": 5 * f1, "f2": 5 * f2}, log=True)
    want = s1 ** 2 / (s1 ** 2 + s2 ** 2)
    tol = 5 * np.sqrt(2 / n) * 2
    assert shares["f1"] == pytest.approx(want, abs=tol)
    assert shares["f2"] == pytest.approx(1 - want, abs=tol)
    assert rest == pytest.approx(0.0, abs=tol)
    lin, lin_rest = first_order_shares(5 * f1 * f2, {"f1": 5 * f1, "f2": 5 * f2})
    # Var(F1 F2) = E F1^2 E F2^2 - (E F1 E F2)^2 > Var F1 (E F2)^2 ...: a joint part
    assert lin_rest > 0.01
    # a draw not above 0: no log share
    sh, _ = first_order_shares(np.array([1.0, -1.0, 2.0]), {"a": np.array([1.0, 2, 3])},
                               log=True)
    assert np.isnan(sh["a"])


def test_a_factor_that_moves_nothing_has_a_share_of_exactly_0():
    """A factor whose draws alone are all the same number has a share of exactly 0.0,
    not the variance of rounding (np.var of 200 times 7.77 is about 3e-30, not 0: the
    mean of equal numbers is not always the number, IEEE 754 double rounding, common
    practice); the other shares are Var(alone) / Var(full) as before, bit for bit, and a
    share far above the tolerance (1e-9) stays."""
    from workbench.analysis.variance_shares import ZERO_SHARE_REL
    x = stats.norm(0, 1).rvs(200, random_state=11)
    still = np.full(200, 7.77)
    assert np.var(still) > 0                   # the rounding the rule removes
    full = 7.77 + x
    small = 7.77 + np.sqrt(1e-9) * x           # a share of 1e-9 of the variance
    shares, rest = first_order_shares(full, {"moves": full, "still": still, "small": small})
    assert shares["still"] == 0.0 and not np.signbit(shares["still"])
    assert shares["moves"] == np.var(full) / np.var(full)
    assert shares["small"] == np.var(small) / np.var(full)
    assert shares["small"] == pytest.approx(1e-9, rel=1e-6) and shares["small"] > ZERO_SHARE_REL
    lg, _ = first_order_shares(full + 10, {"still": still, "moves": full + 10}, log=True)
    assert lg["still"] == 0.0 and lg["moves"] == 1.0
    # the rest of a single factor that holds it all: 0.0, not -2e-16
    one, rest1 = first_order_shares(full, {"moves": full, "still": still})
    assert rest1 == 0.0 and not np.signbit(rest1)


def test_tiny_site_a_factor_that_moves_nothing_is_exactly_0(tiny):
    """On the tiny site (no bulk collector, a wet-only one), the depth's spread alone
    moves no dry total, and SO2's Vd part no N total: their shares of S_dry and N_dry
    are 0.0 (before, 1e-31 to 1e-28), while the shares of S_total keep their values."""
    sc, study, res, lay = tiny
    opt = UncertaintyOptions(draws=200, seed=5, **{**OFF, "vd_gsd": {**OFF["vd_gsd"],
                                                                     "SO2": 1.5, "HNO3": 1.4},
                                                   "depth_rel_sd": 0.1})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        df = variance_shares(res, study, opt, which="budget",
                             totals=("S_dry", "N_dry", "S_total"), layer=lay)
    s_dry = df[df["total"] == "S_dry"].set_index("factor")
    n_dry = df[df["total"] == "N_dry"].set_index("factor")
    for t, f in ((s_dry, "depth_rel_sd"), (n_dry, "depth_rel_sd"), (n_dry, "vd_gsd.SO2")):
        for col in ("variance_share", "log_variance_share"):
            assert t.loc[f, col] == 0.0, (f, col, t.loc[f, col])
    assert s_dry.loc["together", "variance_share"] == 0.0
    tot = df[df["total"] == "S_total"].set_index("factor")
    assert 0.001 < tot.loc["depth_rel_sd", "variance_share"] < 0.5


def _lognormal_var(g):
    return float(stats.lognorm(s=np.log(g)).var())


def _tol_lognormal(g, n):
    kurt = float(stats.lognorm(s=np.log(g)).stats(moments="k"))
    return 5 * np.sqrt((kurt + 2) / n)


def test_tiny_site_two_independent_vd_factors(tiny):
    """The tiny site's S dry is SO2 F_a + pSO4 F_b (fixed Vd, every other spread off,
    the species' factors independent: vd_shared_fraction 0): each species' share of
    the variance is D_i^2 Var F_i / sum_j D_j^2 Var F_j with Var F from
    scipy.stats.lognorm, the Vd model factor holds all of it, and nothing is left for
    the factors together."""
    sc, study, res, lay = tiny
    ga, gb = 1.5, 1.8
    opt = UncertaintyOptions(draws=N, seed=5, **{**OFF, "vd_gsd": {**OFF["vd_gsd"], "SO2": ga,
                                                                   "pSO4": gb}},
                             vd_shared_fraction=0.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        df = variance_shares(res, study, opt, which="budget", totals=("S_dry",), layer=lay)
    assert list(df.columns) == list(COLUMNS)
    row = df.set_index("factor")
    j = {sp: next(i for i, c in enumerate(U.COMPONENTS) if c[1:] == ("dry", sp))
         for sp in ("SO2", "pSO4")}
    point = res.budget["deposition"].values[0, 0, 0]
    a = point[j["SO2"]] ** 2 * _lognormal_var(ga)
    b = point[j["pSO4"]] ** 2 * _lognormal_var(gb)
    tol = _tol_lognormal(gb, N)
    assert row.loc["vd_gsd.SO2", "variance_share"] == pytest.approx(a / (a + b), abs=tol)
    assert row.loc["vd_gsd.pSO4", "variance_share"] == pytest.approx(b / (a + b), abs=tol)
    assert row.loc["vd_gsd.SO2", "part_of"] == "vd_gsd"
    assert row.loc["vd_gsd", "variance_share"] == pytest.approx(1.0, abs=1e-12)
    assert row.loc["together", "variance_share"] == pytest.approx(0.0, abs=1e-12)
    # "all" holds the run's own quantiles: the Monte Carlo of the same options
    q = U.monte_carlo(res, study, opt)
    tot = q.budget["total_deposition"].sel(total="S_dry").values[:, 0, 0, 0]
    kg = U.element_deposition_in(tot, "S", "kg_ha")
    np.testing.assert_allclose(row.loc["all", ["alone_p05", "alone_p50", "alone_p95"]]
                               .to_numpy(float), kg, rtol=1e-12)


def test_tiny_site_vd_and_site_factor_share_the_log_variance(tiny):
    """With one Vd factor for both S species (vd_shared_fraction 1, GSD 1.8 each) and
    the site's own factor (GSD 1.3), S dry = (SO2 + pSO4) F F_s: the shares of the
    variance of its logarithm are ln^2 1.8 / (ln^2 1.8 + ln^2 1.3) and the rest."""
    sc, study, res, lay = tiny
    g, gs = 1.8, 1.3
    opt = UncertaintyOptions(draws=N, seed=6, **{**OFF, "vd_gsd": {**OFF["vd_gsd"], "SO2": g,
                                                                   "pSO4": g},
                                                 "vd_site_gsd": gs}, vd_shared_fraction=1.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        df = variance_shares(res, study, opt, which="budget", totals=("S_dry",), layer=lay)
    row = df.set_index("factor")
    want = np.log(g) ** 2 / (np.log(g) ** 2 + np.log(gs) ** 2)
    tol = 5 * np.sqrt(2 / N) * 2
    assert row.loc["vd_gsd", "log_variance_share"] == pytest.approx(want, abs=tol)
    assert row.loc["vd_site_gsd", "log_variance_share"] == pytest.approx(1 - want, abs=tol)
    assert row.loc["together", "log_variance_share"] == pytest.approx(0.0, abs=tol)


def test_one_factor_drawn_is_the_whole_variance(tiny):
    """A run drawing one factor only (the air samples' errors): its share is 1 in every
    total it moves, its draws are the run's own, and a total it does not move (wet S)
    has no share (NaN: nothing varies)."""
    sc, study, res, lay = tiny
    opt = UncertaintyOptions(draws=500, seed=8, **{**OFF, "air_rel_sd": 0.1})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        df = variance_shares(res, study, opt, which="budget", totals=("S_dry", "S_wet"),
                             layer=lay)
    assert set(df["factor"]) == {"all", "air_rel_sd", "together"}
    dry = df[df["total"] == "S_dry"].set_index("factor")
    assert dry.loc["air_rel_sd", "variance_share"] == pytest.approx(1.0, abs=1e-12)
    assert dry.loc["air_rel_sd", "alone_p95"] == dry.loc["all", "alone_p95"]
    wet = df[df["total"] == "S_wet"].set_index("factor")
    assert np.isnan(wet.loc["air_rel_sd", "variance_share"])


def test_every_spread_of_the_options_is_a_factor():
    """A new spread in UncertaintyOptions must be named in FACTORS (or it would be
    left out of the shares); the other fields set how the factors are drawn."""
    how = {"draws", "seed", "vd_shared_fraction", "systematic_errors", "vd_class_fraction",
           "lab_bias_filter_pack", "bulk_factor_ion_correlation",
           "explain_ranges",             # asks a run for the shares: no spread
           "vd_follows_air"}             # how the dry draws take Vd: no spread
    fields = {f.name for f in dataclasses.fields(UncertaintyOptions)}
    assert fields - how == set(FACTORS)


@pytest.mark.parametrize("kw, msg", [
    ({"which": "month"}, "which = 'month'"),
    ({"totals": ("N_all",)}, "unknown total 'N_all'"),
    ({"sites": ["nowhere"]}, "site 'nowhere' is not in the run"),
])
def test_bad_arguments_say_what_is_wrong(tiny, kw, msg):
    sc, study, res, lay = tiny
    opt = UncertaintyOptions(draws=10)
    with pytest.raises(ValueError, match=msg):
        variance_shares(res, study, opt, layer=lay, **kw)


@pytest.fixture(scope="module")
def farm(tmp_path_factory):
    from ui.demo_subset import study_and_args, write_demo_subset
    sc = write_demo_subset(tmp_path_factory.mktemp("farm_shares"), ("farm",), 2022, 2023)
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    return study, res


def test_demo_farm_dry_n_width_is_the_nh3_vd_factor_applied_once(farm):
    """The demo's farm (two years, invented), default options: the site's own Vd factor
    drawn alone scales the whole dry N, so its 95 % over its 50 % is exp(ln 1.2 z_0.95)
    (scipy.stats.lognorm), not the square of it (a factor applied twice); the NH3
    part of the Vd model factor holds most of the log-variance of the dry N (pinned
    regression on the demo: 0.76 on the eight years, docs/methods_uncertainty.md), and
    the main factors with what they do together account for all of it.

    Tolerance of the quantile ratio: the 95 % of ln F from n draws has the standard
    error sqrt(q (1 - q) / n) / phi(z_q) ln GSD (common practice), five of it."""
    study, res = farm
    n = 2000
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        df = variance_shares(res, study, UncertaintyOptions(draws=n), sites=["farm"],
                             totals=("N_dry",))
    row = df[df["receptor"] == "grass"].set_index("factor")
    site = row.loc["vd_site_gsd"]
    want = stats.lognorm(s=np.log(1.2)).ppf(0.95)
    z = stats.norm.ppf(0.95)
    se = np.sqrt(0.95 * 0.05 / n) / stats.norm.pdf(z) * np.log(1.2)
    assert np.log(site["alone_p95"] / site["alone_p50"]) == pytest.approx(np.log(want),
                                                                          abs=5 * se)
    assert row.loc["vd_gsd.NH3", "log_variance_share"] > 0.6
    main = row[(row["part_of"] == "") & (~row.index.isin(["all"]))]
    assert main["log_variance_share"].sum() == pytest.approx(1.0, abs=1e-9)
    # what the analyses, the gauge and the fills add is below 1 % each
    small = main.drop(index=["vd_gsd", "vd_site_gsd", "together"])
    assert (small["log_variance_share"].fillna(0) < 0.01).all()


def test_demo_farm_drawn_gas_particle_split_is_a_factor(farm):
    """A drawn gas/particle split (pair_shift_<pair>) is a factor of its own: its
    share is that of its draws alone, between 0 and 1."""
    study, res = farm
    opt = UncertaintyOptions(draws=300, pair_shift_ammonium=(-0.2, 0.2))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        df = variance_shares(res, study, opt, sites=["farm"], totals=("N_dry",))
    row = df[df["receptor"] == "grass"].set_index("factor")
    share = row.loc["pair_shift_ammonium", "variance_share"]
    assert 0 < share < 1
    assert row.loc["pair_shift_ammonium", "alone_p05"] < row.loc["pair_shift_ammonium",
                                                                 "alone_p95"]
    assert "pair_shift_nitrate" not in row.index
