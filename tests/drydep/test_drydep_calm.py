"""Calm hours: a wind of 0 at the mast, or a measured u* of 0, gives a deposition
velocity on the u* floor (flagged), not a missing value without a reason.

Before, u* = 0 at the mast made the receptor's temperature scale 0/0 and the drag-law
transfer 0 x inf: the hour's Vd was NaN with no flag (the demo had 8-29 such hours a
site over 2016-2023, skipped by every mean).
"""
from dataclasses import replace

import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.surface.aerodynamic import transfer_ustar_drag_law

OPT = DryOptions(particles=("pSO4",), gases=("SO2", "HNO3"), components=False)
VARS = ("vd_SO2", "vd_HNO3", "vd_pSO4", "ra", "friction_velocity")


def _calm(met, hours, measured=False):
    met = met.copy(deep=True)
    if measured:
        met["friction_velocity"].values[:, hours] = 0.0
    else:
        met["wind_speed"].values[:, hours] = 0.0
    return met


@pytest.fixture(scope="module")
def base():
    surf = make_surfaces()
    return surf, make_met(surf, hours=24 * 6, seed=5, optional=("friction_velocity",))


@pytest.mark.parametrize("transfer", ["drag_law", "blending_height"])
@pytest.mark.parametrize("measured", [False, True])
def test_calm_hours_get_a_flagged_velocity(base, transfer, measured):
    surf, met = base
    if not measured:
        met = met.drop_vars("friction_velocity")
    hours = [2, 3, 26, 50, 60]               # night hours and some daytime ones
    ds = velocities(_calm(met, hours, measured), surf, replace(OPT, ustar_transfer=transfer))
    for v in VARS:
        x = ds[v].isel(time=hours).values
        assert np.isfinite(x).all(), v
    assert ds["ustar_floor_used"].isel(time=hours).values.all()
    # on the floor: u* over the receptor is the floor, Vd below the aerodynamic limit
    assert np.allclose(ds["friction_velocity"].isel(time=hours).values, OPT.ustar_floor)
    for g in ("vd_SO2", "vd_HNO3"):
        x = ds[g].isel(time=hours).values
        assert (x > 0).all() and (x <= 1.0 / ds["ra"].isel(time=hours).values + 1e-12).all()


def test_calm_is_the_limit_of_light_wind_at_night(base):
    """At night a calm hour's Vd is that of a very light wind (both on the u* floor)."""
    surf, met = base
    met = met.drop_vars("friction_velocity")
    night = [2, 3]
    calm = velocities(_calm(met, night), surf, OPT)
    light = met.copy(deep=True)
    light["wind_speed"].values[:, night] = 0.01
    light = velocities(light, surf, OPT)
    assert light["ustar_floor_used"].isel(time=night).values.all()
    np.testing.assert_allclose(calm["vd_SO2"].isel(time=night).values,
                               light["vd_SO2"].isel(time=night).values, rtol=0.05)


def test_drag_law_transfer_of_zero_is_zero():
    # f = 1.0e-4 s-1 (mid-latitudes, common practice)
    out = transfer_ustar_drag_law(np.array([0.0, 0.3, np.nan]), 0.03, 1.0, 1.0e-4)
    assert out[0] == 0.0 and 0 < out[1] and np.isnan(out[2])
