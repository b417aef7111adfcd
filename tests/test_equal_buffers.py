"""Arrays of equal content held once in the stage graph (docs/performance.md, "Equal
arrays held once").

The demo network's run held 147 MB of arrays equal to another buffer: pSO4 and pNH4
(and pNa and pCl) take one particle mode each by default, so their Vd are equal, yet
each was computed and held apart in the velocities, in the network layout
(``wanted_pairs``), in the fills (keyed by the variable's name) and in the sums; and
the finite-hour masks of the sums were held in six equal copies.  Held here on a
part-year of the demo's ridge site, and on a small layout of two groups.
"""
import warnings
from collections import defaultdict
from types import SimpleNamespace

import numpy as np
import pytest
import xarray as xr

from tiny_inputs import ridge_part_study
from workbench import graph as G
from workbench import stages
from workbench.pipeline import Study

PAIRS = (("pSO4", "pNH4"), ("pNa", "pCl"))           # one particle mode each, by default


@pytest.fixture(scope="module")
def ran():
    # the ridge and the mere (a week without met in February 2019: the effective Vd of
    # the species measured as mixing ratios have hours without a value) over 3 months
    study, sc = ridge_part_study()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        study = Study(Study.from_scenario(sc).inputs.subset(
            ["ridge", "mere"], np.datetime64("2019-01-01"), np.datetime64("2019-04-01")),
            study.site_overrides)
        study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                  sc.fixed_velocity, "year")
    return study


def _entries(graph, stage):
    return [v for k, (v, _own, _a) in graph._store.items() if k.split(":", 1)[0] == stage]


def _base(a):
    while isinstance(a, np.ndarray) and a.base is not None:
        a = a.base
    return a


def _buffers_of_equal_content(arrays) -> dict:
    """digest -> the distinct buffers (their base arrays) holding that content."""
    out = defaultdict(list)
    for a in arrays:
        key = G.content_digest([np.ascontiguousarray(a)])
        if not any(_base(a) is b for b in out[key]):
            out[key].append(_base(a))
    return out


def test_particles_of_one_mode_share_one_vd(ran):
    # before: each particle species' Vd was its own array (equal bit for bit)
    # (two groups of sites on their own receptors, and their network layout)
    held = [v for v in _entries(ran.graph, "velocities") if "vd_pSO4" in v]
    layouts = _entries(ran.graph, "wanted_pairs")
    assert len(held) == 2 and len(layouts) == 1
    for vel in held + layouts:
        for a, b in PAIRS:
            assert np.array_equal(vel[f"vd_{a}"].values, vel[f"vd_{b}"].values,
                                  equal_nan=True)
            assert np.shares_memory(vel[f"vd_{a}"].values, vel[f"vd_{b}"].values), (a, b)
            assert b in vel[f"vd_{b}"].attrs["long_name"]     # its own attributes
        assert not np.shares_memory(vel["vd_pSO4"].values, vel["vd_pNO3"].values)
    # a species of one mode of weight 1 (pNa: all coarse) holds its mode's Vd itself
    modes = [m["vd"] for m in _entries(ran.graph, "particle_mode_vd")]
    for vel in held:
        assert any(np.shares_memory(vel["vd_pNa"].values, m) for m in modes)
        assert not any(np.shares_memory(vel["vd_pNO3"].values, m) for m in modes)


def test_fills_and_sums_of_equal_vd_are_held_once(ran):
    fills = {}
    for v in _entries(ran.graph, "vd_fill"):
        fills[v["vd"].name[3:]] = v
    pairs = [(a, b) for a, b in PAIRS if a in fills and b in fills]
    assert ("pSO4", "pNH4") in pairs                       # measured at the ridge
    for a, b in pairs:
        # before: filled twice, held twice (the fill's key named the variable)
        assert np.shares_memory(fills[a]["v_np"], fills[b]["v_np"]), (a, b)
        assert fills[b]["vd"].name == f"vd_{b}" and b in fills[b]["vd"].attrs["long_name"]
    assert len(_entries(ran.graph, "vd_filled")) < len(fills)
    # the fills' masks of the filled hours: one buffer each content (before: the
    # species with their gaps in the same hours held one each)
    masks = _buffers_of_equal_content(f["vel"][1].data for f in fills.values())
    assert len(masks) < len(fills) and all(len(b) == 1 for b in masks.values())
    sums = _entries(ran.graph, "hour_sums")
    # every cumulative effective Vd and every finite-hour mask of equal content: one
    # buffer (before: pSO4's and pNH4's sums apart, six copies of the masks)
    for name in ("cs", "finite"):
        held = _buffers_of_equal_content(s[name] for s in sums if s[name] is not None)
        assert held and all(len(b) == 1 for b in held.values()), name


def test_the_finite_hour_masks_are_held_by_their_counts(ran):
    counts = _entries(ran.graph, "hour_counts")
    masks = [c["finite"] for c in counts]
    for s in _entries(ran.graph, "hour_sums"):
        if s["finite"] is not None:
            assert any(s["finite"] is m for m in masks)


def _group(sites, receptors, arrays):
    t = np.arange(3)
    return xr.Dataset({k: (("site", "receptor", "time"), a) for k, a in arrays.items()},
                      coords={"site": list(sites), "receptor": list(receptors), "time": t})


def test_the_layout_holds_one_array_for_variables_of_one_array():
    # two groups of sites on their own receptors; in each, vd_pSO4 and vd_pNH4 are one
    # array (as the velocities make them): the layout makes one array of them (before:
    # two), and vd_pNO3 (its own arrays) its own
    rng = np.random.default_rng(1)
    g1 = rng.random((2, 1, 3))
    g2 = rng.random((1, 2, 3))
    p1 = _group(["a", "b"], ["grass"], {"vd_pSO4": g1, "vd_pNH4": g1, "vd_pNO3": g1.copy()})
    p2 = _group(["c"], ["grass", "forest"], {"vd_pSO4": g2, "vd_pNH4": g2,
                                             "vd_pNO3": g2.copy()})
    ds = stages.wanted_pairs(SimpleNamespace(), ("a", "b", "c"), ("grass", "forest"),
                             group000000=p1, group000001=p2)
    assert np.shares_memory(ds["vd_pSO4"].values, ds["vd_pNH4"].values)
    assert not np.shares_memory(ds["vd_pSO4"].values, ds["vd_pNO3"].values)
    np.testing.assert_array_equal(ds["vd_pNO3"].values, ds["vd_pNH4"].values)
    assert np.isnan(ds["vd_pNH4"].values[0, 1]).all()             # a pair not computed
    np.testing.assert_array_equal(ds["vd_pNH4"].values[2], g2[0])
