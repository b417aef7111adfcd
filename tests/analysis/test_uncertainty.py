"""Monte Carlo of the budget on its linear layer.

A tiny invented site with fixed deposition velocities, so that every component is a
sum of per-sample products that arithmetic can follow: dry = sum_n C_n Vd t_n, wet =
sum_i C_i P_i (all samples valid).  The reference distribution of the log-normal
factor is scipy.stats.lognorm (scipy, a general-purpose reference library); the
Monte Carlo error of a sample quantile is the textbook sqrt(q (1 - q) / n) / f(x_q)
and of a sample variance sqrt(2 / (n - 1)) (common practice).
"""
import dataclasses
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
import xarray as xr
from scipy import stats

from analysis.tiny_site import GAUGE, HNO3, OFF, PSO4, SO2, SO4, VD
from workbench.analysis import uncertainty as U


def _draws(tiny, n=4000, seed=3, **opts):
    _, _, res, lay = tiny
    opt = U.UncertaintyOptions(draws=n, seed=seed, **{**OFF, **opts})
    noise = U.site_noise(lay.sites[0], opt, n, 1, 1, (seed, "quill"), int(lay.period_year.min()))
    comp = U.component_draws(lay, 0, noise, int(lay.period_year.min()))
    return comp[:, 0, 0, :], U.totals_of(comp[:, 0, 0, :]), res.budget["deposition"].values[0, 0, 0]


def _j(species, path):
    return next(j for j, c in enumerate(U.COMPONENTS) if c[2] == species and c[1] == path)


def test_every_factor_off_gives_the_point_value(tiny):
    _, study, res, lay = tiny
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=30, **OFF))
    point = res.budget["deposition"].values
    for i in range(3):
        np.testing.assert_array_equal(q.budget["deposition"].values[i], point)
        np.testing.assert_array_equal(q.budget["total_deposition"].values[i],
                                      res.budget["total_deposition"].values)


def test_lognormal_vd_factor_gives_analytic_quantiles(tiny):
    gsd, n = 1.6, 4000
    comp, _, point = _draws(tiny, n, vd_gsd={**OFF["vd_gsd"], "SO2": gsd})
    j = _j("SO2", "dry")
    so2 = comp[:, j]
    for q in U.QUANTILES:
        ref = stats.lognorm.ppf(q, s=np.log(gsd), scale=point[j])    # scipy reference
        # Monte Carlo error of the sample quantile in log space, 4 standard errors
        se = np.sqrt(q * (1 - q) / n) / stats.norm.pdf(stats.norm.ppf(q)) * np.log(gsd)
        assert abs(np.log(np.quantile(so2, q) / ref)) < 4 * se
    # the other components keep their point values exactly
    others = [k for k in range(len(point)) if k != j and np.isfinite(point[k])]
    np.testing.assert_array_equal(comp[:, others], np.broadcast_to(point[others], (n, len(others))))


def test_per_sample_errors_add_variances_per_sample(tiny):
    sd, n = 0.1, 6000
    comp, tot, point = _draws(tiny, n, air_rel_sd=sd, precip_conc_rel_sd=sd)
    week_s = 7 * 86400
    tol = 4 * np.sqrt(2 / (n - 1))                  # sample-variance error, 4 standard errors
    # dry: each week's C Vd t gets its own error -> Var = sd^2 sum_n (C_n Vd t)^2
    for sp, conc, mass in (("SO2", SO2, 64.058), ("pSO4", PSO4, 96.06), ("HNO3", HNO3, 63.012)):
        parts = np.array(conc) * 1e-6 / mass * VD[sp] / 100 * week_s       # mol m-2 per week
        # molar masses to 5 digits here (IUPAC atomic weights, from memory)
        assert parts.sum() == pytest.approx(point[_j(sp, "dry")], rel=2e-4)
        want = sd ** 2 * (parts ** 2).sum()
        assert comp[:, _j(sp, "dry")].var(ddof=1) == pytest.approx(want, rel=tol)
        # (an error applied to the period total would give sd^2 (sum parts)^2, much larger)
        assert want < 0.5 * sd ** 2 * parts.sum() ** 2
    # wet: all samples valid, D = sum_i C_i P_i -> Var = sd^2 sum_i (C_i P_i)^2
    parts = np.array(SO4) * np.array(GAUGE) * 1e-6
    assert comp[:, _j("SO4", "wet")].var(ddof=1) == pytest.approx(
        sd ** 2 * (parts ** 2).sum(), rel=tol)
    # independent components: the variance of a total is the sum of theirs
    var_parts = comp[:, _j("SO2", "dry")].var(ddof=1) + comp[:, _j("pSO4", "dry")].var(ddof=1)
    assert tot["S_dry"].var(ddof=1) == pytest.approx(var_parts, rel=tol)
    assert tot["S_total"].var(ddof=1) == pytest.approx(
        tot["S_dry"].var(ddof=1) + tot["S_wet"].var(ddof=1), rel=tol)


def test_vd_factors_share_the_micrometeorology(tiny):
    n, rho = 6000, 0.5
    comp, _, point = _draws(tiny, n, vd_gsd={**OFF["vd_gsd"], "SO2": 1.5, "HNO3": 2.0},
                            vd_shared_fraction=rho)
    a = np.log(comp[:, _j("SO2", "dry")] / point[_j("SO2", "dry")])
    b = np.log(comp[:, _j("HNO3", "dry")] / point[_j("HNO3", "dry")])
    assert a.std() == pytest.approx(np.log(1.5), rel=0.05)
    # correlation of the log factors = the shared share of their log-variance;
    # the sample correlation's error is about (1 - rho^2) / sqrt(n) (common practice)
    assert np.corrcoef(a, b)[0, 1] == pytest.approx(rho, abs=4 * (1 - rho ** 2) / np.sqrt(n))


def test_gauge_catch_scales_the_wet_components_together(tiny):
    comp, _, point = _draws(tiny, 500, gauge_catch_rel_sd=0.1)
    r = comp[:, [_j("SO4", "wet"), _j("NO3", "wet"), _j("NH4", "wet")]] / point[[
        _j("SO4", "wet"), _j("NO3", "wet"), _j("NH4", "wet")]]
    np.testing.assert_allclose(r, r[:, :1] * np.ones((1, 3)), rtol=1e-12)   # systematic
    assert r.std() == pytest.approx(0.1, rel=0.25)


def test_same_seed_same_numbers(tiny):
    _, study, res, _ = tiny
    opt = U.UncertaintyOptions(draws=300, seed=11)
    a, b = U.monte_carlo(res, study, opt), U.monte_carlo(res, study, opt)
    xr.testing.assert_identical(a.budget, b.budget)
    xr.testing.assert_identical(a.span, b.span)
    c = U.monte_carlo(res, study, dataclasses.replace(opt, seed=12))
    assert not np.allclose(a.budget["total_deposition"].values, c.budget["total_deposition"].values,
                           equal_nan=True)


def test_options_are_checked():
    with pytest.raises(ValueError, match="vd_gsd"):
        U.UncertaintyOptions(vd_gsd={"SO2": 0.5})
    with pytest.raises(ValueError, match="unknown species"):
        U.UncertaintyOptions(vd_gsd={"XY": 1.5})
    with pytest.raises(ValueError, match="air_rel_sd"):
        U.UncertaintyOptions(air_rel_sd=-0.1)
    with pytest.raises(ValueError, match="seed"):
        U.UncertaintyOptions(seed=-1)
    assert U.UncertaintyOptions(draws=10.0).draws == 10 and isinstance(
        U.UncertaintyOptions(draws=10.0).draws, int)
    opt = U.UncertaintyOptions.from_dict({"draws": 10, "vd_gsd": {"NH3": 3.0}})
    assert opt.gsd("NH3") == 3.0 and opt.gsd("SO2") == U.DEFAULT_VD_GSD["SO2"]


def test_run_folder_carries_the_quantiles(tiny, tmp_path):
    from workbench.cli import run_scenario
    sc, _, _, _ = tiny
    written, result, _ = run_scenario(sc.path, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    for col in ("flux_kg_ha", "flux_eq_ha", "flux_kg_ha_yr", "flux_eq_ha_yr"):
        for suffix in U.SUFFIXES:
            assert col + suffix in table
    tot = table[(table["species"] == "all") & (table["pathway"] == "total")]
    assert (tot["flux_kg_ha_p05"] <= tot["flux_kg_ha_p50"]).all()
    assert (tot["flux_kg_ha_p50"] <= tot["flux_kg_ha_p95"]).all()
    assert (tot["flux_kg_ha_p05"] < tot["flux_kg_ha"]).all()
    assert (tot["flux_kg_ha"] < tot["flux_kg_ha_p95"]).all()
    summary = pd.read_csv(written["summary.csv"])
    for name in U.TOTALS:
        assert f"{name}_kg_ha_p95" in summary
    assert "potential_acidity_eq_ha_p05" in summary
    with xr.open_dataset(written["budget.nc"], engine="scipy") as nc:
        assert nc["total_deposition_quantiles"].dims[0] == "quantile"
        assert list(nc["quantile"].values) == list(U.QUANTILES)
    assert "5-95 % range of every total" in written["report.html"].read_text()


def test_scenario_section_is_checked(tiny, tmp_path):
    from workbench.errors import ScenarioError
    from workbench.scenario import load_scenario
    sc, _, _, _ = tiny
    text = sc.path.read_text()
    for bad, where in (("drawz = 5", "uncertainty.drawz"),
                       ("[uncertainty.vd_gsd]\nSO2 = 0.5", "uncertainty.vd_gsd")):
        p = sc.path.parent / "bad.toml"
        p.write_text(text.replace("[uncertainty]\ndraws = 200\nseed = 7",
                                  f"[uncertainty]\ndraws = 200\n{bad}"))
        with pytest.raises(ScenarioError, match=where.replace(".", r"\.")):
            load_scenario(p)
    good = load_scenario(sc.path)
    assert good.options["uncertainty"].draws == 200 and good.options["uncertainty"].seed == 7
    assert good.options["sensitivity"].factors["wetness_rule"] == ("met", "always_wet")


def test_site_explorer_shows_the_range_and_follows_an_assumption(tiny):
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.session import Session
    sc, _, _, _ = tiny
    app = SiteExplorer(Session.open(sc.path))

    def total_trace():
        """The totals of S and N as one (a trace in each element's panel)."""
        s, n = [t for t in app.figs["budget"].data if (t.name or "").startswith("total")]
        assert s.name == n.name
        err = {k: list(s.error_y[k]) + list(n.error_y[k]) for k in ("array", "arrayminus")}
        return SimpleNamespace(name=s.name, y=list(s.y) + list(n.y),
                               error_y=SimpleNamespace(**err))
    t = total_trace()
    # N lacks pNO3, pNH4, NH3 and NO2 at the tiny site: its range is that of the measured
    # part, whose 95 % is no upper bound, so its bar has the lower arm only (both arms
    # before, a range that looked complete)
    assert t.name == "total (5-95 % range; partial: 5 % only)"
    up, down = np.array(t.error_y.array, float), np.array(t.error_y.arrayminus, float)
    y = np.array(t.y, float)
    assert up[0] > 0 and (down > 0).all() and np.isnan(up[1])
    app.controls["fixed_velocity.SO2"].value = 2 * VD["SO2"]    # more dry S: a wider range
    t2 = total_trace()
    assert t2.y[0] > y[0] and t2.error_y.array[0] > up[0]      # S: moved with the change
    assert t2.y[1] == y[1] and t2.error_y.arrayminus[1] == down[1]   # N: as it was
    assert t2.error_y.array[1] is None
