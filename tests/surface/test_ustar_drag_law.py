"""u* transfer by the neutral geostrophic drag law (Tennekes 1973; Garratt 1992)."""
import numpy as np
import pytest

from workbench.constants import VON_KARMAN
from workbench.surface.aerodynamic import (DRAG_LAW_A, DRAG_LAW_B, coriolis_parameter,
                                           transfer_ustar, transfer_ustar_drag_law)


def test_coriolis_parameter():
    # f = 1.03e-4 s-1 at 45 degrees (Garratt 1992; Stull 1988: about 1e-4 at mid-latitudes;
    # from memory); the same in both hemispheres; held at 5 degrees near the equator.
    assert coriolis_parameter(45.0) == pytest.approx(1.031e-4, rel=1e-3)
    assert coriolis_parameter(-45.0) == coriolis_parameter(45.0)
    assert coriolis_parameter(0.0) == coriolis_parameter(5.0) > 0


def test_drag_law_solution_satisfies_the_law():
    f = coriolis_parameter(54.5)
    us_m, z0_m = np.array([0.1, 0.38, 0.9]), 0.015
    for z0 in (2e-4, 0.06, 1.02, 2.5):
        us = transfer_ustar_drag_law(us_m, z0_m, z0, f)
        g_mast = us_m / VON_KARMAN * np.sqrt((np.log(us_m / (f * z0_m)) - DRAG_LAW_A) ** 2
                                              + DRAG_LAW_B ** 2)
        g_rec = us / VON_KARMAN * np.sqrt((np.log(us / (f * z0)) - DRAG_LAW_A) ** 2
                                          + DRAG_LAW_B ** 2)
        np.testing.assert_allclose(g_rec, g_mast, rtol=1e-6)  # the same geostrophic wind


def test_drag_law_against_blending_height():
    # identity on the same surface; rougher -> more u*, smoother -> less, and over a
    # 14 m conifer canopy (Raupach z0 1.02 m, d 10.8 m) from grass less than the 60 m
    # blending height gives: an extensive forest slows the whole boundary layer.
    f = coriolis_parameter(54.5)
    assert transfer_ustar_drag_law(0.38, 0.015, 0.015, f) == pytest.approx(0.38, rel=1e-12)
    drag = transfer_ustar_drag_law(0.38, 0.015, 1.02, f)
    blend = transfer_ustar(0.38, 0.015, 0.08, 1.02, 10.8, 60.0)
    assert 0.38 < drag < blend
    # the geostrophic wind implied by u* 0.38 over grass, about 10 m/s, is a plausible
    # mid-latitude value (u*/G about 0.035 over grass; Garratt 1992, from memory)
    assert transfer_ustar_drag_law(0.38, 0.015, 2e-4, f) < 0.38
    # NaN stays NaN
    assert np.isnan(transfer_ustar_drag_law(np.nan, 0.015, 1.0, f))
