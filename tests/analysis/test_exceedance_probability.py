"""Probability of exceedance of critical loads from the Monte Carlo draws of the budget.

A copy of the tiny invented site of tiny_site.py with invented critical loads.  The
reference for a single log-normal Vd factor is scipy.stats.lognorm (scipy, a
general-purpose reference library): with S deposition from dry SO2 only and N below
CLminN, a draw exceeds the acidity function exactly when S > CLmaxS (region 1 of the
function), so p = P(F S_point > CLmaxS) = lognorm.sf(CLmaxS, s=ln GSD, scale=S_point).
The Monte Carlo error of a share is the textbook sqrt(p (1 - p) / n) (common practice).
"""
import types
import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from analysis.tiny_site import OFF, make_tiny
from workbench.analysis import uncertainty as U
from workbench.analysis.exceedance import exceedance_table

LOADS = """
[site.critical_loads]
cl_max_s = {cs}
cl_min_n = {c0}
cl_max_n = {c1}
cl_nut_n = {cn}
"""


def _tiny(d, dry_so2_only=False):
    """The tiny site in `d`; with `dry_so2_only`, no sulfate in rain nor in particles."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sc, study, res, _ = make_tiny(d)
    if dry_so2_only:
        p = pd.read_csv(d / "precip.csv")
        p["SO4 [umol/L]"] = 0.0
        p.to_csv(d / "precip.csv", index=False)
        lines = (d / "air.csv").read_text().splitlines()
        a = pd.read_csv(d / "air.csv", comment="#")
        a["pSO4 [ug/m3]"] = 0.0
        (d / "air.csv").write_text(lines[0] + "\n" + a.to_csv(index=False))
    return d


def _run(d, loads, opt):
    """exceedance.csv rows of the tiny site in `d` with `loads` [eq/ha/yr] and `opt`."""
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    text = (d / "sites.toml").read_text().split("\n[site.critical_loads]")[0]
    (d / "sites.toml").write_text(text + LOADS.format(**loads))
    sc = load_scenario(d / "scenario.toml")
    study = Study.from_scenario(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                        sc.fixed_velocity, "month", "2021-02-01", "2021-03-01")
        res = U.with_uncertainty(res, study, types.SimpleNamespace(options={"uncertainty": opt}))
    return exceedance_table(res, study.catalogue())


@pytest.fixture(scope="module")
def tiny_dir(tmp_path_factory):
    return _tiny(tmp_path_factory.mktemp("pex"))


@pytest.fixture(scope="module")
def so2_dir(tmp_path_factory):
    return _tiny(tmp_path_factory.mktemp("pex_so2"), dry_so2_only=True)


@pytest.mark.parametrize("cs,cn", [(100.0, 200.0), (500.0, 50.0)])
def test_every_factor_off_gives_p_0_or_1_as_the_point(tiny_dir, cs, cn):
    # the tiny site's 2021 totals are about S 154 and N 81 eq/ha/yr (its point values)
    t = _run(tiny_dir, dict(cs=cs, c0=50.0, c1=300.0, cn=cn),
             U.UncertaintyOptions(draws=40, seed=1, **OFF))
    assert len(t) == 1
    r = t.iloc[0]
    # (a 0 on the tiny site's partial totals is not determined: NaN in both)
    for p, ex in (("p_exceed_acidity", "ex_acidity_eq_ha_yr"),
                  ("p_exceed_nutrient_n", "ex_nutrient_n_eq_ha_yr")):
        assert r[p] == pytest.approx(np.nan if np.isnan(r[ex]) else float(r[ex] > 0),
                                     nan_ok=True)
    for suffix in ("_p05", "_p50", "_p95"):
        assert r["ex_acidity_eq_ha_yr" + suffix] == pytest.approx(r["ex_acidity_eq_ha_yr"],
                                                                  rel=1e-9, abs=1e-9, nan_ok=True)
        assert r["s_dep_eq_ha_yr" + suffix] == pytest.approx(r["s_dep_eq_ha_yr"], rel=1e-9)


def test_table_without_draws_has_no_probability(tiny_dir):
    t = _run(tiny_dir, dict(cs=100.0, c0=50.0, c1=300.0, cn=200.0), U.UncertaintyOptions())
    assert "p_exceed_acidity" not in t and len(t) == 1


@pytest.mark.parametrize("ratio", [0.8, 1.3])
def test_lognormal_vd_gives_the_analytic_probability(so2_dir, ratio):
    n, gsd = 4000, 1.5
    opt = U.UncertaintyOptions(draws=n, seed=11, **{**OFF, "vd_gsd": {**OFF["vd_gsd"], "SO2": gsd}})
    first = _run(so2_dir, dict(cs=1.0, c0=1e4, c1=2e4, cn=2e4), opt).iloc[0]
    s_point, n_point = first["s_dep_eq_ha_yr"], first["n_dep_eq_ha_yr"]
    assert s_point > 0 and n_point < 1e4
    assert first["s_dep_eq_ha_yr_p05"] < s_point < first["s_dep_eq_ha_yr_p95"]
    assert first["n_dep_eq_ha_yr_p05"] == pytest.approx(n_point, rel=1e-9)   # N has no spread
    cs = ratio * s_point
    r = _run(so2_dir, dict(cs=cs, c0=1e4, c1=2e4, cn=2e4), opt).iloc[0]
    ref = stats.lognorm.sf(cs, s=np.log(gsd), scale=s_point)       # scipy reference
    assert abs(r["p_exceed_acidity"] - ref) < 4 * np.sqrt(ref * (1 - ref) / n)
    # no draw exceeds CLnutN: p = 0, unless the N total is partial (a component not
    # measured), where 0 is not determined (NaN; test_exceedance_corners.py)
    partial = "deposition partial" in r["note"] or "partial deposition" in r["note"]
    assert r["p_exceed_nutrient_n"] == pytest.approx(np.nan if partial else 0.0, nan_ok=True)
    # the median exceedance: max(median S - CLmaxS, 0) (a monotone map of one draw)
    ex50 = max(r["s_dep_eq_ha_yr_p50"] - cs, 0.0)
    assert r["ex_acidity_eq_ha_yr_p50"] == pytest.approx(
        np.nan if partial and ex50 == 0 else ex50, abs=1e-6, nan_ok=True)


def test_same_seed_same_numbers(tiny_dir):
    loads = dict(cs=150.0, c0=50.0, c1=300.0, cn=80.0)
    a = _run(tiny_dir, loads, U.UncertaintyOptions(draws=300, seed=5))
    b = _run(tiny_dir, loads, U.UncertaintyOptions(draws=300, seed=5))
    c = _run(tiny_dir, loads, U.UncertaintyOptions(draws=300, seed=6))
    cols = [k for k in a if k.startswith("p_exceed") or k.endswith(("_p05", "_p50", "_p95"))]
    pd.testing.assert_frame_equal(a[cols], b[cols])
    assert 0 < a["p_exceed_acidity"].iloc[0] < 1
    assert not a[cols].equals(c[cols])


def test_run_folder_exceedance_carries_the_probability(tiny_dir, tmp_path):
    from workbench.cli import run_scenario
    _run(tiny_dir, dict(cs=150.0, c0=50.0, c1=300.0, cn=80.0), U.UncertaintyOptions())
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        written, _, _ = run_scenario(tiny_dir / "scenario.toml", tmp_path / "out", quiet=True)
    t = pd.read_csv(written["exceedance.csv"])
    for col in ("p_exceed_acidity", "p_exceed_nutrient_n", "ex_acidity_eq_ha_yr_p05",
                "ex_acidity_eq_ha_yr_p50", "ex_acidity_eq_ha_yr_p95"):
        assert col in t
    assert t["p_exceed_acidity"].between(0, 1).all()
    ok = t["ex_acidity_eq_ha_yr_p05"].notna()        # NaN: a 0 on a partial deposition
    assert (t.loc[ok, "ex_acidity_eq_ha_yr_p05"] <= t.loc[ok, "ex_acidity_eq_ha_yr_p95"]).all()
    assert t.loc[~ok, "note"].str.contains("partial").all()
