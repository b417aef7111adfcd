"""The three systematic draws of the Monte Carlo at the level of the factors
(workbench/analysis/noise.py, uncertainty.py): gauge periods, a laboratory's
calibration bias, the Vd part of a land-use class.  The whole chain is checked from the
outside in test_uncertainty_systematics_by_hand.py; here the rules at the edges
(a sample across a change, a sample ending on a change's instant), the correlations
between the factors and the refusals of bad options.  Expected values by numpy alone,
the source beside each."""
import numpy as np
import pytest

from workbench.analysis import uncertainty as U
from workbench.analysis.layer import DryPieces, SiteLayer, WetPieces
from workbench.analysis.noise import hour_shares, sample_lab_bias, site_noise

N = 20000
NS = "datetime64[ns]"


def _layer(klass=("grass",), starts=("2019-06-25", "2019-07-02"), ends=("2019-07-02", "2019-07-09"),
           gauge=(), lab=()):
    """A synthetic site: two weekly samples of air (SO2) and precipitation (SO4), the
    receptors named by `klass`."""
    start, end = np.array(starts, NS), np.array(ends, NS)
    n, r = len(start), len(klass)
    dry = DryPieces(np.ones((n, 1, r)), np.zeros(n, bool), np.zeros((n, 1, r)), np.arange(n),
                    [("SO2", "", int(t), 0) for t in start.astype(np.int64)], start, end,
                    np.array([list(klass)] * n, object))
    wet = WetPieces(np.arange(n), np.zeros(n, int), np.full(n, 10.0), {"SO4": np.full(n, 0.02)},
                    {"SO4": np.ones(n, bool)}, {"SO4": np.zeros(n, bool)}, n,
                    [("", int(t), 0) for t in start.astype(np.int64)], start, end)
    return SiteLayer({"SO2": dry}, wet, None, {"SO4": np.array([0.02])},
                     np.array(gauge, NS), np.array(lab, NS))


def _opt(**kw):
    base = dict(vd_gsd={sp: 1.0 for sp in U.DEFAULT_VD_GSD}, air_rel_sd=0.0,
                precip_conc_rel_sd=0.0, gauge_catch_rel_sd=0.0, depth_rel_sd=0.0,
                censored_rel_sd=0.0, vd_fill_rel_sd=0.0, pwm_fill_rel_sd=0.0,
                lab_bias_precip_rel_sd=0.0, lab_bias_air_rel_sd=0.0, vd_class_fraction=0.0,
                vd_site_gsd=1.0, lab_bias_filter_pack=False, bulk_factor_rel_sd=0.0)
    return U.UncertaintyOptions(draws=N, seed=3, **{**base, **kw})


def test_hour_shares_of_a_sample_across_a_change():
    """A week from 2 July 2019 00:00 with a change at 5 July 00:00: 3 of its 7 days
    before, 4 after (the share of its hours; common practice, as the budget shares a
    straddling sample); a sample of no duration lies where it starts."""
    s = hour_shares(np.array(["2019-07-05"], NS), np.array(["2019-07-02", "2019-07-10",
                                                              "2019-07-01"], NS),
                    np.array(["2019-07-09", "2019-07-17", "2019-07-01"], NS))
    np.testing.assert_allclose(s, [[3 / 7, 4 / 7], [0, 1], [1, 0]])


def test_a_sample_ending_on_the_change_is_the_earlier_laboratorys():
    """A sample is analysed by the laboratory in force when it is collected: one that
    ends at 00:00 UTC of the change's date is the earlier laboratory's, the next the
    later's (our rule, docs/methods_uncertainty.md)."""
    bias = np.arange(2 * 1 * 2, dtype=float).reshape(2, 1, 2)     # (D, Y, L)
    got = sample_lab_bias(bias, np.array(["2019-07-02"], NS),
                          np.array(["2019-06-25", "2019-07-02"], NS),
                          np.array(["2019-07-02", "2019-07-09"], NS), 2019, 1)
    np.testing.assert_array_equal(got, bias[:, 0, [0, 1]])
    # a value below detection (half the limit put in) takes no calibration bias
    got = sample_lab_bias(bias, np.array(["2019-07-02"], NS),
                          np.array(["2019-06-25", "2019-07-02"], NS),
                          np.array(["2019-07-02", "2019-07-09"], NS), 2019, 1,
                          np.array([True, False]))
    np.testing.assert_array_equal(got, np.stack([np.ones(2), bias[:, 0, 1]], 1))
    # one laboratory for every sample: its column, broadcast
    got = sample_lab_bias(bias, np.array([], NS), np.array(["2019-06-25", "2019-07-02"], NS),
                          np.array(["2019-07-02", "2019-07-09"], NS), 2019, 1)
    np.testing.assert_array_equal(np.broadcast_to(got, (2, 2)), bias[:, 0, [0, 0]])


def test_gauge_periods_are_independent_and_the_first_is_the_old_gauge():
    """Two gauge periods draw independent catches of the given spread (correlation
    within 5/sqrt(n) of 0, common practice); the first period's is the site's catch
    drawn as before (a site without a gauge change draws the numbers it drew)."""
    lay = _layer(gauge=["2019-07-02"])
    nz = site_noise(lay, _opt(gauge_catch_rel_sd=0.1), N, 1, 1, (3, "hollo"), 2019)
    g = nz.gauge_periods[:, 0]
    assert g.shape == (N, 2)
    np.testing.assert_array_equal(g[:, 0], nz.gauge[:, 0])
    assert abs(np.corrcoef(g[:, 0], g[:, 1])[0, 1]) < 5 / np.sqrt(N)
    np.testing.assert_allclose(g.std(0), 0.1, rtol=5 / np.sqrt(2 * N))
    plain = site_noise(_layer(), _opt(gauge_catch_rel_sd=0.1), N, 1, 1, (3, "hollo"), 2019)
    np.testing.assert_array_equal(plain.gauge, nz.gauge)


def test_the_gauge_catch_of_a_period_under_two_gauges():
    """Two samples of equal depth in one period, the first under the first gauge, the
    second under the second: the period's precipitation moves by (g1 + g2)/2 in every
    draw (the share of its depth under each gauge), its PWM not at all."""
    lay = _layer(gauge=["2019-07-02"])
    opt = _opt(gauge_catch_rel_sd=0.1)
    nz = site_noise(lay, opt, N, 1, 1, (3, "hollo"), 2019)
    yi = np.array([0])
    import xarray as xr
    ds = xr.Dataset(coords={"period_start": ("period", np.array(["2019-06-01"], NS)),
                            "period_end": ("period", np.array(["2019-08-01"], NS))})
    gauge, piece = U._gauge_by_piece(lay, nz.gauge_periods, yi, ds)
    r = U.wet_ratios(lay.wet, lay.pwm, None, gauge, nz.depth, nz.pconc, nz.pwm_fill, 1,
                     {"SO4"}, gauge_piece=piece)["SO4"]
    g = nz.gauge_periods[:, 0]
    np.testing.assert_allclose(r[:, 0], g.mean(1), rtol=1e-12)
    np.testing.assert_allclose(piece[0] @ piece[1], g, rtol=1e-12)   # sample by sample


def test_laboratory_bias_shared_by_its_samples_and_apart_for_air():
    """Both samples before a laboratory change share one bias (identical factors),
    samples across it do not; the air laboratory's bias is independent of the
    precipitation laboratory's (different laboratories, docs/methods_uncertainty.md)."""
    one = _layer(starts=("2019-06-18", "2019-06-25"), ends=("2019-06-25", "2019-07-02"),
                 lab=["2019-07-02"])
    opt = _opt(lab_bias_precip_rel_sd=0.1, lab_bias_air_rel_sd=0.1)
    nz = site_noise(one, opt, N, 1, 1, (3, "hollo"), 2019)
    np.testing.assert_array_equal(nz.pconc["SO4"][:, 0], nz.pconc["SO4"][:, 1])
    np.testing.assert_array_equal(nz.air["SO2"][:, 0], nz.air["SO2"][:, 1])
    assert abs(np.corrcoef(nz.pconc["SO4"][:, 0], nz.air["SO2"][:, 0])[0, 1]) < 5 / np.sqrt(N)
    np.testing.assert_allclose(nz.pconc["SO4"][:, 0].std(), 0.1, rtol=5 / np.sqrt(2 * N))
    across = site_noise(_layer(lab=["2019-07-02"]), opt, N, 1, 1, (3, "hollo"), 2019)
    p = across.pconc["SO4"]
    assert abs(np.corrcoef(p[:, 0], p[:, 1])[0, 1]) < 5 / np.sqrt(N)


@pytest.mark.parametrize("rho,kappa", [(0.5, 0.5), (0.0, 1.0), (0.3, 0.2)])
def test_vd_class_parts_keep_the_spread_and_set_the_correlation(rho, kappa):
    """ln F of a receptor has variance ln^2 GSD whatever kappa (one receptor's spread
    kept); between two classes the correlation of ln F is rho + (1 - rho)(1 - kappa);
    the same class at two sites draws the same factor (one per class for the run)."""
    opt = _opt(vd_gsd={"SO2": 1.5}, vd_shared_fraction=rho, vd_class_fraction=kappa)
    lay = _layer(klass=("grass", "conifer_forest"))
    a = site_noise(lay, opt, N, 1, 1, (3, "hollo"), 2019)
    b = site_noise(lay, opt, N, 1, 1, (3, "other"), 2019)
    k = U.DRY_SPECIES.index("SO2")
    lg, lf = np.log(a.vd_class["grass"][:, 0, k]), np.log(a.vd_class["conifer_forest"][:, 0, k])
    for v in (lg, lf):
        assert v.std() == pytest.approx(np.log(1.5), rel=5 / np.sqrt(2 * N))
    r = rho + (1 - rho) * (1 - kappa)
    # standard error of a correlation (1 - r^2)/sqrt(n) (common practice)
    assert np.corrcoef(lg, lf)[0, 1] == pytest.approx(r, abs=5 * (1 - r ** 2) / np.sqrt(N) + 1e-9)
    np.testing.assert_array_equal(a.vd_class["grass"], b.vd_class["grass"])


def test_vd_class_fraction_zero_is_one_factor_for_every_surface():
    """kappa = 0: no class part is drawn and every receptor takes the one factor."""
    opt = _opt(vd_gsd={"SO2": 1.5})
    nz = site_noise(_layer(klass=("grass", "conifer_forest")), opt, 100, 1, 1, (3, "h"), 2019)
    assert nz.vd_class == {}


def test_each_year_draws_the_class_parts_anew():
    """``systematic_errors = "each_year"``: every part of a year's Vd factor is drawn
    anew, the class's too, so ln F of two years is uncorrelated (within 5/sqrt(n))."""
    opt = _opt(vd_gsd={"SO2": 1.5}, vd_class_fraction=0.5, systematic_errors="each_year")
    nz = site_noise(_layer(), opt, N, 2, 1, (3, "hollo"), 2019)
    k = U.DRY_SPECIES.index("SO2")
    f = np.log(nz.vd_class["grass"][:, :, k])
    assert abs(np.corrcoef(f[:, 0], f[:, 1])[0, 1]) < 5 / np.sqrt(N)


@pytest.mark.parametrize("key,value", [("vd_class_fraction", 1.5), ("vd_class_fraction", -0.1),
                                       ("lab_bias_precip_rel_sd", -0.01),
                                       ("lab_bias_air_rel_sd", float("nan")),
                                       ("lab_bias_air_rel_sd", "0.05")])
def test_bad_new_options_are_refused_by_name(key, value):
    with pytest.raises(ValueError, match=key):
        U.UncertaintyOptions(**{key: value})
