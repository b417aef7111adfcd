"""The velocity steps cache: the same numbers as a fresh calculation, whatever the order
of option changes, and only the steps an option touches computed again."""
import dataclasses

import numpy as np
import pytest

from drydep.dry_synthetic import SITES as _SITES, make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.drydep import particles as _particles
from workbench.graph import Graph


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
    cache = Graph(max_entries=12)
    variants = _variants()
    for opt in variants + variants[::-1] + variants:
        _assert_same(velocities(met, surf, opt, cache=cache), velocities(met, surf, opt))
        # bounded: at most the set number of results in the graph's one cache
        assert len(cache) <= 12


def test_a_particle_option_computes_only_its_mode_again(inputs, monkeypatch):
    met, surf = inputs
    cache = Graph()
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
    ds = velocities(met, surf, DryOptions(), cache=Graph())
    with pytest.raises(ValueError):
        ds["ra"].values[0, 0, 0] = 1.0           # shared with the cache: nobody can change it
    fresh = velocities(met, surf, DryOptions())
    fresh["ra"].values[0, 0, 0] = 1.0            # without a cache the arrays are the caller's


def test_some_receptors_only_give_the_same_numbers(inputs):
    """A receptor computed alone equals its slice of the whole calculation (the wind
    mast's surface still comes from every receptor)."""
    met, surf = inputs
    whole = velocities(met, surf, DryOptions())
    cache = Graph()
    for rec in [str(r) for r in surf["receptor"].values][:3]:
        one = velocities(met, surf, DryOptions(), cache=cache, receptors=[rec])
        assert list(one["receptor"].values) == [rec]
        _assert_same(one, whole.sel(receptor=[rec]))
    with pytest.raises(ValueError, match="not among"):
        velocities(met, surf, DryOptions(), receptors=["no_such_surface"])


# --- random sequences of dry controls (the particle step's cache evicted a mode it had
# counted as cached before reading it: KeyError after some tens of changes) -------------

def _random_options(draw_mode, draw_choice):
    """DryOptions from a few discrete choices: particle sizes and fractions, wetness,
    season and u* floor (what the explorer's dry controls change)."""
    base = DryOptions()
    modes = dict(base.particle_modes)
    for sp in ("pSO4", "pNO3", "pNH4"):
        spec = base.mode_of(sp)
        modes[sp] = dataclasses.replace(
            spec, fine_fraction=draw_choice((0.0, 0.5, 1.0)),
            fine=dataclasses.replace(spec.fine, mmd=draw_mode((0.3e-6, 0.4e-6, 0.6e-6))),
            coarse=dataclasses.replace(spec.coarse, mmd=draw_mode((3e-6, 5e-6, 8e-6))))
    return dataclasses.replace(
        base, particle_modes=modes, particles=("pSO4", "pNO3", "pNH4"), gases=("SO2",),
        wetness_rule=draw_choice(("met", "always_dry", "always_wet")),
        ustar_floor=draw_choice((0.01, 0.1, 0.2)))


@pytest.fixture(scope="module")
def tiny_inputs():
    surfaces = make_surfaces({k: v for k, v in list(_SITES.items())[:1]})
    return make_met(surfaces, hours=6, seed=3), surfaces


@pytest.mark.parametrize("limit", [1, 2, 5, None])
def test_random_sequences_of_dry_controls_never_lose_a_cached_mode(tiny_inputs, monkeypatch,
                                                                   limit):
    """Up to 120 random changes of the dry controls with a shared cache (small and
    default bounds): each result equals a fresh calculation, no KeyError."""
    from hypothesis import HealthCheck, given, settings, strategies as st

    met, surf = tiny_inputs
    fresh = {}

    @settings(max_examples=4, deadline=None, derandomize=True,
              suppress_health_check=[HealthCheck.function_scoped_fixture])
    @given(st.data())
    def run(data):
        cache = Graph(max_entries=limit or 2048)
        for _ in range(data.draw(st.integers(20, 120))):
            opt = _random_options(lambda xs: data.draw(st.sampled_from(xs)),
                                  lambda xs: data.draw(st.sampled_from(xs)))
            got = velocities(met, surf, opt, cache=cache)
            key = repr(opt)
            if key not in fresh:
                fresh[key] = velocities(met, surf, opt)
            _assert_same(got, fresh[key])
            assert len(cache) <= (limit or 2048)
    run()
