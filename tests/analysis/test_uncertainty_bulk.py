"""The bulk collector in the Monte Carlo and the budget, by hand (docs/budget.md, "Bulk
collectors"; docs/methods_uncertainty.md, "The bulk-collector factor").

The invented network of test_uncertainty_shared_systematics.py (one year 2019, 52 equal
weekly samples a site, a fixed Vd): ``threl`` under a bulk collector all year, ``gars``
from 2 July 2019 (26 of its samples under bulk, 26 wet-only), ``ousby`` wet-only; every
site has the same precipitation and the same NO3 and NH4, so ``ousby``'s wet N is the
unscaled deposition of every site.

1. Under ``scale_wet`` a period holding a collector change writes
   D = sum_wet-only(x) + f sum_bulk(x) over its samples' contributions x; a sample's
   depth and analysis errors act on its own x, so the errors of the bulk samples are
   scaled by f and the others not.  With equal samples and independent errors of
   relative variance v each, Var(D)/D^2 = v (26 + 26 f^2) / (26 (1 + f))^2 (the law of
   propagation for a weighted sum of independent quantities, JCGM 100:2008, 5.1.2).
   The old code took the bulk share at its point value: v / 52 whatever f.
2. A factor per ion (``bulk_wet_factor_ion``): each ion's own, the others
   ``bulk_wet_factor``.
Tolerance of a standard deviation of N draws: 5/sqrt(2 N) relative (common practice).
"""
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from test_uncertainty_shared_systematics import OFF, _draws, _part, _write  # noqa: E402

from workbench.analysis import uncertainty as U  # noqa: E402
from workbench.pipeline import Study  # noqa: E402
from workbench.scenario import load_scenario  # noqa: E402

N = 20000
TOL = 5 / np.sqrt(2 * N)
BULK = {"threl": 'collector = "bulk"\n',
        "gars": 'collector = "bulk"\n[[site.change]]\ndate = 2019-07-02\n'
                'what = "collector"\nfrom = "wet_only"\nto = "bulk"\n'}


def _network(tmp_path, budget=""):
    return _write(tmp_path, BULK, 'bulk_correction = "scale_wet"\n' + budget)


def test_the_bulk_share_is_redrawn_with_the_samples(tmp_path):
    f, sd = 0.2, 0.1
    path = _network(tmp_path / "n", f"bulk_wet_factor = {f}")
    s, point, comps, sites = _draws(path, precip_conc_rel_sd=sd, depth_rel_sd=sd)
    wet = _part(point, comps, "wet:SO4")
    tot = wet + _part(point, comps, "dry:SO2") + _part(point, comps, "dry:pSO4")
    v = (1 + sd ** 2) ** 2 - 1                       # relative variance of (1 + e)(1 + d)
    want_rel = {"threl": np.sqrt(v / 52), "ousby": np.sqrt(v / 52),
                "gars": np.sqrt(v * 26 * (1 + f ** 2)) / (26 * (1 + f))}
    for k, sid in enumerate(sites):
        got = s[:, k].std() / s[:, k].mean()
        assert got == pytest.approx(want_rel[sid] * wet[k] / tot[k], rel=TOL), sid
    # the old code gave gars the others' v / 52: 17 % less than by hand with f = 0.2
    assert np.sqrt(v / 52) < 0.85 * want_rel["gars"]


def test_with_every_factor_off_the_draws_are_the_point(tmp_path):
    """The share drawn with every factor at 1 is the budget's: every draw is the point
    (the share redrawn from the samples' sums equals the one the budget took)."""
    path = _network(tmp_path / "n", "bulk_wet_factor = 0.3")
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    o = sc.options
    res = study.run(o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year")
    lay = U.linear_layer(res, study, "years")
    k = list(lay.budget["site"].values).index("gars")
    assert lay.sites[k].bulk_beta is not None          # the share is redrawn there
    opt = U.UncertaintyOptions(draws=3, seed=1, **OFF)
    noise = U.site_noise(lay.sites[k], opt, 3, 1, 1, (1, "gars"), 2019)
    comp = U.component_draws(lay, k, noise, 2019)
    point = lay.budget["deposition"].values[k]
    np.testing.assert_allclose(comp, np.broadcast_to(point, comp.shape), rtol=1e-12)


def _wet_n(path, **on):
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    o = sc.options
    res = study.run(o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year")
    t = res.table
    t = t[(t["receptor"] == "grass") & (t["pathway"] == "wet")]
    return {(r.site, r.species): r.flux_kg_ha for r in t.itertuples()}, t


def test_a_factor_per_ion(tmp_path):
    """NH4 with its own factor 1.0 (no gain on the funnel), NO3 and SO4 the common 0.8:
    threl's NH4 is ousby's, its NO3 0.8 of ousby's; gars (half its deposition under bulk)
    has NO3 x (1 - 0.5 x 0.2) = 0.9 and NH4 x 1.  Without the table every ion takes 0.8
    (the numbers of before)."""
    flux, t = _wet_n(_network(tmp_path / "ion", "bulk_wet_factor_ion = {NH4 = 1.0}"))
    assert flux[("threl", "NH4")] == pytest.approx(flux[("ousby", "NH4")], rel=1e-9)
    assert flux[("threl", "NO3")] == pytest.approx(0.8 * flux[("ousby", "NO3")], rel=1e-9)
    assert flux[("gars", "NH4")] == pytest.approx(flux[("ousby", "NH4")], rel=1e-9)
    assert flux[("gars", "NO3")] == pytest.approx(0.9 * flux[("ousby", "NO3")], rel=1e-9)
    note = t[(t["site"] == "threl") & (t["species"] == "NH4")]["note"].iloc[0]
    assert "bulk deposition x 1 " in note, note
    flux0, _ = _wet_n(_network(tmp_path / "one"))
    assert flux0[("threl", "NH4")] == pytest.approx(0.8 * flux0[("ousby", "NH4")], rel=1e-9)


def test_a_factor_per_ion_in_the_draws(tmp_path):
    """``bulk_factor_rel_sd`` 0.1 alone, NH4's factor 1.0: u (one per site, shared by
    its ions: ``bulk_factor_ion_correlation`` 1) acts on each ion's bulk part b = s f / (1 - s (1 - f)) of its own f, so
    the N total of gars has relative SD 0.1 (b_NO3 NO3 + b_NH4 NH4) / N with
    b_NO3 = 0.4 / 0.9 and b_NH4 = 0.5 (docs/budget.md, "Bulk collectors")."""
    path = _network(tmp_path / "ion", "bulk_wet_factor_ion = {NH4 = 1.0}")
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    o = sc.options
    res = study.run(o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year")
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=N, seed=7,
                                                      **{**OFF, "bulk_factor_rel_sd": 0.1,
                                                         "bulk_factor_ion_correlation": 1.0}))
    sites = [str(x) for x in q.total_draws["site"].values]
    n_tot = q.total_draws["n_dep_eq_ha_yr"].sel(receptor="grass", period="2019").values
    point = res.years["deposition"].sel(receptor="grass").isel(period=0).values
    comps = [f"{p}:{sp}" for _, p, sp in U.COMPONENTS]
    no3, nh4 = _part(point, comps, "wet:NO3"), _part(point, comps, "wet:NH4")
    n_all = sum(_part(point, comps, c) for c in comps if c in (
        "wet:NO3", "wet:NH4", "dry:HNO3"))
    k = sites.index("gars")
    want = 0.1 * (0.4 / 0.9 * no3[k] + 0.5 * nh4[k]) / n_all[k]
    x = n_tot[:, k]
    assert x.std() / x.mean() == pytest.approx(want, rel=TOL)


def test_a_bad_factor_per_ion_is_refused(tmp_path):
    from workbench.budget import BudgetOptions
    with pytest.raises(ValueError, match="unknown ion 'Ca'"):
        BudgetOptions(bulk_wet_factor_ion={"Ca": 0.5})
    with pytest.raises(ValueError, match=r"must be a number in \[0, 2\]"):
        BudgetOptions(bulk_wet_factor_ion={"NH4": 3.0})


# ------------------------------------------------------- 3. the bulk factor in the Sobol indices
def _sobol(path, factors, samples=1024):
    pytest.importorskip("SALib")
    from workbench.analysis import sensitivity as S
    from workbench.analysis.sensitivity_options import SensitivityOptions
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"],
            "budget": sc.options["budget"], "fixed_velocity": sc.fixed_velocity}
    opt = SensitivityOptions(samples=samples, seed=3, factors=factors)
    kw = {"resolution": "year", "start": "2019-01-01", "end": "2020-01-01"}
    return S.sobol(study, base, opt, kw)


def test_the_bulk_factor_in_the_sobol_indices(tmp_path):
    """S wet = W G H with G the gauge catch and H = 1 + b (U - 1) the bulk part under the
    factor U, both uniform on [0.9, 1.1] (squared coefficient of variation
    c^2 = 0.2^2 / 12 / 1), b = 1 at threl, 0.4 / 0.9 at gars, 0 at ousby.  For a product
    of independent factors (Goodman 1960, from memory; Sobol' 1993 ANOVA decomposition)
    Var/mean^2 = (1 + c_G^2)(1 + c_H^2) - 1, S1_G = c_G^2 / that, S1_H = c_H^2 / that,
    ST = S1 + c_G^2 c_H^2 / that; so S1 sums to just under 1 and ST to just over it.
    At ousby (no bulk samples) the bulk factor's indices are 0 exactly, with a note,
    and the gauge catch's S1 = ST = 1; its other indices are those of a run without the
    bulk factor.  Within SALib's 95 % interval + 0.01 (as the Sobol hand audit).  The old code refused the factor (unknown factor)."""
    f = _sobol(_network(tmp_path / "n"), {"gauge_catch": (0.9, 1.1),
                                          "bulk_wet_factor": (0.9, 1.1),
                                          "vd_SO2": (0.9, 1.1)})
    f0 = f
    f = f[(f["receptor"] == "grass") & (f["element"] == "S") & (f["quantity"] == "wet")]
    c2 = 0.2 ** 2 / 12
    for sid, b in (("threl", 1.0), ("gars", 0.4 / 0.9), ("ousby", 0.0)):
        h2 = b ** 2 * c2
        v = (1 + c2) * (1 + h2) - 1
        want = {"gauge_catch": (c2 / v, (c2 + c2 * h2) / v),
                "bulk_wet_factor": (h2 / v, (h2 + c2 * h2) / v), "vd_SO2": (0.0, 0.0)}
        rows = f[f["site"] == sid].set_index("factor")
        for name, (s1, st) in want.items():
            r = rows.loc[name]
            assert r["S1"] == pytest.approx(s1, abs=r["S1_conf"] + 0.01), (sid, name)
            assert r["ST"] == pytest.approx(st, abs=r["ST_conf"] + 0.01), (sid, name)
        if sid == "ousby":
            assert rows.loc["bulk_wet_factor", "S1"] == 0.0
            assert rows.loc["bulk_wet_factor", "ST"] == 0.0
            assert "no bulk-collector samples" in rows.loc["bulk_wet_factor", "note"]
        else:
            assert 0.95 < rows["S1"].sum() <= 1.0 + rows["S1_conf"].max()
            assert rows["ST"].sum() >= rows["S1"].sum() - 0.01
    # ousby's indices of the other factors are those of a run without the bulk factor
    # (within the 95 % interval), on every output of the site
    g = _sobol(_network(tmp_path / "n"), {"gauge_catch": (0.9, 1.1), "vd_SO2": (0.9, 1.1)})
    keys = ["receptor", "element", "quantity", "factor"]
    a = f0[f0["site"] == "ousby"].merge(g[g["site"] == "ousby"], on=keys)
    assert len(a) == len(g[g["site"] == "ousby"]) > 0
    np.testing.assert_array_less(np.abs(a["S1_x"] - a["S1_y"]), a["S1_conf_y"] + 1e-12)
    np.testing.assert_array_less(np.abs(a["ST_x"] - a["ST_y"]), a["ST_conf_y"] + 1e-12)


def test_the_bulk_factor_joins_the_defaults_where_it_acts(tmp_path):
    from workbench.analysis import sensitivity as S
    from workbench.analysis.sensitivity_options import SensitivityOptions
    from workbench.budget import BudgetOptions
    sc = load_scenario(_network(tmp_path / "n"))
    cat = Study.from_scenario(sc).catalogue()
    opt = SensitivityOptions()
    scale = BudgetOptions(bulk_correction="scale_wet")
    assert S.with_bulk_factor(opt, scale, cat).factors["bulk_wet_factor"] == (0.9, 1.1)
    # not where it cannot act, nor into a table the user gave: the options themselves
    for o, b in ((opt, BudgetOptions(bulk_correction="exclude_particles")),
                 (SensitivityOptions(sites=("ousby",)), scale),
                 (SensitivityOptions(factors={"gauge_catch": (0.9, 1.1),
                                              "vd_SO2": (0.5, 2.0)}), scale)):
        assert S.with_bulk_factor(o, b, cat) is o
    # a network without bulk samples keeps its factors (and so its indices)
    plain = Study.from_scenario(load_scenario(_write(tmp_path / "plain"))).catalogue()
    assert S.with_bulk_factor(opt, scale, plain) is opt
