"""The grid of ``[uncertainty] vd_follows_air`` shares the steps that do not read the air.

The grid runs the velocities again on the air with NH3 scaled by the factors of
``airvd.GRID_FACTORS`` (workbench/analysis/airvd.py).  Only the gases' step reads the
hourly inputs made from the air (the NH3/SO2 and acid ratios:
``workbench.drydep.core_steps.READS_AIR``); the surface layer (u*, L, Ra), the canopy
state and the particle modes are those of the point run's met and surfaces, kept once
in the graph for the 9 grid points (``workbench.graph.Steps``).  Held here: the
counts of the graph's own records (``Graph.counts``), and the velocities of a grid
point the same bits as those of a study whose air is the scaled air (its own graph).
"""
import dataclasses

import numpy as np
import pytest
import xarray as xr

from analysis.air_vd_case import quiet as _quiet
from analysis.air_vd_case import scenario as _scenario
from ui.demo_subset import study_and_args
from workbench import graph as G
from workbench.analysis import airvd
from workbench.analysis import uncertainty as U
from workbench.drydep import core, core_steps
from workbench.drydep import micromet as _micromet
from workbench.pipeline import Study

SHARED = ("micromet", "canopy_state", "particle_mode_vd")




@pytest.fixture(scope="module")
def scenario(tmp_path_factory):
    return _scenario(tmp_path_factory.mktemp("shared"))


def test_the_grid_computes_the_air_independent_steps_once(scenario):
    """The 8 grid runs add 8 computations of the gases' step and none of the surface
    layer, canopy state or particle modes (8 of each, and 8 of each mode, before)."""
    study, args = study_and_args(scenario)
    res = _quiet(study.run, *args)
    before = dict(study.graph.counts)
    assert all(before.get(s, 0) > 0 for s in SHARED + ("gas_vd",))     # the point's
    lay = _quiet(U.linear_layer, res, study, "years", None, False, True)
    assert set(lay.sites[0].air_vd) == {"SO2", "NH3"}
    added = {s: study.graph.counts[s] - before.get(s, 0)
             for s in SHARED + ("gas_vd", "velocities", "air_scaled")}
    grid = len(airvd.GRID_FACTORS) - 1                     # k = 1 is the point run
    assert added == {"micromet": 0, "canopy_state": 0, "particle_mode_vd": 0,
                     "gas_vd": grid, "velocities": grid, "air_scaled": grid}
    # the gases' step is run on the scaled air: the graph saw it as its upstream
    assert "air_scaled" in study.graph.edges["gas_vd"]
    assert "air_scaled" not in study.graph.edges["micromet"]


def test_a_grid_point_is_the_engine_on_the_scaled_air(scenario):
    """The velocities of NH3 x 0.5 with the shared steps are the bits of a study whose
    air is that scaled air (nothing cached from the point run), and differ from the
    point's in the gases that read the ratios (the grid is not the point again)."""
    study, args = study_and_args(scenario)
    res = _quiet(study.run, *args)
    dry = res.options["dry"]
    k = airvd.GRID_FACTORS[0]
    scaled = study._run("air_scaled", deps={"air": study._input("air", study.inputs.air)},
                        params={"species": "NH3", "factor": k})
    n = study.graph.counts["micromet"]
    got = _quiet(lambda: study._velocities_node(dry, air=scaled).value)
    assert study.graph.counts["micromet"] == n                       # shared
    alone = Study(dataclasses.replace(study.inputs, air=scaled.value), study.site_overrides)
    want = _quiet(alone.velocities, dry)
    xr.testing.assert_identical(got, want)
    point = study.velocities(dry)
    for name in ("vd_SO2", "vd_NH3"):
        assert not np.array_equal(got[name].values, point[name].values, equal_nan=True)
    for name in ("ra", "friction_velocity", "vd_HNO3", "vd_pSO4", "surface_wet"):
        np.testing.assert_array_equal(got[name].values, point[name].values)


def test_steps_one_to_five_are_not_handed_the_air(scenario, monkeypatch):
    """The surface layer and the canopy state see the met without the inputs made from
    the air, so that sharing them across airs cannot hide a read of them."""
    seen, given = [], []
    real, hourly = _micromet.surface_layer, core._hourly

    def spy(opt, block, *a, **k):
        seen.append(set(block.data_vars))
        return real(opt, block, *a, **k)

    def spy_hourly(block, *a, **k):
        given.append(set(block.data_vars))
        return hourly(block, *a, **k)
    monkeypatch.setattr(_micromet, "surface_layer", spy)
    monkeypatch.setattr(core, "_hourly", spy_hourly)
    study, args = study_and_args(scenario)
    _quiet(study.run, *args)
    assert all({"nh3_so2_ratio", "nh3_acid_ratio"} <= g for g in given)   # the block's
    assert seen and not any(s & set(core_steps.AIR_DERIVED) for s in seen)
    assert core_steps.READS_AIR == {"gas_vd"}


def test_a_step_is_keyed_on_the_air_only_where_it_reads_it():
    g = G.Graph()
    runs = []

    def make(tag):
        def compute(opt):
            runs.append(tag)
            return {"x": np.zeros(1)}
        return compute
    opt = dataclasses.make_dataclass("O", [("ustar_floor", float, 0.1),
                                           ("gases", tuple, ("SO2",))])()
    for air in (None, "air_scaled:a", "air_scaled:b"):
        s = g.steps("met+surf", air=air)
        s.run("micromet", make(("micromet", air)), opt)
        s.run("gas_vd", make(("gas_vd", air)), opt, ("micromet",), reads_air=True)
    assert runs == [("micromet", None), ("gas_vd", None), ("gas_vd", "air_scaled:a"),
                    ("gas_vd", "air_scaled:b")]
