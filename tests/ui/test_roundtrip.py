"""Save scenario round trip: a file saved from the site explorer, read by the scenario
loader and run by a Study as ``workbench run`` does, gives the app's numbers.

Every control of the explorer is set to a value other than the scenario's, in two
groups so that no setting hides another (seven fixed velocities would make the
particle sizes irrelevant): the controls of the model, then the fixed-velocity what-ifs.
"""
from pathlib import Path

import numpy as np
import pytest

from workbench.pipeline import Study
from workbench.scenario import load_scenario
from workbench.ui.apps import SiteExplorer
from workbench.ui.assumptions import ASSUMPTIONS
from workbench.ui.summaries import mean_totals

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")

#: A value other than the demo scenario's for every control of the explorer.
MODEL = {
    "wet.on_ion_balance_fail": "exclude", "wet.on_conductivity_fail": "exclude",
    "wet.on_contamination": "flag", "wet.on_dust": "exclude", "wet.on_capture_fail": "exclude",
    "wet.detection_limit": "limit", "budget.air_censored": "zero",
    "wet.min_gauge_fraction": 0.6, "wet.min_coverage_fraction": 0.6,
    "wet.min_valid_precip_fraction": 0.5, "budget.min_air_coverage": 0.6,
    "budget.require_all_seasons": False, "wet.period_fill": "seasonal",
    "budget.sulfate_basis": "total", "wet.seasalt_tracer": "Cl",
    "dry.wetness_rule": "always_wet", "dry.seasonal_category": 2,
    "site.roughness_length_m": 0.7, "particles.fine_mmd": 0.6, "particles.coarse_mmd": 8.0,
    "particles.pSO4.fine_fraction": 0.8, "particles.pNO3.fine_fraction": 0.2,
    "particles.pNH4.fine_fraction": 0.9, "dry.particle_settling": "clift_gauvin",
    "budget.pair_split": "all_particle",
    "dry.nh3_treatment": "bidirectional",
}
WHAT_IFS = {"fixed_velocity.SO2": 0.45, "fixed_velocity.HNO3": 2.5,
            "fixed_velocity.NH3": 0.9, "fixed_velocity.NO2": 0.12, "fixed_velocity.pSO4": 0.15,
            "fixed_velocity.pNO3": 0.35, "fixed_velocity.pNH4": 0.2}


def test_every_control_has_a_value_in_the_round_trip():
    assert set(MODEL) | set(WHAT_IFS) == set(ASSUMPTIONS)


@pytest.mark.parametrize("group", [MODEL, WHAT_IFS], ids=["model", "what-ifs"])
def test_saved_scenario_run_as_the_cli_does_gives_the_apps_totals(session, tmp_path, group):
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    try:
        base = app._current_totals()
        for key, value in group.items():
            assert app.controls[key].value != value, key
            app.controls[key].value = value
        ours = app._current_totals()
        path = app.save_scenario(tmp_path / "saved.toml")
    finally:
        app.reset()
    assert "NOTE" not in path.read_text()          # nothing left out as a comment
    # what `workbench run` does with the file (workbench.cli.run_scenario)
    sc = load_scenario(path)
    p = sc.data["period"]
    res = Study.from_scenario(sc).run(sc.options["wet"], sc.options["dry"],
                                      sc.options["budget"], sc.fixed_velocity,
                                      p["resolution"], p["start"], p["end"])
    theirs = mean_totals(res.years, "ridge", app.receptor_w.value, None, app.unit_w.value)
    assert list(theirs.index) == list(ours.index)
    np.testing.assert_allclose(theirs["value"].to_numpy(float), ours["value"].to_numpy(float),
                               rtol=1e-9, equal_nan=True)
    assert list(theirs["status"]) == list(ours["status"])
    # the controls changed the numbers (else the comparison proves little)
    assert not np.allclose(ours["value"].to_numpy(float), base["value"].to_numpy(float),
                           equal_nan=True)


def test_the_apps_write_into_the_output_folder(session, tmp_path, monkeypatch):
    from workbench.ui.session import OUTPUT_ENV, output_dir
    monkeypatch.setenv(OUTPUT_ENV, str(tmp_path / "out"))
    monkeypatch.chdir(tmp_path)                 # the notebook's folder
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    assert app.save_path_w.value.startswith(str(output_dir()))
    assert app.export_path_w.value.startswith(str(output_dir()))
    path = app.save_scenario("mine.toml")
    assert path == tmp_path / "out" / "mine.toml" and path.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]


def test_the_default_output_folder_is_in_the_folder_the_user_works_in(session, tmp_path,
                                                                      monkeypatch):
    """Defect: the default was ~/workbench-output, outside the project (a user looked for
    the exported run folder beside the notebook).  Now ./workbench-output of the kernel's
    working directory (the notebook's folder in JupyterLab), shown whole in the app."""
    from workbench.ui.session import OUTPUT_ENV, output_dir
    monkeypatch.delenv(OUTPUT_ENV, raising=False)
    monkeypatch.chdir(tmp_path)                 # the notebook's folder
    assert output_dir() == tmp_path / "workbench-output"
    assert output_dir().is_absolute()
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    assert app.export_path_w.value == str(tmp_path / "workbench-output" / "run-folder")
    assert app.save_path_w.value == str(tmp_path / "workbench-output" / "my_scenario.toml")
    written = app.export_run("run-folder")
    folder = tmp_path / "workbench-output" / "run-folder"
    assert all(Path(p).is_relative_to(folder) for p in written.values())
    assert str(folder) in app.message_w.value        # the full path, after the export
