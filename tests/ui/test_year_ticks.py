"""The network's year axis names every year of a short record (plotly's automatic ticks
and a legend estimate taken off twice named every other year of the demo's 8)."""
import pytest

from workbench.ui import figures
from workbench.ui.figure_open import PAGE_FIGURE_WIDTH

from .test_plot_layout import _network


def test_eight_years_of_four_sites_are_each_named_level():
    """Defect (browser, the demo: 4 sites, 2016-2023, a 540 px figure): 2016, 2018,
    2020, 2022 only.  The plot measured 375 px in chromium, room for 8 labels of
    YEAR_LABEL_PX side by side."""
    fig = figures.network_totals(_network(4, range(2016, 2024), partial=False),
                                 width=PAGE_FIGURE_WIDTH)
    for x in ("xaxis", "xaxis2"):
        assert list(fig.layout[x].tickvals) == [str(y) for y in range(2016, 2024)], x
        assert list(fig.layout[x].ticktext) == list(fig.layout[x].tickvals)
        assert fig.layout[x].tickangle == 0, x
    assert figures.totals_plot_px(fig, PAGE_FIGURE_WIDTH) == pytest.approx(375, abs=15)


@pytest.mark.parametrize("n", [2, 9, 15])
def test_every_year_named_up_to_fifteen(n):
    fig = figures.network_totals(_network(3, range(2000, 2000 + n)), width=PAGE_FIGURE_WIDTH)
    assert list(fig.layout.xaxis.tickvals) == [str(y) for y in range(2000, 2000 + n)]


@pytest.mark.parametrize("years, partial, named", [
    (range(2000, 2020), True, ["2000", "2005", "2010", "2015"]),
    (range(1995, 2025), True, ["1995", "2000", "2005", "2010", "2015", "2020"]),
    (range(1961, 2024), False, ["1970", "1980", "1990", "2000", "2010", "2020"]),
    (range(1961, 2024), True, ["1980", "2000", "2020"])])     # a wider legend: less room
def test_a_long_record_is_named_on_round_years_level(years, partial, named):
    fig = figures.network_totals(_network(3, years, partial), width=PAGE_FIGURE_WIDTH)
    for x in ("xaxis", "xaxis2"):
        assert list(fig.layout[x].tickvals) == named, x
        assert fig.layout[x].tickangle == 0, x
        assert list(fig.layout[x].categoryarray) == [str(y) for y in years]   # all drawn
