"""Fixtures of the UI tests: small copies of the invented demo scenario, opened once."""
import os
import warnings

import pytest

from ui.demo_subset import write_demo_subset


@pytest.fixture(autouse=True)
def _output_in_tmp(tmp_path, monkeypatch):
    """What an app writes by default goes into ./workbench-output of the working
    directory (the notebook's folder): in a test, a temporary folder, never the
    repository the tests run in."""
    from workbench.ui.session import OUTPUT_ENV
    if not os.environ.get(OUTPUT_ENV):
        monkeypatch.setenv(OUTPUT_ENV, str(tmp_path / "workbench-output"))


@pytest.fixture(scope="session")
def ridge_2021(tmp_path_factory):
    """Scenario file of one site of the demo network, 2020-2021 (the demo plants a poor
    ion balance at ridge in April 2020)."""
    return write_demo_subset(tmp_path_factory.mktemp("ridge"), ("ridge",), 2020, 2021)


@pytest.fixture(scope="session")
def two_sites_2021(tmp_path_factory):
    """Scenario file of two demo sites in 2021: ridge (NO2 measured) and mere (no NO2)."""
    return write_demo_subset(tmp_path_factory.mktemp("two_sites"), ("ridge", "mere"), 2021, 2021)


@pytest.fixture(scope="session")
def session(ridge_2021):
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return Session.open(ridge_2021)
