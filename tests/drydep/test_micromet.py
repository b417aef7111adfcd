"""The inputs step of the surface layer (workbench/drydep/micromet.py): a pyranometer's
small negative night readings (its thermal offset, common practice) are taken as no
light.  The reader accepts them down to -20 W m-2; before, Wesely (1989)'s
r_dc = 100 (1 + 1000/(G + 10)) went negative below G = -10 W m-2 and Eq. 3 opened the
stomata at night, so the Vd of those hours moved with the offset."""
import warnings

import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities


@pytest.fixture(scope="module")
def case():
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 20)
    return surf, met


def _vd(surf, met, scheme):
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)     # no division by zero either
        return velocities(met, surf, options=DryOptions(gas_scheme=scheme),
                          outputs={"vd_SO2", "vd_HNO3", "vd_NH3", "vd_pSO4"})


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
@pytest.mark.parametrize("offset", [-0.1, -2.5, -10.0, -15.0, -19.9])
def test_negative_night_radiation_is_no_light(case, scheme, offset):
    surf, met = case
    dark = met["solar_radiation"].values <= 0
    assert dark.sum() > 100
    night = met.copy(deep=True)
    night["solar_radiation"].values = np.where(dark, offset, met["solar_radiation"].values)
    base, got = _vd(surf, met, scheme), _vd(surf, night, scheme)
    for name in base.data_vars:
        np.testing.assert_array_equal(got[name].values, base[name].values, err_msg=name)


def test_a_missing_radiation_stays_missing(case):
    surf, met = case
    gone = met.copy(deep=True)
    gone["solar_radiation"].values[:, :48] = np.nan
    out = velocities(gone, surf, outputs={"vd_SO2"})
    base = velocities(met, surf, outputs={"vd_SO2"})
    assert np.isfinite(base["vd_SO2"].values[:, :, :48]).any()
    # an hour without radiation is not an hour of darkness: never the value of G = 0
    dark0 = met.copy(deep=True)
    dark0["solar_radiation"].values[:, :48] = 0.0
    zero = velocities(dark0, surf, outputs={"vd_SO2"})
    a, z = out["vd_SO2"].values[:, :, :48], zero["vd_SO2"].values[:, :, :48]
    assert not np.array_equal(np.nan_to_num(a, nan=-1.0), np.nan_to_num(z, nan=-1.0))
