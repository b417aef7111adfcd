"""A run exported from the apps names its inputs relative to the folder of the scenario
the app opened, as ``workbench run`` of that scenario does (docs/run_folder.md), so that
a project folder moved or handed on whole still verifies."""
import shutil
import warnings

import pandas as pd

from ui.demo_subset import write_demo_subset


def test_exported_run_names_inputs_relative_and_verifies_after_a_move(tmp_path):
    from workbench.runcheck import verify_run
    from workbench.ui.session import Session
    project = tmp_path / "project"
    scenario = write_demo_subset(project / "study", ("ridge",), 2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        session = Session.open(scenario)
        session.export_run(project / "runs" / "app", session.baseline, "ridge", 2021, 2021)
    run = project / "runs" / "app"
    files = set(pd.read_csv(run / "input_rows.csv")["file"])
    # the old export wrote /tmp/.../project/study/air.csv here
    assert "air.csv" in files and files <= {"air.csv", "met.csv.gz", "precipitation.csv",
                                            "sites.toml"}, files
    report = (run / "report.html").read_text(encoding="utf-8")
    assert str(project / "study") not in report
    moved = tmp_path / "elsewhere" / "project"
    shutil.copytree(project, moved)
    shutil.rmtree(project)                    # the old place is gone: found from the run
    check = verify_run(moved / "runs" / "app")
    assert check.ok, check.text()
    assert "input air (air.csv): as at the run" in check.text()


def test_an_export_of_one_site_records_which_site(tmp_path):
    """An apps' export of one site of a two-site scenario: provenance.json says which
    site it computed (the old record held the scenario's options and the
    years, but not the site, so a colleague could not tell from it what made the
    numbers), and `workbench verify` shows it."""
    from workbench.runcheck import verify_run
    from workbench.ui.session import Session
    import json
    scenario = write_demo_subset(tmp_path / "study", ("ridge", "fell"), 2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        session = Session.open(scenario)
        session.export_run(tmp_path / "runs" / "app", session.baseline, "fell", 2021, 2021)
    prov = json.loads((tmp_path / "runs" / "app" / "provenance.json").read_text())
    assert prov["sites"] == ["fell"]
    assert set(pd.read_csv(tmp_path / "runs" / "app" / "budget.csv")["site"]) == {"fell"}
    check = verify_run(tmp_path / "runs" / "app")
    assert check.ok, check.text()
    assert "  sites computed: fell" in check.lines
