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


#: Degenerate functions, hand-worked (S, N, CLmaxS, CLminN, CLmaxN) -> (Ex, S red., N red.):
#: with CLmaxS = 0 and CLminN = CLmaxN = 300 only S = 0, N <= 300 is not exceeded; with
#: every load 0 any deposition is the exceedance; with CLminN = CLmaxN = 0 the function
#: is the S axis up to CLmaxS (the definition of the manual, from memory).
DEGENERATE = [
    ((100.0, 200.0, 0.0, 300.0, 300.0), (100.0, 100.0, 0.0)),
    ((0.0, 400.0, 0.0, 300.0, 300.0), (100.0, 0.0, 100.0)),
    ((50.0, 400.0, 0.0, 300.0, 300.0), (150.0, 50.0, 100.0)),
    ((0.0, 300.0, 0.0, 300.0, 300.0), (0.0, 0.0, 0.0)),
    ((100.0, 200.0, 0.0, 0.0, 0.0), (300.0, 100.0, 200.0)),
    ((500.0, 700.0, 1000.0, 0.0, 0.0), (700.0, 0.0, 700.0)),
    ((1500.0, 0.0, 1000.0, 0.0, 0.0), (500.0, 500.0, 0.0)),
]


@pytest.mark.parametrize("args, want", DEGENERATE)
def test_degenerate_functions_hand_worked(args, want):
    r = acidity_exceedance(*args)
    got = (float(r.exceedance), float(r.s_reduction), float(r.n_reduction))
    assert got == pytest.approx(want, abs=1e-9)


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


# ------------------------------------------------------------ the group's own file
#: The group's sites.toml as the docs lead one to write it: the forest soil in
#: [site.critical_loads], a heathland with a nutrient-N load only, a lake with an
#: acidity function only (invented values, eq/ha/yr).
OWN = """
[[site]]
id = "hollin"
name = "Hollin Test Forest"
latitude = 52.0
longitude = 5.0
elevation_m = 20.0
land_use = "conifer_forest"
canopy_height_m = 14.0
wind_height_m = 20.0
sampler_height_m = 3.0
utc_offset_h = 1
receptors = ["moorland", "water", "grass"]

[site.critical_loads]          # coniferous forest soil
cl_max_s = 1200.0
cl_min_n = 350.0
cl_max_n = 2100.0
cl_nut_n = 850.0

[site.critical_loads.moorland] # heathland: nutrient N only
cl_nut_n = 700.0

[site.critical_loads.water]    # lake: acidity function only
cl_max_s = 400.0
cl_min_n = 100.0
cl_max_n = 700.0
"""


def _totals(rows):
    import pandas as pd
    return pd.DataFrame([{"site": "hollin", "receptor": r, "period": "2021",
                          "s_dep_eq_ha_yr": s, "n_dep_eq_ha_yr": n, "s_status": "complete",
                          "n_status": "complete", "s_missing": "", "n_missing": ""}
                         for r, s, n in rows])


def test_keys_taken_from_the_site_table_are_noted(tmp_path):
    """The heathland's acidity function and the lake's nutrient-N load come from the
    forest soil's [site.critical_loads] (documented: "the rest come from
    [site.critical_loads]"); exceedance.csv gave the heathland an acidity exceedance and
    the lake a nutrient-N exceedance of the forest's loads with an empty note."""
    from workbench.analysis.exceedance import exceedance_from_totals
    from workbench.io import read_sites
    p = tmp_path / "sites.toml"
    p.write_text(OWN, encoding="utf-8")
    cat = read_sites(p)
    t = exceedance_from_totals(_totals([("conifer_forest", 600.0, 1300.0),
                                        ("moorland", 600.0, 1200.0),
                                        ("water", 660.0, 1100.0), ("grass", 500.0, 900.0)]),
                               cat).set_index("receptor")
    assert "cl_max_s, cl_min_n, cl_max_n from the site's critical loads, given for " \
        "conifer_forest (not in [site.critical_loads.moorland])" in t.loc["moorland", "note"]
    assert "cl_nut_n from the site's critical loads, given for conifer_forest" \
        in t.loc["water", "note"]
    assert t.loc["grass", "note"] == "the site's critical loads, given for conifer_forest"
    assert t.loc["conifer_forest", "note"] == ""
    # the lake, hand-worked on its own function (400, 100, 700), dN = 600: region 3
    # (k = (400 x 1100 + 600 x 660 - 400 x 700) / (400^2 + 600^2) = 556000 / 520000,
    # Ex = k (400 + 600) = 1069.23); nutrient N 1100 - 850 = 250 (from the forest's)
    assert t.loc["water", "ex_acidity_eq_ha_yr"] == pytest.approx(556000 / 520000 * 1000)
    assert t.loc["water", "region"] == 3
    assert t.loc["water", "ex_nutrient_n_eq_ha_yr"] == pytest.approx(250.0)


# ------------------------------------------------------------ the group's mistakes
def _read_error(tmp_path, text):
    from workbench.errors import InputError
    from workbench.io import read_sites
    p = tmp_path / "sites.toml"
    p.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_sites(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line "), msg
    return msg


def test_receptor_named_twice_is_one_located_error(tmp_path):
    """receptors = ["moorland", "water", "moorland"] was accepted: one moorland total
    then gave four rows of exceedance.csv."""
    msg = _read_error(tmp_path, OWN.replace('["moorland", "water", "grass"]',
                                            '["moorland", "water", "moorland"]'))
    assert "line 13, column 'receptors': receptor named twice in receptors: got 'moorland'" \
        in msg
    assert 'expected each surface once (receptors = ["moorland", "water"])' in msg


def test_forgotten_acidity_key_is_one_located_hint(tmp_path):
    """The lake's table without cl_min_n (a missing "column"): no message at all before,
    only "no complete acidity function" in exceedance.csv after a whole run."""
    from workbench.io import read_sites
    own = OWN.replace("[site.critical_loads]  ", "[site.critical_loads.conifer_forest]")
    p = tmp_path / "sites.toml"
    p.write_text(own.replace("cl_min_n = 100.0\n", ""), encoding="utf-8")
    notes = [n for n in read_sites(p).notes if "critical load" in n]
    assert len(notes) == 1, notes
    assert "sites.toml, line 25, column 'cl_max_s': doubtful critical load function in " \
        "[site.critical_loads.water]: cl_max_s and cl_max_n without cl_min_n: the acidity " \
        "exceedance is not computed" in notes[0]
    assert "expected all three of cl_max_s, cl_min_n, cl_max_n, or none of them" in notes[0]
    # a heathland with no acidity key at all, and the forest's complete function: no hint
    p.write_text(own, encoding="utf-8")
    assert not [n for n in read_sites(p).notes if "critical load" in n]
    # beside a site table, the lake takes the forest's cl_min_n = 350 (700 - 350 is
    # below 400: the mass-balance hint), and the hint now says where 350 came from
    p.write_text(OWN.replace("cl_min_n = 100.0\n", ""), encoding="utf-8")
    notes = [n for n in read_sites(p).notes if "critical load" in n]
    assert len(notes) == 1 and "(cl_min_n from [site.critical_loads])" in notes[0], notes


# ------------------------------------------------------- loads given in other units
#: Two more receptors of the group, as given to it: a broadleaf stand in kg S and kg N
#: per ha and yr, a wetland in meq/m2/yr (invented values).
OTHER_UNITS = OWN.replace('["moorland", "water", "grass"]',
                          '["moorland", "water", "grass", "deciduous_forest", "wetland"]') + """
[site.critical_loads.deciduous_forest]
unit = "kg/ha/yr"              # kg S for cl_max_s, kg N for the others
cl_max_s = 15.0
cl_min_n = 5.0
cl_max_n = 40.0
cl_nut_n = 15.0

[site.critical_loads.wetland]
unit = "meq/m2/yr"
cl_max_s = 80.0
cl_min_n = 30.0
cl_max_n = 140.0
cl_nut_n = 50.0
"""
#: eq per kg: 2 eq per mol S, 1 per mol N; molar masses 32.06 and 14.007 g/mol (IUPAC
#: abridged standard atomic weights, from memory); 1 meq/m2 = 1e-3 eq / 1e-4 ha = 10 eq/ha.
EQ_PER_KG_S, EQ_PER_KG_N = 2000 / 32.06, 1000 / 14.007


def test_tables_in_kg_and_meq_per_m2_are_converted_once(tmp_path):
    """Before, the only unit was eq/ha/yr: the kg table gave four "unit slip?" hints and
    was used as 15, 5, 40, 15 eq/ha/yr; the meq/m2 one hinted cl_min_n alone and was
    used 10 times too small."""
    from workbench.analysis.exceedance import exceedance_from_totals
    from workbench.io import read_sites
    p = tmp_path / "sites.toml"
    p.write_text(OTHER_UNITS, encoding="utf-8")
    cat = read_sites(p)
    assert not [n for n in cat.notes if "critical load" in n], cat.notes
    site = cat["hollin"]
    kg = site.critical_loads_for("deciduous_forest")
    assert kg["cl_max_s"] == pytest.approx(15 * EQ_PER_KG_S, rel=1e-4)      # 935.7
    assert kg["cl_min_n"] == pytest.approx(5 * EQ_PER_KG_N, rel=1e-4)       # 357.0
    assert kg["cl_max_n"] == pytest.approx(40 * EQ_PER_KG_N, rel=1e-4)      # 2855.7
    assert kg["cl_nut_n"] == pytest.approx(15 * EQ_PER_KG_N, rel=1e-4)      # 1070.9
    assert site.critical_loads_for("wetland") == pytest.approx(
        {"cl_max_s": 800.0, "cl_min_n": 300.0, "cl_max_n": 1400.0, "cl_nut_n": 500.0})
    # exceedance on the converted function, by the closed form of region 3 (S = 600,
    # N = 1300 lies just above the sloping part): k = (cs N + dN S - cs c1) / (cs^2 + dN^2)
    t = exceedance_from_totals(_totals([("deciduous_forest", 600.0, 1300.0),
                                        ("wetland", 600.0, 1300.0)]), cat).set_index("receptor")
    cs, c0, c1 = 15 * EQ_PER_KG_S, 5 * EQ_PER_KG_N, 40 * EQ_PER_KG_N
    d = c1 - c0
    k = (cs * 1300 + d * 600 - cs * c1) / (cs ** 2 + d ** 2)
    assert t.loc["deciduous_forest", "region"] == 3
    assert t.loc["deciduous_forest", "ex_acidity_eq_ha_yr"] == pytest.approx(k * (cs + d),
                                                                             rel=1e-3)  # 21.0
    # the wetland's function (800, 300, 1400), dN = 1100: 1100 x 600 + 800 x 1300 =
    # 1.70e6 above 800 x 1400 = 1.12e6, neither corner's normal: region 3 again
    k = (800 * 1300 + 1100 * 600 - 800 * 1400) / (800 ** 2 + 1100 ** 2)
    assert t.loc["wetland", "ex_acidity_eq_ha_yr"] == pytest.approx(k * 1900)
    assert t.loc["wetland", "ex_nutrient_n_eq_ha_yr"] == pytest.approx(800.0)


def test_unknown_unit_and_a_unit_in_the_value_are_located(tmp_path):
    from workbench.errors import InputError
    from workbench.io import read_sites
    msg = _read_error(tmp_path, OTHER_UNITS.replace('unit = "meq/m2/yr"', 'unit = "meq/m2"'))
    assert "line 37, column 'unit': unknown unit of critical loads: got 'meq/m2'" in msg
    assert 'expected one of "eq/ha/yr", "keq/ha/yr", "meq/m2/yr", "kg/ha/yr"' in msg
    # a value typed with its unit names the unit key as the way out
    p = tmp_path / "sites.toml"
    p.write_text(OTHER_UNITS.replace("cl_max_s = 80.0", 'cl_max_s = "80 meq/m2/yr"'),
                 encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_sites(p)
    assert 'unit = "kg/ha/yr" (or "meq/m2/yr", "keq/ha/yr")' in str(exc.value)


def test_slips_by_16_and_by_62_are_noted(tmp_path):
    """A kg S value typed where eq is wanted is 62.4 times too small (eq per kg S); g S
    typed as eq is 16.03 times too large (16.03 g S per eq).  CLmaxS = 15000 (g S, for
    936 eq) lies inside the plausible range, and the function hint catches it (CLmaxN -
    CLminN = 1750 below CLmaxS); 15 (kg S) the range hint."""
    from workbench.io import read_sites
    p = tmp_path / "sites.toml"
    for value, words in (("15000.0", "cl_max_n - cl_min_n = 1750 is below cl_max_s = 15000"),
                         ("15.0", "in kg S/ha/yr (1 kg S = 62.4 eq) it is 935.7 eq/ha/yr")):
        p.write_text(OWN.replace("cl_max_s = 1200.0", f"cl_max_s = {value}"), encoding="utf-8")
        notes = [n for n in read_sites(p).notes if "critical load" in n]
        assert len(notes) == 1 and words in notes[0], notes


def test_critical_loads_in_a_scenario_point_to_sites_toml(tmp_path):
    """A group putting its receptor's loads in the scenario, under a mistyped site id:
    the error had no line and listed the override keys alone."""
    from workbench.errors import WorkbenchError
    from workbench.scenario import load_scenario
    (tmp_path / "sites.toml").write_text(OWN, encoding="utf-8")
    s = tmp_path / "scenario.toml"
    s.write_text('[inputs]\nsites = "sites.toml"\n\n[sites.holin.critical_loads.moorland]\n'
                 "cl_nut_n = 600.0\n", encoding="utf-8")
    with pytest.raises(WorkbenchError) as exc:
        load_scenario(s)
    msg = str(exc.value)
    assert "line 4, column 'sites.holin.critical_loads': unknown key" in msg, msg
    assert "critical loads are set in the site catalogue only" in msg


def test_impossible_function_across_units_says_both(tmp_path):
    """CLmaxN of 4 kg N/ha/yr (285.6 eq) under the site's CLminN of 350 eq/ha/yr: one
    located error whose numbers can be compared (hand: 4 x 1000 / 14.007 = 285.6)."""
    text = OTHER_UNITS.replace("cl_max_n = 40.0", "cl_max_n = 4.0").replace(
        "cl_min_n = 5.0\n", "")
    msg = _read_error(tmp_path, text)
    assert "line 32, column 'cl_max_n': impossible critical load function in " \
        "[site.critical_loads.deciduous_forest]: cl_max_n below cl_min_n: got '4.0', " \
        "expected cl_max_n >= cl_min_n = 350 eq/ha/yr (cl_max_n = 4 kg/ha/yr is 285.6 " \
        "eq/ha/yr)" in msg, msg


# ------------------------------------------------------------ probability by hand
def _draws(s, n):
    import xarray as xr
    dims = ("draw", "site", "receptor", "period")
    return xr.Dataset({"s_dep_eq_ha_yr": (dims, np.reshape(s, (-1, 1, 1, 1))),
                       "n_dep_eq_ha_yr": (dims, np.reshape(n, (-1, 1, 1, 1)))},
                      coords={"site": ["hollin"], "receptor": ["grass"], "period": ["2021"]})


def test_probability_is_the_share_of_draws_exceeding_by_hand():
    """Five draws against (1000, 400, 1600) and CLnutN 300, all N below CLminN so the
    acidity exceedance is S - 1000 (region 1): S = 900, 1000 (on the function: not
    exceeding), 1000.001, 1100, 1200 -> 3 of 5 exceed; N = 100, 200, 300 (equal: not
    exceeding), 350, 399 -> 2 of 5 exceed nutrient N (hand-counted).  On a partial
    deposition a share of 0 is not determined and a positive one stays (a lower bound)."""
    import pandas as pd

    from workbench.analysis.exceedance import exceedance_probability
    table = pd.DataFrame([{"site": "hollin", "receptor": "grass", "period": "2021",
                           "cl_max_s_eq_ha_yr": 1000.0, "cl_min_n_eq_ha_yr": 400.0,
                           "cl_max_n_eq_ha_yr": 1600.0, "cl_nut_n_eq_ha_yr": 300.0}])
    s = np.array([900.0, 1000.0, 1000.001, 1100.0, 1200.0])
    n = np.array([100.0, 200.0, 300.0, 350.0, 399.0])
    r = exceedance_probability(table, _draws(s, n)).iloc[0]
    assert r["p_exceed_acidity"] == 3 / 5 and r["p_exceed_nutrient_n"] == 2 / 5
    # the median exceedance is the middle draw's, 1000.001 - 1000 (numpy's linear
    # quantile of 0, 0, 0.001, 100, 200)
    assert r["ex_acidity_eq_ha_yr_p50"] == pytest.approx(0.001, abs=1e-9)
    r = exceedance_probability(table, _draws(s, n), [True]).iloc[0]
    assert r["p_exceed_acidity"] == 3 / 5                      # at least 0.6
    r = exceedance_probability(table, _draws(s / 2, n / 2), [True]).iloc[0]
    assert np.isnan(r["p_exceed_acidity"]) and np.isnan(r["p_exceed_nutrient_n"])
    r = exceedance_probability(table, _draws(s / 2, n / 2), [False]).iloc[0]
    assert r["p_exceed_acidity"] == 0.0 and r["p_exceed_nutrient_n"] == 0.0
