"""The network overview's trend table follows the unit control (it stayed in kg/ha/yr
while every figure and table beside it changed to eq/ha/yr)."""
import re
import warnings

import periodictable
import pytest

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    from workbench.ui.apps_more import NetworkOverview
    from workbench.ui.session import Session
    scenario = write_demo_subset(tmp_path_factory.mktemp("net_unit"), ("ridge",), 2017, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview(Session.open(scenario))


SLOPE = re.compile(r"^([+-][0-9.eE+-]+) (.+?) per yr \(p ([0-9.eE+-]+)")


def _trend(app, el):
    text = app.analysis.set_index("site").loc["ridge", f"{el}_trend"]
    m = SLOPE.match(text)
    assert m, text
    return float(m.group(1)), m.group(2), m.group(3)


@pytest.mark.parametrize("el", ["S", "N"])
def test_trend_slopes_follow_the_unit(app, el):
    # eq per kg of the element: 2 eq per mol S, 1 eq per mol N (common practice), molar
    # masses of periodictable
    eq_per_mol = {"S": 2.0, "N": 1.0}[el]
    eq_per_kg = eq_per_mol * 1000.0 / getattr(periodictable, el).mass
    app.unit_w.value = "kg/ha/yr"
    kg, unit_kg, p_kg = _trend(app, el)
    assert unit_kg == f"kg {el}/ha/yr"
    assert "[kg/ha/yr per yr]" in app.analysis_w.value
    app.unit_w.value = "eq/ha/yr"
    eq, unit_eq, p_eq = _trend(app, el)
    assert unit_eq == "eq/ha/yr" and p_eq == p_kg          # the test's p is the same
    assert "[eq/ha/yr per yr]" in app.analysis_w.value
    assert eq == pytest.approx(kg * eq_per_kg, rel=1e-2)   # 3 significant digits shown
    app.unit_w.value = "mmol/m2/yr"                         # mol per ha / 10 = mmol per m2
    mm, unit_mm, _ = _trend(app, el)
    assert unit_mm == f"mmol {el}/m2/yr"
    assert mm == pytest.approx(kg * 1000.0 / getattr(periodictable, el).mass / 10.0, rel=1e-2)
    app.unit_w.value = "kg/ha/yr"
    assert _trend(app, el)[0] == kg
    # the exceedances stay in eq/ha/yr (the critical loads' unit) in every unit
    assert "ex_acidity_eq_ha_yr" in app.analysis.columns
