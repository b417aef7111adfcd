"""The 5-95 % range of the deposition point in the critical-load figure (its spec)."""
import json

import pytest

from workbench.ui.figures_analysis import clf_figure, clf_spec

LOADS = {"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0, "cl_nut_n": 714.0}
ROW = {"s_dep_eq_ha_yr_p05": 600.0, "s_dep_eq_ha_yr_p50": 715.0, "s_dep_eq_ha_yr_p95": 1300.0,
       "n_dep_eq_ha_yr_p05": 1500.0, "n_dep_eq_ha_yr_p50": 1700.0, "n_dep_eq_ha_yr_p95": 2100.0,
       "p_exceed_acidity": 0.83}


def _point(spec):
    return next(t for t in spec["data"] if t["name"].startswith("deposition"))


def test_range_becomes_error_bars_of_the_point():
    spec = clf_spec(LOADS, 720.0, 1710.0, ranges=ROW)
    json.dumps(spec)
    p = _point(spec)
    assert p["error_y"]["arrayminus"] == [pytest.approx(120.0)]      # 720 - 600
    assert p["error_y"]["array"] == [pytest.approx(580.0)]           # 1300 - 720
    assert p["error_x"]["arrayminus"] == [pytest.approx(210.0)]      # 1710 - 1500
    assert p["error_x"]["array"] == [pytest.approx(390.0)]           # 2100 - 1710
    assert "5-95 %" in p["name"] and "0.83" in p["name"]
    # the axes hold the whole range
    assert spec["layout"]["yaxis"]["range"][1] >= 1300.0
    assert spec["layout"]["xaxis"]["range"][1] >= 2100.0
    assert len(clf_figure(LOADS, 720.0, 1710.0, ranges=ROW).data) == len(spec["data"])


def test_no_range_without_quantiles():
    for ranges in (None, {"s_dep_eq_ha_yr_p05": float("nan"), "s_dep_eq_ha_yr_p95": 1.0}):
        p = _point(clf_spec(LOADS, 720.0, 1710.0, ranges=ranges))
        assert "error_x" not in p and "error_y" not in p and p["name"] == "deposition"


def test_range_of_one_element_only():
    row = {k: v for k, v in ROW.items() if k.startswith("s_")}
    p = _point(clf_spec(LOADS, 720.0, 1710.0, ranges=row))
    assert "error_y" in p and "error_x" not in p
    assert "probability" not in p["name"]
