"""The grid of ``[uncertainty] vd_follows_air`` asks for the species whose Vd reads the air.

Of the gases, only Vd(SO2) (co-deposition: the NH3/SO2 ratio) and Vd(NH3) (the acid
ratio) read the air (workbench/analysis/airvd.py).  The 8 runs of the grid on scaled
air ask the gases' step for those of them whose ``[dry]`` option is on (``gases``, a
declared option of the step, so the step's key follows it) and the dry rows for them
only; the point run keeps every gas.  Held here: the gases each computation of the
step was asked for, the species of the grid's dry rows, and the grid's parts the same
bits as those of the run of every gas (the grid's k = 0.5 against the full velocities
on the same scaled air).
"""
import numpy as np
import pytest

from analysis.air_vd_case import quiet as _quiet
from analysis.air_vd_case import scenario as _scenario
from ui.demo_subset import study_and_args
from workbench.analysis import airvd
from workbench.analysis import uncertainty as U
from workbench.drydep import core_hourly

CASES = {"both": ("so2_codeposition = true\nnh3_acid_ratio_from_air = true", ("SO2", "NH3")),
         "so2": ("so2_codeposition = true", ("SO2",)),
         "nh3": ("nh3_acid_ratio_from_air = true", ("NH3",))}


@pytest.mark.parametrize("case", sorted(CASES))
def test_the_grid_asks_the_gases_step_for_the_air_reading_species(case, tmp_path,
                                                                  monkeypatch):
    dry, want = CASES[case]
    asked = []
    real = core_hourly._gas.surface_resistances

    def spy(scheme, gases, state):
        asked.append(tuple(gases))
        return real(scheme, gases, state)
    monkeypatch.setattr(core_hourly._gas, "surface_resistances", spy)
    study, args = study_and_args(_scenario(tmp_path, dry))
    res = _quiet(study.run, *args)
    every = tuple(res.options["dry"].gases)
    assert set(asked) == {every}                          # the point run: every gas
    asked.clear()
    lay = _quiet(U.linear_layer, res, study, "years", None, False, True)
    assert set(lay.sites[0].air_vd) == set(want)
    grid = len(airvd.GRID_FACTORS) - 1                     # k = 1 is the point run
    order = tuple(g for g in every if g in want)
    assert asked == [order] * grid


def test_the_grid_parts_are_those_of_the_run_of_every_gas(tmp_path, monkeypatch):
    """The grid's parts are the bits of a grid whose runs compute every gas and the dry
    rows of every species (the grid as it was, in a study of its own)."""
    sc = _scenario(tmp_path, CASES["both"][0])

    def parts():
        study, args = study_and_args(sc)
        res = _quiet(study.run, *args)
        lay = _quiet(U.linear_layer, res, study, "years", None, False, True)
        return study, {sp: g.table for sp, g in lay.sites[0].air_vd.items()}
    study, got = parts()
    assert study.graph.counts["species_rows"] > 0
    rows_node = type(study)._dry_rows_node
    monkeypatch.setattr(airvd, "grid_options", lambda dry, want: dry)
    monkeypatch.setattr(airvd, "air_outputs", lambda want: None)     # every variable
    monkeypatch.setattr(type(study), "_dry_rows_node",
                        lambda self, *a, species=None, **k: rows_node(self, *a, **k))
    every, want = parts()
    assert every.graph.counts["species_rows"] > study.graph.counts["species_rows"]
    assert sorted(got) == sorted(want) == ["NH3", "SO2"]
    for sp in got:
        np.testing.assert_array_equal(got[sp], want[sp])
