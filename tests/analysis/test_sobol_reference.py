"""The Sobol machinery of the sensitivity analysis against analytic indices.

1. The Ishigami function (SALib.test_functions.Ishigami, a = 7, b = 0.1) through the
   same sampling and analysis calls as :func:`workbench.analysis.sensitivity.sobol`
   (:func:`~workbench.analysis.sensitivity.saltelli_sample`,
   :func:`~workbench.analysis.sensitivity.sobol_indices`).  Analytic variances (Ishigami
   and Homma 1990; Saltelli et al. 2008, Global Sensitivity Analysis: The Primer, from
   memory): V1 = (1 + b pi^4 / 5)^2 / 2, V2 = a^2 / 8, V13 = 8 b^2 pi^8 / 225, V3 = 0;
   S1 = 0.3139, S2 = 0.4424, S3 = 0, ST1 = 0.5576, ST2 = 0.4424, ST3 = 0.2437.
2. An interaction through the budget itself: on the tiny site (fixed Vd), S_dry =
   A (c1 X + c2) with A = the air-concentration calibration and X = the SO2 Vd
   multiplier, independent and uniform.  For Y = A B with A, B independent (textbook,
   from memory): V_A = Var(A) E[B]^2, V_B = E[A]^2 Var(B), V_AB = Var(A) Var(B).

Tolerance: SALib's 95 % bootstrap half-width (the ``_conf`` columns) plus 0.01 for the
bootstrap's own error; the analytic values themselves are exact here.
"""
import numpy as np
import pytest

from workbench.analysis import sensitivity as S
from workbench.analysis.uncertainty import COMPONENTS

pytest.importorskip("SALib")


def _ishigami_analytic(a=7.0, b=0.1):
    v1 = 0.5 * (1 + b * np.pi ** 4 / 5) ** 2
    v2 = a ** 2 / 8
    v13 = 8 * b ** 2 * np.pi ** 8 / 225
    v = v1 + v2 + v13
    return np.array([v1, v2, 0.0]) / v, np.array([v1 + v13, v2, v13]) / v


def test_ishigami_analytic_values_as_published():
    s1, st = _ishigami_analytic()
    np.testing.assert_allclose(s1, [0.3139, 0.4424, 0.0], atol=1e-4)     # (from memory)
    np.testing.assert_allclose(st, [0.5576, 0.4424, 0.2437], atol=1e-4)


def test_ishigami_through_our_sampling_and_analysis():
    from SALib.test_functions import Ishigami
    prob = {"num_vars": 3, "names": ["x1", "x2", "x3"], "bounds": [[-np.pi, np.pi]] * 3}
    x = S.saltelli_sample(prob, 4096, seed=3)
    assert x.shape == (4096 * (3 + 2), 3)                   # N (k + 2): no second order
    si = S.sobol_indices(prob, Ishigami.evaluate(x), seed=3)
    s1, st = _ishigami_analytic()
    for key, want in (("S1", s1), ("ST", st)):
        got, conf = np.asarray(si[key]), np.asarray(si[key + "_conf"])
        assert (conf > 0).all() and (conf < 0.1).all()      # the intervals are reported
        assert (np.abs(got - want) <= conf + 0.01).all(), (key, got, want, conf)
    # S3 = 0 but ST3 > 0: x3 acts only with x1 (first and total not swapped)
    assert si["ST"][2] > 0.15 and abs(si["S1"][2]) < 0.05


def test_interaction_of_two_linear_factors_through_the_budget(tiny):
    sc, study, res, _ = tiny
    la, ha, lx, hx = 0.8, 1.2, 0.5, 2.0
    opt = S.SensitivityOptions(samples=2048, seed=4,
                               factors={"air_conc": (la, ha), "vd_SO2": (lx, hx)})
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"],
            "fixed_velocity": sc.fixed_velocity}
    frame = S.sobol(study, base, opt, {"resolution": "month", "start": "2021-02-01",
                                       "end": "2021-03-01"})
    dep = res.budget["deposition"].values[0, 0, 0]
    j = {c[2]: i for i, c in enumerate(COMPONENTS) if c[1] == "dry"}
    c1, c2 = dep[j["SO2"]], dep[j["pSO4"]]
    ea, va = (la + ha) / 2, (ha - la) ** 2 / 12
    eb, vb = c1 * (lx + hx) / 2 + c2, c1 ** 2 * (hx - lx) ** 2 / 12
    v_a, v_b, v_ab = va * eb ** 2, ea ** 2 * vb, va * vb
    v = v_a + v_b + v_ab
    want = {"air_conc": (v_a / v, (v_a + v_ab) / v), "vd_SO2": (v_b / v, (v_b + v_ab) / v)}
    got = frame[(frame["element"] == "S") & (frame["quantity"] == "dry")].set_index("factor")
    for f, (s1, st) in want.items():
        assert abs(got.loc[f, "S1"] - s1) <= got.loc[f, "S1_conf"] + 0.01, f
        assert abs(got.loc[f, "ST"] - st) <= got.loc[f, "ST_conf"] + 0.01, f
    assert v_ab / v > 0.01                          # an interaction the test can see
