"""Every notebook executes headless (nbclient) on a small copy of the demo scenario.

The notebooks' first cell names the scenario; the test adds a cell after it that points
at a one site-year copy of the invented demo network (tests/ui/demo_subset.py), the way
a colleague points the notebook at their own data.
"""
import shutil
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


@pytest.mark.parametrize("path", sorted(NOTEBOOKS.glob("*.ipynb")), ids=lambda p: p.name)
def test_notebooks_are_stored_without_outputs(path):
    nb = nbformat.read(path, as_version=4)
    nbformat.validate(nb)
    for c in nb.cells:
        if c.cell_type == "code":
            assert c.outputs == [] and c.execution_count is None
    first = nb.cells[0]
    assert first.cell_type == "code" and "SCENARIO =" in first.source
    text = " ".join(c.source for c in nb.cells)
    assert "mapbox" not in text and "scatter_geo" not in text   # nothing fetches map tiles
