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
from test_met_gap_periods import (WIND_GAP, _blank_nh3, _blank_wind,  # noqa: E402
                                  make_filled_year)
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


def _count_budget_tables(monkeypatch) -> list:
    """A list that gets one item per budget table built (``budget_table`` counted where
    the apps import it from)."""
    import workbench.tables as tables_mod
    import workbench.tables_budget as tb
    real = tb.budget_table
    calls = []

    def counted(ds, *a, **k):
        calls.append(1)
        return real(ds, *a, **k)
    for mod in (tb, tables_mod):
        monkeypatch.setattr(mod, "budget_table", counted)
    return calls


def test_network_totals_build_no_budget_table(overview, monkeypatch):
    """The notes of the totals table come from the total rows' notes alone (before:
    budget.csv's whole table of every site, 132 of the 173 ms of CPU of the demo's
    table); the same notes as that table's total rows."""
    calls = _count_budget_tables(monkeypatch)
    t = overview.totals().droplevel("receptor")
    assert calls == []
    monkeypatch.undo()
    import pandas as pd

    from workbench.tables_budget import budget_table as real
    full = pd.concat([real(r.years) for r in overview.results.values()])
    full = full[(full["pathway"] == "total") & (full["species"] == "all")]
    own = {(s.id, s.land_use) for s in overview.session.study.inputs.catalogue}
    shown = [row for row in full.itertuples() if (row.site, row.receptor) in own]
    assert len(shown) == 4                         # 2 sites x S and N, one year
    for row in shown:
        assert t.loc[(row.site, row.period), f"{row.element} note"] == row.note
    assert (t["S note"] != "").sum() + (t["N note"] != "").sum() >= 2


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


def test_critical_loads_changes_build_no_budget_table(gap_network, monkeypatch):
    """The critical-loads view's gap line comes from the total rows' notes alone, as
    the site explorer's (:func:`workbench.ui.summaries_budget.gap_lines`): no change
    of a control builds budget.csv's whole table (before, the opening and each change
    of site built it, twice here, for the few total rows of the year shown), and the
    line is the one that table's total rows give."""
    from workbench.ui.summaries_budget import gap_note
    app = _loads_explorer(gap_network, "v02")
    calls = _count_budget_tables(monkeypatch)
    shown = []
    app.site_w.value = "v01"                     # a new site's yearly budget: drawn
    shown.append(("v01", app.receptor_w.value, app.year_w.value, app.gap_note))
    app.receptor_w.value = app.receptor_w.options[-1]
    shown.append(("v01", app.receptor_w.value, app.year_w.value, app.gap_note))
    app.cut_w["NHx"].value = 20
    app.mode_w.value = next(v for _, v in app.mode_w.options if v != app.mode_w.value)
    app.site_w.value = "v02"
    shown.append(("v02", app.receptor_w.value, app.year_w.value, app.gap_note))
    assert calls == []
    monkeypatch.undo()
    from workbench.tables_budget import budget_table as real
    assert "NH3 blank in the samples of v01-F1" in shown[0][3]
    assert "wind speed without a value in 1008 h" in shown[2][3]
    # the words of budget.csv's whole table, as the line was written before
    for site, rec, year, line in shown:
        app.site_w.value = site
        assert line == gap_note(real(app.result.years), site, rec, year)


@pytest.fixture(scope="module")
def explorer_v02(gap_network):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer.from_scenario(gap_network, site="v02")


def test_site_explorer_hover_names_the_met_gap(explorer_v02):
    """Holds what was right: the site explorer's budget figure gives each dry
    component's note in its hover (v02's S total reads complete in the change line)."""
    app = explorer_v02
    hover = {tr.get("name"): " ".join(map(str, tr.get("customdata") or ()))
             for tr in app._figure("budget")["data"]}
    so2 = hover["dry SO2"]
    assert "wind speed without a value in 1008 h" in so2
    assert "90.6 % of the period with a flux" in so2.replace("<br>", " ")


def test_site_explorer_says_the_gap_under_its_summary_line(explorer_v02):
    """The change line reads "S total ... kg/ha/yr" with no word (a complete total)
    while the total rests on 90.6 % of the year's hours with a flux, six weeks without
    wind speed: said only in the figure's hover before.  The line under it gives
    budget.csv's note of the total, with its status."""
    import html
    app = explorer_v02
    assert app.change_w.value.startswith("S total ") and "complete" not in app.change_w.value
    text = html.unescape(app.gaps_w.value)
    assert "Gaps behind the totals of 2016 (budget.csv notes): S total (complete): " in text
    assert "wind speed without a value in 1008 h" in text
    assert "flux known for part of the sampled hours only (90.6 %" in text
    # placed right under the change line, above the figure
    def boxes(w):
        yield w
        for c in getattr(w, "children", ()):
            yield from boxes(c)
    kids = next(list(b.children) for b in boxes(app)
                if app.change_w in getattr(b, "children", ()))
    assert kids.index(app.gaps_w) == kids.index(app.change_w) + 1
    # the notes those of budget.csv's total rows (read without building its table)
    from workbench.tables import budget_table
    from workbench.tables_budget import total_note_rows
    full = budget_table(app.result.years)
    full = full[(full["pathway"] == "total") & (full["species"] == "all")]
    key = ["site", "receptor", "period", "element"]
    light = total_note_rows(app.result.years).set_index(key).sort_index()
    full = full.set_index(key).sort_index()
    assert len(full) == 2 and light.index.equals(full.index)
    assert light["note"].tolist() == full["note"].tolist()
    assert light["status"].tolist() == full["status"].tolist()
    # the N total (partial: no NO2 at the site) with its own reasons, after the S
    assert text.index("S total (complete)") < text.index("N total (partial): ")
    assert "NO2: not measured at the site" in text


@pytest.fixture(scope="module")
def filled_year(tmp_path_factory):
    """One invented site over 2016-2017, eight weeks without wind speed in 2016: its S
    and N totals of 2016 read ``filled`` (tests/test_met_gap_periods.py)."""
    return make_filled_year(tmp_path_factory.mktemp("filled") / "in")


@pytest.fixture(scope="module")
def filled_loads(filled_year):
    return _loads_explorer(filled_year, "v01")


def test_critical_loads_gap_line_of_a_filled_total(filled_loads):
    """The gap line of a ``filled`` yearly total (untested before): its status and the
    budget's words, the share of Vd not modelled and the met gap behind it; no "Read
    with care" line (a filled total passes)."""
    app = filled_loads
    app.year_w.value = "2016"
    text = app.text_w.value
    assert app.status_note == ""
    assert ("Gaps behind the totals of 2016 (budget.csv notes): S total (filled): SO2 "
            "pSO4: deposition velocity not modelled in 15.6 % of the hours behind the "
            "flux") in text
    assert "N total (filled): HNO3 pNO3 pNH4 NH3 NO2: deposition velocity" in text
    assert text.count("wind speed without a value in 1344 h") == 2
    # the other year: its own notes, no word of 2016's gap
    app.year_w.value = "2017"
    assert "1344 h" not in app.text_w.value and "(filled)" not in app.text_w.value


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


@pytest.fixture(scope="module")
def year_removed_net(year_removed):
    from workbench.ui.apps_more import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return NetworkOverview.from_scenario(year_removed)


def test_network_trend_names_the_year_it_leaves_out(year_removed_net):
    """Before, the trend column said "3 complete years" and nothing of 2018, which
    the trend leaves out (its totals fail completeness); trends.csv's note names it."""
    net = year_removed_net
    row = net.analysis.set_index("site").loc["v01"]
    for el in ("S", "N"):
        assert "3 complete years" in row[f"{el}_trend"]
        assert "years left out: 1 flagged (2018)" in row[f"{el}_trend"]
    assert "years left out: 1 flagged (2018)" in net.analysis_w.value
    # the year's own reason is in the totals table beside it
    totals = net.totals().droplevel("receptor")
    assert totals.loc[("v01", "2018"), "S completeness"].startswith(
        "fails: SO4: gauge record below minimum")


def test_network_span_exceedance_names_its_years(year_removed_net):
    """The span exceedance's note said "exceedance of the mean deposition of the years
    used" without naming them; it now names them and the year left out, with why
    (budget.csv's span rows: years_used, and the note's "2018 left out: ...")."""
    import html
    note = year_removed_net.analysis.set_index("site").loc["v01", "exceedance_note"]
    assert note.startswith("exceedance of the mean deposition of the years used (S: "
                           "2016 2017 2019; 2018 left out: fails completeness (SO4: "
                           "gauge record below minimum")
    assert "; N: 2016 2017 2019; 2018 left out: fails completeness (NO3 NH4: " in note
    assert note.endswith("), not the mean of the years' exceedances")
    assert "years used (S: 2016 2017 2019; 2018 left out" in html.unescape(
        year_removed_net.analysis_w.value)


def test_total_note_rows_are_budget_csvs(filled_loads):
    """The rows the site explorer's gap line reads (the total rows' notes, without the
    whole table): budget.csv's notes and statuses over both years and every receptor
    of the run."""
    from workbench.tables import budget_table
    from workbench.tables_budget import total_note_rows
    years = filled_loads.result.years
    key = ["site", "receptor", "period", "element"]
    full = budget_table(years)
    full = full[(full["pathway"] == "total") & (full["species"] == "all")]
    full = full.set_index(key).sort_index()
    light = total_note_rows(years).set_index(key).sort_index()
    assert len(full) >= 4 and light.index.equals(full.index)
    assert light[["note", "status"]].equals(full[["note", "status"]])
    assert (full["note"] != "").sum() >= 4
