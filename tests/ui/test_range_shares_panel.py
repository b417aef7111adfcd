"""The critical-loads explorer's button "Where does the range come from?"
(workbench.ui.range_shares_panel): each drawn factor's share of the shown site's range,
computed on demand through the session's graph (the stage ``range_shares``).

The sums checked are the definitions of workbench.analysis.variance_shares (the
factors' shares and ``together`` make the ``all`` row's 1), not a reference value; the
quantiles of the ``all`` row are those of the explorer's own Monte Carlo
(workbench.analysis.uncertainty.monte_carlo, the same draws and seed).
"""
import dataclasses
import warnings

import numpy as np
import pandas as pd
import pytest

from workbench.ui.range_shares_panel import BUTTON_TEXT, HINT, ROW_NAMES, shares_display


@pytest.fixture(scope="module")
def app(two_sites_2021):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(Session.open(two_sites_2021), site="ridge")
    app.unc_options = dataclasses.replace(app.unc_options, draws=30)   # few draws: fast
    app.range_w.value = True
    return app


def _rows(frame):
    return list(frame["factor"])


def test_display_orders_factors_and_names_parts():
    s = pd.DataFrame({
        "site": "s", "receptor": "grass", "period": "2021", "total": "N_dry",
        "factor": ["all", "vd_gsd", "vd_gsd.NO2", "vd_gsd.NH3", "vd_site_gsd", "together"],
        "part_of": ["", "", "vd_gsd", "vd_gsd", "", ""],
        "variance_share": [1.0, 0.8, 0.01, 0.7, 0.15, 0.05],
        "log_variance_share": [1.0, 0.1, 0.005, 0.05, 0.85, 0.05],
        "alone_p05": 1.0, "alone_p50": 2.0, "alone_p95": 3.0, "unit": "kg ha-1"})
    shown = shares_display(s, "grass", "2021", "N_dry")
    assert _rows(shown) == [ROW_NAMES["all"], "Vd factor of each site (geometric sd)",
                            "Vd model factor (geometric sd)", "  of which NH3",
                            "  of which NO2", ROW_NAMES["together"]]
    assert list(shown["option"]) == ["", "vd_site_gsd", "vd_gsd", "vd_gsd.NH3",
                                     "vd_gsd.NO2", ""]
    assert "5 % alone [kg N/ha]" in shown.columns
    assert shares_display(s, "grass", "2021", "S_dry").empty
    # an N species' part is not listed under a total of S
    s_dry = s.assign(total="S_dry")
    assert _rows(shares_display(s_dry, "grass", "2021", "S_dry")) == [
        ROW_NAMES["all"], "Vd factor of each site (geometric sd)",
        "Vd model factor (geometric sd)", ROW_NAMES["together"]]


def test_nothing_is_computed_before_the_button(app):
    assert app.shares_w.button.description == BUTTON_TEXT
    assert app.shares_w.shares is None
    assert app.shares_w.table_w.value == ""
    assert "press the button" in app.shares_w.note_w.value
    assert app.shares_w.layout.display != "none"


def test_the_button_shows_the_shares_of_the_shown_range(app):
    app.shares_w.button.click()
    shares = app.shares_w.shares
    assert shares is not None and set(shares["site"]) == {"ridge"}
    site, receptor, year = app.shares_w.where()
    for total in ("N_dry", "S_dry", "N_total", "S_total"):
        g = shares[(shares["receptor"] == receptor) & (shares["period"] == str(year))
                   & (shares["total"] == total)]
        own = g[~g["factor"].isin(["all", "together"]) & (g["part_of"] == "")]
        for col in ("variance_share", "log_variance_share"):
            want = g.loc[g["factor"] == "all", col].iloc[0]
            if np.isfinite(want):
                got = own[col].sum() + g.loc[g["factor"] == "together", col].iloc[0]
                assert got == pytest.approx(want, abs=1e-9), (total, col)
    page = app.shares_w.table_w.value
    assert ROW_NAMES["all"] in page and "vd_gsd" in page and "share of the log-variance" in page
    # the total the range above the figure gives (tests/ui/test_newuser_browser_pass.py)
    assert "total N" in app.shares_w.note_w.value and HINT not in app.shares_w.note_w.value


def test_the_all_row_is_the_explorers_own_range(app):
    from workbench.analysis.uncertainty import monte_carlo
    from workbench.units import element_deposition_in
    shares = app.shares_w.shares
    site, receptor, year = app.shares_w.where()
    study = app.session.study_for(site, *app.run_years)
    q = monte_carlo(app.result, study, app.unc_options,
                    overrides=app.session.baseline.for_site(site).overrides).budget
    row = shares[(shares["receptor"] == receptor) & (shares["period"] == str(year))
                 & (shares["total"] == "N_total") & (shares["factor"] == "all")].iloc[0]
    td = q["total_deposition"].sel(site=site, receptor=receptor, period=year)
    names = [str(t) for t in td[td.dims[-1]].values]
    v = td.isel({td.dims[-1]: names.index("N_total")}) if "N_total" in names else None
    if v is None:
        pytest.skip(f"totals named {names}")
    got = element_deposition_in(np.asarray(v.sel(quantile=0.95)), "N", "kg_ha")
    assert row["alone_p95"] == pytest.approx(float(got), rel=1e-9)


def test_the_total_and_year_pick_rows_without_computing_again(app):
    shares = app.shares_w.shares
    app.shares_w.total_w.value = "S_dry"
    assert app.shares_w.shares is shares
    # in equivalents, the critical-loads explorer's unit (tests/ui/test_newuser_browser_pass.py)
    assert "dry S" in app.shares_w.note_w.value and "[eq/ha" in app.shares_w.table_w.value
    # the button again: the graph's stage, not a second computation
    app.shares_w.button.click()
    assert app.shares_w.shares is shares
    app.shares_w.total_w.value = "N_dry"


def test_other_options_compute_again_and_another_site_clears(app):
    shares = app.shares_w.shares
    app.unc_options = dataclasses.replace(app.unc_options, seed=99)
    app.shares_w.button.click()
    assert app.shares_w.shares is not shares
    app.site_w.value = "mere"
    try:
        assert app.shares_w.shares is None and app.shares_w.table_w.value == ""
    finally:
        app.site_w.value = "ridge"


def test_hidden_with_the_range(app):
    app.range_w.value = False
    try:
        assert app.shares_w.layout.display == "none"
    finally:
        app.range_w.value = True
