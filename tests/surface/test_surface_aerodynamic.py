"""Aerodynamic resistance against FAO-56; reference height, floor, cap, transfer."""
import dask.array as da
import numpy as np
import pytest
import xarray as xr

from workbench.constants import VON_KARMAN
from workbench.surface.aerodynamic import (aerodynamic_resistance, apply_cap, apply_floor,
                                           reference_height, transfer_ustar)
from workbench.surface.roughness import canopy_roughness

# FAO-56 (Allen et al. 1998), Box 4 / Eq. 4: grass reference crop h = 0.12 m,
# z_m = z_h = 2 m, d = 2/3 h = 0.08 m, z_om = 0.123 h = 0.01476 m, z_oh = 0.1 z_om,
# k = 0.41: r_a = 208 / u2.  With z_om in both logarithms the same formula gives
# 4.868^2 / 0.41^2 = 141 / u2; the difference is the excess ln(z_om/z_oh)/(k u*).
FAO56_GRASS = dict(h=0.12, z=2.0, ra_neutral_momentum=141.0, ra_paper=208.0)


@pytest.mark.parametrize("u2", [1.0, 2.0, 5.0])
def test_neutral_ra_fao56_grass_reference(u2):
    ref = FAO56_GRASS
    z0, d = canopy_roughness(ref["h"])
    ustar = VON_KARMAN * u2 / np.log((ref["z"] - d) / z0)
    ra = aerodynamic_resistance(ref["z"], d, z0, ustar, 0.0)
    assert ra * u2 == pytest.approx(ref["ra_neutral_momentum"], abs=0.5)
    excess = np.log(10.0) / (VON_KARMAN * ustar)
    assert (ra + excess) * u2 == pytest.approx(ref["ra_paper"], abs=0.5)


def test_stability_orders_ra():
    args = (10.0, 0.0, 0.03, 0.3)
    assert (aerodynamic_resistance(*args, -0.05) < aerodynamic_resistance(*args, 0.0)
            < aerodynamic_resistance(*args, 0.05))


def test_reference_height_raised_over_forest():
    z0, d = canopy_roughness(15.0)
    z_ref, raised = reference_height(2.0, d, z0, 5.0)
    assert raised and z_ref == pytest.approx(d + 5.0 * z0)
    z_ref, raised = reference_height(40.0, d, z0, 5.0)
    assert not raised and z_ref == 40.0


def test_floor_and_cap_are_counted_and_keep_nan():
    x = np.array([0.01, 0.2, np.nan])
    y, used = apply_floor(x, 0.05)
    np.testing.assert_array_equal(used, [True, False, False])
    assert y[0] == 0.05 and np.isnan(y[2])
    y, used = apply_cap(np.array([2000.0, 10.0, np.nan]), 1000.0)
    np.testing.assert_array_equal(used, [True, False, False])
    assert y[0] == 1000.0 and np.isnan(y[2])


def test_transfer_ustar_identity_and_direction():
    assert transfer_ustar(0.3, 0.03, 0.0, 0.03, 0.0, 60.0) == 0.3
    z0f, df = canopy_roughness(15.0)
    assert transfer_ustar(0.3, 0.03, 0.0, z0f, df, 60.0) > 0.3 * 1.5  # rougher: more u*
    assert transfer_ustar(0.3, 0.03, 0.0, 2e-4, 0.0, 60.0) < 0.3


@pytest.mark.parametrize("kind", ["float", "ndarray", "dataarray", "dask"])
def test_input_types(kind):
    ustar = np.array([0.1, 0.3, np.nan])
    expected = [aerodynamic_resistance(10.0, 0.0, 0.03, float(u), -0.01) for u in ustar]
    if kind == "float":
        assert isinstance(aerodynamic_resistance(10.0, 0.0, 0.03, 0.1, -0.01), float)
        return
    arg = {"ndarray": ustar, "dataarray": xr.DataArray(ustar, dims="t"),
           "dask": xr.DataArray(da.from_array(ustar, chunks=1), dims="t")}[kind]
    out = aerodynamic_resistance(10.0, 0.0, 0.03, arg, -0.01)
    assert type(out) is type(arg)
    np.testing.assert_allclose(np.asarray(out), expected)
    assert np.isnan(np.asarray(out)[2])
