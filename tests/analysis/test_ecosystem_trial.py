"""An ecosystem-effects group's trial: its own receptors and critical loads, the
exceedances and what-if cuts checked by hand, and the mistakes such a group makes.

Hand-worked function (CLmaxS, CLminN, CLmaxN) = (1000, 400, 1600) eq/ha/yr (invented):
the sloping part runs from (N, S) = (400, 1000) to (1600, 0), dN = CLmaxN - CLminN =
1200; no exceedance where S <= 1000, N <= 1600 and 1200 S + 1000 N <= 1.6e6 (the critical
load function, ICP Modelling and Mapping Manual, exceedance chapter, Posch et al.;
from memory).
"""
import numpy as np
import pytest

from workbench.analysis.exceedance import acidity_exceedance
from workbench.analysis.whatif import plain_statement, scaled, smallest_fraction

LOADS = {"cl_max_s": 1000.0, "cl_min_n": 400.0, "cl_max_n": 1600.0, "cl_nut_n": 500.0}
NO_N = {"NOx_wet": 0.0, "NOx_dry": 0.0, "NHx_wet": 0.0, "NHx_dry": 0.0}


def _ex(s, n):
    return float(acidity_exceedance(s, n, LOADS["cl_max_s"], LOADS["cl_min_n"],
                                    LOADS["cl_max_n"]).exceedance)


def test_equal_cuts_hand_worked_on_the_sloping_constraint():
    """(S, N) = (1500, 700), every group cut alike: S(t) = 1500 (1 - t) <= 1000 needs
    t >= 1/3, the sloping part 2.5e6 (1 - t) <= 1.6e6 needs t >= 0.36 (the larger);
    nutrient N 700 (1 - t) <= 500 needs t >= 2/7 (hand-worked, common practice)."""
    parts = {"S_wet": 750.0, "S_dry": 750.0, "NOx_wet": 200.0, "NOx_dry": 150.0,
             "NHx_wet": 200.0, "NHx_dry": 150.0}
    cuts = {"S": 1.0, "NOx": 1.0, "NHx": 1.0}
    acid, nut = (float(v) for v in smallest_fraction(parts, cuts, LOADS))
    assert acid == pytest.approx(0.36, abs=1e-12) and nut == pytest.approx(2 / 7, abs=1e-12)
    text = plain_statement(parts, cuts, LOADS)
    assert "sulfur by 36 %, oxidized N by 36 %, reduced N by 36 %" in text
    assert "by 29 %" in text                       # 28.57 % rounded up
    # air only: S(t) = 750 + 750 (1 - t), N(t) = 400 + 300 (1 - t); the sloping part
    # 2.5e6 - 1.2e6 t <= 1.6e6 needs t >= 0.75, nutrient N 700 - 300 t <= 500, t >= 2/3
    acid, nut = (float(v) for v in smallest_fraction(parts, cuts, LOADS, "air_only"))
    assert acid == pytest.approx(0.75, abs=1e-12) and nut == pytest.approx(2 / 3, abs=1e-12)


def test_stated_cut_is_rounded_up_so_that_it_ends_the_exceedance():
    """S only, all dry: S0 = 1000 / (1 - 0.174) = 1210.65 needs a cut of 17.4 %.  The
    sentence said "Cutting sulfur by 17 %", and a 17 % cut leaves S = 1004.84, an
    exceedance of 4.84 eq/ha/yr (region 1: S - CLmaxS; hand-worked)."""
    parts = {"S_wet": 0.0, "S_dry": 1000.0 / (1 - 0.174), **NO_N}
    acid, _ = smallest_fraction(parts, {"S": 1.0}, LOADS)
    assert float(acid) == pytest.approx(0.174, abs=1e-12)
    s, n = scaled(parts, {"S": 0.17})
    assert _ex(s, n) == pytest.approx(4.8426, abs=1e-3)            # 17 % is not enough
    text = plain_statement(parts, {"S": 1.0}, LOADS)
    assert "Cutting sulfur by 18 %" in text, text
    s, n = scaled(parts, {"S": 0.18})
    assert _ex(s, n) == 0.0
    # a need below 1 % reads 1 %, never "by 0 %"; a whole percent stays whole
    from workbench.analysis.whatif import percent_up
    assert percent_up(0.003) == 1 and percent_up(0.25) == 25 and percent_up(0.5 * 0.5) == 25
