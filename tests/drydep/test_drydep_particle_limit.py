"""The aerodynamic limit of the particle Vd, checked by the engine at run time (issue 12).

Zhang et al. (2001), Eq. 1: Vd = v_s + 1/(Ra + Rs) with Rs > 0, so v_s <= Vd <= v_s + 1/Ra
(v_s the mass-weighted settling velocity).  `velocities` checks every particle species'
Vd against it (workbench.drydep.particle_limit, relative tolerance 1e-9) and raises a
located ModelDefectError otherwise.  Here: the check passes on the demo and on the
extreme hours of tests/drydep/test_drydep_particle_hand_hours.py under both
`particle_settling` rules, and a defect planted in the surface resistance (a negative
Rs) or in the mode weights is caught and located, in memory and on dask-backed met.
"""
from pathlib import Path

import numpy as np
import pytest

from tests.drydep import dry_synthetic as syn
from tests.drydep.test_drydep_particle_hand_hours import COARSE_10UM, SITES, _extreme_met
from workbench.drydep import DryOptions, particle_fractions, velocities
from workbench.drydep import particle_limit as limit
from workbench.drydep.options import LogNormalMode, ParticleSpec, default_particle_modes
from workbench.drydep.particles_numpy import ZhangSurface
from workbench.errors import ModelDefectError, WorkbenchError

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
RULES = ("stokes", "clift_gauvin")


def test_outside_limit_by_hand():
    # bounds of Eq. 1 written out: v_s = 0.01, 1/Ra = 0.02 (common practice numbers)
    vs, ra = np.array(0.01), np.array(50.0)
    vd = np.array([0.01, 0.02, 0.03, 0.03 * (1 + 1e-12), 0.03 * (1 + 1e-8), 0.0099, np.nan])
    assert limit.outside_limit(vd, vs, ra).tolist() == [False, False, False, False, True,
                                                        True, False]
    # Ra = 0 (1/Ra infinite) bounds nothing above; NaN settling or Ra flags nothing
    assert not limit.outside_limit(np.array(5.0), vs, np.array(0.0))
    assert not limit.outside_limit(np.array(5.0), np.array(np.nan), ra)
    assert not limit.outside_limit(np.array(5.0), vs, np.array(np.nan))


def test_the_check_locates_the_first_hour():
    vd = np.full((2, 2, 4), 0.02)
    vd[1, 0, 2] = 0.5   # later site first in time: the hour decides, then the site
    vd[0, 1, 3] = 0.5
    times = np.arange("2021-03-01T01:00", "2021-03-01T05:00", dtype="datetime64[h]")
    with pytest.raises(ModelDefectError) as err:
        limit.check_aerodynamic_limit(vd, np.full((2, 1, 4), 0.01), np.full((2, 2, 4), 50.0),
                                      "pSO4", ["ash", "birch"], ["grass", "water"], times)
    text = str(err.value)
    for part in ("pSO4", "'birch'", "'grass'", "2021-03-01T03:00", "Vd = 0.5 m/s",
                 "v_s = 0.01 m/s", "1/Ra = 0.02 m/s", "defect of the model code",
                 "report it", "2 values", "1e-09"):
        assert part in text, part
    assert isinstance(err.value, WorkbenchError)   # the CLI shows it as one line


def test_the_check_on_a_dask_array_runs_inside_the_chunks():
    dsa = pytest.importorskip("dask.array")
    vd = np.full((2, 2, 6), 0.02)
    vd[1, 1, 4] = -1.0
    lazy = dsa.from_array(vd, chunks=(1, 2, 3))
    times = np.arange("2021-03-01T01:00", "2021-03-01T07:00", dtype="datetime64[h]")
    args = (np.full((2, 1, 6), 0.01), np.full((2, 2, 6), 50.0), "pNO3", ["ash", "birch"],
            ["grass", "water"], times)
    checked = limit.check_aerodynamic_limit(lazy, *args)   # lazy: nothing computed yet
    with pytest.raises(ModelDefectError, match=r"'birch', receptor 'water', first at "
                                               r"2021-03-01T05:00"):
        checked.compute()
    good = limit.check_aerodynamic_limit(dsa.from_array(np.full((2, 2, 6), 0.02), chunks=3),
                                         *args)
    assert np.array_equal(good.compute(), np.full((2, 2, 6), 0.02))


@pytest.fixture(scope="module")
def demo():
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    study = Study.from_scenario(load_scenario(DEMO / "scenario.toml"))
    met = study.inputs.met.sel(time=slice("2021-06-01T01:00", "2021-07-01T00:00"))
    return met, study.surfaces()


@pytest.mark.parametrize("rule", RULES)
def test_the_demo_passes_the_check(demo, rule):
    met, surf = demo
    out = velocities(met, surf, DryOptions(gases=(), components=False, particle_settling=rule))
    assert all(np.isfinite(out[f"vd_{sp}"].values).any() for sp in DryOptions().particles)


@pytest.mark.parametrize("coarse_10um", [False, True])
@pytest.mark.parametrize("rule", RULES)
def test_the_extreme_hours_pass_the_check(rule, coarse_10um):
    modes = dict(default_particle_modes())
    if coarse_10um:   # pNa all in the 10 um sea-salt mode of the hand-worked hours
        modes["pNa"] = ParticleSpec(modes["pNa"].fine, LogNormalMode(*COARSE_10UM), 0.0)
    out = velocities(_extreme_met(), syn.make_surfaces(SITES),
                     DryOptions(gases=(), particle_settling=rule, particle_modes=modes))
    assert float(out["friction_velocity"].max()) >= 2.0 and float(out["ra"].max()) == 1000.0


def _negative_rs(monkeypatch):
    """Plant a defect: R_s of Zhang et al. (2001) Eq. 5 with its sign turned."""
    old = ZhangSurface._resistance

    def planted(self, *args):
        x = old(self, *args)
        np.negative(x, out=x)
        return x
    monkeypatch.setattr(ZhangSurface, "_resistance", planted)


@pytest.mark.parametrize("rule", RULES)
def test_a_negative_surface_resistance_is_a_located_defect(monkeypatch, rule):
    _negative_rs(monkeypatch)
    met = _extreme_met()
    with pytest.raises(ModelDefectError) as err:
        velocities(met, syn.make_surfaces(SITES), DryOptions(gases=(), particle_settling=rule))
    text = str(err.value)
    assert "site 'quill', receptor '" in text and "first at 2021-07-14T" in text
    assert "defect of the model code" in text and "1/Ra = " in text and "v_s = " in text


def test_weights_that_do_not_sum_to_one_are_a_located_defect(monkeypatch):
    # a defect of the size split: every mode weight doubled.  Caught where it pushes Vd
    # past the limit (2/(Ra + Rs) > 1/Ra: the coarse sea salt here), not everywhere
    old = particle_fractions.broadcast_weight
    monkeypatch.setattr(particle_fractions, "broadcast_weight", lambda w: 2.0 * old(w))
    with pytest.raises(ModelDefectError, match=r"particle deposition velocity of pNa "
                                               r"at site 'quill'"):
        velocities(_extreme_met(), syn.make_surfaces(SITES), DryOptions(gases=()))


def test_a_planted_defect_on_dask_backed_met(monkeypatch):
    pytest.importorskip("dask")
    _negative_rs(monkeypatch)
    met = _extreme_met().chunk({"time": 4})
    with pytest.raises(ModelDefectError, match="defect of the model code"):
        velocities(met, syn.make_surfaces(SITES), DryOptions(gases=())).compute()


def test_with_settling_is_the_same_on_numpy_blocks_and_dask():
    # the settling returned with the Vd: sum_i w_i v_g of the public settling_velocity
    # at the grown nodes (one node here: a single size, weight 1), the same in one
    # block, in cache-sized blocks and chunk by chunk on dask
    from workbench.drydep import particles as p
    from workbench.drydep.zhang_tables import lognormal_nodes
    rng = np.random.default_rng(12)
    n_s, n_t = 3, 12000                       # 3 x 2 x 12000 > one block of 32768
    rh = rng.uniform(0.3, 0.99, (n_s, 1, n_t))
    us = rng.uniform(0.05, 1.5, (n_s, 2, n_t))
    ra = rng.uniform(5.0, 500.0, (n_s, 2, n_t))
    t = rng.uniform(260.0, 305.0, (n_s, 1, n_t))
    pr = np.full((n_s, 1, n_t), 1.0e5)
    mode = default_particle_modes()["pNa"].coarse
    land = np.array(["grass", "conifer_forest"], dtype=object)[None, :, None]
    args = (rh, us, ra, t, pr, land, 2.0, 0.0, 6)
    (vd, vs), = p.mass_weighted_velocities((mode,), *args, with_settling=True)
    assert vs.shape == (n_s, 1, n_t)
    assert np.array_equal(vd, p.mass_weighted_velocities((mode,), *args)[0])
    d, w = lognormal_nodes(mode.mmd, mode.gsd, 6)
    hand = 0.0
    for di, wi in zip(d, w):
        dw = p.wet_diameter(di, rh, mode.growth)
        hand = hand + wi * p.settling_velocity(dw, p.wet_density(di, dw, mode.density), t, pr)
    np.testing.assert_allclose(vs, hand, rtol=1e-12)
    small = tuple(a[:1, :, :50] if isinstance(a, np.ndarray) else a for a in args)
    (vd1, vs1), = p.mass_weighted_velocities((mode,), *small, with_settling=True)
    np.testing.assert_array_equal(vs1, vs[:1, :, :50])     # one block: the same numbers
    dsa = pytest.importorskip("dask.array")
    lazy = tuple(dsa.from_array(a, chunks=(1, -1, 4000))
                 if isinstance(a, np.ndarray) and a.dtype == float else a for a in args)
    (lvd, lvs), = p.mass_weighted_velocities((mode,), *lazy, with_settling=True)
    np.testing.assert_array_equal(lvd.compute(), vd)
    np.testing.assert_array_equal(lvs.compute(), np.broadcast_to(vs, vd.shape))
