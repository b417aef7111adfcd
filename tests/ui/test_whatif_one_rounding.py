"""The critical-loads explorer's sentence and its table say a needed cut with one
rounding (``whatif.percent_up``, up to a whole percent): the sentence read "sulfur by
34 %" where the table's row that ends the exceedance read 33.3.  Worked example (our
arithmetic): S deposition 600 eq/ha/yr, no N, CLmaxS 400 eq/ha/yr: the acidity
exceedance ends at a cut of 1/3 of S (600 x (1 - 1/3) = 400), 33.33... %, which rounded
up to a whole percent is 34 %."""
import numpy as np
import pytest

from workbench.analysis.whatif import path_table, percent_up, plain_statement
from workbench.ui.apps_analysis import PATH_HEADINGS, path_display

PARTS = {"S_wet": 300.0, "S_dry": 300.0, "NOx_wet": 0.0, "NOx_dry": 0.0,
         "NHx_wet": 0.0, "NHx_dry": 0.0}
LOADS = {"cl_max_s": 400.0, "cl_min_n": 0.0, "cl_max_n": 2000.0, "cl_nut_n": 500.0}
CUTS = {"S": 1.0}


def test_statement_and_table_round_the_needed_cut_alike():
    path = path_table(PARTS, CUTS, LOADS)
    ends = path[path["ends_exceedance"]]
    assert len(ends) == 1 and ends["fraction"].iloc[0] == pytest.approx(1 / 3)
    assert ends["ex_acidity_eq_ha_yr"].iloc[0] == pytest.approx(0.0, abs=1e-9)
    text = plain_statement(PARTS, CUTS, LOADS)
    assert "Cutting sulfur by 34 %" in text, text
    shown = path_display(path)
    row = shown[path["ends_exceedance"].to_numpy()].iloc[0]
    assert row[PATH_HEADINGS["cut_S"]] == 34 == percent_up(1 / 3)
    assert row[PATH_HEADINGS["fraction"]] == 34
    # the other rows are points of the path, shown as they are (5 % steps here)
    rest = shown[~path["ends_exceedance"].to_numpy()][PATH_HEADINGS["cut_S"]].to_numpy()
    np.testing.assert_allclose(rest, np.linspace(0.0, 100.0, 21), atol=1e-9)
    # the exceedance at the stated cut is 0 too (rounding up, not to the nearest)
    at = path_table(PARTS, {"S": 0.34}, LOADS, steps=2)
    assert at["ex_acidity_eq_ha_yr"].iloc[-1] == pytest.approx(0.0, abs=1e-9)


def test_a_whole_percent_need_is_not_pushed_up():
    parts = {**PARTS, "S_wet": 250.0, "S_dry": 250.0}        # 500 -> 400: 20 % exactly
    shown = path_display(path_table(parts, CUTS, LOADS))
    assert 20.0 in shown[PATH_HEADINGS["cut_S"]].to_numpy()
    assert 21.0 not in shown[PATH_HEADINGS["cut_S"]].to_numpy()
    assert "sulfur by 20 %" in plain_statement(parts, CUTS, LOADS)
