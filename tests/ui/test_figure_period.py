"""Every figure of one site that shows a period names it in its title: the report's
budget figure of one year read "Budget · ridge · conifer_forest" with no year, and a
figure copied out of a notebook did not say which years it was drawn from."""
import pytest

from workbench.ui import figures, figures_wet
from workbench.ui.apps import LAZY_TABS, TABS, SiteExplorer
from workbench.ui.figure_period import bounds_label, span_label


@pytest.fixture(scope="module")
def result(session):
    return session.run(session.baseline, "ridge", 2021, 2021, "month")


def test_span_label_writes_one_year_or_the_first_and_last():
    assert span_label(["2021"]) == "2021"
    assert span_label(["2023", "2019", "2021", "span"]) == "2019–2023"
    assert span_label([]) == ""
    # [start, end): the end instant is the first of the next year, not shown
    assert bounds_label("2021-01-01", "2022-01-01") == "2021"
    assert bounds_label("2019-01-01", "2022-01-01") == "2019–2021"


def test_a_one_year_budget_figure_names_its_year(result):
    title = figures.budget_bars_spec(result.years, "ridge", "grass", "2021")["layout"]["title"]
    assert title["text"] == "Budget · ridge · grass · 2021"
    month = figures.monthly_fluxes_spec(result.budget, "ridge", "grass")["layout"]["title"]
    assert month["text"].endswith(" · 2021")


def test_the_sample_figures_name_the_years_of_their_bounds(result):
    for make in (figures_wet.ion_balance_spec, figures_wet.capture_efficiency_spec):
        spec = make(result.screened, "ridge", None, "2021-01-01", "2022-01-01")
        assert spec["layout"]["title"]["text"].endswith("· ridge · 2021"), make
    spec = figures_wet.excluded_by_reason_spec(result.screened, "ridge", "2021-01-01",
                                               "2022-01-01")
    assert spec["layout"]["title"]["text"].endswith("· ridge · 2021")


def test_every_figure_of_the_site_explorer_names_its_years(session):
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    names = ["budget"] + [n for n in TABS if n not in LAZY_TABS]
    for name in names:
        title = app._spec(name)["layout"]["title"]["text"]
        assert title.endswith(" · 2021"), (name, title)
