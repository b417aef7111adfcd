"""Hand audit of the Sobol indices and the tornado on the project's own model, with the
default factors of ``[sensitivity]`` (hand_site.py's invented sites, fixed Vd).

test_sobol_reference.py checks the Ishigami function and a two-factor product; this
file checks the ten default factors at once against a variance decomposition derived
by hand, SALib's two estimators against their formulas written out, the sums of the
indices, the factors without effect, the tornado's every number and its units, and
that a seed of 0 repeats.

The hand decomposition (Sobol' 1993 ANOVA decomposition; Saltelli et al. 2008, Global
Sensitivity Analysis: The Primer, ch. 4; for a product of independent factors
Var(XY) = sx^2 my^2 + mx^2 sy^2 + sx^2 sy^2, Goodman 1960, J. Am. Stat. Assoc. 55, 708;
from memory): on the linear layer every total is

    Y = W G P + A sum_k d_k V_k

with W the wet part, d_k the dry part of species k at the point, G the gauge catch,
P the precipitation and A the air concentration calibrations, V_k the Vd multipliers,
all independent and uniform on [l, h] (mean (l + h) / 2, variance (h - l)^2 / 12).
First-order parts: V_G = W^2 s_G^2 m_P^2, V_P = W^2 m_G^2 s_P^2, V_A = s_A^2 (sum d_k
m_k)^2, V_k = m_A^2 d_k^2 s_k^2; interactions V_GP = W^2 s_G^2 s_P^2, V_Ak = s_A^2
d_k^2 s_k^2; nothing else.  ST_G = (V_G + V_GP) / V, ST_A = (V_A + sum_k V_Ak) / V,
ST_k = (V_k + V_Ak) / V.
"""
import numpy as np
import pytest

from analysis.hand_site import write_site
from workbench.analysis import sensitivity as S
from workbench.analysis.sensitivity_options import SensitivityOptions

pytest.importorskip("SALib")

KW = {"resolution": "month", "start": "2020-12-01", "end": "2021-03-01"}
#: Molar masses [g/mol] (IUPAC atomic weights, from memory) and equivalents per mole of
#: element (sulfate 2, nitrate and ammonium 1: common practice).
MOLAR = {"S": 32.06, "N": 14.007}
EQ = {"S": 2.0, "N": 1.0}


@pytest.fixture(scope="module")
def hand(tmp_path_factory):
    sc, study, res = write_site(tmp_path_factory.mktemp("sobol_hand"))
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"],
            "budget": sc.options["budget"], "fixed_velocity": sc.fixed_velocity}
    return study, res, base


def _parts(res, site="wren", period="2021-01"):
    """(wet, {factor: dry part}) [mol m-2] of S and N at the point, by element."""
    dep = res.budget["deposition"].sel(site=site, period=period).isel(receptor=0)
    out = {}
    for el in ("S", "N"):
        wet, dry = 0.0, {}
        for c, v in zip(dep["component"].values, dep.values):
            e, path, sp = str(c).split("/")
            if e != el or not np.isfinite(v):
                continue
            if path == "wet":
                wet += v
            else:
                dry[f"vd_{sp}"] = v
        out[el] = (wet, dry)
    return out


def _hand_indices(factors, wet, dry):
    """S1 and ST of Y = W G P + A sum d_k V_k (the decomposition in the module text)."""
    m = {k: (lo + hi) / 2 for k, (lo, hi) in factors.items()}
    s2 = {k: (hi - lo) ** 2 / 12 for k, (lo, hi) in factors.items()}
    first = {k: 0.0 for k in factors}
    first["gauge_catch"] = wet ** 2 * s2["gauge_catch"] * m["precip_conc"] ** 2
    first["precip_conc"] = wet ** 2 * m["gauge_catch"] ** 2 * s2["precip_conc"]
    first["air_conc"] = s2["air_conc"] * sum(d * m[k] for k, d in dry.items()) ** 2
    inter = {k: s2["air_conc"] * d ** 2 * s2[k] for k, d in dry.items()}
    for k, d in dry.items():
        first[k] = m["air_conc"] ** 2 * d ** 2 * s2[k]
    gp = wet ** 2 * s2["gauge_catch"] * s2["precip_conc"]
    v = sum(first.values()) + gp + sum(inter.values())
    total = dict(first)
    total["gauge_catch"] += gp
    total["precip_conc"] += gp
    total["air_conc"] += sum(inter.values())
    for k in dry:
        total[k] += inter[k]
    return {k: x / v for k, x in first.items()}, {k: x / v for k, x in total.items()}


def test_default_factors_against_the_hand_decomposition(hand):
    """The ten default factors (Vd of every species over +-1 GSD, gauge catch and the
    two concentration calibrations +-10 %) on S total, N total and the potential
    acidity (2 S + N in eq: W and d_k in eq) of one site-month: every S1 and ST
    within SALib's 95 % interval + 0.01 of the hand value (test_sobol_reference.py's
    tolerance); species not measured at the site have S1 = ST = 0 exactly; the sums
    of the indices are the hand sums (sum S1 < 1 < sum ST by the interactions)."""
    study, res, base = hand
    opt = SensitivityOptions(samples=1024, seed=2)
    frame = S.sobol(study, base, opt, KW)
    parts = _parts(res)
    (ws, ds), (wn, dn) = parts["S"], parts["N"]
    cases = {("S", "total"): (ws, ds), ("N", "total"): (wn, dn),
             ("S+N", "potential_acidity"): (
                 1e4 * (EQ["S"] * ws + EQ["N"] * wn),
                 {**{k: 1e4 * EQ["S"] * v for k, v in ds.items()},
                  **{k: 1e4 * EQ["N"] * v for k, v in dn.items()}})}
    for (el, quantity), (wet, dry) in cases.items():
        got = frame[(frame["site"] == "wren") & (frame["period"] == "2021-01")
                    & (frame["element"] == el) & (frame["quantity"] == quantity)]
        got = got.set_index("factor")
        assert set(got.index) == set(opt.factors)
        s1, st = _hand_indices(opt.factors, wet, dry)
        for f in opt.factors:
            assert abs(got.loc[f, "S1"] - s1[f]) <= got.loc[f, "S1_conf"] + 0.01, (el, f)
            assert abs(got.loc[f, "ST"] - st[f]) <= got.loc[f, "ST_conf"] + 0.01, (el, f)
            if st[f] == 0:                            # a species not measured here
                assert got.loc[f, "S1"] == 0 and got.loc[f, "ST"] == 0
        assert sum(s1.values()) < 1 < sum(st.values())
        assert abs(got["S1"].sum() - sum(s1.values())) < 0.02
        assert abs(got["ST"].sum() - sum(st.values())) < 0.02
        assert (got["S1_conf"] >= 0).all() and (got.loc[[f for f in st if st[f] > 0],
                                                         "ST_conf"] > 0).all()


def test_salib_estimators_are_saltelli_2010_and_jansen(hand):
    """The indices are Saltelli et al. (2010), Comput. Phys. Commun. 181, 259, Table 2:
    S1 by (b), V_i = mean(f(B) (f(A_B^i) - f(A))), ST by Jansen's (f), V_Ti =
    mean((f(A) - f(A_B^i))^2) / 2, over the variance of f(A) and f(B), f centred and
    scaled by the mean and SD of all outputs first (SALib does so: centring changes the
    S1 estimator, by mean(f) mean(f(A_B^i) - f(A)), not the index).  Written out
    here on the model's own outputs, in SALib's row layout (A, A_B^1..A_B^k, B per base
    sample, no second order), and compared with what sobol_indices returns."""
    study, _, base = hand
    opt = SensitivityOptions(samples=256, seed=4)
    prob = S.problem(opt)
    x = S.saltelli_sample(prob, opt.samples, opt.seed)
    k = prob["num_vars"]
    assert x.shape == (opt.samples * (k + 2), k)
    y, coords = S.evaluate(study, base, opt, x, KW)
    v = y[:, coords["site"].index("wren"), 0, coords["period"].index("2021-01"), 5]  # N total
    f = (v - v.mean()) / v.std()
    a, b = f[0::k + 2], f[k + 1::k + 2]
    ab = np.stack([f[i + 1::k + 2] for i in range(k)], 1)
    # the A and B blocks differ in every factor, A_B^i only in factor i from A
    xa, xb = x[0::k + 2], x[k + 1::k + 2]
    for i in range(k):
        xi = x[i + 1::k + 2]
        np.testing.assert_array_equal(np.delete(xi, i, 1), np.delete(xa, i, 1))
        np.testing.assert_array_equal(xi[:, i], xb[:, i])
    var = np.var(np.r_[a, b])
    s1 = np.mean(b[:, None] * (ab - a[:, None]), 0) / var
    st = 0.5 * np.mean((a[:, None] - ab) ** 2, 0) / var
    si = S.sobol_indices(prob, v, opt.seed)
    np.testing.assert_allclose(si["S1"], s1, atol=1e-12)
    np.testing.assert_allclose(si["ST"], st, atol=1e-12)


def test_seed_zero_repeats_the_intervals():
    """SensitivityOptions allows seed = 0; SALib's analyze seeds its bootstrap only
    `if seed`, so with 0 the intervals (S1_conf, ST_conf) came from the global
    generator and changed from one run to the next.  Ishigami function
    (SALib.test_functions.Ishigami) through sobol_indices; a seed other than 0 still
    gives SALib's own intervals for that integer seed."""
    from SALib.analyze import sobol as analyze
    from SALib.test_functions import Ishigami
    prob = {"num_vars": 3, "names": ["x1", "x2", "x3"], "bounds": [[-np.pi, np.pi]] * 3}
    y = Ishigami.evaluate(S.saltelli_sample(prob, 64, 0))
    one, two = S.sobol_indices(prob, y, 0), S.sobol_indices(prob, y, 0)
    for key in ("S1_conf", "ST_conf"):
        np.testing.assert_array_equal(one[key], two[key])
    ref = analyze.analyze(prob, y, calc_second_order=False, conf_level=0.95, seed=7)
    mine = S.sobol_indices(prob, y, 7)
    for key in ("S1", "S1_conf", "ST", "ST_conf"):
        np.testing.assert_array_equal(mine[key], ref[key])


def test_tornado_every_number_by_hand_with_its_unit(hand):
    """One site-month, the ten default factors: each end moves the total by (end - 1)
    times the part the factor scales (Vd of k: d_k; gauge catch and precipitation
    calibration: the wet part; air calibration: the whole dry part), converted by hand
    to kg of the element per ha (mol x molar mass x 1e4) or eq/ha for the acidity
    (2 eq per mol S, 1 per mol N); tornado.csv names the unit of each row (it mixed
    kg S, kg N and eq without saying which)."""
    study, res, base = hand
    opt = SensitivityOptions()
    t = S.tornado(study, base, opt, KW)
    t = t[(t["site"] == "wren") & (t["period"] == "2021-01")]
    parts = _parts(res)
    # one month's deposition: per month (it said "per period")
    units = {"S": "kg S ha-1 month-1", "N": "kg N ha-1 month-1",
             "S+N": "eq ha-1 month-1"}
    for el, quantity in (("S", "total"), ("N", "total"), ("S", "wet"), ("N", "dry"),
                         ("S+N", "potential_acidity")):
        if el == "S+N":
            scale = {"S": 1e4 * EQ["S"], "N": 1e4 * EQ["N"]}
            els = ("S", "N")
        else:
            scale = {el: MOLAR[el] * 1e4 * 1e-3}
            els = (el,)
        wet = sum(scale[e] * parts[e][0] for e in els) if quantity != "dry" else 0.0
        dry = {}
        if quantity != "wet":
            for e in els:
                for k, v in parts[e][1].items():
                    dry[k] = dry.get(k, 0.0) + scale[e] * v
        point = wet + sum(dry.values())
        rows = t[(t["element"] == el) & (t["quantity"] == quantity)].set_index("factor")
        assert set(rows.index) == set(opt.factors)
        assert (rows["unit"] == units[el]).all()
        for f, (lo, hi) in opt.factors.items():
            part = {"gauge_catch": wet, "precip_conc": wet,
                    "air_conc": sum(dry.values())}.get(f, dry.get(f, 0.0))
            row = rows.loc[f]
            assert row["output_base"] == pytest.approx(point, rel=1e-4)
            assert row["output_low"] == pytest.approx(point + (lo - 1) * part, rel=1e-4)
            assert row["output_high"] == pytest.approx(point + (hi - 1) * part, rel=1e-4)
            assert (row["low"], row["high"], row["base"]) == (str(float(lo)), str(float(hi)),
                                                              "1.0")


def test_an_index_zero_for_want_of_data_says_so(hand):
    """The sites measure no pNO3, pNH4, NH3 or NO2: vd_NH3 has S1 = ST = 0 on N total
    because NH3 is not measured, not because its Vd does not matter (a range of a
    factor of 2 either way).  sensitivity.csv and tornado.csv gave that 0 like any
    other (the Sobol app's line says why; the files did not); now their `note` says
    so with the budget's words, and that N total's indices are those of its measured
    part.  S total, complete, has no note."""
    study, _, base = hand
    opt = SensitivityOptions(samples=16, seed=1)
    for frame in (S.sobol(study, base, opt, KW), S.tornado(study, base, opt, KW)):
        cell = frame[(frame["site"] == "wren") & (frame["period"] == "2021-01")]
        n_tot = cell[(cell["element"] == "N") & (cell["quantity"] == "total")].set_index(
            "factor")["note"]
        s_tot = cell[(cell["element"] == "S") & (cell["quantity"] == "total")].set_index(
            "factor")["note"]
        for sp in ("NH3", "pNO3", "pNH4", "NO2"):
            assert "no effect for want of data" in n_tot[f"vd_{sp}"]
            assert f"{sp} not measured at the site" in n_tot[f"vd_{sp}"]
        assert "no effect" not in n_tot["vd_HNO3"]
        assert all("the total lacks pNO3 pNH4 NH3 NO2" in v for v in n_tot)
        assert (s_tot == "").all()
