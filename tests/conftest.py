"""Fixtures shared by the test modules of tests/ itself."""
import pytest


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
