"""The site explorer's table of oxidized and reduced N and potential acidity under the
budget bars, and the network overview's reduced-share and potential-acidity columns of
``net.totals()`` (before, both showed the S and N totals only).  Checked against an
independent pandas sum of the app's own budget.csv rows (``result.table``)."""
import re
import warnings

import numpy as np
import pandas as pd
import periodictable
import pytest

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


def _by_hand(table: pd.DataFrame) -> pd.DataFrame:
    """kg N/ha/yr of each form of N and the potential acidity 2 S + N [eq/ha/yr] from
    budget.csv's component rows (molar masses of periodictable; 2 eq per mol S as
    sulfate, 1 per mol N: common practice)."""
    comp = table[(table["species"] != "all") & (table["period"].astype(str) != "span")]
    key = ["site", "receptor", "period"]

    def per(mask):
        return comp[mask].groupby(key)["flux_kg_ha_yr"].sum(min_count=1)
    ox = per(comp["species"].isin(("NO3", "HNO3", "pNO3", "NO2")))
    red = per(comp["species"].isin(("NH4", "NH3", "pNH4")))
    s = per(comp["element"] == "S")
    pa = s / (periodictable.S.mass / 1000) * 2 + (ox + red) / (periodictable.N.mass / 1000)
    out = pd.DataFrame({"oxidized_N": ox, "reduced_N": red,
                        "reduced_share": 100 * red / (ox + red), "potential_acidity": pa})
    return out.reset_index().astype({"period": str})


def test_site_explorer_shows_the_split_of_n(session):
    from workbench.ui.apps import SiteExplorer
    app = SiteExplorer(session, site="ridge", years=(2020, 2021))
    text = app.split_w.value
    assert "N split and potential acidity" in text and "oxidized N [kg N/ha/yr]" in text
    rec = app.receptor_w.value
    from workbench.tables import budget_table         # budget.csv's rows of the years
    hand = _by_hand(budget_table(app.result.years))
    hand = hand[(hand["site"] == "ridge") & (hand["receptor"] == rec)
                & hand["period"].isin(["2020", "2021"])]
    assert len(hand) == 2
    for r in hand.itertuples(index=False):
        row = re.search(rf"<tr><td>{r.period}</td>(.*?)</tr>", text).group(1)
        cells = [c.split()[0].replace(",", "") for c in re.findall(r">([^<]+)</td>", row)]
        assert float(cells[0]) == pytest.approx(r.oxidized_N, rel=6e-3)
        assert float(cells[1]) == pytest.approx(r.reduced_N, rel=6e-3)
        assert abs(float(cells[2]) - r.reduced_share) <= 0.5 + 1e-9
        assert float(cells[3]) == pytest.approx(r.potential_acidity, rel=6e-3)
    # the unit control moves the N forms, the acidity stays in eq/ha/yr
    app.unit_w.value = "eq/ha/yr"
    assert "oxidized N [eq/ha/yr]" in app.split_w.value
    assert "potential acidity [eq/ha/yr]" in app.split_w.value


def test_network_totals_carry_reduced_share_and_acidity(two_sites_2021):
    from workbench.tables import budget_table
    from workbench.ui.apps import NetworkOverview
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        net = NetworkOverview.from_scenario(two_sites_2021)
    t = net.totals()
    cols = ["reduced share of N [%]", "reduced share completeness",
            "potential acidity [eq/ha/yr]", "potential acidity completeness"]
    assert set(cols) <= set(t.columns)
    plain = t.to_plain() if hasattr(t, "to_plain") else t
    checked = 0
    for r in net.results.values():
        hand = _by_hand(budget_table(r.years))
        for (s, rec, period), row in plain.iterrows():
            h = hand[(hand["site"] == s) & (hand["receptor"] == rec)
                     & (hand["period"] == str(period))]
            if h.empty:                                  # another run's site
                continue
            h, checked = h.iloc[0], checked + 1
            assert row["reduced share of N [%]"] == pytest.approx(h["reduced_share"], rel=1e-6)
            assert row["potential acidity [eq/ha/yr]"] == pytest.approx(
                h["potential_acidity"], rel=1e-6)
    assert checked == len(plain) == 2                   # ridge and mere, 2021
    # every 2021 total of these demo sites passes completeness; mere has no NO2, and its
    # share and acidity say so (its share leans to reduced N)
    for col in ("potential acidity completeness", "reduced share completeness"):
        assert plain.xs("ridge", level="site")[col].tolist() == ["passes"]
        assert plain.xs("mere", level="site")[col].tolist() == ["passes (without NO2)"]
    assert np.isfinite(plain["potential acidity [eq/ha/yr]"].astype(float)).all()


def _network_loop(results, catalogue=None):
    """The earlier network_derived, kept word for word in benchmarks/derived_split.py
    (``site_loop``, which times it): each run's sums, then its rows picked site by
    site in a Python loop."""
    import importlib.util
    from pathlib import Path
    path = Path(__file__).resolve().parents[2] / "benchmarks" / "derived_split.py"
    spec = importlib.util.spec_from_file_location("bench_derived_split", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.site_loop(results, catalogue)


def test_network_derived_in_one_call_equals_the_site_loop(two_sites_2021):
    """network_derived computes every run's sites side by side in one call (through
    the stage graph the runs share) and picks each site's own surface in one merge; the
    same frame as the loop over sites, with and without the catalogue (without: each
    site's first active receptor), and run by run where two runs share a site."""
    from workbench.ui.apps import NetworkOverview
    from workbench.ui.derived_split import network_derived
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        net = NetworkOverview.from_scenario(two_sites_2021)
        results = list(net.results.values())
        assert len(results) == 2
        cat = net.session.study.inputs.catalogue
        for runs in (results, results + results[:1]):       # the latter: one by one
            for c in (cat, None):
                want = _network_loop(runs, c)
                got = network_derived(runs, c)
                assert len(got) == len(want) > 0
                pd.testing.assert_frame_equal(got, want)
        # a second call reads the sums from the graph: nothing computed again
        graph = results[0].graph
        before = graph.counts["network_rates"]
        assert before >= 1
        pd.testing.assert_frame_equal(network_derived(results, cat), _network_loop(results, cat))
        assert graph.counts["network_rates"] == before


def test_split_table_from_the_graph_equals_the_one_from_scratch(session):
    """The site explorer's split table takes the derived sums from the stage graph
    (``Result.rates``): the same HTML as computed from scratch, and a redraw of the
    same result (a unit change) computes them no more."""
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.derived_split import n_split_html
    app = SiteExplorer(session, site="ridge", years=(2020, 2021))
    rec = app.receptor_w.value
    for unit in ("kg/ha/yr", "eq/ha/yr"):
        assert n_split_html(app.result.years, "ridge", rec, unit) == n_split_html(
            app.result.years, "ridge", rec, unit, rates=app.result.rates(receptors=[rec]))
    g = app.result.graph
    before = g.counts["year_rates"]
    assert before >= 1                     # the explorer's first drawing computed them
    app.unit_w.value = "eq/ha/yr"
    app.unit_w.value = "kg/ha/yr"
    assert g.counts["year_rates"] == before
    assert app.split_w.value == n_split_html(app.result.years, "ridge", rec, "kg/ha/yr")


def test_a_change_derives_the_years_once_and_builds_no_table(session, monkeypatch):
    """A cold change of an assumption (monthly tab shown) computes the derived
    quantities of the new years once, through the stage graph, for both the N split
    and the dry-N bracket, and their parts' rows without budget.csv's whole table
    (before: three ``derived`` calls -- the months' for the bracket, unused, then the
    years' again for the bracket and for the split -- and one ``budget_table``); what
    is shown is what the functions give from scratch."""
    import workbench.budget as budget_mod
    import workbench.budget_derived as bd
    import workbench.pipeline_result as pr
    import workbench.stages as stages_mod
    import workbench.tables as tables_mod
    import workbench.tables_budget as tb
    from workbench.ui.apps import TABS, SiteExplorer
    from workbench.ui.bracket import bracket_line
    from workbench.ui.derived_split import n_split_html
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    app.tabs.selected_index = TABS.index("monthly fluxes")
    app.redraw()
    calls = {"derived": 0, "budget_table": 0}
    real_derived, real_table = bd.derived, tb.budget_table

    def derived(ds):
        calls["derived"] += 1
        return real_derived(ds)

    def budget_table(ds, *a, **k):
        calls["budget_table"] += 1
        return real_table(ds, *a, **k)
    for mod in (bd, budget_mod, stages_mod):
        monkeypatch.setattr(mod, "derived", derived)
    for mod in (tb, tables_mod, pr):
        monkeypatch.setattr(mod, "budget_table", budget_table)
    g = app.result.graph
    before = {k: g.counts[k] for k in ("derived", "part_rows", "year_rates")}
    ctl = app.controls["budget.min_air_coverage"]
    ctl.value = round(ctl.value * 0.913, 6)                 # a value not seen before
    assert calls == {"derived": 1, "budget_table": 0}
    assert {k: g.counts[k] - before[k] for k in before} == {
        "derived": 1, "part_rows": 1, "year_rates": 1}
    monkeypatch.undo()
    rec, years = app.receptor_w.value, app.result.years
    assert app.split_w.value == n_split_html(years, "ridge", rec, "kg/ha/yr")
    import html
    assert app.bracket_w.value == html.escape(bracket_line(
        years, real_derived(years), "ridge", rec, "kg/ha/yr", app.settings.budget.pair_split))
