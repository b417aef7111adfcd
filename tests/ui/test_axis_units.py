"""The deposition axes of the apps' figures name a quantity and put its unit in square
brackets, in every unit of the unit control.

Seen in JupyterLab + chromium: the site budget's y axis read ``kg S / N ha-1 yr-1``,
the monthly panels ``kg S ha-1 month-1``, the network's totals and rankings
``kg S ha-1 yr-1`` and the gas-scheme difference ``kg S / N ha-1 yr-1``: a unit with
no quantity and without the brackets of every other axis of the apps (``gauge depth
[mm]``, ``median resistance [s m-1]``, ``N deposition [eq/ha/yr]``).
"""
import re
import warnings

import pandas as pd
import pytest

from workbench.ui.summaries import UNITS, axis_text

#: A title: words, then the unit in brackets (on the same line or the next one).
TITLED = re.compile(r"^(?P<what>[A-Za-z][^\[\]]*?)(?: |<br>)\[(?P<unit>[^\[\]]+)\]$")


def _titles(layout, prefix):
    return {k: v["title"]["text"] for k, v in layout.items()
            if k.startswith(prefix) and isinstance(v, dict) and v.get("title")}


def _check(title, unit, monthly=False):
    m = TITLED.match(title or "")
    assert m, title
    # the unit of the control, with or without the element it counts
    assert m.group("unit") in {axis_text(unit, monthly, el) for el in ("S", "N", None)}, title
    return m.group("what")


@pytest.fixture(scope="module")
def explorer(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2021, 2021))


@pytest.fixture(scope="module")
def network(session):
    from workbench.ui.apps_more import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview(session, years=(2021, 2021))


@pytest.mark.parametrize("unit", list(UNITS))
def test_site_explorer_axes(explorer, unit):
    explorer.unit_w.value = unit
    budget = explorer._spec("budget")["layout"]
    assert _check(_titles(budget, "yaxis")["yaxis"], unit) == "deposition"
    monthly = _titles(explorer._spec("monthly fluxes")["layout"], "yaxis")
    assert sorted(_check(t, unit, monthly=True) for t in monthly.values()) == [
        "N deposition", "S deposition"]
    # the widgets show it too
    assert explorer.figs["budget"].layout.yaxis.title.text == budget["yaxis"]["title"]["text"]


@pytest.mark.parametrize("unit", ["kg/ha/yr", "eq/ha/yr"])
def test_gas_scheme_difference_axis(explorer, unit):
    explorer.unit_w.value = unit
    explorer.schemes.draw()
    title = explorer.schemes.figs["budget"].layout.xaxis.title.text
    a, b = list(explorer.schemes.runs)
    assert _check(title, unit) == f"{b} minus {a}"


@pytest.mark.parametrize("unit", list(UNITS))
def test_network_axes(network, unit):
    network.unit_w.value = unit
    totals = network.figs["totals"].layout
    assert [_check(totals[k].title.text, unit) for k in ("yaxis", "yaxis2")] == [
        "S total", "N total"]
    for el in ("S", "N"):
        assert _check(network.figs[el].layout.xaxis.title.text, unit) == f"{el} total"


def test_sensitivity_curves_axes():
    from workbench.ui import figures
    sweep = pd.DataFrame({"value": [0.1, 0.2] * 6, "total": sorted(
        [f"{e}_{p}" for e in "SN" for p in ("wet", "dry", "total")] * 2),
        "rate": range(12), "status": "complete"})
    for unit in UNITS:
        fig = figures.sensitivity_curves(sweep, "x", 0.1, unit)
        assert [_check(fig.layout[k].title.text, unit) for k in ("yaxis", "yaxis2")] == [
            "S deposition", "N deposition"]


def test_gas_scheme_table_headings_have_units_in_brackets(explorer):
    """The table under the gas-scheme figures: "percent (%)" stood apart from every
    other heading's "[unit]", and "difference" had no unit of its own."""
    explorer.unit_w.value = "eq/ha/yr"
    explorer.schemes.draw()
    heads = re.findall(r"<th>(.*?)</th>", explorer.schemes.table_w.value)
    assert "difference [eq/ha/yr]" in heads and "difference [%]" in heads, heads
    assert not any("(%)" in h for h in heads), heads
