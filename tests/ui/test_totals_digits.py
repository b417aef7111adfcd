"""The network overview's table of totals (``net.totals()``, the notebook's last cell)
printed six decimals ("9.454149", "589.778455"); it shows three significant digits and
keeps its values in full precision (common practice: a budget's inputs carry two to
three significant digits)."""
import re
import warnings

import numpy as np
import pytest

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


@pytest.fixture(scope="module")
def net(two_sites_2021):
    from workbench.ui.apps import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview.from_scenario(two_sites_2021)


def _significant(cell: str) -> int:
    """Significant digits written in a number of a table cell (``1,441`` counts as a
    whole number: its digits are all meant)."""
    digits = cell.replace(",", "").replace("-", "").replace(".", "").lstrip("0")
    return len(digits)


@pytest.mark.parametrize("unit", ["kg/ha/yr", "eq/ha/yr", "mmol/m2/yr"])
def test_totals_show_three_significant_digits(net, unit):
    t = net.totals(unit)
    cells = re.findall(r"<td>(-?\d[\d.,]*)</td>", t._repr_html_())
    text_cells = re.findall(r"(?<=\s)(\d[\d.,]*)(?=\s)", repr(t).split("\n", 2)[2])
    assert cells and text_cells
    for cell in cells + text_cells:
        if "," in cell or (float(cell.replace(",", "")) >= 1000 and "." not in cell):
            continue                                  # whole numbers from 1,000 up
        assert _significant(cell) <= 3, (unit, cell)
    # the values are whole: the numbers of the table of the network, unrounded
    wide = net.table(unit).pivot_table(index=["site", "receptor", "period"], columns="element",
                                       values="value", aggfunc="first", sort=False)
    np.testing.assert_array_equal(t[f"S total [{unit}]"].to_numpy(), wide["S"].to_numpy())
    assert any(v != round(v, 3) for v in t[f"S total [{unit}]"])      # more than shown


def test_site_budget_rows_show_three_significant_digits(session):
    """The site budget notebook's last cell, the rows of budget.csv of the site shown
    (it printed "0.978026", "69.824071"): three significant digits, values whole."""
    import json
    from pathlib import Path

    from workbench.ui.apps import SiteExplorer
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    cells = json.loads((Path(__file__).parents[2] / "notebooks" / "site_budget.ipynb")
                       .read_text(encoding="utf-8"))["cells"]
    last = "".join(cells[-1]["source"]).strip()
    shown = eval(last, {"app": app})          # the notebook's own cell
    t = app.result.table
    mine = t[(t["site"] == "ridge") & (t["species"] == "all")]
    assert list(shown.index) == list(mine.index) and len(shown) > 0
    np.testing.assert_array_equal(shown["flux_kg_ha"].to_numpy(), mine["flux_kg_ha"].to_numpy())
    with __import__("pandas").option_context("display.max_columns", None):
        cells = re.findall(r"<td>(-?\d[\d.,]*)</td>", shown._repr_html_())
    assert cells
    for cell in cells:
        if "," in cell or "." not in cell:
            continue                                  # whole numbers, years
        assert _significant(cell) <= 3, cell
