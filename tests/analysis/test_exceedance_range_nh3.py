"""What drives the wide acidity-exceedance range of the demo's farm site (crops).

The demo's farm (invented) has N dry deposition dominated by NH3 (about 60 % of its N
total) and an N total close to its CLmaxN, so that its point acidity exceedance is
small while the 95 % of the draws is thousands of eq/ha/yr (docs/methods_uncertainty.md,
"A wide exceedance range: the demo's farm").  This checks, on two years of the farm
(tests/ui/demo_subset.py), that the range is the stated NH3 Vd factor carried through
the critical-load function and nothing more:

* with only the NH3 Vd factor drawn (log-normal, median 1, GSD 2), the span's N total
  of every draw is N - A + A F (A the point NH3 component): its 95 % is
  N + A (exp(ln 2 z_0.95) - 1), z_0.95 = 1.6449 (the log-normal quantile, common
  practice);
* there the draw lies beyond CLmaxN with S below the function, where the nearest point
  of the function is the corner (CLmaxN, 0) and the exceedance is
  (N - CLmaxN) + S (ICP Modelling and Mapping Manual, exceedance of critical loads:
  the sum of the reductions; Posch et al. 2001, from memory); the exceedance never falls
  as N grows, so its 95 % is that of the draw at the 95 % of F.

Tolerance: the 95 % of ln F from n draws has the standard error
sqrt(q (1 - q) / n) / phi(z_q) ln 2 (common practice), 5 of it on the NH3 part.
"""
import types
import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from analysis.tiny_site import OFF
from ui.demo_subset import study_and_args, write_demo_subset
from workbench.analysis import uncertainty as U
from workbench.analysis.exceedance import exceedance_table

N_DRAWS = 4000
KG_N_TO_EQ = 1000.0 / 14.007        # kg N/ha -> eq/ha (1 eq per mol N), common practice


@pytest.fixture(scope="module")
def farm(tmp_path_factory):
    sc = write_demo_subset(tmp_path_factory.mktemp("farm"), ("farm",), 2022, 2023)
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    return study, res


def _run(farm, opt):
    study, res = farm
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        r = U.with_uncertainty(res, study, types.SimpleNamespace(options={"uncertainty": opt}))
    ex = exceedance_table(r, study.catalogue())
    return r, ex[(ex["site"] == "farm") & (ex["receptor"] == "crops")].set_index("period")


def test_the_span_range_is_the_nh3_factor_through_the_corner(farm):
    opt = U.UncertaintyOptions(draws=N_DRAWS, seed=11,
                               **{**OFF, "vd_gsd": {**OFF["vd_gsd"], "NH3": 2.0}})
    res, ex = _run(farm, opt)
    row = ex.loc["span"]
    t = res.table
    nh3 = t[(t["site"] == "farm") & (t["receptor"] == "crops") & (t["period"] == "span")
            & (t["species"] == "NH3")]
    a = float(nh3["flux_kg_ha_yr"].iloc[0]) * KG_N_TO_EQ
    s, n = float(row["s_dep_eq_ha_yr"]), float(row["n_dep_eq_ha_yr"])
    cl_max_n = float(row["cl_max_n_eq_ha_yr"])
    assert a / n > 0.5                               # NH3 carries most of the farm's N
    z = stats.norm.ppf(0.95)
    f95 = np.exp(np.log(2.0) * z)
    n95 = n + a * (f95 - 1.0)
    se = np.sqrt(0.95 * 0.05 / N_DRAWS) / stats.norm.pdf(z) * np.log(2.0)
    tol = 5 * se * a * f95
    assert float(row["n_dep_eq_ha_yr_p95"]) == pytest.approx(n95, abs=tol)
    assert n95 > cl_max_n and s < float(row["cl_max_s_eq_ha_yr"])
    assert float(row["ex_acidity_eq_ha_yr_p95"]) == pytest.approx(n95 - cl_max_n + s, abs=tol)
    # S is not drawn here: every draw has the point S
    assert float(row["s_dep_eq_ha_yr_p05"]) == pytest.approx(s, rel=1e-9)
    assert float(row["s_dep_eq_ha_yr_p95"]) == pytest.approx(s, rel=1e-9)


def test_the_range_narrows_to_the_rest_without_the_nh3_factor(farm):
    # the defaults against the defaults with NH3's GSD at 1 (the site's own Vd factor,
    # the other species' factors and the analyses still drawn): the other factors
    # together give the span's N total less than half the 5-95 % width
    both = _run(farm, U.UncertaintyOptions(draws=1000, seed=11))[1].loc["span"]
    no_nh3 = _run(farm, U.UncertaintyOptions(draws=1000, seed=11,
                                             vd_gsd={"NH3": 1.0}))[1].loc["span"]
    w_both = float(both["n_dep_eq_ha_yr_p95"]) - float(both["n_dep_eq_ha_yr_p05"])
    w_rest = float(no_nh3["n_dep_eq_ha_yr_p95"]) - float(no_nh3["n_dep_eq_ha_yr_p05"])
    assert w_rest < 0.5 * w_both
    assert pd.notna(both["ex_acidity_eq_ha_yr_p95"])
