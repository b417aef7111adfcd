"""Report and notebook rank the sites by one rule (workbench.ranking): on the same run
they rank the same sites, in the same groups, in the same order.

Before, the notebook's network overview left out a site with any year not complete or
filled, so v04 and v08 of this network (N totals flagged for kept flagged samples: they
pass completeness, docs/budget.md "Whole span") were ranked in report.html and missing
from the notebook's ranking.  The network is the invented one of
benchmarks/analyst_network.py (10 sites x 2 years, one starting a year late, one without
NH3), as in tests/test_report_network.py."""
import html
import re
import warnings

import pytest

from workbench.cli import run_scenario
from tiny_inputs import make_analyst_network


@pytest.fixture(scope="module")
def both(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("net_rank")
    scenario = make_analyst_network(tmp / "in", n_sites=10, years=2)
    run_scenario(scenario, tmp / "out", quiet=True)
    text = html.unescape((tmp / "out" / "report.html").read_text(encoding="utf-8"))
    from workbench.ui.apps_more import NetworkOverview
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = NetworkOverview(Session.open(scenario))
    return text, app


def report_groups(text: str, element: str) -> list:
    """(group, site) in the order of report.html's ranking of `element`."""
    sec = text[text.index("<h2 id='ranking'>"):]
    sec = sec[:sec.index("<h2", 5)]
    block = sec[sec.index(f"<h3>{element}</h3>"):]
    block = block[:block.index("</div>")]
    out, group = [], None
    for m in re.finditer(r"<p><b>(.*?)</b>|<td>(v\d\d)</td>", block):
        if m.group(1):
            group = m.group(1)
        else:
            out.append((group, m.group(2)))
    return out


@pytest.mark.parametrize("element", ["S", "N"])
def test_report_and_notebook_rank_the_same_sites_in_the_same_order(both, element):
    text, app = both
    in_report = report_groups(text, element)
    r = app.rankings[element]
    in_notebook = list(zip(r["group"], r["site"]))
    assert len(in_report) == 10 and in_notebook == in_report
    # the bars drawn: one trace per ranked group, the sites in the report's order
    fig = app.figs[element]
    drawn = [(tr.name, y.split(" · ")[1].split(" ")[0]) for tr in fig.data for y in tr.y]
    assert drawn == [(g, s) for g, s in in_report if g != "no total"]


def test_a_flagged_total_is_ranked_with_the_full_ones(both):
    """v04 and v08: N flagged (kept flagged samples) in both years, in both rankings."""
    text, app = both
    r = app.rankings["N"]
    flagged = set(r.loc[r["status"] == "flagged", "site"])
    assert flagged >= {"v04", "v08"}
    assert set(r.loc[r["group"] == "every component", "site"]) >= flagged
    assert {s for g, s in report_groups(text, "N") if g == "every component"} >= flagged
    # partial totals ranked apart, one group per missing set
    groups = dict(zip(r["site"], r["group"]))
    assert groups["v10"] == "partial: without NH3, NO2" and groups["v02"] == "partial: without NO2"
    assert "v10" in app.apart_w.value and "partial: without NO2" in app.apart_w.value
