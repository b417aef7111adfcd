"""Every notebook executes headless (nbclient) on a small copy of the demo scenario.

The notebooks' first cell names the scenario; the test adds a cell after it that points
at a one site-year copy of the invented demo network (tests/ui/demo_subset.py), the way
a colleague points the notebook at their own data.
"""
import shutil
import subprocess
from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

from ui.demo_subset import write_demo_subset

NOTEBOOKS = Path(__file__).resolve().parents[1] / "notebooks"
#: Seconds a cell may run (the first run of a site-year takes a few seconds).
CELL_TIMEOUT = 300
pytestmark = pytest.mark.notebook


@pytest.fixture(scope="module")
def scenarios(tmp_path_factory):
    base = tmp_path_factory.mktemp("nb_data")
    return {"one": write_demo_subset(base / "one", ("ridge",), 2021, 2021),
            "two": write_demo_subset(base / "two", ("ridge", "mere"), 2021, 2021)}


def _parameters(name, scenarios):
    if name == "network_overview":
        return f'SCENARIO = r"{scenarios["two"]}"\nYEARS = (2021, 2021)'
    return f'SCENARIO = r"{scenarios["one"]}"\nSITE = "ridge"\nYEARS = (2021, 2021)'


def _run(name, scenarios, tmp_path):
    nb = nbformat.read(NOTEBOOKS / f"{name}.ipynb", as_version=4)
    nb.metadata.pop("widgets", None)     # a user's saved widget state (JupyterLab option)
    first = nb.cells[0]
    assert first.cell_type == "code" and "SCENARIO =" in first.source
    nb.cells.insert(1, nbformat.v4.new_code_cell(_parameters(name, scenarios)))
    shutil.copy(NOTEBOOKS / f"{name}.ipynb", tmp_path / f"{name}.ipynb")
    client = NotebookClient(nb, timeout=CELL_TIMEOUT, kernel_name="python3",
                            store_widget_state=False,
                            resources={"metadata": {"path": str(tmp_path)}})
    client.execute()
    return nb


def _outputs(nb):
    return [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", [])]


@pytest.mark.parametrize("name", ["site_budget", "sensitivity", "network_overview",
                                  "critical_loads"])
def test_notebook_runs_headless(name, scenarios, tmp_path):
    nb = _run(name, scenarios, tmp_path)
    outs = _outputs(nb)
    assert not [o for o in outs if o.output_type == "error"]
    assert not [o for o in outs if o.output_type == "stream" and o.name == "stderr"
                and "Traceback" in o.text]
    views = [o for o in outs if "application/vnd.jupyter.widget-view+json" in o.get("data", {})]
    assert views, "the app widget is displayed"
    assert "widgets" not in nb.metadata       # store_widget_state=False keeps the file small
    if name == "site_budget":                  # the rows of budget.csv behind the figures
        last = nb.cells[-1].outputs[-1]["data"]["text/plain"]
        assert "ridge" in last and "total" in last


def test_grid_maps_notebook_runs_headless(scenarios, tmp_path):
    """The map notebook, pointed at a site scenario (no [grid]): the demo grid's maps."""
    nb = _run("grid_maps", scenarios, tmp_path)
    outs = _outputs(nb)
    assert not [o for o in outs if o.output_type == "error"]
    figures = [o for o in outs if "application/vnd.plotly.v1+json" in o.get("data", {})]
    assert len(figures) == 2
    assert "2021-07" in nb.cells[3].outputs[-1]["data"]["text/plain"]


def _committed_notebooks():
    """(name, text) of the notebooks in the last commit, or None outside a git checkout.

    What a user does in JupyterLab (run all: the autosave stores outputs and execution
    counts; a new notebook) changes the files on disk, not what is committed.
    """
    root = NOTEBOOKS.parent
    try:
        names = subprocess.run(["git", "-C", str(root), "ls-tree", "--name-only", "HEAD",
                                "notebooks/"], capture_output=True, text=True, check=True,
                               timeout=30).stdout.split()
    except (OSError, subprocess.SubprocessError):
        return None
    out = []
    for name in sorted(n for n in names if n.endswith(".ipynb")):
        text = subprocess.run(["git", "-C", str(root), "show", f"HEAD:{name}"],
                              capture_output=True, text=True, check=True, timeout=30).stdout
        out.append((name, text))
    return out


_COMMITTED = _committed_notebooks()


@pytest.mark.skipif(_COMMITTED is None, reason="not a git checkout: what is committed "
                    "cannot be read (the files on disk may hold a user's outputs)")
@pytest.mark.parametrize("name,text", _COMMITTED or [], ids=lambda v: v if
                         str(v).endswith(".ipynb") else "")
def test_notebooks_are_committed_without_outputs(name, text):
    nb = nbformat.reads(text, as_version=4)
    nbformat.validate(nb)
    for c in nb.cells:
        if c.cell_type == "code":
            assert c.outputs == [] and c.execution_count is None, name
    first = nb.cells[0]
    assert first.cell_type == "code" and "SCENARIO =" in first.source
    text = " ".join(c.source for c in nb.cells)
    assert "mapbox" not in text and "scatter_geo" not in text   # nothing fetches map tiles


#: Most characters of a code line seen whole in a 1,000 px window with JupyterLab's file
#: browser open (measured in chromium, JupyterLab 4.6: the first cell's comment was cut
#: after 72 characters, the rest behind a horizontal scroll bar).
CODE_LINE_CHARS = 70


@pytest.mark.parametrize("path", sorted(NOTEBOOKS.glob("*.ipynb")), ids=lambda p: p.name)
def test_code_lines_show_whole_beside_the_file_browser(path):
    nb = nbformat.read(path, as_version=4)
    long = [line for c in nb.cells if c.cell_type == "code"
            for line in c.source.splitlines() if len(line) > CODE_LINE_CHARS]
    assert long == [], long


def test_every_notebook_is_committed():
    if _COMMITTED is None:
        pytest.skip("not a git checkout")
    assert {Path(n).name for n, _ in _COMMITTED} == {
        "site_budget.ipynb", "sensitivity.ipynb", "network_overview.ipynb",
        "critical_loads.ipynb", "grid_maps.ipynb"}


def test_run_artefacts_stay_out_of_the_notebooks_folder():
    """What a user makes while using a notebook (checkpoints, saved scenarios, run
    folders, other files) is ignored by git in notebooks/: only notebooks are tracked."""
    root = NOTEBOOKS.parent
    try:
        ignored = subprocess.run(
            ["git", "-C", str(root), "check-ignore", "--no-index", "notebooks/my_scenario.toml",
             "notebooks/run-folder/budget.csv", "notebooks/.ipynb_checkpoints/x.ipynb",
             "notebooks/site_budget.ipynb"], capture_output=True, text=True, timeout=30)
    except OSError:
        pytest.skip("git is not available")
    if ignored.returncode == 128:
        pytest.skip("not a git checkout")
    assert ignored.stdout.split() == ["notebooks/my_scenario.toml",
                                      "notebooks/run-folder/budget.csv",
                                      "notebooks/.ipynb_checkpoints/x.ipynb"]


# ---------------------------------------------------------------- a team sharing notebooks
def _shared_copy(name, tmp_path, scenario_line):
    """The notebook as a colleague has it: in another folder, its first cell pointing at
    the scenario with a path relative to the notebook (the data in data/ beside it)."""
    nb = nbformat.read(NOTEBOOKS / f"{name}.ipynb", as_version=4)
    nb.metadata.pop("widgets", None)
    first = nb.cells[0].source.split("\n")
    nb.cells[0].source = "\n".join(scenario_line if ln.startswith("SCENARIO =") else ln
                                   for ln in first)
    folder = tmp_path / "shared" / "analysis"
    folder.mkdir(parents=True)
    return nb, folder


def _execute(nb, cwd, **kw):
    client = NotebookClient(nb, timeout=CELL_TIMEOUT, kernel_name="python3",
                            resources={"metadata": {"path": str(cwd)}}, **kw)
    client.execute()
    return nb


def test_relative_scenario_found_beside_the_notebook_from_another_folder(tmp_path, monkeypatch):
    """Kernel started in another folder (JupyterLab's root elsewhere, papermill): the
    front end names the notebook (JPY_SESSION_NAME) and its relative SCENARIO is found."""
    nb, folder = _shared_copy("critical_loads", tmp_path, 'SCENARIO = "data/scenario.toml"')
    write_demo_subset(folder / "data", ("ridge",), 2021, 2021)
    (tmp_path / "home").mkdir()
    monkeypatch.setenv("JPY_SESSION_NAME", str(folder / "critical_loads.ipynb"))
    nb = _execute(nb, tmp_path / "home", store_widget_state=False)
    outs = _outputs(nb)
    assert not [o for o in outs if o.output_type == "error"]
    assert "ridge" in "".join(o.get("text", "") for o in nb.cells[-1].outputs)   # the statement


def test_missing_scenario_says_what_to_do_in_one_line(tmp_path, monkeypatch):
    """A colleague's copy whose relative path does not exist here: one located line
    naming the places looked at, SCENARIO and "demo"; no traceback."""
    from nbclient.exceptions import CellExecutionError
    nb, folder = _shared_copy("site_budget", tmp_path, 'SCENARIO = "../demo_data/scenario.toml"')
    monkeypatch.setenv("JPY_SESSION_NAME", str(folder / "site_budget.ipynb"))
    with pytest.raises(CellExecutionError):
        _execute(nb, folder, store_widget_state=False)
    errors = [o for o in _outputs(nb) if o.output_type == "error"]
    assert len(errors) == 1
    text = "\n".join(errors[0].traceback)
    assert "no such scenario file" in text and '"demo"' in text and "beside this notebook" in text
    assert str(folder / "../demo_data/scenario.toml") in text
    assert "Traceback" not in text and len(errors[0].traceback) == 1


def test_rerun_from_the_top_in_the_same_kernel(scenarios, tmp_path):
    """Run All twice without restarting (a user going back to the top): the second run
    makes the apps again without an error."""
    nb = nbformat.read(NOTEBOOKS / "site_budget.ipynb", as_version=4)
    nb.metadata.pop("widgets", None)
    nb.cells.insert(1, nbformat.v4.new_code_cell(_parameters("site_budget", scenarios)))
    client = NotebookClient(nb, timeout=CELL_TIMEOUT, kernel_name="python3",
                            store_widget_state=False,
                            resources={"metadata": {"path": str(tmp_path)}})
    with client.setup_kernel():
        for _ in range(2):
            for i, cell in enumerate(nb.cells):
                client.execute_cell(cell, i)
    outs = _outputs(nb)
    assert not [o for o in outs if o.output_type == "error"]
    assert "ridge" in nb.cells[-1].outputs[-1]["data"]["text/plain"]


def test_saved_outputs_read_well_before_running(scenarios, tmp_path):
    """What a colleague sees in a saved notebook before running it: a line per app saying
    what it showed and to run the cells, not the widget's repr nor an empty HTML()."""
    nb = nbformat.read(NOTEBOOKS / "site_budget.ipynb", as_version=4)
    nb.cells.insert(1, nbformat.v4.new_code_cell(_parameters("site_budget", scenarios)))
    nb = _execute(nb, tmp_path, store_widget_state=True)
    texts = [o["data"]["text/plain"] for o in _outputs(nb) if "data" in o]
    assert ("[Site budget explorer · ridge · conifer_forest · 2021: an interactive app. Run "
            "the notebook's cells (Run > Run All Cells) to show and use it.]") in texts
    assert not [t for t in texts if t.startswith(("SiteExplorer(", "HTML(", "Progress("))]
