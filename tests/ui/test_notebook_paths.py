"""A notebook's SCENARIO found as its first cell says: "demo", absolute, or relative to
the notebook (then to the working directory), else a message saying where it looked and
what to write; and the line a saved notebook keeps in place of an app."""
import warnings

import pytest

from workbench.errors import ScenarioError, WorkbenchError
from workbench.ui.notebook_paths import demo_scenario, notebook_file, scenario_path


@pytest.fixture()
def layout(tmp_path):
    """A colleague's folders: shared/analysis/nb.ipynb with data/scenario.toml beside it,
    and a kernel started in home/."""
    nb_dir = tmp_path / "shared" / "analysis"
    (nb_dir / "data").mkdir(parents=True)
    (nb_dir / "data" / "scenario.toml").write_text("")
    (tmp_path / "home").mkdir()
    return nb_dir / "nb.ipynb", tmp_path / "home"


def test_demo_is_the_shipped_scenario():
    assert scenario_path("demo") == demo_scenario() and demo_scenario().is_file()
    assert scenario_path(" Demo ") == demo_scenario()


def test_relative_to_the_notebook_from_another_working_directory(layout):
    nb, home = layout
    assert scenario_path("data/scenario.toml", notebook=nb, cwd=home) == (
        nb.parent / "data" / "scenario.toml").resolve()


def test_relative_to_the_working_directory_when_the_notebook_is_unknown(layout, monkeypatch):
    nb, home = layout
    monkeypatch.delenv("JPY_SESSION_NAME", raising=False)
    assert scenario_path("data/scenario.toml", cwd=nb.parent) == (
        nb.parent / "data" / "scenario.toml").resolve()
    assert scenario_path(nb.parent / "data" / "scenario.toml", cwd=home).is_file()


def test_a_missing_scenario_says_where_it_looked_and_what_to_write(layout):
    nb, home = layout
    with pytest.raises(ScenarioError) as err:
        scenario_path("../demo_data/scenario.toml", notebook=nb, cwd=home)
    text = str(err.value)
    assert isinstance(err.value, WorkbenchError)          # shown as one line in a notebook
    assert "SCENARIO = '../demo_data/scenario.toml': no such scenario file" in text
    assert str(nb.parent / "../demo_data/scenario.toml") in text
    assert str(home / "../demo_data/scenario.toml") in text
    assert "beside this notebook" in text and '"demo"' in text


def test_a_folder_is_named_as_a_folder(layout):
    nb, home = layout
    with pytest.raises(ScenarioError, match="It is a folder: name the scenario's .toml"):
        scenario_path("data", notebook=nb, cwd=home)


def test_notebook_file_from_the_front_end(tmp_path, monkeypatch):
    monkeypatch.delenv("JPY_SESSION_NAME", raising=False)
    assert notebook_file({}) is None
    nb = tmp_path / "a.ipynb"
    assert notebook_file({"__vsc_ipynb_file__": str(nb)}) == nb           # VS Code
    assert notebook_file({"__session__": str(nb)}) == nb                  # ipykernel
    monkeypatch.setenv("JPY_SESSION_NAME", str(nb))                       # Jupyter Server
    assert notebook_file({}) == nb
    monkeypatch.setenv("JPY_SESSION_NAME", "console-1")                   # not a notebook
    assert notebook_file({}) is None


def test_saved_notebook_keeps_a_line_not_the_widget_repr(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    data = app._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in data
    assert data["text/plain"] == (
        "[Site budget explorer · ridge · conifer_forest · 2021: an interactive app. Run the "
        "notebook's cells (Run > Run All Cells) to show and use it.]")
