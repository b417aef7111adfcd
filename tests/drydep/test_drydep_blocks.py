"""Cache-sized blocks give the engine's numbers unchanged (speed only, issue 11 item 4).

The element-wise steps that run in blocks (Ra, Wesely's numpy path, the particle
modes) are compared with the same calculation in one block, on invented sites
(tests/drydep/dry_synthetic.py).  Nothing here is timed.
"""
import warnings

import numpy as np
import pytest

from workbench.drydep import DryOptions, velocities
from workbench.drydep import particles as P
from workbench.surface import _array

from drydep.dry_synthetic import make_met, make_surfaces


@pytest.fixture(scope="module")
def case():
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 20, optional=("cloud_cover",))
    return met, surf


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_velocities_in_small_blocks_equal_one_block(case, scheme, monkeypatch):
    met, surf = case
    opt = DryOptions(gas_scheme=scheme)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        whole = velocities(met, surf, opt)
        monkeypatch.setattr(_array, "BLOCK_ELEMENTS", 700)
        monkeypatch.setattr(P, "BLOCK_ELEMENTS", 900)
        blocked = velocities(met, surf, opt)
    n = met.sizes["site"] * surf.sizes["receptor"] * met.sizes["time"]
    assert len(list(_array.block_slices((met.sizes["site"], surf.sizes["receptor"],
                                         met.sizes["time"])))) > 4 and n > 700
    assert list(blocked.data_vars) == list(whole.data_vars)
    for name in whole.data_vars:
        np.testing.assert_array_equal(blocked[name].values, whole[name].values, err_msg=name)


def test_blockwise_tuple_outputs_and_broadcast_inputs():
    rng = np.random.default_rng(3)
    a, b = rng.normal(size=(5, 1, 40)), rng.normal(size=(1, 3, 1))

    def f(x, y):
        return x * y + 1.0, x > y

    want = f(a, b)
    got = _array.blockwise(f, a, b, size=16)
    for g, w in zip(got, want):
        assert g.shape == w.shape == (5, 3, 40) and g.dtype == w.dtype
        np.testing.assert_array_equal(g, w)
    assert len(list(_array.block_slices((5, 3, 40), 16))) > 5
    np.testing.assert_array_equal(_array.blockwise(np.add, 2.0, 3.0), 5.0)  # one block
