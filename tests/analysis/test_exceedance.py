"""Exceedance of the critical load function of acidity and of nutrient N.

Source of the definition: ICP Modelling and Mapping Manual (UBA, Dessau), exceedance of
critical loads (Posch et al.): the exceedance is the sum of the S and N reductions to
the nearest point of the critical load function; Posch, Hettelingh and De Smet (2001),
Water Air Soil Pollut. 130, 1139.  The numbers below are hand-worked from that
definition (no published table of values is used), on an invented function chosen so
that the sloping part is at 45 degrees and the arithmetic is easy to follow:
CLmaxS = 1000, CLminN = 500, CLmaxN = 1500 eq/ha/yr.
"""
import numpy as np
import pytest
import xarray as xr
from hypothesis import given, settings
from hypothesis import strategies as st

from workbench.analysis.exceedance import (ExceedanceError, acidity_exceedance,
                                           nutrient_n_exceedance)

CLF = (1000.0, 500.0, 1500.0)   # CLmaxS, CLminN, CLmaxN (invented, for hand working)

#: (S, N) -> (Ex, region, S reduction, N reduction), hand-worked from the manual's definition
HAND_WORKED = [
    ((1300.0, 200.0), (300.0, 1, 300.0, 0.0)),    # above the flat part: S - CLmaxS
    ((1400.0, 700.0), (600.0, 2, 400.0, 200.0)),  # corner: S + N - CLminN - CLmaxS
    ((800.0, 1200.0), (500.0, 3, 250.0, 250.0)),  # sloping part, along its normal (1, 1)
    ((100.0, 1700.0), (300.0, 4, 100.0, 200.0)),  # corner (CLmaxN, 0): S + N - CLmaxN
    ((400.0, 1000.0), (0.0, 0, 0.0, 0.0)),        # below the function
    ((0.0, 0.0), (0.0, 0, 0.0, 0.0)),
]


@pytest.mark.parametrize("dep, expected", HAND_WORKED)
def test_every_region_hand_worked_manual_definition(dep, expected):
    s, n = dep
    r = acidity_exceedance(s, n, *CLF)
    assert float(r.exceedance) == pytest.approx(expected[0], abs=1e-9)
    assert int(r.region) == expected[1]
    assert float(r.s_reduction) == pytest.approx(expected[2], abs=1e-9)
    assert float(r.n_reduction) == pytest.approx(expected[3], abs=1e-9)


def test_points_on_the_function_give_zero_manual_definition():
    """Every point of the function (its three vertices and points of both parts) has
    Ex = 0 and region 0 (manual: the function is the border of non-exceedance)."""
    cs, c0, c1 = 950.0, 357.0, 1420.0      # the ridge site's function in the demo
    t = np.linspace(0, 1, 101)
    n = np.concatenate([t * c0, c0 + t * (c1 - c0)])
    s = np.concatenate([np.full_like(t, cs), cs * (1 - t)])
    r = acidity_exceedance(s, n, cs, c0, c1)
    np.testing.assert_allclose(r.exceedance, 0.0, atol=1e-9)
    assert (r.region == 0).all()


def test_ridge_span_hand_worked_projection():
    """Sloping part of the demo ridge function (950, 357, 1420): the reductions are
    k (CLmaxS, CLmaxN - CLminN) with k = (CLmaxS N + (CLmaxN - CLminN) S - CLmaxS CLmaxN)
    / (CLmaxS^2 + (CLmaxN - CLminN)^2); worked by hand for N = 1712.59, S = 716.26."""
    k = (950 * 1712.59 + 1063 * 716.26 - 950 * 1420) / (950 ** 2 + 1063 ** 2)
    r = acidity_exceedance(716.26, 1712.59, 950.0, 357.0, 1420.0)
    assert float(r.exceedance) == pytest.approx(k * (950 + 1063), rel=1e-12)
    assert int(r.region) == 3
    assert float(r.n_reduction) == pytest.approx(k * 950, rel=1e-12)


def _brute_force(s, n, cs, c0, c1, m=200001):
    """Nearest point by dense sampling of the function (independent check; common practice)."""
    t = np.linspace(0, 1, m)
    pn = np.concatenate([t * c0, c0 + t * (c1 - c0)])
    ps = np.concatenate([np.full_like(t, cs), cs * (1 - t)])
    i = np.argmin((pn - n) ** 2 + (ps - s) ** 2)
    return (s - ps[i]) + (n - pn[i])


@settings(max_examples=60, deadline=None)
@given(s=st.floats(0, 3000), n=st.floats(0, 4000), cs=st.floats(1, 2000),
       c0=st.floats(0, 800), dn=st.floats(0, 2000))
def test_matches_dense_sampling_of_the_function(s, n, cs, c0, dn):
    c1 = c0 + dn
    r = acidity_exceedance(s, n, cs, c0, c1)
    # inside by a margin: a point within 1e-6 of the boundary (either side) goes to the
    # dense sampling, whose tolerance holds it (a point 8e-7 outside once read as inside)
    inside = s <= cs and n <= c1 and dn * s <= cs * (c1 - n) - 1e-6
    if inside:
        assert float(r.exceedance) == 0.0
    else:
        assert float(r.exceedance) == pytest.approx(_brute_force(s, n, cs, c0, c1),
                                                    abs=2e-5 * (cs + c1) + 1e-7 * (s + n + cs + c1))
    # (tolerance: two steps of the sampling, and the flat minimum of the squared distance
    # far from the function, where rounding hides offsets of ~sqrt(eps) times the distance)


@settings(max_examples=60, deadline=None)
@given(s=st.floats(0, 3000), n=st.floats(0, 4000), ds=st.floats(0, 500), dn=st.floats(0, 500))
def test_monotone_in_deposition(s, n, ds, dn):
    """More deposition never gives less exceedance (manual: reductions needed only grow)."""
    a = acidity_exceedance(s, n, 950.0, 357.0, 1420.0).exceedance
    b = acidity_exceedance(s + ds, n + dn, 950.0, 357.0, 1420.0).exceedance
    assert b >= a - 1e-9


def test_impossible_function_and_negative_input_raise():
    with pytest.raises(ExceedanceError, match="cl_max_n = 300 below cl_min_n = 400"):
        acidity_exceedance(100.0, 100.0, 900.0, 400.0, 300.0)
    with pytest.raises(ExceedanceError, match="negative critical load cl_max_s"):
        acidity_exceedance(100.0, 100.0, -1.0, 400.0, 900.0)
    with pytest.raises(ExceedanceError, match="negative N deposition"):
        acidity_exceedance(100.0, np.array([1.0, -5.0]), 900.0, 400.0, 900.0)
    with pytest.raises(ExceedanceError, match="negative critical load cl_nut_n"):
        nutrient_n_exceedance(100.0, -3.0)


def test_vertical_slope_when_cl_max_n_equals_cl_min_n():
    """CLmaxN = CLminN: the sloping part is vertical (hand-worked)."""
    r = acidity_exceedance(np.array([500.0, 500.0]), np.array([700.0, 300.0]), 800.0, 600.0, 600.0)
    np.testing.assert_allclose(r.exceedance, [100.0, 0.0])
    np.testing.assert_array_equal(r.region, [3, 0])


def test_nutrient_n_issue_numbers():
    """The issue's ridge numbers: N 1713 over CLnutN 714 exceeds by 999 (arithmetic)."""
    assert float(nutrient_n_exceedance(1713.0, 714.0)) == 999.0
    assert float(nutrient_n_exceedance(500.0, 714.0)) == 0.0


def test_input_types_and_nan():
    s = np.array([[1300.0, np.nan], [800.0, 400.0]])
    n = np.array([[200.0, 1000.0], [1200.0, 1000.0]])
    r = acidity_exceedance(s, n, *CLF)
    np.testing.assert_allclose(r.exceedance, [[300.0, np.nan], [500.0, 0.0]])
    np.testing.assert_array_equal(r.region, [[1, -1], [3, 0]])
    da = xr.DataArray(s, dims=("site", "period"))
    rx = acidity_exceedance(da, xr.DataArray(n, dims=("site", "period")), *CLF)
    assert isinstance(rx.exceedance, xr.DataArray) and rx.exceedance.dims == ("site", "period")
    np.testing.assert_allclose(rx.exceedance.values, r.exceedance)
    dask = pytest.importorskip("dask.array")
    rd = acidity_exceedance(da.chunk({"site": 1}), xr.DataArray(n, dims=("site", "period")), *CLF)
    np.testing.assert_allclose(rd.exceedance.compute().values, r.exceedance)
    assert isinstance(float(acidity_exceedance(1.0, 1.0, *CLF).exceedance), float)
    # per-site functions broadcast against (site, period) deposition
    per_site = acidity_exceedance(s, n, np.array([[1000.0], [0.0]]), 500.0, 1500.0)
    assert float(per_site.exceedance[1, 1]) > 0
