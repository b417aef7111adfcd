"""The network overview notebook says what the markers of its annual totals mean, as the
figure draws them (found in a browser pass of the demo): the notebook read "a yearly
total built on a partial set of species ... is drawn with an open marker", while fell's
and mere's N years, every one partial (no NO2) and all in their whole-span totals, are
drawn filled; the diamonds of flagged years were not named at all."""
import json
from pathlib import Path

import pandas as pd

NOTEBOOK = Path(__file__).resolve().parents[2] / "notebooks" / "network_overview.ipynb"


def _markdown():
    cells = json.loads(NOTEBOOK.read_text(encoding="utf-8"))["cells"]
    return " ".join("".join(c["source"]) for c in cells if c["cell_type"] == "markdown")


def test_the_notebook_names_the_markers_as_the_figure_draws_them():
    from workbench.ui.figures_network import network_totals
    t = pd.DataFrame({"site": ["fell"] * 3, "receptor": ["grass"] * 3,
                      "period": ["2021", "2022", "2023"], "element": ["N"] * 3,
                      "value": [13.0, 14.0, 12.0], "status": ["partial", "flagged", "partial"],
                      "missing": ["NO2", "NO2", "NO2 HNO3"], "rankable": [True, True, False],
                      "passes": [True] * 3, "failure": [""] * 3})
    fig = network_totals(t)
    used, left = [tr for tr in fig.data if tr.y is not None and any(v is not None for v in tr.y)]
    assert list(used.marker.symbol) == ["circle", "diamond", "circle"]  # partial, filled
    assert left.marker.symbol == "circle-open"
    words = " ".join(_markdown().split())
    assert "partial set of species (or one that fails completeness) is drawn with an open" \
        not in words
    assert "filled marker is a year that enters the site's whole-span total" in words
    assert "a diamond such a year flagged" in words
    assert "an open marker a year left out of it" in words
