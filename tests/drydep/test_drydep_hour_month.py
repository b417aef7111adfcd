"""The month (and year) of an hour is that of its middle: the hour ending at 00:00 on
1 January is December's, on the hour-ending axis of the met (the sun is taken at the
middle of the hour too).  Before, it took the next month's season and LAI."""
import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.drydep.canopy import hourly_lai


@pytest.fixture(scope="module")
def new_year():
    surf = make_surfaces()
    return surf, make_met(surf, start="2021-12-31T20:00", hours=8, seed=2)  # 20:00-03:00


def _december(t):
    return t <= np.datetime64("2022-01-01T00:00")      # hours ending 20:00 .. 00:00


def test_season_of_the_last_hour_of_a_month(new_year):
    surf, met = new_year
    by_month = [3] + [1] * 10 + [4]                 # January 3, December 4
    ds = velocities(met, surf, DryOptions(particles=(), gases=("SO2",),
                                          seasonal_category=by_month))
    cat = ds["seasonal_category"].isel(site=0, receptor=0).values
    dec = _december(ds["time"].values)
    assert dec.sum() == 5 and (cat[dec] == 4).all() and (cat[~dec] == 3).all()


def test_lai_of_the_last_hour_of_a_month(new_year):
    surf, met = new_year
    lai = surf["lai"].copy()
    lai[0, 0, :] = [2.0] + [1.0] * 10 + [4.0]      # January 2, December 4 [m2 m-2]
    got = hourly_lai(surf.assign(lai=lai), [str(r) for r in surf["receptor"].values],
                     met["time"].values)[0, 0]
    dec = _december(met["time"].values)
    assert (got[dec] == 4.0).all() and (got[~dec] == 2.0).all()
