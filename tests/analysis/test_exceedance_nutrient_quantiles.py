"""The 5/50/95 % quantiles of the nutrient-N exceedance in exceedance.csv, from the
same Monte Carlo draws as its probability (it had ``p_exceed_nutrient_n`` and no
quantiles, while the acidity exceedance had both).

Checked by hand: the exceedance of a draw is max(N - CLnutN, 0) (ICP Modelling and
Mapping Manual, exceedance of the critical load of nutrient nitrogen), computed here
in the test from the draws themselves, and its quantiles with numpy's default
(linear) definition, as the module's other quantile columns.
"""
import sys
import types
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

sys.path.insert(0, str(Path(__file__).parent))

from workbench.analysis.exceedance import exceedance_probability  # noqa: E402

Q = (0.05, 0.5, 0.95)


def _draws(n_draws):
    """Invented draws of S and N [eq/ha/yr] at one site and receptor, two periods."""
    rng = np.random.default_rng(7)
    n = np.stack([rng.normal(800.0, 150.0, n_draws), rng.normal(500.0, 40.0, n_draws)], -1)
    s = rng.normal(300.0, 30.0, (n_draws, 2))
    dims = ("draw", "site", "receptor", "period")
    return xr.Dataset(
        {"s_dep_eq_ha_yr": (dims, s[:, None, None, :]),
         "n_dep_eq_ha_yr": (dims, n[:, None, None, :])},
        coords={"draw": np.arange(n_draws), "site": ["moss"], "receptor": ["heath"],
                "period": ["2020", "span"]})


def _table(cl_nut_n):
    return pd.DataFrame({"site": ["moss", "moss"], "receptor": ["heath", "heath"],
                         "period": ["2020", "span"],
                         "cl_max_s_eq_ha_yr": [1000.0, 1000.0],
                         "cl_min_n_eq_ha_yr": [300.0, 300.0],
                         "cl_max_n_eq_ha_yr": [2000.0, 2000.0],
                         "cl_nut_n_eq_ha_yr": [cl_nut_n, cl_nut_n]})


@pytest.mark.parametrize("cl_nut_n", [700.0, 450.0])
def test_nutrient_quantiles_are_those_of_n_minus_the_load(cl_nut_n):
    d = _draws(501)
    p = exceedance_probability(_table(cl_nut_n), d)
    n = d["n_dep_eq_ha_yr"].values[:, 0, 0, :]                    # (draws, periods)
    by_hand = np.maximum(n - cl_nut_n, 0.0)                        # each draw's exceedance
    want = np.quantile(by_hand, Q, axis=0)
    for qi, suffix in enumerate(("_p05", "_p50", "_p95")):
        np.testing.assert_allclose(p["ex_nutrient_n_eq_ha_yr" + suffix], want[qi], rtol=1e-12)
    # the probability from the same draws: the share above the load
    np.testing.assert_allclose(p["p_exceed_nutrient_n"], (n > cl_nut_n).mean(0), rtol=1e-12)
    # at CLnutN = 700 the first period's 5 % (N about 800 - 1.645 x 150) lies at 0
    # and its 95 % well above: a band that straddles the load
    if cl_nut_n == 700.0:
        assert p["ex_nutrient_n_eq_ha_yr_p05"].iloc[0] == 0.0
        assert p["ex_nutrient_n_eq_ha_yr_p95"].iloc[0] > 300.0


def test_a_zero_on_a_partial_deposition_is_not_determined():
    d = _draws(201)
    p = exceedance_probability(_table(5000.0), d, lower_bound=[True, False])
    # no draw exceeds 5000: 0 on the partial row is not determined, 0 on the other kept
    for suffix in ("_p05", "_p50", "_p95"):
        assert np.isnan(p["ex_nutrient_n_eq_ha_yr" + suffix].iloc[0])
        assert p["ex_nutrient_n_eq_ha_yr" + suffix].iloc[1] == 0.0


def test_a_partial_s_total_leaves_the_nutrient_quantiles_determined():
    """ExnutN rests on the N total alone (ICP Modelling and Mapping Manual): where only
    the S total is partial (`lower_bound` True, `lower_bound_n` False) a 0 of the
    nutrient-N quantiles is a determined 0, as its probability and point value; the
    acidity exceedance, resting on both, stays undetermined at 0."""
    d = _draws(201)
    t = _table(5000.0)
    t["cl_max_s_eq_ha_yr"] = 1.0e6                                 # no acidity exceedance
    t["cl_max_n_eq_ha_yr"] = 1.0e6
    p = exceedance_probability(t, d, lower_bound=[True, True], lower_bound_n=[False, False])
    for suffix in ("_p05", "_p50", "_p95"):
        assert (p["ex_nutrient_n_eq_ha_yr" + suffix] == 0.0).all()
        assert p["ex_acidity_eq_ha_yr" + suffix].isna().all()
    assert (p["p_exceed_nutrient_n"] == 0.0).all()


def test_a_run_with_draws_writes_them(tmp_path):
    """exceedance_table of the tiny invented site with draws: the nutrient-N quantiles
    equal those of its own annual N draws less CLnutN (by hand)."""
    from tiny_site import make_tiny

    from workbench.analysis import uncertainty as U
    from workbench.analysis.exceedance import exceedance_table
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        make_tiny(tmp_path)
    cl = 60.0                           # the tiny site's N total is about 81 eq/ha/yr
    text = (tmp_path / "sites.toml").read_text().split("\n[site.critical_loads]")[0]
    (tmp_path / "sites.toml").write_text(
        text + f"\n[site.critical_loads]\ncl_max_s = 500.0\ncl_min_n = 50.0\n"
               f"cl_max_n = 900.0\ncl_nut_n = {cl}\n")
    sc = load_scenario(tmp_path / "scenario.toml")
    study = Study.from_scenario(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                        sc.fixed_velocity, "month", "2021-02-01", "2021-03-01")
        res = U.with_uncertainty(res, study, types.SimpleNamespace(
            options={"uncertainty": U.UncertaintyOptions(draws=400, seed=3)}))
    t = exceedance_table(res, study.catalogue())
    draws = U.annual_total_draws(res)
    for _, row in t.iterrows():
        n = draws["n_dep_eq_ha_yr"].sel(site=row["site"], receptor=row["receptor"],
                                        period=row["period"]).values
        want = np.quantile(np.maximum(n - cl, 0.0), Q)
        got = [row["ex_nutrient_n_eq_ha_yr" + s] for s in ("_p05", "_p50", "_p95")]
        if "partial" in row["note"]:                # a 0 there is not determined
            want = np.where(want == 0, np.nan, want)
        np.testing.assert_allclose(got, want, rtol=1e-9)
        assert np.isfinite(got).any()


def test_the_report_table_shows_both_ranges():
    """report.html's exceedance table carries, with draws, the probability and the 5 %
    and 95 % of both exceedances (it showed neither), and a line on what they hold."""
    from workbench.column_labels import COLUMN_LABELS
    from workbench.report import _exceedance_html
    row = {"site": "moss", "receptor": "heath", "period": "span", "s_dep_eq_ha_yr": 300.0,
           "n_dep_eq_ha_yr": 800.0, "ex_acidity_eq_ha_yr": 0.0, "region": 0,
           "ex_nutrient_n_eq_ha_yr": 100.0, "status": "complete", "note": "",
           "p_exceed_acidity": 0.0, "ex_acidity_eq_ha_yr_p05": 0.0,
           "ex_acidity_eq_ha_yr_p95": 0.0, "p_exceed_nutrient_n": 0.75,
           "ex_nutrient_n_eq_ha_yr_p05": 11.5, "ex_nutrient_n_eq_ha_yr_p95": 346.5}
    page = "".join(_exceedance_html(None, None, ex=pd.DataFrame([row])))
    for name in ("p_exceed_nutrient_n", "ex_nutrient_n_eq_ha_yr_p05",
                 "ex_nutrient_n_eq_ha_yr_p95", "p_exceed_acidity"):
        # headed in words (workbench.column_labels), its CSV name kept
        head = COLUMN_LABELS[name]
        assert f"<th title='{name}'>{head}<br>" in page, name
    assert "346" in page and "11.5" in page
    assert "the critical loads are taken as exact" in page
    plain = "".join(_exceedance_html(None, None, ex=pd.DataFrame([row]).drop(
        columns=[k for k in row if k.startswith("p_") or k.endswith(("_p05", "_p95"))])))
    assert "p nutrient N" not in plain and "With the Monte Carlo" not in plain
