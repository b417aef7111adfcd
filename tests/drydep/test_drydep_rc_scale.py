"""``DryOptions.rc_scale``: a multiplier k of one gas's surface resistance.

Reference: the resistance analogy Vd = 1 / (Ra + Rb + Rc) (Wesely and Hicks 1977; common
practice), here with k Rc in place of Rc.  The option is a sensitivity knob with no
published value; the tests check that exactly the gas named is scaled, in both schemes,
and that the velocities cache does not hand back the numbers of another k.
"""
import dataclasses

import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities


@pytest.fixture(scope="module")
def inputs():
    surfaces = make_surfaces()
    return make_met(surfaces, hours=24 * 10, seed=3), surfaces


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_rc_of_the_gas_named_is_scaled_and_vd_follows(inputs, scheme):
    met, surf = inputs
    base = DryOptions(gas_scheme=scheme)
    ref = velocities(met, surf, base)
    k = 2.5
    got = velocities(met, surf, dataclasses.replace(base, rc_scale={"SO2": k}))
    rc0, rc = ref["rc_SO2"].values, got["rc_SO2"].values
    ok = np.isfinite(rc0)
    assert ok.sum() > 100
    np.testing.assert_allclose(rc[ok], k * rc0[ok], rtol=1e-12)
    want = 1.0 / (got["ra"].values + got["rb_SO2"].values + k * rc0)
    fin = np.isfinite(want) & np.isfinite(got["vd_SO2"].values)
    assert fin.sum() > 100
    np.testing.assert_allclose(got["vd_SO2"].values[fin], want[fin], rtol=1e-10)
    assert np.nanmean(got["vd_SO2"].values) < np.nanmean(ref["vd_SO2"].values)
    for g in ("HNO3", "NH3", "NO2", "O3"):                    # the other gases untouched
        np.testing.assert_array_equal(got[f"vd_{g}"].values, ref[f"vd_{g}"].values)
        np.testing.assert_array_equal(got[f"rc_{g}"].values, ref[f"rc_{g}"].values)
    for p in ("pSO4", "pNO3"):
        np.testing.assert_array_equal(got[f"vd_{p}"].values, ref[f"vd_{p}"].values)


def test_cache_gives_fresh_numbers_after_a_change(inputs):
    met, surf = inputs
    from workbench.graph import Graph
    cache = Graph()
    variants = [DryOptions(), DryOptions(rc_scale={"NH3": 0.5}), DryOptions(rc_scale={"NH3": 2.0}),
                DryOptions(rc_scale={"NH3": 2.0, "O3": 3.0})]
    seen = []
    for opt in variants + variants[::-1]:
        a = velocities(met, surf, opt, cache=cache)
        b = velocities(met, surf, opt)
        for v in ("rc_NH3", "vd_NH3", "vd_O3", "vd_SO2"):
            np.testing.assert_array_equal(a[v].values, b[v].values, err_msg=v)
        seen.append(float(np.nanmean(a["vd_NH3"].values)))
    assert seen[0] != seen[1] != seen[2]
    assert seen[1] > seen[0] > seen[2]            # less resistance, faster deposition


@pytest.mark.parametrize("given, match", [({"XY": 2.0}, "rc_scale"), ({"SO2": 0.0}, "> 0"),
                                          ({"O3": -1.0}, "> 0")])
def test_rc_scale_is_checked(given, match):
    with pytest.raises(ValueError, match=match):
        DryOptions(rc_scale=given)
