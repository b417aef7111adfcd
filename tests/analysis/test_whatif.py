"""What-if reductions: the path, and the smallest cut that ends an exceedance."""
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from workbench.analysis.exceedance import acidity_exceedance, nutrient_n_exceedance
from workbench.analysis.whatif import (group_deposition, path_table, plain_statement, scaled,
                                       smallest_fraction)

LOADS = {"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0, "cl_nut_n": 714.0}
#: invented split of a deposition close to the demo ridge site's [eq/ha/yr]
PARTS = {"S_wet": 300.0, "S_dry": 420.0, "NOx_wet": 350.0, "NOx_dry": 300.0,
         "NHx_wet": 450.0, "NHx_dry": 610.0}


def _ex(s, n):
    return float(acidity_exceedance(s, n, LOADS["cl_max_s"], LOADS["cl_min_n"],
                                    LOADS["cl_max_n"]).exceedance)


@pytest.mark.parametrize("mode, cuts", [("air_and_wet", {"S": 0.8, "NOx": 0.6, "NHx": 0.6}),
                                         ("air_only", {"S": 1.0, "NOx": 1.0, "NHx": 1.0})])
def test_path_ends_where_exceedance_is_zero(mode, cuts):
    t_acid, t_nut = (float(v) for v in smallest_fraction(PARTS, cuts, LOADS, mode))
    assert 0 < t_acid < 1
    s, n = scaled(PARTS, {g: t_acid * c for g, c in cuts.items()}, mode)
    assert _ex(s, n) == pytest.approx(0.0, abs=1e-9)
    s, n = scaled(PARTS, {g: (t_acid - 1e-6) * c for g, c in cuts.items()}, mode)
    assert _ex(s, n) > 0
    if np.isfinite(t_nut) and t_nut <= 1:
        s, n = scaled(PARTS, {g: t_nut * c for g, c in cuts.items()}, mode)
        assert n == pytest.approx(LOADS["cl_nut_n"], rel=1e-12)
    table = path_table(PARTS, cuts, LOADS, mode)
    # exceedance along the path never rises, and is 0 from the smallest fraction on
    assert (np.diff(table["ex_acidity_eq_ha_yr"]) <= 1e-9).all()
    after = table[table["fraction"] >= t_acid]
    assert (after["ex_acidity_eq_ha_yr"] <= 1e-9).all() and (after["region"] == 0).all()
    assert (table.loc[table["fraction"] < t_acid, "ex_acidity_eq_ha_yr"] > 0).all()
    assert (table["mode"] == mode).all()


@settings(max_examples=50, deadline=None)
@given(cs=st.floats(0.1, 1), cn=st.floats(0, 1), ch=st.floats(0, 1))
def test_smallest_fraction_is_the_first_zero(cs, cn, ch):
    """Exact fraction against a fine walk along the path (independent check)."""
    cuts = {"S": cs, "NOx": cn, "NHx": ch}
    t_acid, _ = (float(v) for v in smallest_fraction(PARTS, cuts, LOADS))
    t = np.linspace(0, 1, 2001)
    s, n = scaled(PARTS, {}, "air_and_wet")
    s1, n1 = scaled(PARTS, cuts, "air_and_wet")
    ex = acidity_exceedance(s - t * (s - s1), n - t * (n - n1), LOADS["cl_max_s"],
                            LOADS["cl_min_n"], LOADS["cl_max_n"]).exceedance
    zero = np.flatnonzero(ex <= 1e-9)
    if np.isinf(t_acid):
        assert zero.size == 0
    else:
        assert zero.size and t[zero[0]] == pytest.approx(t_acid, abs=1 / 2000 + 1e-12)


def test_unreachable_and_not_exceeded():
    a, n = smallest_fraction(PARTS, {"NHx": 0.1}, LOADS)
    assert np.isinf(a) and np.isinf(n)
    low = {k: v / 10 for k, v in PARTS.items()}
    a, n = smallest_fraction(low, {"S": 0.5}, LOADS)
    assert a == 0 and n == 0
    text = plain_statement(PARTS, {"NHx": 0.1}, LOADS, where="ridge")
    assert text.startswith("ridge: Even cutting reduced N by 10 % (air concentrations and wet")
    assert "leaves a nutrient-N exceedance" in text


def test_every_sentence_starts_with_a_capital():
    # the second sentence read "... exceedance. cutting sulfur by 30 % ..." (common
    # writing practice: a sentence starts with a capital letter)
    parts = {"S_wet": 300.0, "S_dry": 300.0, "NOx_wet": 400.0, "NOx_dry": 400.0,
             "NHx_wet": 0.0, "NHx_dry": 0.0}
    loads = {"cl_max_s": 450.0, "cl_min_n": 0.0, "cl_max_n": 2000.0, "cl_nut_n": 500.0}
    for where in ("", "ridge"):
        text = plain_statement(parts, {"S": 1.0, "NOx": 1.0}, loads, where=where)
        sentences = text.removeprefix("ridge: ").split(". ")
        assert len(sentences) == 2, text
        assert all(s[0].isupper() for s in sentences), text


def test_air_only_leaves_wet_deposition():
    s, n = scaled(PARTS, {"S": 1.0, "NOx": 1.0, "NHx": 1.0}, "air_only")
    assert s == PARTS["S_wet"] and n == PARTS["NOx_wet"] + PARTS["NHx_wet"]
    with pytest.raises(ValueError, match="expected a fraction"):
        scaled(PARTS, {"S": 1.5})
    with pytest.raises(ValueError, match="unknown mode"):
        scaled(PARTS, {}, "wet_only")


def test_group_deposition_adds_up_to_the_totals(analysis_run):
    _, result, _ = analysis_run
    g = group_deposition(result.years)
    t = result.table
    tot = t[(t["pathway"] == "total") & (t["species"] == "all") & (t["period"] != "span")]
    s = tot[tot["element"] == "S"].set_index(["site", "receptor", "period"])["flux_eq_ha_yr"]
    n = tot[tot["element"] == "N"].set_index(["site", "receptor", "period"])["flux_eq_ha_yr"]
    mine_s = (g["S_wet"] + g["S_dry"]).to_series()
    mine_n = sum(g[f"{x}_{p}"] for x in ("NOx", "NHx") for p in ("wet", "dry")).to_series()
    idx = s.dropna().index
    np.testing.assert_allclose(mine_s.reindex(idx), s.loc[idx], rtol=1e-9)
    np.testing.assert_allclose(mine_n.reindex(idx), n.loc[idx], rtol=1e-9)


#: A net NH3 emission (dry reduced N below 0, bidirectional exchange) [eq/ha/yr]: cutting
#: reduced N in the air then raises N along the path (the flux scaled as given).
NET = {"S_wet": 280.0, "S_dry": 800.0, "NOx_wet": 0.0, "NOx_dry": 0.0,
       "NHx_wet": 1200.0, "NHx_dry": -1000.0}


def test_net_emission_part_can_close_the_path_hand_worked():
    """S0 = 1080, N0 = 200; cutting S by 50 % and reduced N by 100 % (air only):
    S(t) = 1080 - 400 t, N(t) = 200 + 1000 t.  S <= 950 needs t >= 0.325; the sloping
    part 1063 S + 950 N <= 950 x 1420 holds only for t <= 10960 / 524800 = 0.0209: no
    fraction ends the exceedance (the largest lower bound alone said 0.325, where the
    point (950, 525) still exceeds the sloping part)."""
    cuts = {"S": 0.5, "NHx": 1.0}
    t_acid, _ = (float(v) for v in smallest_fraction(NET, cuts, LOADS, "air_only"))
    assert np.isinf(t_acid)
    s, n = scaled(NET, {"S": 0.325 * 0.5, "NHx": 0.325}, "air_only")
    assert (s, n) == pytest.approx((950.0, 525.0)) and _ex(s, n) > 0
    text = plain_statement(NET, cuts, LOADS, "air_only")
    assert "reduced N dry deposition is a net emission" in text


@settings(max_examples=60, deadline=None)
@given(cs=st.floats(0.05, 1), ch=st.floats(0, 1), nh_dry=st.floats(-1500, 600),
       s_dry=st.floats(0, 1200))
def test_smallest_fraction_with_net_emission_is_the_first_zero(cs, ch, nh_dry, s_dry):
    """With a part below 0 the exceedance can end and come back along the path: the
    fraction is the first zero of a fine walk, or inf where the walk has none."""
    parts = {**NET, "S_dry": s_dry, "NHx_dry": nh_dry}
    cuts = {"S": cs, "NHx": ch}
    t_acid, _ = (float(v) for v in smallest_fraction(parts, cuts, LOADS, "air_only"))
    t = np.linspace(0, 1, 4001)
    s, n = scaled(parts, {}, "air_only")
    s1, n1 = scaled(parts, cuts, "air_only")
    ss, nn = s - t * (s - s1), n - t * (n - n1)
    ok = (ss >= 0) & (nn >= 0)
    if not ok.all():                  # a path through a negative total: not this test
        return
    ex = acidity_exceedance(ss, nn, LOADS["cl_max_s"], LOADS["cl_min_n"],
                            LOADS["cl_max_n"]).exceedance
    zero = np.flatnonzero(ex <= 1e-9)
    if np.isinf(t_acid):
        assert zero.size == 0
    else:
        assert zero.size and t[zero[0]] == pytest.approx(t_acid, abs=1 / 4000 + 1e-12)
