"""What the grid of ``[uncertainty] vd_follows_air`` leaves in the stage graph.

The 8 runs of the velocities on scaled air (workbench/analysis/airvd.py) made every
velocity variable, the gases' Rb and paths of Rc, the particles' Vd, the fills' hour
counts and the sums again, arrays equal to the point run's where the air is not read,
and kept them all in the study's cache: on the demo network about 0.9 GB a grid
point, so the grid pushed the point run's results and its own out of the cache and a
second request computed 36 velocities again (docs/performance.md, "The `vd_follows_air`
grid held once").  Held here, on the demo's ridge site in 2021:

- the runs on scaled air make the Vd that follow the air alone (``air_outputs``);
- the fills of Vd with the same gaps hold one pair of hour counts (``fill_counts``,
  keyed by the masks' content), the grid's fills those of the point run;
- the grid's rows are one stage a factor (``air_vd_rows``); the inner results of each
  run are kept in a scratch graph (:meth:`workbench.graph.Graph.scratch`), not in the
  study's cache, so a second layer under a bound that holds the point run and the
  grid's rows computes nothing.
"""
from collections import Counter

import numpy as np
import pytest
import xarray as xr

from analysis.air_vd_case import quiet, scenario
from ui.demo_subset import study_and_args
from workbench import graph as G
from workbench.analysis import airvd
from workbench.analysis import uncertainty as U
from workbench.drydep import velocities


@pytest.fixture(scope="module")
def case(tmp_path_factory):
    study, args = study_and_args(scenario(tmp_path_factory.mktemp("held")))
    res = quiet(study.run, *args)
    return study, res


def _kinds(graph) -> Counter:
    return Counter(k.split(":", 1)[0] for k in graph._store)


def test_the_grid_keeps_its_rows_not_its_velocities(case):
    study, res = case
    before = _kinds(study.graph)
    lay = quiet(U.linear_layer, res, study, "years", None, False, True)
    assert set(lay.sites[0].air_vd) == {"SO2", "NH3"}
    after = _kinds(study.graph)
    grid = len(airvd.GRID_FACTORS) - 1                    # k = 1 is the point run
    # before: 8 more velocities, gas steps and layouts, 16 more fills and sums
    for name in ("velocities", "gas_vd", "wanted_pairs", "vd_fill", "hour_sums",
                 "species_rows", "dry_rows", "fill_counts"):
        assert after[name] == before[name], name
    assert after["air_vd_rows"] == grid
    # yet every run was computed: the scratch graphs count in the study's graph
    made = study.graph.counts
    assert made["air_vd_rows"] == grid and made["gas_vd"] >= grid


def test_a_second_layer_under_a_bound_computes_nothing(tmp_path):
    # the bound: twice what the run holds (the grid's inner results took 2.8 times
    # that on this case, so the grid pushed the point's velocities out and a second
    # layer ran every velocity again)
    study, args = study_and_args(scenario(tmp_path))
    study.graph = G.Graph(max_bytes=10**10)
    res = quiet(study.run, *args)
    study.graph.max_bytes = 2 * study.graph.nbytes
    quiet(U.linear_layer, res, study, "years", None, False, True)
    before = Counter(study.graph.counts)
    lay = quiet(U.linear_layer, res, study, "years", None, False, True)
    assert set(lay.sites[0].air_vd) == {"SO2", "NH3"}
    assert {k: n - before[k] for k, n in study.graph.counts.items() if n > before[k]} == {}


def test_fills_with_the_same_gaps_share_their_hour_counts(case):
    study, res = case
    quiet(U.linear_layer, res, study, "years", None, False, True)
    point = study.dry_rows(res.options["dry"], res.options["budget"],
                           res.options["fixed_velocity"])
    counts = list(point["vd_cum"].values())
    assert len(counts) >= 7
    # the demo's Vd have their gaps where the met has: one pair of count arrays
    first = counts[0]
    shared = [c for c in counts if np.shares_memory(c[0], first[0])
              and np.shares_memory(c[1], first[1])]
    assert len(shared) == len(counts), "each fill holds its own hour counts"
    assert study.graph.counts["fill_counts"] == 1
    assert not first[0].flags.writeable and not first[1].flags.writeable
    grid = [v[0] for k, v in study.graph._store.items() if k.startswith("air_vd_rows:")]
    assert len(grid) == len(airvd.GRID_FACTORS) - 1
    for rows in grid:                                     # the grid's fills: the same
        for sp in ("SO2", "NH3"):
            assert np.shares_memory(rows["vd_cum"][sp][0], point["vd_cum"][sp][0])


def test_a_run_asked_for_some_outputs_keeps_only_their_gas_arrays(case):
    study, res = case
    met = study.inputs.met
    surf = study.surfaces()
    opt = res.options["dry"]
    whole = quiet(velocities, met, surf, opt)
    g = G.Graph()
    some = quiet(velocities, met, surf, opt, cache=g, outputs={"vd_SO2", "vd_NH3"})
    assert sorted(some.data_vars) == ["vd_NH3", "vd_SO2"]
    for v in some.data_vars:
        xr.testing.assert_identical(some[v], whole[v])
    gas = [v[0] for k, v in g._store.items() if k.startswith("gas_vd:")]
    assert len(gas) == 1 and sorted(gas[0]) == ["vd|NH3", "vd|SO2"]
    # nor a particle mode looked up or computed for them
    assert g.counts["particle_mode_vd"] == 0


def test_a_scratch_graph_reads_its_parent_and_keeps_its_own():
    calls = []
    G.declare("test_scratch", fn=lambda o, k: calls.append(k) or np.full(10, float(k)))
    try:
        parent = G.Graph()
        parent.run("test_scratch", params={"k": 1})
        sub = parent.scratch()
        assert sub.run("test_scratch", params={"k": 1}).value[0] == 1.0  # the parent's
        sub.run("test_scratch", params={"k": 2})
        assert calls == [1, 2]
        assert len(parent) == 1 and len(sub) == 1          # k = 2 stays in the scratch
        assert parent.counts["test_scratch"] == 2          # counted in the parent
        assert sub.has(parent.key(G.STAGES["test_scratch"], params={"k": 1}))
        parent.run("test_scratch", params={"k": 2})        # not the parent's: again
        assert calls == [1, 2, 2]
    finally:
        G.STAGES.pop("test_scratch")
