"""The network overview's control of the serial correction of the trends' test (Hamed
and Rao 1998): reachable from a scenario's [trends] only before; the control adds the
corrected p to each trend, with the caution that it needs about 25 years."""
import re
import warnings

import numpy as np
import pandas as pd
import pytest

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    from workbench.ui.apps_more import NetworkOverview
    from workbench.ui.session import Session
    scenario = write_demo_subset(tmp_path_factory.mktemp("net_serial"), ("ridge",), 2017, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview(Session.open(scenario))


def test_the_control_adds_the_corrected_p_and_its_caution(app):
    from workbench.analysis.trends import trend_table
    from workbench.ui.apps_more import SERIAL_LABEL, SERIAL_NOTE
    assert app.serial_w in app.children and app.serial_w.value is False
    assert "25 years" in SERIAL_LABEL
    plain = app.analysis.set_index("site").loc["ridge", "S_trend"]
    assert "Hamed-Rao" not in plain and "Hamed" not in app.analysis_w.value
    app.serial_w.value = True
    try:
        text = app.analysis.set_index("site").loc["ridge", "S_trend"]
        assert text != plain
        # (the demo's 4 years of S: the correction gave less than the smallest p of 4
        # values, 2/4! = 0.083, and the text says that p is held there)
        m = re.search(r"; p ([0-9.eE+-]+) if the years are correlated \(Hamed-Rao(; the "
                      r"smallest p of any order of \d+ values, the correction gave less)?\), "
                      r"weak: (\d+) years, needs ~25", text)
        assert m, text
        # the p shown is trends.csv's p_value_hamed_rao of the same annual totals
        res = app.results["ridge"]
        own = app.session.study.catalogue()["ridge"].land_use
        t = res.table
        years = t[(t["period"].astype(str) != "span") & (t["receptor"] == own)
                  & (t["pathway"] == "total") & (t["species"] == "all")]
        tr = trend_table(years, serial_correction="hamed_rao")
        row = tr[(tr["element"] == "S") & (tr["values"] == "all")].iloc[0]
        assert m.group(1) == f"{row['p_value_hamed_rao']:.2g}"
        assert int(m.group(3)) == int(row["n_years"]) < 25
        assert bool(m.group(2)) == ("held at" in row["note"])
        assert text.startswith(plain.split(" (p ")[0])         # the slope as it was
        assert SERIAL_NOTE.split(":")[0] in app.analysis_w.value
        app.unit_w.value = "eq/ha/yr"                           # a unit keeps the second p
        assert "Hamed-Rao" in app.analysis.set_index("site").loc["ridge", "S_trend"]
        app.unit_w.value = "kg/ha/yr"
    finally:
        app.serial_w.value = False
    assert app.analysis.set_index("site").loc["ridge", "S_trend"] == plain


def test_a_long_record_gets_the_corrected_p_without_the_caution():
    from workbench.ui.apps_analysis import network_analysis_table, serial_text
    parts = pd.DataFrame([{
        "site": "a", "receptor": "grass", "ex_acidity_eq_ha_yr": np.nan,
        "ex_nutrient_n_eq_ha_yr": np.nan, "exceedance_status": "", "exceedance_note": "",
        **{f"{el}_{k}": v for el in ("S", "N") for k, v in (
            ("slope_kg_ha_yr", -0.2), ("p", 0.01), ("valid", True), ("n_years", 30.0),
            ("method_changes", ""), ("p_hamed_rao", 0.12))}}])
    plain = network_analysis_table({}, None, parts=parts)["S_trend"].iloc[0]
    text = network_analysis_table({}, None, parts=parts, serial=True)["S_trend"].iloc[0]
    assert plain == "-0.2 kg S/ha/yr per yr (p 0.01)"
    assert text == "-0.2 kg S/ha/yr per yr (p 0.01; p 0.12 if the years are correlated (Hamed-Rao))"
    assert "weak" in serial_text(0.12, 24) and "weak" not in serial_text(0.12, 25)


def test_a_corrected_p_held_at_its_smallest_says_so():
    """The review's six values (corrected p 1e-8 where no order of six values goes below
    8/720): the trend's text says the p is the smallest any order allows.  Old code:
    "p 1e-08 if the years are correlated"."""
    from workbench.ui.apps_analysis import network_analysis_table
    parts = pd.DataFrame([{
        "site": "a", "receptor": "grass", "ex_acidity_eq_ha_yr": np.nan,
        "ex_nutrient_n_eq_ha_yr": np.nan, "exceedance_status": "", "exceedance_note": "",
        **{f"{el}_{k}": v for el in ("S", "N") for k, v in (
            ("slope_kg_ha_yr", -0.5), ("p", 0.019), ("valid", False), ("n_years", 6.0),
            ("method_changes", ""), ("p_hamed_rao", 8 / 720), ("p_hamed_rao_held", True))}}])
    text = network_analysis_table({}, None, parts=parts, serial=True)["S_trend"].iloc[0]
    assert ("p 0.011 if the years are correlated (Hamed-Rao; the smallest p of any order "
            "of 6 values, the correction gave less), weak: 6 years, needs ~25") in text
