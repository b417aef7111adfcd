"""Fixtures of the analysis tests: the tiny site of tiny_site.py, and a small copy of
the invented demo scenario, run once."""
import warnings

import pytest

from analysis.tiny_site import make_tiny
from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="package")
def tiny(tmp_path_factory):
    return make_tiny(tmp_path_factory.mktemp("mc"))


#: A receptor table added to the copy's ridge site (invented values) [eq/ha/yr].
MOORLAND_LOADS = """
[site.critical_loads.moorland]
cl_max_s = 600.0
cl_min_n = 214.0
cl_max_n = 900.0
cl_nut_n = 500.0
"""


@pytest.fixture(scope="session")
def analysis_scenario(tmp_path_factory):
    """ridge (complete totals) and mere (partial totals) in 2020-2021, with per-receptor
    critical loads for ridge's moorland surface."""
    path = write_demo_subset(tmp_path_factory.mktemp("analysis"), ("ridge", "mere"), 2020, 2021)
    sites = path.parent / "sites.toml"
    text = sites.read_text(encoding="utf-8")
    marker = 'id = "fell"'
    i = text.index(marker)
    i = text.rindex("[[site]]", 0, i)
    sites.write_text(text[:i] + MOORLAND_LOADS.lstrip() + "\n" + text[i:], encoding="utf-8")
    return path


@pytest.fixture(scope="session")
def analysis_run(analysis_scenario, tmp_path_factory):
    """(run folder, result, study) of the analysis scenario."""
    from workbench.cli import run_scenario
    out = tmp_path_factory.mktemp("analysis_run") / "run"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        written, result, study = run_scenario(analysis_scenario, out, quiet=True)
    return out, result, study
