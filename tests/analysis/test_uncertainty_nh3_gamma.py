"""The stomatal NH3 emission potential Gamma_s as a drawn factor of the Monte Carlo.

Under ``[dry] nh3_treatment = "bidirectional"`` the net NH3 exchange is B - E, the
emission part E proportional to Gamma_s through the stomatal compensation point
chi_s = 161500/T exp(-10380/T) Gamma_s (Nemitz et al. 2000; docs/methods_dry.md).  A
log-normal factor G of median 1 and GSD ``nh3_gamma_gsd`` on Gamma_s makes the net
B - G E.  So with G alone drawn, the p-quantile of the net is B - E q_{1-p}(G), with
q the log-normal quantiles, here from scipy.stats.lognorm (a general-purpose
reference library: shape s = ln GSD, scale 1).

One year of the demo's farm (invented; tests/ui/demo_subset.py) with an invented
Gamma_s of crops of 50,000, so that E is large (the net of 2023 is an emission).
B is found by hand from the engine itself, as in test_uncertainty_nh3_net.py: the
budget run again with every NH3 concentration times 1.1 gives net' = net + 0.1 B;
then E = B - net.
"""
import dataclasses
import types
import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from analysis.tiny_site import OFF
from ui.demo_subset import study_and_args, write_demo_subset
from workbench.analysis import noise as N
from workbench.analysis import quantile_tables as QT
from workbench.analysis import uncertainty as U

GAMMA = 50000.0
GSD = 3.0
N_DRAWS = 20000


def _farm(d, nh3_scale=1.0):
    sc = write_demo_subset(d, ("farm",), 2023, 2023)
    sc.write_text(sc.read_text().replace(
        "[budget]", '[dry]\nnh3_treatment = "bidirectional"\n'
        f"nh3_emission_potential = {{ crops = {GAMMA} }}\n\n[budget]"))
    if nh3_scale != 1.0:
        lines = (d / "air.csv").read_text().splitlines(keepends=True)
        head = [ln for ln in lines if ln.startswith("#")]
        a = pd.read_csv(d / "air.csv", comment="#", dtype=str, keep_default_na=False)
        v = pd.to_numeric(a["NH3 [ug/m3]"], errors="coerce")
        a["NH3 [ug/m3]"] = np.where(v.notna(), (v * nh3_scale).map("{:.6g}".format),
                                    a["NH3 [ug/m3]"])
        (d / "air.csv").write_text("".join(head) + a.to_csv(index=False))
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    return study, res, args


def _net(res):
    return float(res.years["nh3_net"].sel(site="farm", receptor="crops").values[0])


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    return (_farm(tmp_path_factory.mktemp("gamma")),
            _farm(tmp_path_factory.mktemp("gamma_up"), 1.1))


def _layer(study, res):
    lay = U.linear_layer(res, study, "years")
    return lay, list(lay.budget["site"].values).index("farm")


def _draws(study, res, opt):
    lay, k = _layer(study, res)
    ds = lay.budget
    r = list(ds["receptor"].values).index("crops")
    noise = U.site_noise(lay.sites[k], opt, opt.draws, 1, 1, (opt.seed, "farm"), 2023,
                         (ds["period_start"].values, ds["period_end"].values))
    comp = U.component_draws(lay, k, noise, 2023)
    return comp[:, r, 0, [c[1:] for c in U.COMPONENTS].index(("dry", "NH3"))]


def test_gamma_alone_spreads_the_net_by_e_times_lognormal_quantiles(runs):
    (study, res, _), (_, up, _) = runs
    net = _net(res)
    b = (_net(up) - net) / 0.1
    e = b - net
    assert e > b > 0                                          # a net emission
    opt = U.UncertaintyOptions(draws=N_DRAWS, seed=9, **{**OFF, "nh3_gamma_gsd": GSD})
    nh3 = _draws(study, res, opt)
    # every draw is B - G E with G > 0: G = (B - draw) / E is log-normal, median 1
    g = (b - nh3) / e
    assert (g > 0).all()
    z = np.log(g) / np.log(GSD)
    assert stats.kstest(z, "norm").pvalue > 0.01
    # the 5, 50 and 95 % of the net against B - E q_{95, 50, 5}(G) by hand; the
    # tolerance is 4 standard errors of an empirical quantile (common practice:
    # sqrt(p (1 - p) / N) / pdf at the quantile), taken on the log-normal G
    lognorm = stats.lognorm(s=np.log(GSD), scale=1.0)
    for p in (0.05, 0.5, 0.95):
        want = b - e * lognorm.ppf(1 - p)
        se = np.sqrt(p * (1 - p) / N_DRAWS) / lognorm.pdf(lognorm.ppf(1 - p))
        assert np.quantile(nh3, p) == pytest.approx(want, abs=4 * se * e)
    # the median of the net is the point (G's median is 1), its spread e's alone
    assert np.median(nh3) == pytest.approx(net, rel=0.05)


def test_gamma_does_not_act_on_the_deposition_part(runs):
    """With G alone drawn the draws are B - G E, G the site's crops factor itself (the
    deposition part B the same in every draw); to the 1e-3 of B found by re-running."""
    (study, res, _), (_, up, _) = runs
    net = _net(res)
    b = (_net(up) - net) / 0.1
    opt = U.UncertaintyOptions(draws=200, seed=9, **{**OFF, "nh3_gamma_gsd": GSD})
    lay, k = _layer(study, res)
    noise = U.site_noise(lay.sites[k], opt, opt.draws, 1, 1, (opt.seed, "farm"), 2023)
    g = noise.nh3_gamma["crops"][:, 0]
    nh3 = _draws(study, res, opt)
    np.testing.assert_allclose(nh3, b - g * (b - net), rtol=1e-3)


def test_gamma_is_systematic_per_site_and_class(runs):
    """Shared by the years ("shared"), anew per calendar year ("each_year"); each site
    and land-use class a stream of its own; not drawn with GSD 1 or without emission."""
    (study, res, _), _ = runs
    lay, k = _layer(study, res)
    ls = lay.sites[k]
    opt = U.UncertaintyOptions(draws=50, seed=9, nh3_gamma_gsd=GSD)
    one = N.nh3_gamma_factors(ls, opt, N._stream_key((9, "farm")), 50, 3, 2021)
    assert {"crops", "grass"} <= set(one)
    assert np.array_equal(one["crops"][:, 0], one["crops"][:, 2])
    assert not np.array_equal(one["crops"][:, 0], one["grass"][:, 0])
    other = N.nh3_gamma_factors(ls, opt, N._stream_key((9, "other")), 50, 3, 2021)
    assert not np.array_equal(one["crops"], other["crops"])
    each = N.nh3_gamma_factors(ls, dataclasses.replace(opt, systematic_errors="each_year"),
                               N._stream_key((9, "farm")), 50, 3, 2021)
    assert not np.array_equal(each["crops"][:, 0], each["crops"][:, 1])
    assert N.nh3_gamma_factors(ls, dataclasses.replace(opt, nh3_gamma_gsd=1.0),
                               N._stream_key((9, "farm")), 50, 3, 2021) is None
    plain = dataclasses.replace(ls, dry={sp: p for sp, p in ls.dry.items() if sp != "NH3"})
    assert N.nh3_gamma_factors(plain, opt, N._stream_key((9, "farm")), 50, 3, 2021) is None


def test_gamma_named_only_where_drawn(runs):
    """The results say whether Gamma_s was drawn, and the report's text and line of
    options name it only then (as the bulk collector's factor)."""
    (study, res, args), _ = runs
    scen = types.SimpleNamespace(options={"uncertainty": U.UncertaintyOptions(draws=20)})
    new = U.with_uncertainty(res, study, scen)
    assert new.options["uncertainty"].nh3_gamma_drawn
    assert U.nh3_gamma_state(new) == (True, True)
    opt = new.options["uncertainty"].options
    text = QT.report_text(opt, None, U.nh3_gamma_state(new))
    assert "emission potential Gamma_s (log-normal, nh3_gamma_gsd" in text
    assert "nh3_gamma_gsd = 3 (Gamma_s" in QT.draws_in_force(opt, None, True)
    # GSD 1: not drawn, named as outside the range
    off = U.with_uncertainty(res, study, types.SimpleNamespace(options={
        "uncertainty": U.UncertaintyOptions(draws=20, nh3_gamma_gsd=1.0)}))
    assert U.nh3_gamma_state(off) == (True, False)
    text = QT.report_text(off.options["uncertainty"].options, None, U.nh3_gamma_state(off))
    assert "(log-normal, nh3_gamma_gsd" not in text
    assert "Gamma_s of the net NH3 exchange (not drawn: nh3_gamma_gsd = 1)" in text
    assert "nh3_gamma_gsd" not in QT.draws_in_force(off.options["uncertainty"].options,
                                                    None, False)
    # deposition-only NH3 (the default): nothing to draw, nothing named
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        plain = study.run(args[0], dataclasses.replace(args[1], nh3_treatment="deposition_only"),
                          *args[2:])
    plain = U.with_uncertainty(plain, study, scen)
    assert U.nh3_gamma_state(plain) == (False, False)
    assert "Gamma_s" not in QT.report_text(U.UncertaintyOptions(), None,
                                            U.nh3_gamma_state(plain))


def test_the_sensitivity_gamma_factor_named_empty_spans_the_same_gsd():
    """`[sensitivity] factors` ``nh3_gamma_<class> = []``: a multiplier of the Gamma_s in
    force over +-1 GSD of the Monte Carlo's nh3_gamma_gsd default, as the Vd factors
    span +-1 GSD of vd_gsd (and as the Monte Carlo's G multiplies Gamma_s); a class
    without stomata (Gamma_s 0) has no default range."""
    from workbench.analysis.sensitivity_options import SensitivityOptions
    opt = SensitivityOptions(factors={"nh3_gamma_crops": [], "vd_NH3": (0.5, 2.0)})
    lo, hi = opt.factors["nh3_gamma_crops"]
    g = U.UncertaintyOptions().nh3_gamma_gsd
    assert (lo, hi) == pytest.approx((1 / g, g), rel=1e-3)
    with pytest.raises(ValueError, match="nh3_gamma_water = \\[\\]: the class has no"):
        SensitivityOptions(factors={"nh3_gamma_water": [], "vd_NH3": (0.5, 2.0)})
