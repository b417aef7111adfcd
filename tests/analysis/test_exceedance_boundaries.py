"""The five regions of the critical load function of acidity, and the points exactly on
the lines between them, against the closed-form case distinction of the exceedance.

Reference: ICP Modelling and Mapping Manual (UBA, Dessau), chapter on the exceedance of
critical loads (Posch et al.); Posch, Hettelingh and De Smet (2001), Water Air Soil
Pollut. 130, 1139.  The case distinction below is written from memory of the manual's
formulae, with dN = CLmaxN - CLminN:

* region 0: S <= CLmaxS, N <= CLmaxN and dN S + CLmaxS N <= CLmaxS CLmaxN (no exceedance);
* region 1: N <= CLminN: Ex = S - CLmaxS;
* region 2: (S - CLmaxS) CLmaxS >= (N - CLminN) dN (above the normal to the sloping part
  through the corner (CLminN, CLmaxS)): Ex = S + N - CLminN - CLmaxS;
* region 4: S CLmaxS <= (N - CLmaxN) dN (below the normal through (CLmaxN, 0)):
  Ex = S + N - CLmaxN;
* region 3: otherwise, the projection on the sloping part: Ex = k (CLmaxS + dN) with
  k = (CLmaxS N + dN S - CLmaxS CLmaxN) / (CLmaxS^2 + dN^2).

This is an implementation independent of the module's (which projects on both parts and
keeps the nearer), so the two agreeing on a grid and on every boundary checks both.
"""
import numpy as np
import pytest

from workbench.analysis.exceedance import acidity_exceedance


def manual(s, n, cs, c0, c1):
    """(Ex, region) by the closed-form case distinction above [eq ha-1 yr-1]."""
    d = c1 - c0
    if s <= cs and n <= c1 and d * s + cs * n <= cs * c1:
        return 0.0, 0
    if n <= c0:
        return s - cs, 1
    if (s - cs) * cs >= (n - c0) * d:
        return s + n - c0 - cs, 2
    if s * cs <= (n - c1) * d:
        return s + n - c1, 4
    k = (cs * n + d * s - cs * c1) / (cs ** 2 + d ** 2)
    return k * (cs + d), 3


#: Invented functions (CLmaxS, CLminN, CLmaxN) [eq ha-1 yr-1]: a 45-degree sloping part
#: (hand arithmetic), the demo ridge site's, a steep and a shallow one.
FUNCTIONS = [(1000.0, 500.0, 1500.0), (950.0, 357.0, 1420.0), (1200.0, 300.0, 500.0),
             (300.0, 100.0, 2100.0)]


@pytest.mark.parametrize("clf", FUNCTIONS)
def test_grid_against_the_closed_form_case_distinction(clf):
    cs, c0, c1 = clf
    s, n = np.meshgrid(np.linspace(0, 2.5 * cs, 61), np.linspace(0, 2.0 * c1, 67))
    s, n = s.ravel(), n.ravel()
    r = acidity_exceedance(s, n, cs, c0, c1)
    want = np.array([manual(a, b, cs, c0, c1) for a, b in zip(s, n)])
    np.testing.assert_allclose(r.exceedance, want[:, 0], atol=1e-9 * (cs + c1))
    np.testing.assert_array_equal(r.region, want[:, 1].astype(int))
    assert set(np.unique(r.region)) == {0, 1, 2, 3, 4}       # all five regions met
    np.testing.assert_allclose(r.s_reduction + r.n_reduction, r.exceedance, atol=1e-9)


# The 45-degree function (1000, 500, 1500): every boundary line, hand-worked.
#   (S, N) -> (Ex, region, S reduction, N reduction)
BOUNDARIES = [
    # 1 | 2: N = CLminN above the flat part; both formulas give S - CLmaxS = 300; the
    # manual's region 1 is N <= CLminN (the module said 2 here before)
    ((1300.0, 500.0), (300.0, 1, 300.0, 0.0)),
    # 2 | 3: on the normal (1, 1) through the corner (500, 1000): both give 400
    ((1200.0, 700.0), (400.0, 2, 200.0, 200.0)),
    # 3 | 4: on the normal (1, 1) through (1500, 0): both give 200 + 1700 - 1500 = 400
    ((200.0, 1700.0), (400.0, 4, 200.0, 200.0)),
    # 0 | 1: on the flat part; 0 | 3: on the sloping part; 0 | 4: the corner (CLmaxN, 0)
    ((1000.0, 250.0), (0.0, 0, 0.0, 0.0)),
    ((500.0, 1000.0), (0.0, 0, 0.0, 0.0)),
    ((0.0, 1500.0), (0.0, 0, 0.0, 0.0)),
    # 0 | 1 | 2: the corner (CLminN, CLmaxS) itself
    ((1000.0, 500.0), (0.0, 0, 0.0, 0.0)),
    # the S axis above CLmaxS (N = 0 <= CLminN) and the N axis beyond CLmaxN (S = 0)
    ((1750.0, 0.0), (750.0, 1, 750.0, 0.0)),
    ((0.0, 1800.0), (300.0, 4, 0.0, 300.0)),
]


@pytest.mark.parametrize("dep, expected", BOUNDARIES)
def test_points_on_the_boundaries_hand_worked(dep, expected):
    s, n = dep
    r = acidity_exceedance(s, n, *FUNCTIONS[0])
    assert float(r.exceedance) == pytest.approx(expected[0], abs=1e-9)
    assert int(r.region) == expected[1]
    assert float(r.s_reduction) == pytest.approx(expected[2], abs=1e-9)
    assert float(r.n_reduction) == pytest.approx(expected[3], abs=1e-9)
    assert manual(s, n, *FUNCTIONS[0]) == (pytest.approx(expected[0], abs=1e-9), expected[1])


@pytest.mark.parametrize("clf", FUNCTIONS)
def test_exceedance_is_continuous_across_each_boundary(clf):
    """Just either side of each boundary line the two regions' formulas agree to the
    step (the exceedance is a continuous function of the deposition): a step h moves Ex
    by at most h (CLmaxS + dN) max(CLmaxS, dN) / (CLmaxS^2 + dN^2) <= 1.21 h, so four
    steps around a point span at most 2.5 h."""
    cs, c0, c1 = clf
    d = c1 - c0
    h = 1e-6 * (cs + c1)
    norm = np.hypot(cs, d)
    for s, n in ((1.3 * cs, c0),                                   # 1 | 2
                 (cs + 0.4 * d / norm * cs, c0 + 0.4 * cs / norm * cs),   # 2 | 3
                 (0.4 * d / norm * cs, c1 + 0.4 * cs / norm * cs)):       # 3 | 4
        e = [float(acidity_exceedance(s + ds, n + dn, cs, c0, c1).exceedance)
             for ds, dn in ((0, -h), (0, h), (-h, 0), (h, 0))]
        assert max(e) - min(e) <= 2.5 * h
