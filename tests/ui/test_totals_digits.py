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
