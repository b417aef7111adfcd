"""A review of exceedance.csv as an ecosystem-effects report would read it.

1. The exceedance of the critical load function of acidity against an independent hand
   implementation of the manual's closed-form case distinction (ICP Modelling and
   Mapping Manual, chapter on critical load exceedances; Posch, Hettelingh and De Smet
   2001, Water Air Soil Pollut. 130, 1139; all written here from memory): region 0 on
   or below the function, region 1 N <= CLminN (Ex = S - CLmaxS), region 2 the corner
   (CLminN, CLmaxS) (Ex = S + N - CLminN - CLmaxS), region 4 the corner (CLmaxN, 0)
   (Ex = S + N - CLmaxN), region 3 the orthogonal projection on the sloping part.  The
   grid covers every region and the edge cases (CLminN = 0, CLmaxS = 0, CLmaxN =
   CLminN, all 0, points exactly on the function, N below CLminN).  A deposition on or
   below the function is reported as 0, not as a negative "non-exceedance"
   (docs/methods_analysis.md says 0).
2. kg to eq from the molar masses of periodictable (not from memory).
3. Defects found: the S of a row whose non-sea-salt SO4 fell back to total SO4 (no
   sea-salt tracer) counts sea salt, and exceedance.csv said only "S total flagged";
   the span row is the exceedance of the mean deposition, which the report headed
   "mean of the years" and the CSV did not say (the exceedance is not linear: the
   demo's farm grass reads 0 for the mean deposition, 43 eq/ha/yr in 2019).
"""
import sys
import types
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.analysis.exceedance import (acidity_exceedance, exceedance_from_totals,
                                           nutrient_n_exceedance)

#: Words of the notes (exceedance.SPAN_NOTE, exceedance.SEA_SALT_FALLBACK), written out
#: so that this file runs on the code before them.
SPAN_NOTE = "exceedance of the mean deposition of the years used"
SEA_SALT_FALLBACK = "S includes sea-salt sulfate (the non-sea-salt SO4 fell back"


def _hand(s, n, cs, c0, c1):
    """The manual's case distinction, written from memory, independent of the module's
    projection: (exceedance, region)."""
    s, n = np.broadcast_arrays(np.asarray(s, float), np.asarray(n, float))
    dn = c1 - c0
    inside = (s <= cs) & (n <= c1) & (dn * s + cs * n <= cs * c1)
    r1 = n <= c0
    r2 = (s - cs) * cs >= (n - c0) * dn                 # above the normal at (CLminN, CLmaxS)
    r4 = s * cs <= (n - c1) * dn                        # below the normal at (CLmaxN, 0)
    den = cs ** 2 + dn ** 2
    k = np.divide(cs * n + dn * s - cs * c1, den, out=np.zeros_like(s), where=den > 0)
    ex = np.select([inside, r1, r2, r4], [0.0, s - cs, s + n - c0 - cs, s + n - c1],
                   k * (cs + dn))
    return ex, np.select([inside, r1, r2, r4], [0, 1, 2, 4], 3)


FUNCTIONS = [(950.0, 357.0, 1420.0), (1200.0, 200.0, 3000.0), (1000.0, 0.0, 1000.0),
             (0.0, 300.0, 800.0), (0.0, 300.0, 300.0), (500.0, 500.0, 500.0),
             (500.0, 0.0, 0.0), (0.0, 0.0, 0.0)]


@pytest.mark.parametrize("cs, c0, c1", FUNCTIONS)
def test_grid_against_hand_case_distinction(cs, c0, c1):
    """401 x 401 depositions from 0 to 4000 eq/ha/yr (every region of each function,
    the boundaries on the grid's 10 eq steps included): same exceedance to 1e-9 and the
    same region code."""
    g = np.linspace(0.0, 4000.0, 401)
    n, s = np.meshgrid(g, g)
    r = acidity_exceedance(s, n, cs, c0, c1)
    ex, region = _hand(s, n, cs, c0, c1)
    np.testing.assert_allclose(r.exceedance, ex, rtol=0, atol=1e-9)
    np.testing.assert_array_equal(r.region, region)
    np.testing.assert_allclose(r.s_reduction + r.n_reduction, r.exceedance, atol=1e-9)
    assert (r.exceedance >= 0).all()                    # 0 below, never a negative figure
    present = set(np.unique(region).tolist())
    if cs > 0 and c1 > c0 > 0:
        assert present == {0, 1, 2, 3, 4}


def test_points_on_the_function_and_random_points():
    """Vertices, points along both parts (computed in floating point) give 0, region 0;
    random points off the grid agree with the hand distinction."""
    cs, c0, c1 = 950.0, 357.0, 1420.0
    t = np.linspace(0.0, 1.0, 101)
    n = np.concatenate([t * c0, c0 + t * (c1 - c0)])
    s = np.concatenate([np.full(t.size, cs), cs * (1.0 - t)])
    r = acidity_exceedance(s, n, cs, c0, c1)
    assert (r.exceedance == 0).all() and (r.region == 0).all()
    rng = np.random.default_rng(7)
    s, n = rng.uniform(0, 3000, 20000), rng.uniform(0, 3000, 20000)
    r = acidity_exceedance(s, n, cs, c0, c1)
    ex, region = _hand(s, n, cs, c0, c1)
    np.testing.assert_allclose(r.exceedance, ex, atol=1e-9)
    np.testing.assert_array_equal(r.region, region)


def test_hand_worked_regions():
    """One point per region, worked by hand on (950, 357, 1420)."""
    cases = [((900.0, 300.0), 0.0, 0),       # below
             ((1200.0, 200.0), 250.0, 1),    # N below CLminN: S only, 1200 - 950
             ((1400.0, 400.0), 493.0, 2),    # 1400 + 400 - 357 - 950
             ((100.0, 2000.0), 680.0, 4),    # 100 + 2000 - 1420
             ((600.0, 1300.0), None, 3)]
    for (s, n), want, reg in cases:
        r = acidity_exceedance(s, n, 950.0, 357.0, 1420.0)
        assert int(r.region) == reg
        if want is not None:
            assert float(r.exceedance) == pytest.approx(want)
    # region 3 by hand: k = (950 x 1300 + 1063 x 600 - 950 x 1420) / (950^2 + 1063^2)
    k = (950 * 1300 + 1063 * 600 - 950 * 1420) / (950 ** 2 + 1063 ** 2)
    assert float(acidity_exceedance(600.0, 1300.0, 950.0, 357.0, 1420.0).exceedance) == \
        pytest.approx(k * (950 + 1063))


def test_nutrient_n_hand():
    """ExnutN = max(N - CLnutN, 0): 0 below and at the load, never negative; NaN kept."""
    out = nutrient_n_exceedance(np.array([0.0, 713.0, 714.0, 715.5, np.nan]), 714.0)
    np.testing.assert_array_equal(out[:4], [0.0, 0.0, 0.0, 1.5])
    assert np.isnan(out[4])


def test_kg_to_eq_from_periodictable_molar_masses():
    """1 kg S = 2 x 1000 / M(S) eq = 62.4 eq; 1 kg N = 1000 / M(N) = 71.4 eq
    (periodictable's molar masses; 2 eq per mol S as sulfate, 1 per mol N, common
    practice)."""
    pt = pytest.importorskip("periodictable")
    from workbench.units import element_deposition_in
    for el, eq_per_mol in (("S", 2.0), ("N", 1.0)):
        mass = getattr(pt, el).mass                                  # g/mol
        mol_m2 = 1.0 / (mass * 1e-3) / 1e4                           # 1 kg/ha in mol m-2
        assert float(element_deposition_in(mol_m2, el, "kg_ha")) == pytest.approx(1.0, rel=1e-4)
        eq = float(element_deposition_in(mol_m2, el, "eq_ha"))
        assert eq == pytest.approx(eq_per_mol * 1000.0 / mass, rel=1e-6)
    assert 2000.0 / pt.S.mass == pytest.approx(62.4, abs=0.05)
    assert 1000.0 / pt.N.mass == pytest.approx(71.4, abs=0.05)
    # critical loads given in kg/ha/yr in sites.toml: kg S for CLmaxS, kg N for the rest
    from workbench.io.critical_loads import unit_factor
    assert unit_factor("kg/ha/yr", "cl_max_s") == pytest.approx(2000.0 / pt.S.mass, rel=1e-6)
    for key in ("cl_min_n", "cl_max_n", "cl_nut_n"):
        assert unit_factor("kg/ha/yr", key) == pytest.approx(1000.0 / pt.N.mass, rel=1e-6)


# ------------------------------------------------------------------ the table's notes
def _catalogue(loads=dict(cl_max_s=950.0, cl_min_n=357.0, cl_max_n=1420.0, cl_nut_n=714.0)):
    site = types.SimpleNamespace(
        id="alpha", land_use="grass", surfaces=("grass",), receptor_critical_loads={},
        critical_loads=loads, critical_loads_for=lambda r: dict(loads))
    return [site]


def _totals(rows):
    return pd.DataFrame([{"site": "alpha", "receptor": "grass", "period": p,
                          "s_dep_eq_ha_yr": s, "n_dep_eq_ha_yr": n, "s_status": "complete",
                          "n_status": "complete", "s_missing": "", "n_missing": ""}
                         for p, s, n in rows])


def test_span_row_says_exceedance_of_the_mean_deposition():
    """Two years, one exceeded (S 1200: 250 eq/ha/yr), one not (S 600): the mean of the
    years' exceedances is 125, the exceedance of the mean deposition (S 900, N 200) is
    0.  The span row gives the latter, and its note now says so (it said nothing, and
    report.html headed it "mean of the years")."""
    t = exceedance_from_totals(_totals([("2020", 1200.0, 200.0), ("2021", 600.0, 200.0),
                                        ("span", 900.0, 200.0)]), _catalogue())
    t = t.set_index("period")
    assert t.loc["2020", "ex_acidity_eq_ha_yr"] == pytest.approx(250.0)
    assert t.loc["2021", "ex_acidity_eq_ha_yr"] == 0.0
    assert t.loc["span", "ex_acidity_eq_ha_yr"] == 0.0          # not (250 + 0) / 2
    assert SPAN_NOTE in t.loc["span", "note"]
    assert SPAN_NOTE not in t.loc["2020", "note"]


def test_report_heads_the_span_as_exceedance_of_the_mean_deposition(analysis_run):
    out, _, _ = analysis_run
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "Critical-load exceedance of the mean deposition" in html
    assert "not the mean of the years' exceedances" in html


def test_fallback_to_total_sulfate_is_said_in_the_exceedance_note(tmp_path):
    """Two sites on the nss basis (tests/test_sulfate_basis_flag.py): beta's samples
    have no Na, so its wet SO4 fell back to total SO4 (budget.csv: sulfate_basis
    ``total``, flagged).  Its exceedance counts sea-salt sulfate, and exceedance.csv
    said only "S total flagged"; alpha's (non-sea-salt) note says nothing of sea salt."""
    sys.path.insert(0, str(Path(__file__).parents[1]))
    from test_sulfate_basis_flag import _two_sites
    from workbench.cli import run_scenario
    sc = _two_sites(tmp_path)
    sites = tmp_path / "sites.toml"
    sites.write_text(sites.read_text().replace(
        "utc_offset_h = 0\n", "utc_offset_h = 0\n[site.critical_loads]\ncl_max_s = 100.0\n"
        "cl_min_n = 20.0\ncl_max_n = 200.0\ncl_nut_n = 50.0\n"))
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    e = pd.read_csv(written["exceedance.csv"], keep_default_na=False).set_index("site")
    assert SEA_SALT_FALLBACK in e.loc["beta", "note"]
    assert "sea-salt" not in e.loc["alpha", "note"]
    assert float(e.loc["beta", "ex_acidity_eq_ha_yr"]) > 0


def test_median_exceedance_is_of_the_draws_not_the_exceedance_of_the_median():
    """Draws of S and N across the sloping part (S log-normal around 600, N around
    1000; the function (950, 357, 1420)): the 50 % column is the median of the draws'
    exceedances and p the share of draws above 0, by hand; the exceedance of the median
    deposition is another number (the exceedance is not linear), so neither stands in
    for the other (scipy.stats.lognorm draws; the quantile is numpy's, common practice)."""
    import xarray as xr
    from scipy import stats
    from workbench.analysis.exceedance import exceedance_probability
    d = 4001
    s = stats.lognorm(0.4, scale=600.0).rvs(d, random_state=1)
    n = stats.lognorm(0.3, scale=1000.0).rvs(d, random_state=2)
    table = pd.DataFrame({"site": ["alpha"], "receptor": ["grass"], "period": ["2021"],
                          "cl_max_s_eq_ha_yr": 950.0, "cl_min_n_eq_ha_yr": 357.0,
                          "cl_max_n_eq_ha_yr": 1420.0, "cl_nut_n_eq_ha_yr": 714.0})
    draws = xr.Dataset({k: (("draw", "site", "receptor", "period"), v[:, None, None, None])
                        for k, v in (("s_dep_eq_ha_yr", s), ("n_dep_eq_ha_yr", n))},
                       coords={"site": ["alpha"], "receptor": ["grass"], "period": ["2021"]})
    p = exceedance_probability(table, draws).iloc[0]
    ex, _ = _hand(s, n, 950.0, 357.0, 1420.0)
    assert p["ex_acidity_eq_ha_yr_p50"] == pytest.approx(np.median(ex), abs=1e-9)
    assert p["p_exceed_acidity"] == pytest.approx(np.mean(ex > 0), abs=1e-12)
    assert p["ex_nutrient_n_eq_ha_yr_p50"] == pytest.approx(np.median(np.maximum(n - 714, 0)))
    of_median, _ = _hand(np.median(s), np.median(n), 950.0, 357.0, 1420.0)
    assert abs(float(of_median) - np.median(ex)) > 10.0       # not the same figure


def test_a_filled_total_is_named_in_the_note():
    """Status ``filled`` (a gap of a total filled, e.g. a gauge depth) had an empty note:
    the demo's farm, 2019, read "filled" and nothing said which total.  Now the note
    names it, as it names a flagged or partial one."""
    t = _totals([("2019", 600.0, 900.0), ("2020", 600.0, 900.0)])
    t.loc[0, "n_status"] = "filled"
    r = exceedance_from_totals(t, _catalogue()).set_index("period")
    assert r.loc["2019", "status"] == "filled" and "N total filled" in r.loc["2019", "note"]
    assert "S total" not in r.loc["2019", "note"]
    assert r.loc["2020", "status"] == "complete" and r.loc["2020", "note"] == ""
