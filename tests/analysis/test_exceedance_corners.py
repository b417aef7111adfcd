"""Exceedance at the corners a user meets: S or N alone, an infinite load, a partial
or missing deposition, a net emission, per-receptor functions, and the unit
conversion of budget.csv's kg/ha/yr to eq/ha/yr end to end.

Definition: ICP Modelling and Mapping Manual (UBA, Dessau), exceedance of critical
loads (Posch et al.); Posch, Hettelingh and De Smet (2001), Water Air Soil Pollut. 130,
1139.  Values hand-worked from that definition; molar masses from periodictable (a
reference library).  test_exceedance.py holds the regions and the geometry.
"""
import types

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.analysis.exceedance import (ExceedanceError, acidity_exceedance,
                                           exceedance_from_totals, exceedance_probability,
                                           nutrient_n_exceedance)

CLF = (950.0, 357.0, 1420.0)        # the demo ridge function: CLmaxS, CLminN, CLmaxN


@pytest.mark.parametrize("s, n, ex, region", [
    (1200.0, 0.0, 250.0, 1),        # S only, above CLmaxS: Ex = S - CLmaxS
    (950.0, 0.0, 0.0, 0),           # S only, exactly CLmaxS: on the function
    (0.0, 1420.0, 0.0, 0),          # N only, exactly CLmaxN: the corner, on the function
    (0.0, 1600.0, 180.0, 4),        # N only above CLmaxN: Ex = N - CLmaxN (the corner)
    (0.0, 1000.0, 0.0, 0),          # N only between CLminN and CLmaxN: below
    (1100.0, 300.0, 150.0, 1),      # N below CLminN: only S is reduced
])
def test_single_element_corners_hand_worked(s, n, ex, region):
    r = acidity_exceedance(s, n, *CLF)
    assert float(r.exceedance) == pytest.approx(ex, abs=1e-9)
    assert int(r.region) == region


def test_cl_max_s_zero_tolerates_n_up_to_cl_max_n():
    """CLmaxS = 0: the function lies on the N axis; N up to CLmaxN does not exceed, any S
    does by S (hand-worked: nearest point straight below)."""
    r = acidity_exceedance(np.array([0.0, 40.0, 0.0]), np.array([900.0, 900.0, 1500.0]),
                           0.0, 357.0, 1420.0)
    np.testing.assert_allclose(r.exceedance, [0.0, 40.0, 80.0])


def test_infinite_load_is_refused():
    """An infinite CLmaxS used to give Ex = 0 ("not exceeded") and an infinite CLmaxN
    NaN with region 4; both are refused now (sites.toml refuses them too)."""
    with pytest.raises(ExceedanceError, match="cl_max_s = inf is not finite"):
        acidity_exceedance(1200.0, 100.0, np.inf, 357.0, 1420.0)
    with pytest.raises(ExceedanceError, match="cl_max_n = inf is not finite"):
        acidity_exceedance(1200.0, 100.0, 950.0, 357.0, np.inf)

    # nutrient N alike: an infinite CLnutN gave 0 ("not exceeded"), a complete-looking
    # zero; NaN (no load) still gives NaN
    with pytest.raises(ExceedanceError, match="cl_nut_n = inf is not finite"):
        nutrient_n_exceedance(1713.0, np.inf)
    with pytest.raises(ExceedanceError, match=r"cl_nut_n = -5 \(at position 1\)"):
        nutrient_n_exceedance(np.array([1713.0, 900.0]), np.array([714.0, -5.0]))
    assert np.isnan(nutrient_n_exceedance(1713.0, np.nan))


# ------------------------------------------------------------------ the table's rows
def _catalogue(loads=dict(cl_max_s=950.0, cl_min_n=357.0, cl_max_n=1420.0, cl_nut_n=714.0)):
    site = types.SimpleNamespace(
        id="alpha", land_use="grass", surfaces=("grass",), receptor_critical_loads={},
        critical_loads=loads, critical_loads_for=lambda r: dict(loads))
    return [site]


def _totals(rows):
    """annual_totals-like rows: (period, S eq, N eq, S status, N status, N missing)."""
    return pd.DataFrame([{"site": "alpha", "receptor": "grass", "period": p,
                          "s_dep_eq_ha_yr": s, "n_dep_eq_ha_yr": n, "s_status": ss,
                          "n_status": ns, "s_missing": "", "n_missing": nm}
                         for p, s, n, ss, ns, nm in rows])


def test_partial_deposition_never_gives_a_complete_looking_zero():
    """Below the function on a partial N total (NO2 missing): the full deposition may
    exceed, so Ex = 0 would claim what is not known -> NaN, region -1, a note.  Above
    it, the exceedance stands as a lower bound (Ex grows with deposition: monotone,
    test_exceedance.py)."""
    t = exceedance_from_totals(_totals([
        ("2020", 500.0, 700.0, "complete", "partial", "NO2"),    # below: not determined
        ("2021", 1200.0, 200.0, "complete", "partial", "NO2"),   # above: at least 250
        ("2022", 500.0, 700.0, "complete", "complete", ""),      # below, complete: 0
        ("2023", 500.0, 700.0, "flagged", "complete", ""),       # below, flagged: 0 (flagged)
        ("2024", np.nan, np.nan, "missing", "missing", "SO4"),   # missing: NaN
    ]), _catalogue()).set_index("period")
    assert np.isnan(t.loc["2020", "ex_acidity_eq_ha_yr"]) and t.loc["2020", "region"] == -1
    assert "exceedances not determined" in t.loc["2020", "note"]
    assert t.loc["2020", "status"] == "flagged"
    # nutrient N: 700 - 714 < 0 on a partial N: not determined either
    assert np.isnan(t.loc["2020", "ex_nutrient_n_eq_ha_yr"])
    assert t.loc["2021", "ex_acidity_eq_ha_yr"] == pytest.approx(250.0)
    assert t.loc["2021", "region"] == 1
    assert "acidity exceedance is a lower bound" in t.loc["2021", "note"]   # ExnutN: not determined
    assert t.loc["2022", "ex_acidity_eq_ha_yr"] == 0.0 and t.loc["2022", "status"] == "complete"
    assert t.loc["2023", "ex_acidity_eq_ha_yr"] == 0.0 and t.loc["2023", "status"] == "flagged"
    assert np.isnan(t.loc["2024", "ex_acidity_eq_ha_yr"]) and t.loc["2024", "region"] == -1
    assert t.loc["2024", "status"] == "missing"
    # the rule: no row whose total is partial or missing shows an exceedance of 0
    bad = t[(t["status"] != "complete") & (t["ex_acidity_eq_ha_yr"] == 0.0)]
    assert list(bad.index) == ["2023"]


def test_a_partial_s_total_leaves_the_nutrient_n_exceedance_determined():
    """Nutrient N rests on the N total alone (ExnutN = max(N - CLnutN, 0), ICP Modelling
    and Mapping Manual): a partial S (SO2 not measured) beside a complete N left a
    nutrient-N exceedance of 0 "not determined" (NaN), and its probability too.  The
    acidity exceedance, which rests on S as well, stays not determined at 0."""
    t = _totals([("2021", 300.0, 500.0, "partial", "complete", ""),     # N 500 < 714
                 ("2022", 300.0, 900.0, "partial", "complete", "")])    # N 900 > 714
    t["s_missing"] = "SO2"
    r = exceedance_from_totals(t, _catalogue()).set_index("period")
    assert r.loc["2021", "ex_nutrient_n_eq_ha_yr"] == 0.0                # determined: N complete
    assert np.isnan(r.loc["2021", "ex_acidity_eq_ha_yr"]) and r.loc["2021", "region"] == -1
    assert "acidity exceedance not determined" in r.loc["2021", "note"]
    assert "nutrient-N exceedance not determined" not in r.loc["2021", "note"]
    # 2022: S 300 < 950, N 900 < 1420 and below the sloping part (1063 x 300 + 950 x 900
    # < 950 x 1420): acidity 0 on a partial S, not determined; nutrient N 900 - 714 =
    # 186, not a lower bound (N complete)
    assert r.loc["2022", "ex_nutrient_n_eq_ha_yr"] == pytest.approx(186.0)
    assert "lower bound" not in r.loc["2022", "note"]
    draws = xr.Dataset({k: (("draw", "site", "receptor", "period"), v[:, None, None, :])
                        for k, v in (("s_dep_eq_ha_yr", np.full((4, 2), 300.0)),
                                     ("n_dep_eq_ha_yr", np.array([[500.0, 900.0]] * 4)))},
                       coords={"site": ["alpha"], "receptor": ["grass"],
                               "period": ["2021", "2022"]})
    p = exceedance_probability(r.reset_index(), draws, r.attrs["lower_bound"],
                               r.attrs["lower_bound_n"])
    assert p.loc[0, "p_exceed_nutrient_n"] == 0.0 and p.loc[1, "p_exceed_nutrient_n"] == 1.0
    assert np.isnan(p.loc[0, "p_exceed_acidity"])


def test_net_emission_gives_no_exceedance_and_no_crash():
    """A negative N total (net NH3 emission, bidirectional exchange) used to raise
    ExceedanceError and stop the writing of the run."""
    t = exceedance_from_totals(_totals([("2020", 500.0, -40.0, "complete", "complete", "")]),
                               _catalogue())
    assert np.isnan(t.loc[0, "ex_acidity_eq_ha_yr"]) and t.loc[0, "region"] == -1
    assert np.isnan(t.loc[0, "ex_nutrient_n_eq_ha_yr"])
    assert "net N emission" in t.loc[0, "note"]


def test_probability_on_partial_and_net_emission_rows():
    """p = 0 on a partial deposition is not determined (NaN); a negative draw is a net
    emission (NaN, no error)."""
    table = pd.DataFrame({"site": ["alpha"] * 3, "receptor": ["grass"] * 3,
                          "period": ["2020", "2021", "2022"],
                          "cl_max_s_eq_ha_yr": 950.0, "cl_min_n_eq_ha_yr": 357.0,
                          "cl_max_n_eq_ha_yr": 1420.0, "cl_nut_n_eq_ha_yr": 714.0})
    d = 50
    s = np.full((d, 1, 1, 3), 500.0)
    n = np.full((d, 1, 1, 3), 700.0)
    n[3, 0, 0, 2] = -5.0
    draws = xr.Dataset({"s_dep_eq_ha_yr": (("draw", "site", "receptor", "period"), s),
                        "n_dep_eq_ha_yr": (("draw", "site", "receptor", "period"), n)},
                       coords={"site": ["alpha"], "receptor": ["grass"],
                               "period": ["2020", "2021", "2022"]})
    p = exceedance_probability(table, draws, lower_bound=[True, False, False])
    assert np.isnan(p.loc[0, "p_exceed_acidity"]) and p.loc[1, "p_exceed_acidity"] == 0.0
    assert np.isnan(p.loc[0, "ex_acidity_eq_ha_yr_p50"])
    assert np.isnan(p.loc[2, "p_exceed_acidity"])


# ------------------------------------------------------------------ a run, end to end
def test_kg_to_eq_end_to_end_hand_worked_periodictable(analysis_run):
    """ridge, conifer_forest, 2021: budget.csv's S and N totals [kg/ha/yr] converted by
    hand (1 eq per mol N, 2 eq per mol S; molar masses of periodictable) are the
    deposition of exceedance.csv, and its exceedance is the region-3 closed form
    k (CLmaxS + CLmaxN - CLminN), k = (CLmaxS N + (CLmaxN - CLminN) S - CLmaxS CLmaxN) /
    (CLmaxS^2 + (CLmaxN - CLminN)^2) (docs/methods_analysis.md, "Units end to end", whose
    numbers of this row are held by tests/test_docs_analysis_units.py)."""
    pt = pytest.importorskip("periodictable")
    out, _, _ = analysis_run
    b = pd.read_csv(out / "budget.csv")
    tot = b[(b["pathway"] == "total") & (b["species"] == "all") & (b["site"] == "ridge")
            & (b["receptor"] == "conifer_forest") & (b["period"].astype(str) == "2021")]
    kg = tot.set_index("element")["flux_kg_ha_yr"]
    n_eq = kg["N"] * 1000.0 / pt.N.mass
    s_eq = kg["S"] * 2 * 1000.0 / pt.S.mass
    t = pd.read_csv(out / "exceedance.csv")
    row = t[(t["site"] == "ridge") & (t["receptor"] == "conifer_forest")
            & (t["period"].astype(str) == "2021")].iloc[0]
    assert row["n_dep_eq_ha_yr"] == pytest.approx(n_eq, rel=1e-6)
    assert row["s_dep_eq_ha_yr"] == pytest.approx(s_eq, rel=1e-6)
    cs, c0, c1 = CLF
    k = (cs * n_eq + (c1 - c0) * s_eq - cs * c1) / (cs ** 2 + (c1 - c0) ** 2)
    assert row["region"] == 3
    assert row["ex_acidity_eq_ha_yr"] == pytest.approx(k * (cs + c1 - c0), rel=1e-6)
    assert row["n_reduction_eq_ha_yr"] == pytest.approx(k * cs, rel=1e-6)
    assert row["s_reduction_eq_ha_yr"] == pytest.approx(k * (c1 - c0), rel=1e-6)
    assert row["ex_nutrient_n_eq_ha_yr"] == pytest.approx(n_eq - 714.0, rel=1e-6)


def test_receptor_function_is_the_one_used(analysis_run):
    """ridge's moorland has its own function (600, 214, 900; conftest.py): its rows are
    computed with it, not with the site's."""
    out, _, _ = analysis_run
    t = pd.read_csv(out / "exceedance.csv")
    moor = t[(t["site"] == "ridge") & (t["receptor"] == "moorland")]
    assert len(moor)
    r = acidity_exceedance(moor["s_dep_eq_ha_yr"].to_numpy(), moor["n_dep_eq_ha_yr"].to_numpy(),
                           600.0, 214.0, 900.0)
    np.testing.assert_allclose(moor["ex_acidity_eq_ha_yr"], r.exceedance, rtol=1e-9)
    np.testing.assert_allclose(moor["ex_nutrient_n_eq_ha_yr"],
                               np.maximum(moor["n_dep_eq_ha_yr"] - 500.0, 0), rtol=1e-9)


def test_partial_rows_of_a_run_are_bounds_or_undetermined(analysis_run):
    """mere's N total lacks NO2 in every year: each row is either a positive lower bound
    or not determined, never an exceedance of 0."""
    out, _, _ = analysis_run
    t = pd.read_csv(out / "exceedance.csv", keep_default_na=False, na_values=[""])
    mere = t[t["site"] == "mere"]
    assert len(mere)
    assert not (mere["ex_acidity_eq_ha_yr"] == 0).any()
    assert not (mere["ex_nutrient_n_eq_ha_yr"] == 0).any()
    und = mere["ex_acidity_eq_ha_yr"].isna()
    assert (mere.loc[und, "region"] == -1).all()
    assert mere.loc[und, "note"].str.contains("not determined").all()
    assert mere.loc[~und, "note"].str.contains("lower bounds").all()
