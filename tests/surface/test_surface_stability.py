"""Stability functions: Paulson (1970) against hand values, Beljaars-Holtslag shape."""
import math

import dask.array as da
import numpy as np
import pytest
import xarray as xr

from workbench.surface.stability import (psi_h, psi_h_beljaars_holtslag, psi_h_paulson, psi_m,
                                         psi_m_beljaars_holtslag, psi_m_paulson)

# Hand values of Paulson (1970), Eqs. 12-13 with gamma = 16 (Dyer 1974), chosen so
# that x = (1 - 16 zeta)^(1/4) is a round number:
#   zeta = -15/16: x = 2, psi_m = 2 ln 1.5 + ln 2.5 - 2 atan 2 + pi/2 = 1.08372,
#                  psi_h = 2 ln 2.5 = 1.83258
#   zeta = -5:     x = 3, psi_m = 2 ln 2 + ln 5 - 2 atan 3 + pi/2 = 2.06844,
#                  psi_h = 2 ln 5 = 3.21888
PAULSON_BY_HAND = [(-15.0 / 16.0, 1.08372, 1.83258), (-5.0, 2.06844, 3.21888)]


@pytest.mark.parametrize("zeta, pm, ph", PAULSON_BY_HAND)
def test_paulson_against_hand_values(zeta, pm, ph):
    assert psi_m(zeta) == pytest.approx(pm, abs=2e-5)
    assert psi_h(zeta) == pytest.approx(ph, abs=2e-5)


def test_paulson_small_instability_hand_value():
    # zeta = -0.1: x = 2.6^(1/4) = 1.269823; by hand psi_m = 0.28363, psi_h = 0.53429
    x = 2.6 ** 0.25
    assert abs(x - 1.269823) < 1e-6
    assert psi_m(-0.1) == pytest.approx(0.28363, abs=5e-5)
    assert psi_h(-0.1) == pytest.approx(0.53429, abs=5e-5)


def test_continuous_at_neutral():
    for f in (psi_m, psi_h):
        assert abs(f(-1e-9)) < 1e-7 and abs(f(1e-9)) < 1e-7 and f(0.0) == 0.0


def test_beljaars_holtslag_matches_dyer_near_neutral():
    # Beljaars and Holtslag (1991) built their functions to reduce to the
    # log-linear psi = -5 zeta of Dyer (1974) for small zeta: slope a + b + bc = 5.
    eps = 1e-6
    assert psi_m_beljaars_holtslag(eps) / eps == pytest.approx(-5.0, rel=1e-4)
    assert psi_h_beljaars_holtslag(eps) / eps == pytest.approx(-5.0, rel=1e-4)


def test_beljaars_holtslag_milder_than_log_linear_when_very_stable():
    # the point of BH91: far less damping of turbulence than -5 zeta in very stable air,
    # with a gradient tending to a = 1 (their Eq. 28).
    zeta = np.array([1.0, 5.0, 20.0, 100.0])
    assert np.all(psi_m(zeta) > -5.0 * zeta)
    slope = (psi_m(200.0) - psi_m(100.0)) / 100.0
    assert slope == pytest.approx(-1.0, rel=1e-3)
    assert np.all(np.isfinite(psi_m(np.array([1e3, 1e5]))))


def test_unstable_functions_positive_and_increasing():
    zeta = -np.logspace(-3, 2, 30)
    assert np.all(psi_m(zeta) > 0) and np.all(psi_h(zeta) > psi_m(zeta))
    assert np.all(np.diff(psi_m(zeta)) > 0)


@pytest.mark.parametrize("kind", ["float", "ndarray", "dataarray", "dask", "nan"])
def test_input_types(kind):
    values = np.array([-2.0, -0.1, 0.0, 0.5, 10.0])
    expected = np.array([psi_m(float(v)) for v in values])
    if kind == "float":
        out = psi_m(-2.0)
        assert isinstance(out, float) and out == pytest.approx(expected[0])
        return
    if kind == "nan":
        assert math.isnan(psi_m(np.nan)) and math.isnan(psi_h(np.nan))
        return
    arg = {"ndarray": values,
           "dataarray": xr.DataArray(values, dims="t"),
           "dask": xr.DataArray(da.from_array(values, chunks=2), dims="t")}[kind]
    out = psi_m(arg)
    assert type(out) is type(arg)
    np.testing.assert_allclose(np.asarray(out), expected)


def test_array_path_equals_where_form():
    # numpy arrays evaluate each branch only where it is used; the values must be those
    # of the where form on the whole array, to the last bit, also at 0, -0, NaN, inf
    rng = np.random.default_rng(4)
    zeta = np.concatenate([[-5.0, -1e-12, -0.0, 0.0, 1e-12, 3.0, np.nan, -np.inf, np.inf],
                           rng.normal(0.0, 2.0, 200)])
    for f, unstable, stable in ((psi_m, psi_m_paulson, psi_m_beljaars_holtslag),
                                (psi_h, psi_h_paulson, psi_h_beljaars_holtslag)):
        with np.errstate(invalid="ignore"):  # inf * 0 at zeta = inf
            where_form = np.where(zeta < 0.0, unstable(np.minimum(zeta, 0.0)),
                                  stable(np.maximum(zeta, 0.0)))
            np.testing.assert_array_equal(f(zeta), where_form)
            np.testing.assert_array_equal(f(zeta.reshape(-1, 1, 1)).ravel(), where_form)
        neg = -np.abs(zeta[9:])
        np.testing.assert_array_equal(f(neg), unstable(neg))
