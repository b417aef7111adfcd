"""The Monte Carlo of the budget against closed forms, on the tiny invented site (fixed
Vd, every component a sum of per-sample products; tiny_site.py).

References: scipy.stats (a general-purpose reference library) for the normal and
log-normal distributions; the closed forms are textbook (from memory): for independent
X, Y, E[XY] = E[X] E[Y] and Var(XY) = E[X^2] E[Y^2] - E[X]^2 E[Y]^2; a log-normal F
with median 1 and ln F ~ N(0, s^2) has E[F] = exp(s^2 / 2), E[F^2] = exp(2 s^2); the
sum of independent normal terms in log space has the sum of their variances.

Tolerances come from the number of draws n (common practice): a mean within 5 of its
standard errors sd / sqrt(n); a sample variance within 5 of its standard errors
sqrt((m4 - s^4) / n) (m4 the sample's fourth central moment); a sample quantile q in
log space within 5 of sqrt(q (1 - q) / n) / phi(z_q) times the log-SD; a correlation
of independent draws within 5 / sqrt(n).
"""
import numpy as np
import pytest
from scipy import stats

from analysis.tiny_site import GAUGE, NH4, NO3, OFF, SO2, SO4, VD
from workbench.analysis import uncertainty as U

N = 20000


def _draws(tiny, n=N, seed=3, site="quill", years=(2021, 1), **opts):
    _, _, res, lay = tiny
    opt = U.UncertaintyOptions(draws=n, seed=seed, **{**OFF, **opts})
    noise = U.site_noise(lay.sites[0], opt, n, years[1], 1, (seed, site), years[0])
    comp = U.component_draws(lay, 0, noise, years[0])
    return comp[:, 0, 0, :], U.totals_of(comp[:, 0, 0, :]), res.budget["deposition"].values[0, 0, 0]


def _j(species, path):
    return next(j for j, c in enumerate(U.COMPONENTS) if c[2] == species and c[1] == path)


def _close_mean(x, want):
    assert abs(x.mean() - want) < 5 * x.std(ddof=1) / np.sqrt(x.size)


def _close_var(x, want):
    m4 = np.mean((x - x.mean()) ** 4)
    se = np.sqrt((m4 - x.var() ** 2) / x.size)
    assert abs(x.var(ddof=1) - want) < 5 * se


@pytest.mark.parametrize("rho", [0.0, 0.3, 1.0])
def test_log_variances_add_to_the_gsd_and_ratios_are_lognormal(tiny, rho):
    """ln F = ln GSD (sqrt(rho) z_shared + sqrt(1 - rho) z_own): the two normal parts'
    variances add to ln^2 GSD for any rho; the ratio of two species' factors is
    log-normal with log-variance ln^2 a + ln^2 b - 2 rho ln a ln b (scipy.stats.lognorm)."""
    a, b = 1.5, 2.0
    comp, _, point = _draws(tiny, vd_gsd={**OFF["vd_gsd"], "SO2": a, "HNO3": b},
                            vd_shared_fraction=rho)
    fa = comp[:, _j("SO2", "dry")] / point[_j("SO2", "dry")]
    fb = comp[:, _j("HNO3", "dry")] / point[_j("HNO3", "dry")]
    for f, g in ((fa, a), (fb, b)):
        _close_var(np.log(f), np.log(g) ** 2)
    s = np.sqrt(np.log(a) ** 2 + np.log(b) ** 2 - 2 * rho * np.log(a) * np.log(b))
    ratio = fa / fb
    for q in (0.05, 0.5, 0.95):
        ref = stats.lognorm.ppf(q, s=s, scale=1.0)
        se = np.sqrt(q * (1 - q) / N) / stats.norm.pdf(stats.norm.ppf(q)) * s
        assert abs(np.log(np.quantile(ratio, q) / ref)) < 5 * se
    # and the product: the mean of a log-normal factor, exp(s^2 / 2)
    _close_mean(fa, np.exp(np.log(a) ** 2 / 2))


def test_factor_on_one_species_shifts_a_lognormal_by_the_others(tiny):
    """A Vd factor on SO2 only: S_dry = pSO4 + F SO2 (pSO4 exact), so every quantile of
    S_dry is pSO4 + SO2 exp(ln GSD z_q) (scipy.stats.norm), and S_wet does not move."""
    g = 1.8
    comp, tot, point = _draws(tiny, vd_gsd={**OFF["vd_gsd"], "SO2": g})
    so2, pso4 = point[_j("SO2", "dry")], point[_j("pSO4", "dry")]
    for q in (0.05, 0.25, 0.5, 0.75, 0.95):
        want = pso4 + so2 * np.exp(np.log(g) * stats.norm.ppf(q))
        se = np.sqrt(q * (1 - q) / N) / stats.norm.pdf(stats.norm.ppf(q)) * np.log(g)
        got = np.quantile(tot["S_dry"], q)
        assert abs(np.log((got - pso4) / (want - pso4))) < 5 * se
    np.testing.assert_array_equal(tot["S_wet"], np.nansum(point[[_j("SO4", "wet")]]))
    np.testing.assert_array_equal(comp[:, _j("pSO4", "dry")], pso4)


def test_product_of_independent_factors_mean_and_variance(tiny):
    """Dry SO2 with a log-normal Vd factor F (GSD g) and an analytical error per weekly
    sample (rel. SD sd): D = point F R, R = sum a_n delta_n / sum a_n, F and R
    independent: E[D] = point E[F]; Var(D) = point^2 (E[F^2] E[R^2] - E[F]^2) with
    E[R^2] = 1 + sd^2 sum a_n^2 / (sum a_n)^2 (a_n = C_n Vd t, the weeks' parts)."""
    g, sd = 1.5, 0.2
    comp, _, point = _draws(tiny, vd_gsd={**OFF["vd_gsd"], "SO2": g}, air_rel_sd=sd)
    d = comp[:, _j("SO2", "dry")]
    p = point[_j("SO2", "dry")]
    a = np.array(SO2) * VD["SO2"]                       # the parts, up to a common factor
    s2 = np.log(g) ** 2
    er2 = 1 + sd ** 2 * (a ** 2).sum() / a.sum() ** 2
    _close_mean(d, p * np.exp(s2 / 2))
    _close_var(d, p ** 2 * (np.exp(2 * s2) * er2 - np.exp(s2)))


def test_sum_of_independent_terms_variance_adds_across_pathways(tiny):
    """S_total = S_wet + S_dry with independent factors on each (gauge catch on the wet
    part, a Vd factor on SO2): Var(S_total) = Var(S_wet) + Var(S_dry), each in closed
    form: Var(S_wet) = (sd_g SO4_wet)^2, Var(SO2) = SO2^2 (exp(2 s^2) - exp(s^2))."""
    g, sd_g = 1.5, 0.08
    _, tot, point = _draws(tiny, vd_gsd={**OFF["vd_gsd"], "SO2": g}, gauge_catch_rel_sd=sd_g)
    wet, so2 = point[_j("SO4", "wet")], point[_j("SO2", "dry")]
    s2 = np.log(g) ** 2
    _close_var(tot["S_wet"], (sd_g * wet) ** 2)
    _close_var(tot["S_dry"], so2 ** 2 * (np.exp(2 * s2) - np.exp(s2)))
    _close_var(tot["S_total"], (sd_g * wet) ** 2 + so2 ** 2 * (np.exp(2 * s2) - np.exp(s2)))


def test_factors_are_independent_unless_documented_shared(tiny):
    """docs/methods_uncertainty.md: gauge catch and Vd factors independent; analytical
    errors independent among species and ions; the depth error shared by all ions."""
    comp, tot, point = _draws(tiny, vd_gsd={**OFF["vd_gsd"], "SO2": 1.5},
                              gauge_catch_rel_sd=0.1, air_rel_sd=0.2, precip_conc_rel_sd=0.2)
    lim = 5 / np.sqrt(N)
    cols = {"SO2 (Vd, air)": comp[:, _j("SO2", "dry")], "pSO4 (air)": comp[:, _j("pSO4", "dry")],
            "HNO3 (air)": comp[:, _j("HNO3", "dry")], "SO4 wet": comp[:, _j("SO4", "wet")],
            "NO3 wet": comp[:, _j("NO3", "wet")]}
    names = list(cols)
    r = np.corrcoef(np.array([cols[k] for k in names]))
    for i in range(len(names)):
        for k in range(i + 1, len(names)):
            if {names[i], names[k]} == {"SO4 wet", "NO3 wet"}:
                assert r[i, k] > 0.3                 # the shared gauge catch
            else:
                assert abs(r[i, k]) < lim, (names[i], names[k], r[i, k])
    # depth errors alone (one per sample, shared by its ions): D_X = sum_i P_i eps_i C_Xi,
    # so Var(D_X / D_X point) = sd^2 sum_i (P_i C_Xi)^2 / (sum_i P_i C_Xi)^2 per ion, and
    # the ions move together (positively correlated), not independently
    sd = 0.1
    comp, _, point = _draws(tiny, depth_rel_sd=sd)
    ratios = []
    for sp, conc in (("SO4", SO4), ("NO3", NO3), ("NH4", NH4)):
        parts = np.array(conc) * np.array(GAUGE)
        r = comp[:, _j(sp, "wet")] / point[_j(sp, "wet")]
        _close_var(r, sd ** 2 * (parts ** 2).sum() / parts.sum() ** 2)
        ratios.append(r)
    assert (np.corrcoef(ratios)[np.triu_indices(3, 1)] > 0.5).all()


def test_years_and_sites_draw_independent_systematic_factors_each_year(tiny):
    """``systematic_errors = "each_year"`` (the old treatment, kept for comparison):
    the Vd factor and the gauge catch are drawn anew for every site and year."""
    _, _, _, lay = tiny
    opt = U.UncertaintyOptions(draws=N, seed=5,
                               **{**OFF, "vd_gsd": {"SO2": 1.5}, "gauge_catch_rel_sd": 0.1,
                                  "systematic_errors": "each_year"})
    a = U.site_noise(lay.sites[0], opt, N, 3, 1, (5, "quill"), 2019)
    b = U.site_noise(lay.sites[0], opt, N, 3, 1, (5, "other"), 2019)
    k = U.DRY_SPECIES.index("SO2")
    lim = 5 / np.sqrt(N)
    assert abs(np.corrcoef(np.log(a.vd[:, 0, k]), np.log(a.vd[:, 1, k]))[0, 1]) < lim
    assert abs(np.corrcoef(np.log(a.vd[:, 0, k]), np.log(b.vd[:, 0, k]))[0, 1]) < lim
    assert abs(np.corrcoef(a.gauge[:, 0], a.gauge[:, 1])[0, 1]) < lim


def test_systematic_factors_shared_by_years_vd_by_sites_too(tiny):
    """docs/methods_uncertainty.md, "Systematic or random" (the default, "shared"): the
    Vd factor is the same in every year and at every site of a seed (a scheme's bias),
    the gauge catch the same in every year of a site (its gauge) and independent
    between sites (each its own gauge).  On the old code every year and site drew its
    own (correlation 0 within 5 / sqrt(n))."""
    _, _, _, lay = tiny
    opt = U.UncertaintyOptions(draws=N, seed=5, **{**OFF, "vd_gsd": {"SO2": 1.5},
                                                   "gauge_catch_rel_sd": 0.1})
    a = U.site_noise(lay.sites[0], opt, N, 3, 1, (5, "quill"), 2019)
    b = U.site_noise(lay.sites[0], opt, N, 3, 1, (5, "other"), 2019)
    k = U.DRY_SPECIES.index("SO2")
    for y in (1, 2):
        np.testing.assert_array_equal(a.vd[:, y], a.vd[:, 0])
        np.testing.assert_array_equal(a.gauge[:, y], a.gauge[:, 0])
    np.testing.assert_array_equal(a.vd, b.vd)
    assert np.log(a.vd[:, 0, k]).std() == pytest.approx(np.log(1.5), rel=5 / np.sqrt(2 * N))
    assert abs(np.corrcoef(a.gauge[:, 0], b.gauge[:, 0])[0, 1]) < 5 / np.sqrt(N)
    # a run from another year on draws the same shared factors (named by seed and site)
    later = U.site_noise(lay.sites[0], opt, N, 1, 1, (5, "quill"), 2023)
    np.testing.assert_array_equal(later.vd[:, 0], a.vd[:, 0])
    np.testing.assert_array_equal(later.gauge[:, 0], a.gauge[:, 0])


def test_a_site_year_factor_does_not_depend_on_the_run(tiny):
    """The Vd factor and the gauge catch of a site-year are named by the site's id and
    the calendar year: the same in a run that starts a year earlier, and in a run where
    the site has another place (they were drawn from the site's index in the run and
    the year's offset from the run's first year)."""
    _, _, _, lay = tiny
    opt = U.UncertaintyOptions(draws=50, seed=5, gauge_catch_rel_sd=0.1)
    one = U.site_noise(lay.sites[0], opt, 50, 1, 1, (5, "quill"), 2021)
    two = U.site_noise(lay.sites[0], opt, 50, 2, 1, (5, "quill"), 2020)
    np.testing.assert_array_equal(one.vd[:, 0], two.vd[:, 1])
    np.testing.assert_array_equal(one.gauge[:, 0], two.gauge[:, 1])
    again = U.site_noise(lay.sites[0], opt, 50, 1, 1, (5, "quill"), 2021)
    np.testing.assert_array_equal(one.air["SO2"], again.air["SO2"])      # seeded
    other = U.site_noise(lay.sites[0], opt, 50, 1, 1, (6, "quill"), 2021)
    assert not np.array_equal(one.vd, other.vd)


def test_cut_at_zero_keeps_every_draw_non_negative(tiny):
    """Normal factors are cut at 0 (docs): with a spread of 3 many sample factors are 0,
    and no component draw is negative."""
    comp, tot, _ = _draws(tiny, 2000, air_rel_sd=3.0, precip_conc_rel_sd=3.0, depth_rel_sd=3.0)
    finite = comp[np.isfinite(comp)]
    assert finite.min() >= 0 and (finite == 0).any()
    assert (tot["S_total"] >= 0).all() and (tot["N_total"] >= 0).all()


def test_site_draws_do_not_depend_on_the_other_sites(analysis_run, analysis_scenario):
    """The draws of a site in a run of two sites equal those in a run of that site alone
    (the critical-loads explorer runs one site); they were not where the site's place
    changed (its stream was named by its index)."""
    import warnings

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    _, result, study = analysis_run
    sites = [str(s) for s in result.years["site"].values]
    last = "mere"                          # a site with data, not the first of the run
    assert sites.index(last) > 0
    sc = load_scenario(analysis_scenario)
    alone = Study(study.inputs.subset([last]), study.site_overrides)
    p = sc.data["period"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res1 = alone.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                         sc.fixed_velocity, "year", p["start"], p["end"])
    opt = U.UncertaintyOptions(draws=40, seed=9)
    both = U.monte_carlo(result, study, opt, years_only=True).total_draws
    one = U.monte_carlo(res1, alone, opt, years_only=True).total_draws
    for v in ("s_dep_eq_ha_yr", "n_dep_eq_ha_yr"):
        b = one[v].sel(site=last)                 # the site's own receptors
        a = both[v].sel(site=last, receptor=b["receptor"].values)
        assert np.isfinite(b.values).all()
        np.testing.assert_allclose(b.values, a.values, rtol=1e-9)


def test_span_draws_use_the_years_the_span_uses(analysis_run):
    """With every factor off, the span row of the draws is the span mean of budget.csv:
    a year whose total is 'flagged' only for kept flagged samples passes completeness
    (total_passes) and is in the span mean; the draws left it out, so their span was
    the other year's value (ridge 2020 in the demo subset)."""
    from workbench.analysis.exceedance import annual_totals
    _, result, study = analysis_run
    q = U.monte_carlo(result, study, U.UncertaintyOptions(draws=3, **OFF), years_only=True)
    t = annual_totals(result)
    span = t[t["period"] == "span"].set_index(["site", "receptor"])
    assert len(span)
    for col in ("s_dep_eq_ha_yr", "n_dep_eq_ha_yr"):
        d = q.total_draws[col].sel(period="span").isel(draw=0).to_series()
        want = span[col].dropna()
        np.testing.assert_allclose(d.reindex(want.index).values, want.values, rtol=1e-9)
    ys = result.years
    flagged_passing = ((ys["total_status"] == "flagged") & ys["total_passes"]).any()
    assert bool(flagged_passing)              # the case the test is about is in the data
