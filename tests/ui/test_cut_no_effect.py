"""A cut slider of the critical-loads explorer that changes nothing shown says why, as
the site explorer's controls do (workbench/ui/no_effect.py).  The parts and loads of the
function tests are invented round numbers."""
import warnings

import numpy as np
import pandas as pd
import pytest

from workbench.ui.no_effect import cut_no_effect_text, missing_species

LOADS = {"cl_max_s": 700.0, "cl_min_n": 200.0, "cl_max_n": 1000.0, "cl_nut_n": 500.0}


def _parts(**kw):
    base = {"S_wet": 200.0, "S_dry": 100.0, "NOx_wet": 200.0, "NOx_dry": 100.0,
            "NHx_wet": 250.0, "NHx_dry": 200.0}
    return {**base, **kw}


def test_a_group_with_no_deposition():
    text = cut_no_effect_text("NOx", _parts(NOx_wet=0.0, NOx_dry=0.0), LOADS,
                              {"S": 0.5, "NOx": 0.5, "NHx": 0.5})
    assert text == ("cut oxidized N: no effect on the deposition or the exceedances "
                    "(no oxidized N deposition here)")


def test_a_group_whose_species_have_no_data():
    text = cut_no_effect_text("NHx", _parts(NHx_wet=0.0, NHx_dry=0.0), LOADS,
                              {"NHx": 0.4}, missing=["NH3", "NH4", "pNH4"])
    assert "(no NH3, NH4, pNH4 data here, counted 0)" in text


def test_air_only_and_a_group_all_wet():
    text = cut_no_effect_text("S", _parts(S_dry=0.0), LOADS, {"S": 0.5}, "air_only")
    assert "no effect on the deposition" in text and "all wet" in text
    # the same cut with the wet deposition cut too moves S (and here no exceedance)
    assert cut_no_effect_text("S", _parts(S_dry=0.0), LOADS, {"S": 0.5}) == (
        "cut sulfur: the deposition moves, the exceedances stay as they were (no acidity "
        "exceedance here; sulfur does not count in the nutrient-N exceedance)")
    assert cut_no_effect_text("S", _parts(S_dry=0.0, S_wet=600.0), LOADS, {"S": 0.5}) == ""


def test_no_exceedance_to_end():
    high = {k: v * 10 for k, v in LOADS.items()}
    text = cut_no_effect_text("S", _parts(), high, {"S": 0.5, "NOx": 0.5})
    assert text == ("cut sulfur: the deposition moves, the exceedances stay as they were "
                    "(no acidity or nutrient-N exceedance here to end)")


def test_no_critical_load_to_compare():
    text = cut_no_effect_text("S", _parts(), {k: np.nan for k in LOADS}, {"S": 0.5})
    assert "no exceedance can be computed" in text


def test_a_cut_that_acts_or_is_zero_says_nothing():
    assert cut_no_effect_text("S", _parts(), LOADS, {"S": 0.5, "NOx": 0.5, "NHx": 0.5}) == ""
    assert cut_no_effect_text("S", _parts(), LOADS, {"S": 0.0}) == ""


def test_missing_species_of_a_group():
    comps = pd.DataFrame({"element": ["N", "N", "N", "N", "S"],
                          "species": ["NO3", "NO2", "NH4", "NH3", "SO2"],
                          "status": ["complete", "missing", "complete", "missing", "missing"]})
    assert missing_species(comps, "NOx") == ["NO2"]
    assert missing_species(comps, "NHx") == ["NH3"]
    assert missing_species(comps, "S") == ["SO2"]


@pytest.fixture(scope="module")
def high_loads_scenario(tmp_path_factory):
    """The demo's mere in 2021 with critical loads ten times the demo's (no exceedance)."""
    from ui.demo_subset import write_demo_subset
    sc = write_demo_subset(tmp_path_factory.mktemp("cl_high"), ("mere",), 2021, 2021)
    sites = sc.parent / "sites.toml"
    text = sites.read_text()
    for k, v in (("cl_max_s", "700.0"), ("cl_min_n", "214.0"), ("cl_max_n", "1000.0"),
                 ("cl_nut_n", "500.0")):
        assert f"{k} = {v}" in text
        text = text.replace(f"{k} = {v}", f"{k} = {float(v) * 10}")
    sites.write_text(text)
    return sc


def test_explorer_says_why_a_cut_changes_nothing(high_loads_scenario):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(Session.open(high_loads_scenario), site="mere",
                                    years=(2021, 2021))
        app.range_w.value = False
        assert app.effect_w.value == ""
        app.cut_w["S"].value = 80
        assert "cut sulfur: the deposition moves, the exceedances stay" in app.effect_w.value
        assert "no acidity or nutrient-N exceedance here to end" in app.effect_w.value
        app.mode_w.value = "air_only"                 # another control: the line goes
        assert app.effect_w.value == ""
        app.cut_w["S"].value = 0                       # a cut of 0 asks for nothing
        assert app.effect_w.value == ""
