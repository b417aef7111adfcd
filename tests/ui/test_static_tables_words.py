"""The tables printed under the apps are a cell's output: they show the state of when
that cell ran, and a change of the app's controls does not redraw them.

Seen in JupyterLab + chromium: the site explorer moved to mere while the table under it
still held ridge's rows, under "the rows of budget.csv for the site and years shown";
the network's unit set to eq/ha/yr over a table of kg/ha/yr "in the unit chosen above".
The words over each such cell say so (common practice of notebooks: an output is
static until its cell runs again).
"""
import json
from pathlib import Path

import pytest

NOTEBOOKS = Path(__file__).resolve().parents[2] / "notebooks"


@pytest.mark.parametrize("name, call", [("site_budget.ipynb", "app.rows()"),
                                        ("network_overview.ipynb", "net.totals()")])
def test_the_words_over_a_static_table_say_when_it_was_made(name, call):
    cells = json.loads((NOTEBOOKS / name).read_text(encoding="utf-8"))["cells"]
    at = [i for i, c in enumerate(cells) if "".join(c["source"]).strip() == call]
    assert len(at) == 1, name
    words = "".join(cells[at[0] - 1]["source"])
    assert cells[at[0] - 1]["cell_type"] == "markdown"
    assert "when this cell ran" in words and "run it again" in words, words
