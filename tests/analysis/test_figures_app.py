"""The critical-load figure (its spec) and the explorer on a small demo copy."""
import json
import re
import warnings

import numpy as np
import pytest

from workbench.analysis.whatif import path_table
from workbench.ui.figures_analysis import clf_figure, clf_spec

LOADS = {"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0, "cl_nut_n": 714.0}
PARTS = {"S_wet": 300.0, "S_dry": 420.0, "NOx_wet": 350.0, "NOx_dry": 300.0,
         "NHx_wet": 450.0, "NHx_dry": 610.0}


def test_clf_spec_draws_function_point_and_path():
    path = path_table(PARTS, {"S": 0.8, "NOx": 0.6, "NHx": 0.6}, LOADS)
    spec = clf_spec(LOADS, 720.0, 1710.0, path, "ridge", "air only")
    json.dumps(spec)                                   # plain JSON
    names = [t["name"] for t in spec["data"]]
    fn = spec["data"][0]
    assert fn["x"] == [0, 0, 357.0, 1420.0, 0] and fn["y"] == [0, 950.0, 950.0, 0, 0]
    assert any(n.startswith("exceedance ends") for n in names)
    assert "what-if path (air only)" in names and "deposition" in names
    end = next(t for t in spec["data"] if t["name"].startswith("exceedance ends"))
    i = int(np.flatnonzero(path["ex_acidity_eq_ha_yr"].to_numpy() <= 0)[0])
    assert end["x"] == [path["n_dep_eq_ha_yr"].iloc[i]]
    fig = clf_figure(LOADS, 720.0, 1710.0, path)
    assert len(fig.data) == len(spec["data"])


def test_clf_spec_without_loads():
    spec = clf_spec({})
    assert spec["data"] == []


def test_explorer_on_demo_copy(analysis_scenario):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(Session.open(analysis_scenario), site="ridge")
        assert app.year_w.value == "2021"
        text = app.draw()
        assert text.startswith("ridge · conifer_forest · 2021: ")
        assert "acidity exceedance" in text
        app.cut_w["S"].value = 100
        app.cut_w["NHx"].value = 100
        app.cut_w["NOx"].value = 100
        assert "ends the acidity exceedance" in app.statement
        assert app.path["ex_acidity_eq_ha_yr"].iloc[-1] == pytest.approx(0.0, abs=1e-9)
        app.site_w.value = "mere"
        assert app.receptor_w.value == "wetland" and app.path is not None


def test_network_overview_has_trend_and_exceedance_columns(analysis_scenario):
    from workbench.analysis.exceedance import acidity_exceedance
    from workbench.ui.apps import NetworkOverview
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = NetworkOverview(Session.open(analysis_scenario))
    a = app.analysis.set_index("site")
    assert list(a.index) == ["ridge", "mere"]
    # two years at most pass completeness here (the exact count follows the QA statuses)
    # one or two complete years: no valid trend, said in words (no "+nan per yr")
    text = a.loc["ridge", "S_trend"]
    assert re.search(r"indicative only: 2 complete years, a valid trend needs 10|"
                     r"no slope: (0 complete years|1 complete year(;|$))", text), text
    # a year the trend leaves out is named, as trends.csv's note names it
    if "1 complete year;" in text:
        assert re.search(r"; years left out: 1 \w+ \(20\d\d\)$", text), text
    assert "nan" not in text
    # a slope says its unit (the heading's [eq/ha/yr] is the exceedance's)
    assert "no slope" in text or "kg S/ha/yr per yr" in text, text
    assert "[kg/ha/yr per yr]" in app.analysis_w.value
    # mere measures no NO2: its N total is partial, and the status says so
    # (the budget's own word: "partial", not exceedance.csv's "flagged")
    assert a.loc["mere", "totals_status"].endswith("N partial (no NO2)")
    span = app.results["ridge"].table
    tot = span[(span["period"] == "span") & (span["receptor"] == "conifer_forest")
               & (span["pathway"] == "total") & (span["species"] == "all")].set_index("element")
    ex = acidity_exceedance(tot.loc["S", "flux_eq_ha_yr"], tot.loc["N", "flux_eq_ha_yr"],
                            950.0, 357.0, 1420.0)
    assert a.loc["ridge", "ex_acidity_eq_ha_yr"] == pytest.approx(float(ex.exceedance))
    assert "Trends of the annual totals" in app.analysis_w.value


def test_explorer_range_switch_puts_error_bars_and_probability(analysis_scenario):
    """Switched on (the scenario asks for no draws), the point gets the 5-95 % range of the
    draws as error bars and the statement names the probability of exceedance; both agree
    with exceedance_probability on the same draws."""
    import pandas as pd

    from workbench.analysis.exceedance import exceedance_probability
    from workbench.ui.apps_analysis import OFFERED_DRAWS, CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(Session.open(analysis_scenario), site="ridge")
        assert not app.range_w.value and str(OFFERED_DRAWS) in app.range_w.description
        point = next(t for t in app.fig.data if t.name == "deposition")
        assert point.error_x.array is None and "probability" not in app.statement
        app.range_w.value = True
    point = next(t for t in app.fig.data if t.name.startswith("deposition with the 5-95 %"))
    draws = app.total_draws()
    assert draws.sizes["draw"] == OFFERED_DRAWS
    row = {"site": "ridge", "receptor": app.receptor_w.value, "period": app.year_w.value,
           **{f"{k}_eq_ha_yr": v for k, v in LOADS.items()}}
    ref = exceedance_probability(pd.DataFrame([row]), draws).iloc[0]
    x, y = point.x[0], point.y[0]
    assert x - point.error_x.arrayminus[0] == pytest.approx(ref["n_dep_eq_ha_yr_p05"])
    assert x + point.error_x.array[0] == pytest.approx(ref["n_dep_eq_ha_yr_p95"])
    assert y - point.error_y.arrayminus[0] == pytest.approx(ref["s_dep_eq_ha_yr_p05"])
    assert y + point.error_y.array[0] == pytest.approx(ref["s_dep_eq_ha_yr_p95"])
    assert ref["s_dep_eq_ha_yr_p95"] > ref["s_dep_eq_ha_yr_p05"]
    assert f"probability of acidity exceedance {ref['p_exceed_acidity']:.2f}" in app.statement
    assert app.statement in app.draw()
    app.range_w.value = False
    assert "probability" not in app.statement
