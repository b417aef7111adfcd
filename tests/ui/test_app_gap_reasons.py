"""The apps behind the notebooks say why a number of a period rests on a gap, with the
reasons budget.csv already gives (docs/budget.md, "Gaps in what a user reads").

Found on the invented network of benchmarks/analyst_network.py (2 sites x 2016) with
the gaps of tests/test_met_gap_periods.py planted: six weeks without wind speed at v02
(its dry rows' flux known for 90.6 % of the year) and a month of NH3 blank in the
samples of v01's filter pack while it ran.  Before, the network overview's table of
annual totals read "complete" and "passes" for both, with no word of either gap
anywhere in the app.
"""
import sys
import warnings
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from test_met_gap_periods import WIND_GAP, _blank_nh3, _blank_wind  # noqa: E402
from tiny_inputs import make_analyst_network  # noqa: E402


@pytest.fixture(scope="module")
def gap_network(tmp_path_factory):
    scen = make_analyst_network(tmp_path_factory.mktemp("appgaps") / "in", n_sites=2,
                                years=1, imperfections={})
    assert _blank_wind(scen.parent / "met.csv.gz", "v02", *WIND_GAP) == 1008
    assert _blank_nh3(scen.parent / "air.csv", "v01", "2016-06") == 5
    return scen


@pytest.fixture(scope="module")
def overview(gap_network):
    from workbench.ui.apps_more import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview.from_scenario(gap_network)


def test_network_totals_name_the_gaps_of_the_year(overview):
    t = overview.totals().droplevel("receptor")      # one receptor a site
    # v02: the S total complete on 90.6 % of the year with a flux; the note says why
    assert t.loc[("v02", "2016"), "S status"] == "complete"
    s_note = t.loc[("v02", "2016"), "S note"]
    assert "SO2 pSO4: flux known for part of the sampled hours only (90.6 %" in s_note
    assert "wind speed without a value in 1008 h" in s_note
    # v01: its N total rests on NH3 blank for five weekly samples: sampler and dates
    n_note = t.loc[("v01", "2016"), "N note"]
    assert "NH3: 5.9 weeks without a usable air sample" in n_note
    assert "NH3 blank in the samples of v01-F1 from 2016-06-02T14:00" in n_note
    # a total with no gap has no note (v01's S: every hour and sample there)
    assert t.loc[("v01", "2016"), "S note"] == ""


def _loads_explorer(scenario, site):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return CriticalLoadsExplorer.from_scenario(scenario, site=site)


def test_critical_loads_view_names_the_gaps_behind_its_totals(gap_network):
    """Before, the exceedance of v02's 2016 (its dry flux on 90.6 % of the year, six
    weeks without wind speed) and of v01's (NH3 blank for five weekly samples) read as
    those of whole years: no status note (both totals complete), no word of the gaps."""
    app = _loads_explorer(gap_network, "v02")
    assert app.year_w.value == "2016"
    text = app.text_w.value
    assert "Gaps behind the totals of 2016 (budget.csv notes): S total (complete): " in text
    assert "wind speed without a value in 1008 h" in text
    assert "flux known for part of the sampled hours only (90.6 %" in text
    app = _loads_explorer(gap_network, "v01")
    text = app.text_w.value
    assert "N total (complete): NH3: 5.9 weeks without a usable air sample" in text
    assert "NH3 blank in the samples of v01-F1 from 2016-06-02T14:00" in text
    # v01's S total has no gap: not named
    assert "S total (" not in text


def test_site_explorer_hover_names_the_met_gap(gap_network):
    """Holds what was right: the site explorer's budget figure gives each dry
    component's note in its hover (v02's S total reads complete in the change line)."""
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer.from_scenario(gap_network, site="v02")
    hover = {tr.get("name"): " ".join(map(str, tr.get("customdata") or ()))
             for tr in app._figure("budget")["data"]}
    so2 = hover["dry SO2"]
    assert "wind speed without a value in 1008 h" in so2
    assert "90.6 % of the period with a flux" in so2.replace("<br>", " ")


def _drop_year(path, site, year):
    """Remove every row of `site` whose start (or time) falls in `year`."""
    import gzip
    opener = gzip.open if path.suffix == ".gz" else open
    with opener(path, "rt", encoding="utf-8") as f:
        lines = f.readlines()
    kept = [ln for ln in lines if ln.startswith("#") or not (
        ln.split(",", 2)[0] == site and ln.split(",", 2)[1].startswith(str(year)))]
    with opener(path, "wt", encoding="utf-8") as f:
        f.writelines(kept)
    return len(lines) - len(kept)


@pytest.fixture(scope="module")
def year_removed(tmp_path_factory):
    """One invented site over 2016-2019, its year 2018 removed from every file."""
    scen = make_analyst_network(tmp_path_factory.mktemp("yearout") / "in", n_sites=1,
                                years=4, imperfections={})
    for name in ("air.csv", "precipitation.csv", "met.csv.gz"):
        assert _drop_year(scen.parent / name, "v01", 2018) > 0
    return scen


def test_network_trend_names_the_year_it_leaves_out(year_removed):
    """Before, the trend column said "3 complete years" and nothing of 2018, which
    the trend leaves out (its totals fail completeness); trends.csv's note names it."""
    from workbench.ui.apps_more import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        net = NetworkOverview.from_scenario(year_removed)
    row = net.analysis.set_index("site").loc["v01"]
    for el in ("S", "N"):
        assert "3 complete years" in row[f"{el}_trend"]
        assert "years left out: 1 flagged (2018)" in row[f"{el}_trend"]
    assert "years left out: 1 flagged (2018)" in net.analysis_w.value
    # the year's own reason is in the totals table beside it
    totals = net.totals().droplevel("receptor")
    assert totals.loc[("v01", "2018"), "S completeness"].startswith(
        "fails: SO4: gauge record below minimum")
