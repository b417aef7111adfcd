"""The network overview says one thing about flagged totals.

Before (b2c1625) the annual totals drew every flagged year with an open marker named
"(partial or flagged: not ranked)", while the ranking beside it placed a site whose
whole-span total was flagged first (by the ranking's rule, docs/budget.md "Ranking of
sites": a flagged span row holds every component and passes completeness): it read as a
contradiction.  Now the chart follows the ranking's rule: the filled markers are the
years the whole-span total averages (a flagged one a diamond, used with a caution), the
open ones the years left out of it; the ranking marks a flagged total "(flagged)".
The network is the invented demo's ridge and mere in 2020-2021 (tests/ui/demo_subset.py;
ridge's 2020 totals are flagged for kept flagged samples and pass completeness).
"""
import warnings

import numpy as np
import pandas as pd
import pytest
from workbench.ui import figures


def _years(site, status, rankable):
    return pd.DataFrame({"site": site, "element": "S", "period": ["2020", "2021"],
                         "value": [10.0, 11.0], "status": status, "missing": "",
                         "rankable": rankable})


def test_a_flagged_year_used_by_the_whole_span_is_filled_and_never_called_not_ranked():
    t = pd.concat([_years("a", ["flagged", "complete"], [True, True]),
                   _years("b", ["complete", "flagged"], [True, False])], ignore_index=True)
    t = pd.concat([t, t.assign(element="N")], ignore_index=True)
    fig = figures.network_totals(t)
    names = [tr.name for tr in fig.data if tr.showlegend is not False]
    assert not any("not ranked" in n for n in names), names
    assert names == ["a", "b", "b " + figures.OPEN_NAME]
    a_used = [tr for tr in fig.data if tr.name == "a" and tr.xaxis == "x"][0]
    assert list(a_used.marker.symbol) == ["diamond", "circle"]     # flagged, complete
    assert list(a_used.y) == [10.0, 11.0]
    b_open = [tr for tr in fig.data if tr.name == "b " + figures.OPEN_NAME
              and tr.xaxis == "x"][0]
    assert b_open.marker.symbol == "circle-open" and list(b_open.y) == [None, 11.0]
    assert "not in the whole-span total" in b_open.customdata[1]


def test_a_flagged_total_is_ranked_and_says_so():
    from workbench.ui.summaries import network_ranking
    span = pd.DataFrame({"site": ["a", "b", "c"], "element": "S",
                         "flux_kg_ha_yr": [20.0, 10.0, 30.0],
                         "status": ["flagged", "complete", "partial"],
                         "missing_components": ["", "", "NO2"], "years_used": "2020 2021"})
    r = network_ranking(span, "S")
    fig = figures.network_ranking_bars(r, "S")
    assert list(fig.data[0].y) == ["1 · a (flagged)", "2 · b"]
    assert list(fig.data[1].y) == ["1 · c (without NO2)"]
    assert "flagged: ranked, used with a caution" in fig.layout.title.text


def test_report_figure_draws_a_flagged_total_lacking_a_component_with_the_partial_ones():
    """report.html's figure of every site drew a flagged span total without NO2 as
    "every component" while its ranking put it apart (workbench.ranking)."""
    from workbench.report_network import network_figure
    span = pd.DataFrame({"site": ["a", "b"], "element": ["S", "S"],
                         "flux_kg_ha_yr": [5.0, 6.0], "status": ["flagged", "flagged"],
                         "missing_components": ["NO2", ""]})
    span = pd.concat([span, span.assign(element="N")], ignore_index=True)
    fig = network_figure(span)
    full, part = fig.data[0], fig.data[1]
    assert full.name == "every component"
    assert [x is None or np.isnan(x) for x in full.x] == [True, False]
    assert [x is None or np.isnan(x) for x in part.x] == [False, True]


@pytest.fixture(scope="module")
def ridge_mere_2020(tmp_path_factory):
    from ui.demo_subset import write_demo_subset
    return write_demo_subset(tmp_path_factory.mktemp("flag_rule"), ("ridge", "mere"),
                             2020, 2021)


def test_the_overview_marks_the_years_its_ranking_averages(ridge_mere_2020):
    from workbench.ranking import EVERY_COMPONENT
    from workbench.ui.apps_more import NetworkOverview
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = NetworkOverview(Session.open(ridge_mere_2020))
    t = app.network
    # ridge's 2020 totals are flagged (kept flagged samples) and pass completeness:
    # ranked, in the group of every component (what made the chart read as a contradiction)
    flagged = pd.concat([r.assign(element=el) for el, r in app.rankings.items()])
    flagged = flagged[(flagged["status"] == "flagged")
                      & (flagged["group"] == EVERY_COMPONENT)]
    assert len(flagged), app.rankings
    from workbench.ui.summaries import network_span
    span = network_span(app.results.values(), app.session.study.inputs.catalogue)
    assert len(span) == 4
    for _, row in span.iterrows():      # filled markers: the years the span averages
        drawn = set(t.loc[(t["site"] == row["site"]) & (t["element"] == row["element"])
                          & t["rankable"], "period"])
        assert drawn == set(str(row["years_used"]).split()), row
    assert t.loc[(t["site"] == "ridge") & (t["period"] == "2020"), "rankable"].all()
    for el in ("S", "N"):
        r = app.rankings[el]
        for _, row in r[r["group"] == EVERY_COMPONENT].iterrows():
            label = [y for tr in app.figs[el].data for y in tr.y
                     if y.split(" · ")[1].split(" ")[0] == row["site"]][0]
            assert ("(flagged)" in label) == (row["status"] == "flagged"), label
    names = [tr.name for tr in app.figs["totals"].data]
    assert not any("not ranked" in n for n in names), names

