"""Fixtures shared by the test modules of tests/ itself."""
import pytest

from script_modules import docs_script


@pytest.fixture(scope="session")
def two_site_run(tmp_path_factory):
    """The run folder of the demo's ridge and mere, 2020-2021 (`workbench run --quiet`),
    made once for every module that reads it (read only: no test writes into it)."""
    from workbench.cli import main

    from ui.demo_subset import write_demo_subset
    tmp = tmp_path_factory.mktemp("two_sites")
    scenario = write_demo_subset(tmp / "in", ("ridge", "mere"), 2020, 2021)
    out = tmp / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    return out


@pytest.fixture(scope="session")
def uncertainty_figures():
    """docs/make_uncertainty_figures.py as a module."""
    return docs_script("make_uncertainty_figures")


@pytest.fixture(scope="session")
def farm_span(uncertainty_figures, tmp_path_factory):
    """(study, result) of the demo's farm alone over 2016-2023 (the demo's span), every
    option at the demo scenario's value; read only."""
    return uncertainty_figures.farm_run(tmp_path_factory.mktemp("farm_span"))


@pytest.fixture(scope="session")
def demo_year_run():
    """(scenario, study, result) of the whole demo (demo_data/scenario.toml, yearly
    periods, every option at the scenario's value), as `workbench run` computes it before
    its draws; read only."""
    from pathlib import Path

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc = load_scenario(Path(__file__).resolve().parents[1] / "demo_data" / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, "year")
    return sc, study, res
