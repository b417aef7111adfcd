"""Hand audit of the Monte Carlo against analytic propagation (hand_site.py's invented
sites: fixed Vd, every component a sum of per-sample products).

What test_uncertainty_analytic.py does not do, and this file does:

* the wet flux with gauge, depth and analysis errors at once, against the exact
  variance of a sum of products of independent factors and against the GUM law of
  propagation (first order, relative uncertainties in quadrature);
* the exact distribution of a sum of two correlated log-normal Vd factors (S dry =
  SO2 + pSO4, the documented GSDs and shared fraction), by quadrature;
* the exact correlation of S and N draws through the factors they share (depth and
  gauge catch on the wet ions, the micrometeorology on the Vd), for the wet, dry and
  total sums;
* the correlation of draws across the calendar years and across the sites (the docs:
  the Vd factor shared by every year and site, the gauge catch by a site's years; each
  year its own with ``systematic_errors = "each_year"``), at the level of the
  components of monthly periods, not of the factors alone.

Sources beside each check.  Expected values never come from workbench.analysis; the
module under test only makes the draws.  Tolerances from the number of draws n
(common practice): a mean within 5 standard errors, a variance within 5 of
sqrt((m4 - s^4) / n), a correlation r within 5 (1 - r^2) / sqrt(n), a quantile q
within 5 sqrt(q (1 - q) / n) / f(x_q).
"""
import numpy as np
import pandas as pd
import pytest
from scipy import optimize, stats

from analysis.hand_site import (HNO3, MONTH, NH4, NO3, PSO4, SO2, SO4, dry_parts,
                                wet_parts, write_site)
from workbench.analysis import uncertainty as U

N = 20000
#: Every factor off (GSD 1, spreads 0); a test switches on what it checks.
OFF = dict(vd_gsd={sp: 1.0 for sp in U.DEFAULT_VD_GSD}, air_rel_sd=0.0, precip_conc_rel_sd=0.0,
           gauge_catch_rel_sd=0.0, depth_rel_sd=0.0, censored_rel_sd=0.0, vd_fill_rel_sd=0.0,
           pwm_fill_rel_sd=0.0, lab_bias_precip_rel_sd=0.0, lab_bias_air_rel_sd=0.0, vd_site_gsd=1.0,
           lab_bias_filter_pack=False, bulk_factor_rel_sd=0.0)


@pytest.fixture(scope="module")
def hand(tmp_path_factory):
    return write_site(tmp_path_factory.mktemp("hand"))


def _draws(hand, site=0, n=N, seed=11, **opts):
    """Component draws (D, P, C) [mol m-2] of one site, and the point (P, C)."""
    _, study, res = hand
    from workbench.analysis.layer import linear_layer
    lay = linear_layer(res, study)
    opt = U.UncertaintyOptions(draws=n, seed=seed, **{**OFF, **opts})
    y0 = int(lay.period_year.min())
    b = lay.budget
    noise = U.site_noise(lay.sites[site], opt, n, int(lay.period_year.max()) - y0 + 1,
                         b.sizes["period"], (seed, str(b["site"].values[site])), y0,
                         (b["period_start"].values, b["period_end"].values))
    comp = U.component_draws(lay, site, noise, y0)[:, 0]
    return comp, res.budget["deposition"].values[site, 0]


def _j(hand, species, path):
    names = [str(c) for c in hand[2].budget["component"].values]
    return names.index(next(c for c in names if c.endswith(f"{path}/{species}")))


def _close_var(x, want):
    m4 = np.mean((x - x.mean()) ** 4)
    se = np.sqrt((m4 - x.var() ** 2) / x.size)
    assert abs(x.var(ddof=1) - want) < 5 * se, (x.var(ddof=1), want, se)


def _close_corr(x, y, want):
    r = np.corrcoef(x, y)[0, 1]
    assert abs(r - want) < 5 * (1 - want ** 2) / np.sqrt(x.size) + 1e-12, (r, want)


def test_point_budget_is_the_hand_sum(hand):
    """The point components are the sums a hand computes (the base of every check
    below): dry = sum C Vd t, wet = sum P C per month (molar masses from memory to 5
    digits, hence rtol 1e-4)."""
    _, point = _draws(hand, n=2)
    for sp in ("SO2", "pSO4", "HNO3"):
        want = [dry_parts(sp)[MONTH == m].sum() for m in range(3)]
        np.testing.assert_allclose(point[:, _j(hand, sp, "dry")], want, rtol=1e-4)
    for ion, c in (("SO4", SO4), ("NO3", NO3), ("NH4", NH4)):
        want = [wet_parts(c)[MONTH == m].sum() for m in range(3)]
        np.testing.assert_allclose(point[:, _j(hand, ion, "wet")], want, rtol=1e-12)


@pytest.mark.parametrize("sg, se, sd", [(0.05, 0.05, 0.05), (0.1, 0.3, 0.2)])
def test_wet_flux_gauge_depth_analysis_exact_and_gum(hand, sg, se, sd):
    """Wet flux D = g sum_i P_i eps_i C_i delta_i (PWM x depth: the PWM's weights and
    the depth share eps), g, eps, delta independent with mean 1 and relative SDs sg, se,
    sd.  Exact (moments of products of independent factors; Goodman 1960, J. Am.
    Stat. Assoc. 55, 708, from memory):
        Var(D / D0) = (1 + sg^2) (1 + h ((1 + se^2)(1 + sd^2) - 1)) - 1,
        h = sum a_i^2 / (sum a_i)^2, a_i = P_i C_i.
    JCGM 100:2008 (GUM) law of propagation, eq. (10), first order, for a product the
    relative form of 5.1.6 (eq. 12): u^2 = sg^2 + h (se^2 + sd^2).  At the default
    spreads (0.05) the two agree to better than 1 % of the variance: quadrature is
    enough there; with larger spreads the exact form is the one the draws follow."""
    comp, point = _draws(hand, gauge_catch_rel_sd=sg, depth_rel_sd=se, precip_conc_rel_sd=sd)
    for ion, c in (("SO4", SO4), ("NO3", NO3), ("NH4", NH4)):
        j = _j(hand, ion, "wet")
        for m in range(3):
            a = wet_parts(c)[MONTH == m]
            h = (a ** 2).sum() / a.sum() ** 2
            exact = (1 + sg ** 2) * (1 + h * ((1 + se ** 2) * (1 + sd ** 2) - 1)) - 1
            gum = sg ** 2 + h * (se ** 2 + sd ** 2)
            r = comp[:, m, j] / point[m, j]
            assert abs(r.mean() - 1) < 5 * r.std() / np.sqrt(N)
            _close_var(r, exact)
            if sg == se == sd == 0.05:
                assert abs(exact - gum) / exact < 0.01


def _sum_of_lognormals_quantile(a, b, s1, s2, rho, q):
    """q-quantile of a F1 + b F2, ln F_k = s_k (sqrt(rho) z0 + sqrt(1 - rho) z_k), by
    Gauss-Hermite quadrature over (z0, z1) of P(F2 < (t - a F1) / b | z0) (the
    documented model of the shared micrometeorology; numpy.polynomial.hermite_e,
    scipy.stats.norm, scipy.optimize.brentq).  Returns (t, density at t)."""
    x, w = np.polynomial.hermite_e.hermegauss(80)
    w = w / w.sum()
    z0, z1 = np.meshgrid(x, x, indexing="ij")
    wt = w[:, None] * w[None, :]
    f1 = np.exp(s1 * (np.sqrt(rho) * z0 + np.sqrt(1 - rho) * z1))
    mu2, sig2 = s2 * np.sqrt(rho) * z0, s2 * np.sqrt(1 - rho)

    def cdf(t):
        rest = (t - a * f1) / b
        with np.errstate(divide="ignore", invalid="ignore"):
            p = np.where(rest > 0, stats.norm.cdf((np.log(np.maximum(rest, 1e-300)) - mu2) / sig2),
                         0.0)
        return float((wt * p).sum())
    hi = (a + b) * 50
    t = optimize.brentq(lambda v: cdf(v) - q, 1e-12 * (a + b), hi, xtol=1e-14 * (a + b))
    dt = 1e-3 * t
    return t, (cdf(t + dt) - cdf(t - dt)) / (2 * dt)


def test_s_dry_is_a_sum_of_correlated_lognormals(hand):
    """S dry = SO2 F_SO2 + pSO4 F_pSO4 with the documented defaults (GSD 1.5 and 1.8,
    shared fraction 0.5): every quantile of the draws against the exact distribution
    of the sum, by quadrature (not a log-normal approximation of the sum)."""
    gsd = {"SO2": 1.5, "pSO4": 1.8}
    comp, point = _draws(hand, vd_gsd={**OFF["vd_gsd"], **gsd}, vd_shared_fraction=0.5)
    for m in range(3):
        a, b = point[m, _j(hand, "SO2", "dry")], point[m, _j(hand, "pSO4", "dry")]
        s = comp[:, m, _j(hand, "SO2", "dry")] + comp[:, m, _j(hand, "pSO4", "dry")]
        for q in (0.05, 0.25, 0.5, 0.75, 0.95):
            t, f = _sum_of_lognormals_quantile(a, b, np.log(gsd["SO2"]), np.log(gsd["pSO4"]),
                                               0.5, q)
            se = np.sqrt(q * (1 - q) / N) / f
            assert abs(np.quantile(s, q) - t) < 5 * se, (m, q, np.quantile(s, q), t, se)


def _wet_moments(a, bc, sg, se, sd):
    """Exact second moments of S = g sum eps a delta and N = g sum eps (b delta' + c
    delta'') over the point sums (moments of independent factors of mean 1; from
    memory): returns Var S, Var N, Cov(S, N) [same units squared as a, b, c]."""
    b, c = bc
    g2, e2, d2 = 1 + sg ** 2, 1 + se ** 2, 1 + sd ** 2
    sa, sn = a.sum(), (b + c).sum()
    es2 = g2 * (sa ** 2 + (a ** 2 * (e2 * d2 - 1)).sum())
    en2 = g2 * (sn ** 2 + (e2 * ((b ** 2 + c ** 2) * d2 + 2 * b * c) - (b + c) ** 2).sum())
    esn = g2 * (sa * sn + se ** 2 * (a * (b + c)).sum())
    return es2 - sa ** 2, en2 - sn ** 2, esn - sa * sn


def _dry_moments(parts_s, parts_n, gsd, rho, sd):
    """Exact Var S_dry, Var N_dry and their covariance: S = sum_k F_k R_k D_k over SO2
    and pSO4, N = F R D of HNO3; ln F_k = s_k (sqrt(rho) z0 + sqrt(1 - rho) z_k), so
    E[F_k F_l] = exp((s_k^2 + s_l^2 + 2 c_kl s_k s_l) / 2), c_kl = rho (k != l), 1
    (k = l); R_k the per-sample analytical errors, E[R_k^2] = 1 + sd^2 sum a^2 /
    (sum a)^2 (log-normal moments: textbook, from memory)."""
    s = {k: np.log(g) for k, g in gsd.items()}

    def ef(k, l):
        c = 1.0 if k == l else rho
        return np.exp((s[k] ** 2 + s[l] ** 2 + 2 * c * s[k] * s[l]) / 2)

    def er2(p):
        return 1 + sd ** 2 * (p ** 2).sum() / p.sum() ** 2
    d = {k: p.sum() for k, p in {**parts_s, **parts_n}.items()}
    r2 = {k: er2(p) for k, p in {**parts_s, **parts_n}.items()}
    mean_s = sum(d[k] * np.exp(s[k] ** 2 / 2) for k in parts_s)
    mean_n = sum(d[k] * np.exp(s[k] ** 2 / 2) for k in parts_n)
    es2 = sum(d[k] * d[l] * ef(k, l) * (r2[k] if k == l else 1.0)
              for k in parts_s for l in parts_s)
    en2 = sum(d[k] * d[l] * ef(k, l) * (r2[k] if k == l else 1.0)
              for k in parts_n for l in parts_n)
    esn = sum(d[k] * d[l] * ef(k, l) for k in parts_s for l in parts_n)
    return es2 - mean_s ** 2, en2 - mean_n ** 2, esn - mean_s * mean_n


def test_s_and_n_draws_share_the_documented_factors(hand):
    """Wet S and wet N share each sample's depth error and the site-year's gauge catch;
    dry S and dry N share the micrometeorology of the Vd (shared fraction rho); wet and
    dry are independent.  The correlation of the draws of S and N (wet, dry and total)
    against the exact one from the moments above."""
    sg, se, sd, sa, rho = 0.05, 0.15, 0.1, 0.05, 0.5
    gsd = {"SO2": 1.5, "pSO4": 1.8, "HNO3": 1.4}
    comp, point = _draws(hand, gauge_catch_rel_sd=sg, depth_rel_sd=se, precip_conc_rel_sd=sd,
                         air_rel_sd=sa, vd_gsd={**OFF["vd_gsd"], **gsd},
                         vd_shared_fraction=rho)
    for m in range(3):
        sel = MONTH == m
        vs, vn, cw = _wet_moments(wet_parts(SO4)[sel],
                                  (wet_parts(NO3)[sel], wet_parts(NH4)[sel]), sg, se, sd)
        ds, dn, cd = _dry_moments({k: dry_parts(k)[sel] for k in ("SO2", "pSO4")},
                                  {"HNO3": dry_parts("HNO3")[sel]}, gsd, rho, sa)
        s_wet = comp[:, m, _j(hand, "SO4", "wet")]
        n_wet = comp[:, m, _j(hand, "NO3", "wet")] + comp[:, m, _j(hand, "NH4", "wet")]
        s_dry = comp[:, m, _j(hand, "SO2", "dry")] + comp[:, m, _j(hand, "pSO4", "dry")]
        n_dry = comp[:, m, _j(hand, "HNO3", "dry")]
        _close_var(s_wet, vs)
        _close_var(n_wet, vn)
        _close_var(s_dry, ds)
        _close_var(n_dry, dn)
        _close_corr(s_wet, n_wet, cw / np.sqrt(vs * vn))
        _close_corr(s_dry, n_dry, cd / np.sqrt(ds * dn))
        _close_corr(s_wet + s_dry, n_wet + n_dry, (cw + cd) / np.sqrt((vs + ds) * (vn + dn)))
        _close_corr(s_wet, n_dry, 0.0)                      # wet and dry independent


def test_systematic_factors_drawn_each_year_are_shared_within_a_year_not_across(hand):
    """``systematic_errors = "each_year"`` (the old treatment, for comparison): the Vd
    factors and the gauge catch are drawn once per site and calendar year and act on
    every period of that year; different years are independent.  Here at the level of
    the monthly components: January and February 2021 move by the same ratio, draw for
    draw; December 2020 is uncorrelated with January 2021 (another year)."""
    comp, point = _draws(hand, vd_gsd={**OFF["vd_gsd"], "SO2": 1.6}, gauge_catch_rel_sd=0.1,
                         systematic_errors="each_year")
    for j in (_j(hand, "SO2", "dry"), _j(hand, "SO4", "wet"), _j(hand, "NO3", "wet")):
        r = comp[:, :, j] / point[:, j]
        np.testing.assert_allclose(r[:, 1], r[:, 2], rtol=1e-12)     # one year, one factor
        _close_corr(np.log(r[:, 0]), np.log(r[:, 1]), 0.0)           # two years
        assert r[:, 0].std() > 0.05                                  # and they are draws


def test_systematic_factors_are_shared_across_years(hand):
    """docs/methods_uncertainty.md, "Systematic or random" (default "shared"): a Vd
    scheme's bias and a gauge's catch are the same every year, so December 2020 moves
    by the same ratio as January and February 2021, draw for draw (correlation 1: the
    law of propagation with r = 1, JCGM 100:2008, 5.2.2; on the old code r was 0)."""
    comp, point = _draws(hand, vd_gsd={**OFF["vd_gsd"], "SO2": 1.6}, gauge_catch_rel_sd=0.1)
    for j in (_j(hand, "SO2", "dry"), _j(hand, "SO4", "wet"), _j(hand, "NO3", "wet")):
        r = comp[:, :, j] / point[:, j]
        np.testing.assert_allclose(r[:, 0], r[:, 1], rtol=1e-12)     # two years, one factor
        np.testing.assert_allclose(r[:, 1], r[:, 2], rtol=1e-12)
        assert r[:, 0].std() > 0.05                                  # and they are draws


def test_sites_draw_independent_errors_for_samples_of_the_same_identity(hand):
    """The two sites hold samples of the same sampler id ("") and start: a sample's
    identity leaves the site out and relies on the site's own key (noise.py).  Their
    per-sample errors (depth, analyses) and their gauge catch (each site its own gauge)
    must still be independent: correlation 0 within 5 / sqrt(n), point budgets equal.
    The Vd model factor is a scheme's bias, the same at both sites (docs, "Systematic
    or random"): with it alone the two sites' ratios are equal draw for draw."""
    kw = dict(depth_rel_sd=0.2, precip_conc_rel_sd=0.2, air_rel_sd=0.2,
              gauge_catch_rel_sd=0.1)
    a, pa = _draws(hand, 0, **kw)
    b, pb = _draws(hand, 1, **kw)
    np.testing.assert_allclose(pa, pb, rtol=1e-12)
    for sp, path in (("SO4", "wet"), ("NH4", "wet"), ("SO2", "dry"), ("HNO3", "dry")):
        j = _j(hand, sp, path)
        for m in range(3):
            _close_corr(a[:, m, j], b[:, m, j], 0.0)
    vd = dict(vd_gsd={**OFF["vd_gsd"], "HNO3": 1.5})
    (a, pa), (b, pb) = _draws(hand, 0, **vd), _draws(hand, 1, **vd)
    j = _j(hand, "HNO3", "dry")
    np.testing.assert_allclose(a[:, :, j] / pa[:, j], b[:, :, j] / pb[:, j], rtol=1e-12)
    assert (a[:, 0, j] / pa[0, j]).std() > 0.2


def test_units_of_the_sums_with_every_factor_off(hand):
    """Every factor off: the quantiles of the derived sums are the point sums, in the
    units their names say.  By hand: potential acidity = 2 S + N [eq/ha] (2 eq per mol
    of sulfate S, 1 per mol of nitrate or ammonium N; common practice) from the
    components [mol m-2] x 1e4 m2/ha; oxidized N = NO3 + HNO3 (+ pNO3, NO2, not
    measured here) and reduced N = NH4 (+ NH3, pNH4) [mol m-2]; summary.csv's
    ``potential_acidity_eq_ha`` is the budget's own (workbench.budget.derived)."""
    _, study, res = hand
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=5, **OFF)).budget
    dep = res.budget["deposition"].isel(receptor=0)
    names = [str(c) for c in dep["component"].values]

    def comp(sp, path):
        return dep.values[..., names.index(next(c for c in names if c.endswith(f"{path}/{sp}")))]
    s = comp("SO4", "wet") + comp("SO2", "dry") + comp("pSO4", "dry")
    ox = comp("NO3", "wet") + comp("HNO3", "dry")
    red = comp("NH4", "wet")
    acid = 1e4 * (2 * s + ox + red)
    for i in range(3):
        got = q["potential_acidity"].isel(quantile=i, receptor=0).values
        np.testing.assert_allclose(got, acid, rtol=1e-12)
        np.testing.assert_allclose(q["oxidized_N"].isel(quantile=i, receptor=0).values, ox,
                                   rtol=1e-12)
        np.testing.assert_allclose(q["reduced_N"].isel(quantile=i, receptor=0).values, red,
                                   rtol=1e-12)
    assert q["potential_acidity"].attrs["units"] == "eq ha-1"
    assert q["oxidized_N"].attrs["units"] == "mol m-2"
    np.testing.assert_allclose(res.derived["potential_acidity_eq_ha"].isel(receptor=0).values,
                               acid, rtol=1e-12)


def test_a_straddling_sample_shares_its_errors_between_its_periods(tmp_path):
    """docs/methods_uncertainty.md: a sample's depth error is "shared by the periods
    the sample straddles".  The eleventh sample moved to 29 January - 8 February (72 of
    its 240 hours in January, 168 in February, shared by hours: the default
    `straddle`): with the depth error alone, D_p = sum_i w_ip eps_i C_i, so January
    and February covary through that sample only, Cov(R_Jan, R_Feb) = se^2 a_Jan a_Feb
    / (sum_Jan sum_Feb) with a = w C its two pieces (moments of independent factors,
    from memory), the pieces 0.3 and 0.7 of the sample's P C (the shares by hours, by
    hand)."""
    from analysis.hand_site import BOUNDS, GAUGE, write_site
    bounds = BOUNDS.to_numpy().copy()
    bounds[9], bounds[10] = np.datetime64("2021-01-26"), np.datetime64("2021-01-29")
    hand = write_site(tmp_path / "straddle", pd.DatetimeIndex(bounds))
    se = 0.2
    comp, point = _draws(hand, depth_rel_sd=se)
    j = _j(hand, "NO3", "wet")
    a = GAUGE * NO3 * 1e-6                           # each sample's P C [mol m-2]
    jan = np.r_[a[5:10], 0.3 * a[10]]                # the pieces of January
    feb = np.r_[0.7 * a[10], a[11:]]                 # and of February
    np.testing.assert_allclose(point[1:, j], [jan.sum(), feb.sum()], rtol=1e-9)
    r_jan, r_feb = comp[:, 1, j] / point[1, j], comp[:, 2, j] / point[2, j]
    var_jan = se ** 2 * (jan ** 2).sum() / jan.sum() ** 2
    var_feb = se ** 2 * (feb ** 2).sum() / feb.sum() ** 2
    cov = se ** 2 * jan[-1] * feb[0] / (jan.sum() * feb.sum())
    _close_var(r_jan, var_jan)
    _close_var(r_feb, var_feb)
    _close_corr(r_jan, r_feb, cov / np.sqrt(var_jan * var_feb))
    assert cov / np.sqrt(var_jan * var_feb) > 0.15       # a correlation the test can see


def test_span_mean_of_years_with_independent_systematic_factors(tmp_path):
    """The span row is the mean of the years that pass; with ``systematic_errors =
    "each_year"`` (the old treatment, kept for comparison) each year draws its own Vd
    factor.  Through the public draws (annual_total_draws, eq/ha/yr)
    with the SO2 Vd factor alone (GSD g, s = ln g): Var(S_y) = D_y^2 (e^{2 s^2} -
    e^{s^2}) with D_y the year's dry SO2 in eq/ha/yr (2 eq per mol S, common practice),
    the two years uncorrelated, Var(span) = (Var_2020 + Var_2021) / 4 (log-normal
    moments, from memory), about half what full correlation between the years would
    give here."""
    from analysis.hand_site import write_two_years
    _, study, res = write_two_years(tmp_path / "years")
    g = 1.8
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=N, seed=5, **{
        **OFF, "vd_gsd": {**OFF["vd_gsd"], "SO2": g}, "systematic_errors": "each_year"}),
        years_only=True)
    d = q.total_draws["s_dep_eq_ha_yr"].sel(site="wren").isel(receptor=0)
    assert list(d["period"].values) == ["2020", "2021", "span"]
    names = [str(c) for c in res.years["component"].values]
    so2 = res.years["deposition"].sel(site="wren").isel(receptor=0).values[
        :, names.index("S/dry/SO2")] * 2 * 1e4 * res.years["annual_factor"].values
    s2 = np.log(g) ** 2
    var_y = so2 ** 2 * (np.exp(2 * s2) - np.exp(s2))
    y20, y21, span = (d.sel(period=p).values for p in ("2020", "2021", "span"))
    _close_var(y20, var_y[0])
    _close_var(y21, var_y[1])
    _close_corr(y20, y21, 0.0)
    np.testing.assert_allclose(span, (y20 + y21) / 2, rtol=1e-12)
    _close_var(span, var_y.sum() / 4)
    full = (so2.mean()) ** 2 * (np.exp(2 * s2) - np.exp(s2))       # fully correlated
    assert var_y.sum() / 4 < 0.6 * full


def test_span_mean_of_years_with_a_shared_systematic_factor(tmp_path):
    """The default ("shared"): the SO2 Vd factor is the same in both years, so the span
    is F x the mean of the years' points, draw for draw, and Var(span) is that of full
    correlation, (mean D)^2 (e^{2 s^2} - e^{s^2}) (log-normal moments, from memory;
    JCGM 100:2008 5.2.2 with r = 1).  On the old code it was about half of that."""
    from analysis.hand_site import write_two_years
    _, study, res = write_two_years(tmp_path / "years")
    g = 1.8
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=N, seed=5, **{
        **OFF, "vd_gsd": {**OFF["vd_gsd"], "SO2": g}}), years_only=True)
    d = q.total_draws["s_dep_eq_ha_yr"].sel(site="wren").isel(receptor=0)
    names = [str(c) for c in res.years["component"].values]
    so2 = res.years["deposition"].sel(site="wren").isel(receptor=0).values[
        :, names.index("S/dry/SO2")] * 2 * 1e4 * res.years["annual_factor"].values
    other = res.years["total_deposition"].sel(site="wren", total="S_total").isel(
        receptor=0).values * 2 * 1e4 * res.years["annual_factor"].values - so2
    s2 = np.log(g) ** 2
    y20, y21, span = (d.sel(period=p).values for p in ("2020", "2021", "span"))
    f20, f21 = (y20 - other[0]) / so2[0], (y21 - other[1]) / so2[1]
    np.testing.assert_allclose(f20, f21, rtol=1e-9)
    _close_var(span, so2.mean() ** 2 * (np.exp(2 * s2) - np.exp(s2)))


def test_gap_filled_vd_error_acts_on_the_filled_hours_only(tmp_path):
    """docs/methods_uncertainty.md, "gap-filled Vd eta": a normal error of SD
    `vd_fill_rel_sd` on the share phi of a sampling period's hours whose Vd is not
    modelled.  HNO3's Vd modelled by the engine, the same met every day (its Vd a
    function of the hour of day alone, so whole days of a sample deposit in
    proportion to C t, by hand), two whole days of met left out of the 7th sample
    (January: phi = 48/168) and one of the 11th (February: phi = 24/168): with the fill
    error alone, D_p / D_p0 - 1 = a_n phi_n eta_n / sum a (one filled sample per
    month), Var = s^2 (a_n phi_n / sum a)^2 (moments of a normal, from memory);
    December, without filled hours, does not move."""
    from analysis.hand_site import write_site
    hand = write_site(tmp_path / "gaps", fixed={"SO2": 0.7, "pSO4": 0.15},
                      met_gaps=[("2021-01-10T01:00", "2021-01-12T01:00"),
                                ("2021-02-02T01:00", "2021-02-03T01:00")])
    s = 0.3
    comp, point = _draws(hand, vd_fill_rel_sd=s)
    j = _j(hand, "HNO3", "dry")
    a = dry_parts("HNO3")                      # C t (x a Vd common to the days) by hand
    r = comp[:, :, j] / point[:, j]
    np.testing.assert_array_equal(r[:, 0], 1.0)                 # December: nothing filled
    for m, n, phi in ((1, 6, 48 / 168), (2, 10, 24 / 168)):
        share = a[n] * phi / a[MONTH == m].sum()
        assert abs(r[:, m].mean() - 1) < 5 * r[:, m].std() / np.sqrt(N)
        _close_var(r[:, m], (s * share) ** 2)
    # the other dry species (fixed Vd) take no fill error
    np.testing.assert_array_equal(comp[:, :, _j(hand, "SO2", "dry")],
                                  np.broadcast_to(point[:, _j(hand, "SO2", "dry")], (N, 3)))


def test_gap_filled_vd_error_weighs_the_deposition_the_filled_hours_carry(tmp_path):
    """docs/methods_uncertainty.md, "gap-filled Vd eta": the fill error acts on the
    share of the sampling period's deposition that its filled hours carry, not on their
    share of its hours.  HNO3's Vd modelled, the same met every day (a sun from 08 to
    16 h), so its Vd is a daily cycle v(h) of the hour alone and a filled hour takes
    the mean cycle at its hour.  Eight day hours of two days left out of the 7th sample
    (January) and seven night hours of one day out of the 11th (February).  By hand:
    v(h) the mean of the modelled hours at each hour of day (velocities.nc's vd_HNO3,
    the engine's output, not the module under test), phi = sum over the gap hours of
    v(h) / sum over the sample's hours of v(h); with the fill error alone D_p/D_p0 - 1 =
    a_n phi_n eta_n / sum a, Var = s^2 (a_n phi_n / sum a)^2 (moments of a normal, from
    memory).  A day gap weighs more than its hours (Vd higher by day), a night gap
    less; the old code gave both their share of hours."""
    from analysis.hand_site import BOUNDS, write_site
    gaps = [("2021-01-10T09:00", "2021-01-10T17:00"), ("2021-01-12T09:00", "2021-01-12T17:00"),
            ("2021-02-03T00:00", "2021-02-03T07:00")]
    hand = write_site(tmp_path / "daygaps", fixed={"SO2": 0.7, "pSO4": 0.15}, met_gaps=gaps)
    sc, study, res = hand
    vd = study.velocities(sc.options["dry"])["vd_HNO3"].sel(site="wren").isel(receptor=0)
    when = pd.DatetimeIndex(vd["time"].values)
    v = vd.values
    cycle = pd.Series(v).groupby(when.hour).mean()       # NaN (missing met) left out
    assert cycle.max() > 1.2 * cycle.min()                # a real day-night contrast
    s = 0.3
    comp, point = _draws(hand, vd_fill_rel_sd=s)
    j = _j(hand, "HNO3", "dry")
    a = dry_parts("HNO3")                      # C t (x the daily Vd sum, common) by hand
    r = comp[:, :, j] / point[:, j]
    np.testing.assert_array_equal(r[:, 0], 1.0)                 # December: nothing filled
    for m, n, n_gap in ((1, 6, 16), (2, 10, 7)):
        inside = (when > BOUNDS[n]) & (when <= BOUNDS[n + 1])   # end-of-hour labels
        gap = inside & ~np.isfinite(v)
        assert gap.sum() == n_gap
        phi = cycle[when.hour[gap]].sum() / cycle[when.hour[inside]].sum()
        hours = n_gap / inside.sum()
        assert abs(phi / hours - 1) > 0.15                   # the two rules differ here
        share = a[n] * phi / a[MONTH == m].sum()
        _close_var(r[:, m], (s * share) ** 2)


def test_a_pwm_filled_from_the_seasonal_mean_gets_its_own_error(tmp_path):
    """docs/methods_uncertainty.md, "PWM filled from the seasonal climatology": normal,
    mean 1, SD `pwm_fill_rel_sd`, random per period and ion, replacing the sample
    errors of that PWM.  Two invented years in months, March 2021's samples without
    chemistry (the period fails and `period_fill = "seasonal"` fills its PWM): with the
    fill error alone (0.3), March's wet SO4, NO3 and NH4 move by factors of SD 0.3 each
    (a normal cut at 0 below z = -3.3: its variance within 0.2 % of 0.09; scipy.stats
    .truncnorm is not needed at that depth, from memory), uncorrelated among the ions
    (docs: "period and ion (random)"), the other months not at all."""
    from analysis.hand_site import write_two_years
    sc, study, res = write_two_years(tmp_path / "fill", "month", ("2021-03-01", "2021-03-29"),
                                     "seasonal")
    s = 0.3
    comp, point = _draws((sc, study, res), pwm_fill_rel_sd=s)
    periods = [str(p) for p in res.budget["period"].values]
    m = periods.index("2021-03")
    ratios = []
    for ion in ("SO4", "NO3", "NH4"):
        j = _j((sc, study, res), ion, "wet")
        r = comp[:, :, j] / point[:, j]
        others = np.delete(r, m, axis=1)
        np.testing.assert_array_equal(others[np.isfinite(others)], 1.0)
        assert abs(r[:, m].mean() - 1) < 5 * s / np.sqrt(N)
        _close_var(r[:, m], s ** 2)
        ratios.append(r[:, m])
    for a, b in ((0, 1), (0, 2), (1, 2)):
        _close_corr(ratios[a], ratios[b], 0.0)
