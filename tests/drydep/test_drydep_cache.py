"""The velocity steps cache: the same numbers as a fresh calculation, whatever the order
of option changes, and only the steps an option touches computed again."""
import dataclasses

import numpy as np
import pytest

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, core, velocities
from workbench.drydep import particles as _particles


@pytest.fixture(scope="module")
def inputs():
    surfaces = make_surfaces()
    return make_met(surfaces, hours=24 * 60, seed=5), surfaces


def _assert_same(a, b):
    assert list(a.data_vars) == list(b.data_vars)
    for v in a.variables:
        x, y = a[v].values, b[v].values
        if x.dtype.kind == "f":
            np.testing.assert_array_equal(x, y, err_msg=v)       # NaN equal to NaN
        else:
            assert (x == y).all(), v
        assert a[v].attrs == b[v].attrs, v


def _variants():
    base = DryOptions()
    fine = dataclasses.replace(base.mode_of("pNO3"), fine_fraction=0.2)
    coarse = dataclasses.replace(base.mode_of("pNO3").coarse, mmd=8e-6)
    return [base,
            dataclasses.replace(base, wetness_rule="always_wet"),
            dataclasses.replace(base, seasonal_category=4),
            dataclasses.replace(base, ustar_floor=0.1),
            dataclasses.replace(base, particle_modes={**base.particle_modes, "pNO3": fine}),
            dataclasses.replace(base, particle_modes={
                **base.particle_modes,
                "pNO3": dataclasses.replace(base.mode_of("pNO3"), coarse=coarse)}),
            dataclasses.replace(base, roughness={"grass": (0.05, 0.2)})]


def test_cached_steps_give_the_fresh_numbers_in_any_order(inputs):
    met, surf = inputs
    cache = {}
    variants = _variants()
    for opt in variants + variants[::-1] + variants:
        _assert_same(velocities(met, surf, opt, cache=cache), velocities(met, surf, opt))
    # bounded: at most the set number of results per step
    for stage, entries in cache.items():
        assert len(entries) <= core.CACHE_ENTRIES[stage]


def test_a_particle_option_computes_only_its_mode_again(inputs, monkeypatch):
    met, surf = inputs
    cache = {}
    base = DryOptions()
    velocities(met, surf, base, cache=cache)
    seen = []
    real = _particles.mass_weighted_velocities

    def counting(modes, *args, **kw):
        seen.append(list(modes))
        return real(modes, *args, **kw)
    monkeypatch.setattr(_particles, "mass_weighted_velocities", counting)
    # a fine fraction mixes the same two modes: nothing to compute
    fine = dataclasses.replace(base.mode_of("pNO3"), fine_fraction=0.2)
    velocities(met, surf, dataclasses.replace(
        base, particle_modes={**base.particle_modes, "pNO3": fine}), cache=cache)
    assert seen == []
    # a new coarse size of pNO3 (half fine, half coarse): that one mode only
    coarse = dataclasses.replace(base.mode_of("pNO3").coarse, mmd=8e-6)
    velocities(met, surf, dataclasses.replace(base, particle_modes={
        **base.particle_modes, "pNO3": dataclasses.replace(base.mode_of("pNO3"), coarse=coarse)}),
        cache=cache)
    assert seen == [[coarse]]
    # the wetness rule changes what particles see (no rebound on wet surfaces): every
    # mode in use again
    velocities(met, surf, dataclasses.replace(base, wetness_rule="always_dry"), cache=cache)
    in_use = {mode for sp in base.particles for frac, mode in (
        (base.mode_of(sp).fine_fraction, base.mode_of(sp).fine),
        (1 - base.mode_of(sp).fine_fraction, base.mode_of(sp).coarse)) if frac > 0}
    assert set(seen[-1]) == in_use


def test_cached_results_are_read_only(inputs):
    met, surf = inputs
    ds = velocities(met, surf, DryOptions(), cache={})
    with pytest.raises(ValueError):
        ds["ra"].values[0, 0, 0] = 1.0           # shared with the cache: nobody can change it
    fresh = velocities(met, surf, DryOptions())
    fresh["ra"].values[0, 0, 0] = 1.0            # without a cache the arrays are the caller's


def test_some_receptors_only_give_the_same_numbers(inputs):
    """A receptor computed alone equals its slice of the whole calculation (the wind
    mast's surface still comes from every receptor)."""
    met, surf = inputs
    whole = velocities(met, surf, DryOptions())
    cache = {}
    for rec in [str(r) for r in surf["receptor"].values][:3]:
        one = velocities(met, surf, DryOptions(), cache=cache, receptors=[rec])
        assert list(one["receptor"].values) == [rec]
        _assert_same(one, whole.sel(receptor=[rec]))
    with pytest.raises(ValueError, match="not among"):
        velocities(met, surf, DryOptions(), receptors=["no_such_surface"])
