"""Roughness rules: FAO-56 reference crop, Charnock against a published drag law."""
import numpy as np
import pytest

from workbench.constants import VON_KARMAN
from workbench.surface.air import kinematic_viscosity
from workbench.surface.roughness import (SMOOTH_Z0, canopy_roughness, charnock_roughness,
                                         land_use_roughness)


def test_fao56_reference_crop_roughness():
    # Allen et al. (1998), FAO-56, Box 4: for h = 0.12 m, d = 0.08 m, z_om = 0.01476 m.
    z0, d = canopy_roughness(0.12)
    assert z0 == pytest.approx(0.01476, abs=1e-6) and d == pytest.approx(0.08, abs=1e-9)


@pytest.mark.parametrize("u10", [5.0, 10.0, 15.0])
def test_charnock_drag_against_garratt_1977(u10):
    # Garratt (1977), Mon. Wea. Rev. 105, 915: neutral 10 m drag over the sea
    # C_D = (0.75 + 0.067 U10) 1e-3 (from memory); Charnock with alpha = 0.011 should
    # agree within the scatter of the data (about 20 %).
    nu = kinematic_viscosity(288.15, 101325.0)
    z0 = 1e-4
    for _ in range(30):
        ustar = VON_KARMAN * u10 / np.log(10.0 / z0)
        z0 = charnock_roughness(ustar, nu)
    cd = (ustar / u10) ** 2
    assert cd == pytest.approx((0.75 + 0.067 * u10) * 1e-3, rel=0.2)


def test_land_use_rules_and_overrides():
    names = ["grass", "water", "conifer_forest", "barren", "urban"]
    h = np.array([0.12, 0.0, 15.0, 0.0, 10.0])
    z0, d = land_use_roughness(names, h)
    assert np.isnan(z0[1])  # water: Charnock, solved with u*
    assert z0[3] == SMOOTH_Z0 and d[3] == 0.0
    assert z0[4] == pytest.approx(1.0) and d[4] == pytest.approx(5.0)
    z0o = np.array([np.nan, np.nan, 1.2, np.nan, np.nan])
    z0b, db = land_use_roughness(names, h, z0o, np.full(5, np.nan), {"grass": (0.03, None)})
    assert z0b[2] == 1.2 and z0b[0] == 0.03 and db[0] == pytest.approx(0.08)
