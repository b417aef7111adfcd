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
