"""An ecosystem-effects audit of the critical-load comparison (2026-12).

Reference checks, each against something outside the module:

* the exceedance of the critical load function (CLF) of acidity in every region of the
  (N, S) plane and in its degenerate cases, against the nearest point of the function
  found by shapely (``shapely.ops.nearest_points``, a general-purpose geometry library)
  and the definition of the ICP Modelling and Mapping Manual (from memory): the function
  joins (0, CLmaxS), (CLminN, CLmaxS) and (CLmaxN, 0); deposition on or below it is not
  in exceedance; above it Ex = (Sdep - S0) + (Ndep - N0) with (N0, S0) its nearest point;
* the equivalents per kilogram against the molar masses of the ``periodictable`` package
  and the Manual's rounded factors (from memory: 1 keq S = 16 kg S, 1 keq N = 14 kg N);
* which deposition enters: each receptor's own S and N totals of budget.csv (its own dry
  deposition, not that of the site's land use);
* a year whose totals fail completeness: named in exceedance.csv and in the explorer's
  words (the defect fixed here: it read "S total flagged", the words of a total only to
  be read with care, and had no column saying that it fails).
"""
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.analysis.exceedance import (FAILS_NOTE, acidity_exceedance,
                                           exceedance_from_totals)

# shapely is declared in the test extra (pyproject.toml): imported, not skipped
from shapely.geometry import LineString, Point  # noqa: E402
from shapely.ops import nearest_points  # noqa: E402


# ----------------------------------------------------------- the function, by shapely
def _reference(s, n, cs, c0, c1):
    """(exceedance, N reduction, S reduction) from the definition: on or below the
    function 0; else the reductions to its nearest point (shapely)."""
    if n <= c0:
        below = s <= cs
    elif n <= c1:
        below = s * (c1 - c0) <= cs * (c1 - n)      # under the sloping part
    else:
        below = False
    if below:
        return 0.0, 0.0, 0.0
    line = LineString([(0.0, cs), (c0, cs), (c1, 0.0)])
    near = nearest_points(line, Point(n, s))[0]
    return (n - near.x) + (s - near.y), n - near.x, s - near.y


#: Invented functions [eq ha-1 yr-1]: an ordinary one, CLminN = 0, and the degenerate
#: cases CLmaxS = 0 (with CLmaxN = CLminN, as the simple mass balance gives, and the
#: doubtful CLmaxN > CLminN), CLmaxN = CLminN (a vertical sloping part) and all zero.
FUNCTIONS = [(950.0, 357.0, 1420.0), (600.0, 0.0, 900.0), (0.0, 300.0, 300.0),
             (0.0, 300.0, 800.0), (500.0, 400.0, 400.0), (0.0, 0.0, 0.0)]


@pytest.mark.parametrize("clf", FUNCTIONS)
def test_every_region_against_shapely_nearest_point(clf):
    cs, c0, c1 = clf
    top = max(cs, c1, 100.0) * 2.0
    n, s = np.meshgrid(np.linspace(0.0, top, 61), np.linspace(0.0, top, 61))
    r = acidity_exceedance(s, n, cs, c0, c1)
    ref = np.array([[_reference(si, ni, cs, c0, c1) for si, ni in zip(rs, rn)]
                    for rs, rn in zip(s, n)])
    np.testing.assert_allclose(r.exceedance, ref[..., 0], atol=1e-9 * top)
    np.testing.assert_allclose(r.n_reduction, ref[..., 1], atol=1e-9 * top)
    np.testing.assert_allclose(r.s_reduction, ref[..., 2], atol=1e-9 * top)
    assert set(np.unique(r.region[r.exceedance == 0])) <= {0}
    assert ((r.region > 0) == (r.exceedance > 0)).all()


@pytest.mark.parametrize("clf", FUNCTIONS)
def test_exceedance_is_zero_exactly_on_the_function(clf):
    """Points of each part of the function (and its ends) give 0 and region 0."""
    cs, c0, c1 = clf
    t = np.linspace(0.0, 1.0, 101)
    n = np.concatenate([t * c0, c0 + t * (c1 - c0)])
    s = np.concatenate([np.full(t.size, cs), cs * (1.0 - t)])
    r = acidity_exceedance(s, n, cs, c0, c1)
    assert (r.exceedance == 0.0).all() and (r.region == 0).all()


def test_regions_hand_worked_manual_closed_forms():
    """The Manual's closed forms (from memory) at one point of each region of the
    function (950, 357, 1420): region 1 S - CLmaxS; 2 S + N - CLminN - CLmaxS;
    3 the sloping part; 4 S + N - CLmaxN; and N below CLminN under CLmaxS: 0."""
    cs, c0, c1 = 950.0, 357.0, 1420.0
    cases = [((1200.0, 100.0), 250.0, 1),                         # N < CLminN, S > CLmaxS
             ((1500.0, 400.0), 1500 + 400 - 357 - 950, 2),        # beyond the corner
             ((100.0, 1800.0), 100 + 1800 - 1420, 4),             # beyond CLmaxN
             ((0.0, 1500.0), 1500 - 1420, 4),                     # N alone, S = 0
             ((900.0, 100.0), 0.0, 0),                            # under the flat part
             ((0.0, 0.0), 0.0, 0)]
    for (s, n), ex, region in cases:
        r = acidity_exceedance(s, n, cs, c0, c1)
        assert float(r.exceedance) == pytest.approx(ex, abs=1e-9)
        assert int(r.region) == region
    # region 3: k = (CLmaxS N + (CLmaxN - CLminN) S - CLmaxS CLmaxN) / (CLmaxS^2 +
    # (CLmaxN - CLminN)^2), Ex = k (CLmaxS + CLmaxN - CLminN) (the projection, by hand)
    s, n = 700.0, 1100.0
    k = (cs * n + (c1 - c0) * s - cs * c1) / (cs ** 2 + (c1 - c0) ** 2)
    r = acidity_exceedance(s, n, cs, c0, c1)
    assert int(r.region) == 3
    assert float(r.exceedance) == pytest.approx(k * (cs + c1 - c0), rel=1e-12)


# ---------------------------------------------------------------------------- units
def test_eq_per_kg_against_periodictable_and_the_manuals_rounding():
    """1 kg S = 2 x 1000 / M(S) eq, 1 kg N = 1000 / M(N) eq with the atomic weights of
    periodictable; the Manual's rounded 16 kg S and 14 kg N per keq (from memory)
    agree within their rounding (0.2 %, 0.05 %)."""
    import periodictable as pt

    from workbench.io.critical_loads import eq_per_kg, unit_factor
    assert eq_per_kg("S") == pytest.approx(2 * 1000 / pt.S.mass, rel=1e-4)
    assert eq_per_kg("N") == pytest.approx(1000 / pt.N.mass, rel=1e-4)
    assert eq_per_kg("S") == pytest.approx(1000 / 16.0, rel=3e-3)
    assert eq_per_kg("N") == pytest.approx(1000 / 14.0, rel=1e-3)
    # a table in kg/ha/yr: cl_max_s in kg S, the N keys in kg N
    assert unit_factor("kg/ha/yr", "cl_max_s") == pytest.approx(eq_per_kg("S"))
    for key in ("cl_min_n", "cl_max_n", "cl_nut_n"):
        assert unit_factor("kg/ha/yr", key) == pytest.approx(eq_per_kg("N"))


# ------------------------------------------------------- which deposition enters
def test_each_receptor_takes_its_own_totals(analysis_run):
    """exceedance.csv's S and N of each receptor are that receptor's totals in
    budget.csv (eq/ha/yr), and the receptors' dry deposition differs (the land-use
    specific Vd onto the receptor, not the site's own surface)."""
    out, _, _ = analysis_run
    ex = pd.read_csv(out / "exceedance.csv", dtype={"period": str})
    b = pd.read_csv(out / "budget.csv", dtype={"period": str})
    keys = ["site", "receptor", "period"]
    for pathway in ("total", "dry"):
        rows = b[(b["pathway"] == pathway) & (b["species"] == "all")]
        wide = rows.pivot_table(index=keys, columns="element", values="flux_eq_ha_yr")
        if pathway == "dry":
            ridge = wide.xs("2021", level="period").loc["ridge"]
            assert ridge["S"].nunique() == len(ridge) > 1    # one per receptor
            continue
        both = ex.set_index(keys)[["s_dep_eq_ha_yr", "n_dep_eq_ha_yr"]].join(wide)
        assert both[["s_dep_eq_ha_yr", "n_dep_eq_ha_yr"]].notna().any(axis=None)
        np.testing.assert_allclose(both["s_dep_eq_ha_yr"], both["S"], rtol=1e-12)
        np.testing.assert_allclose(both["n_dep_eq_ha_yr"], both["N"], rtol=1e-12)


# ------------------------------------------------------ a total failing completeness
def _totals(**change):
    """One site-year's totals: complete, in eq/ha/yr, below the function."""
    row = {"site": "quill", "receptor": "grass", "period": "2021",
           "s_dep_eq_ha_yr": 300.0, "n_dep_eq_ha_yr": 200.0, "s_status": "complete",
           "n_status": "complete", "s_missing": "", "n_missing": "", "s_basis": "nss",
           "s_fails": False, "n_fails": False, "s_failure": "", "n_failure": ""}
    row.update(change)
    return pd.DataFrame([row])


class _Site:
    id, land_use, surfaces = "quill", "grass", ["grass"]
    critical_loads = {"cl_max_s": 950.0, "cl_min_n": 357.0, "cl_max_n": 1420.0,
                      "cl_nut_n": 714.0}
    receptor_critical_loads = {}

    def critical_loads_for(self, receptor):
        return dict(self.critical_loads)


def test_a_failing_total_is_named_and_does_not_pass():
    """A 0 on an S total failing its gauge record (half the year's rain) read "S total
    flagged", like a total kept only for flagged samples, with no column to tell."""
    why = "SO4: gauge record below minimum (51.1 % of the period; minimum 90 %)"
    t = exceedance_from_totals(_totals(s_status="flagged", s_fails=True, s_failure=why),
                               [_Site()])
    row = t.iloc[0]
    assert row["ex_acidity_eq_ha_yr"] == 0.0 and row["status"] == "flagged"
    assert not row["passes"]
    assert row["note"].startswith(f"S total fails completeness ({why})")
    assert FAILS_NOTE in row["note"]
    flagged = exceedance_from_totals(_totals(s_status="flagged"), [_Site()]).iloc[0]
    assert flagged["passes"] and "fails" not in flagged["note"]     # read with care only
    plain = exceedance_from_totals(_totals(), [_Site()]).iloc[0]
    assert plain["passes"] and plain["status"] == "complete" and plain["note"] == ""


def test_a_run_year_failing_completeness_is_said_in_the_csv_and_the_explorer(tmp_path):
    """The tiny site's four weeks of February 2021 in a study of the whole year: every
    total fails the gauge record (7.7 % of the year); exceedance.csv and the critical
    loads explorer's words say so, with the criterion."""
    sys.path.insert(0, str(Path(__file__).parent))
    from tiny_site import make_tiny

    from workbench.cli import run_scenario
    from workbench.ui.apps_analysis_words import status_note
    make_tiny(tmp_path)
    sites = tmp_path / "sites.toml"
    sites.write_text(sites.read_text() + "\n[site.critical_loads]\ncl_max_s = 400.0\n"
                     "cl_min_n = 200.0\ncl_max_n = 900.0\ncl_nut_n = 300.0\n")
    sc = tmp_path / "scenario.toml"
    sc.write_text(sc.read_text().replace('end = "2021-03-01"\nresolution = "month"',
                                         'end = "2022-01-01"\nresolution = "year"')
                  .replace("draws = 200", "draws = 0"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        _, result, _ = run_scenario(sc, tmp_path / "run", quiet=True)
    b = pd.read_csv(tmp_path / "run" / "budget.csv", dtype={"period": str})
    tot = b[(b["pathway"] == "total") & (b["species"] == "all")]
    assert (tot["passes"].astype(str) == "False").all()
    ex = pd.read_csv(tmp_path / "run" / "exceedance.csv", dtype={"period": str},
                     keep_default_na=False)
    assert list(ex["period"]) == ["2021"]                 # no span: no year passes
    row = ex.iloc[0]
    assert str(row["passes"]) == "False" and row["status"] != "complete"
    s_why = tot[tot["element"] == "S"]["completeness_failure"].iloc[0]
    assert s_why.startswith("SO4: gauge record below minimum (7.7 %")
    assert f"S total fails completeness ({s_why})" in row["note"]
    assert "S total flagged" not in row["note"]
    words = status_note(result.years, "quill", "grass", "2021")
    assert f"S total fails completeness ({s_why})" in words
    assert "no whole figure for the year" in words


# ------------------------------------------------------------- under uncertainty
def test_probability_and_quantiles_against_shapely_over_every_region():
    """400 invented draws of (N, S) spread over every region of two receptors'
    functions, the table's rows in another order than the draws': the share of draws
    above the function (the closed-form inequality of the definition) and the 5/50/95 %
    quantiles of the exceedance of each draw by shapely (numpy's linear quantiles)."""
    import xarray as xr

    from workbench.analysis.exceedance import exceedance_probability
    rng = np.random.default_rng(20261205)
    d = 400
    clf = {"grass": (950.0, 357.0, 1420.0, 714.0), "moorland": (500.0, 400.0, 400.0, 500.0)}
    recs = ["grass", "moorland"]
    s = rng.uniform(0.0, 2000.0, (d, 1, 2, 1))
    n = rng.uniform(0.0, 2500.0, (d, 1, 2, 1))
    dims = ("draw", "site", "receptor", "period")
    draws = xr.Dataset({"s_dep_eq_ha_yr": (dims, s), "n_dep_eq_ha_yr": (dims, n)},
                       coords={"site": ["quill"], "receptor": recs, "period": ["2021"]})
    table = pd.DataFrame([{"site": "quill", "receptor": r, "period": "2021",
                           **dict(zip(["cl_max_s_eq_ha_yr", "cl_min_n_eq_ha_yr",
                                       "cl_max_n_eq_ha_yr", "cl_nut_n_eq_ha_yr"], clf[r]))}
                          for r in reversed(recs)])
    got = exceedance_probability(table, draws)
    for i, r in enumerate(reversed(recs)):
        cs, c0, c1, cn = clf[r]
        k = recs.index(r)
        si, ni = s[:, 0, k, 0], n[:, 0, k, 0]
        ref = np.array([_reference(a, b, cs, c0, c1)[0] for a, b in zip(si, ni)])
        above = ~np.where(ni <= c0, si <= cs,
                          np.where(ni <= c1, si * (c1 - c0) <= cs * (c1 - ni), False))
        assert 0.05 < above.mean() < 0.99                  # both sides are drawn
        row = got.iloc[i]
        assert row["p_exceed_acidity"] == pytest.approx(above.mean(), abs=1e-12)
        assert row["p_exceed_nutrient_n"] == pytest.approx((ni > cn).mean(), abs=1e-12)
        for q, suffix in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
            assert row["ex_acidity_eq_ha_yr" + suffix] == pytest.approx(
                np.quantile(ref, q), abs=1e-6)
            assert row["ex_nutrient_n_eq_ha_yr" + suffix] == pytest.approx(
                np.quantile(np.maximum(ni - cn, 0.0), q), abs=1e-9)


def test_budget_kg_and_eq_columns_agree_with_periodictable(analysis_run):
    """budget.csv's kg and eq columns of every S and N row: g per eq = M(S) / 2 and
    M(N) (periodictable), within its abridged atomic weights (5e-4)."""
    import periodictable as pt
    out, _, _ = analysis_run
    b = pd.read_csv(out / "budget.csv")
    b = b[np.isfinite(b["flux_eq_ha_yr"]) & (b["flux_eq_ha_yr"].abs() > 1e-6)]
    for el, g_per_eq in (("S", pt.S.mass / 2.0), ("N", pt.N.mass)):
        e = b[b["element"] == el]
        assert len(e) > 10
        np.testing.assert_allclose(1000.0 * e["flux_kg_ha_yr"] / e["flux_eq_ha_yr"],
                                   g_per_eq, rtol=5e-4)
