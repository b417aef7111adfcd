"""What a new user saw walking through the notebooks in a real browser (JupyterLab and
chromium), each checked here without a browser:

- an exported budget PNG with three bars drawn flat along the axis, while the page
  showed them stacked (the export read the widget's Python-side traces, which had taken
  ``y = None`` from the browser's deltas);
- exported figures of two receptors under one file name (the second replaced the first);
- "use --overwrite" in the site explorer, whose control is an "overwrite" box;
- ``1.44e+03`` in the tables of eq/ha/yr, and headings right-aligned over left-aligned
  cells;
- a sensitivity sweep of a site without NO2 drawing its partial N totals with filled
  markers and tabling them under a plain heading;
- first-order Sobol bars hidden behind the total bars.
"""
import html
import warnings

import numpy as np
import pandas as pd
import pytest


@pytest.fixture(scope="module")
def ridge_app(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2021, 2021))


def _captured(monkeypatch, control):
    """Run the control's export with export_figure replaced; returns {file name: figure}."""
    from workbench.ui import export_controls
    seen = {}

    def fake(fig, path, *a, **k):
        seen[path.name] = fig
        return path
    monkeypatch.setattr(export_controls, "export_figure", fake)
    control.format_w.value = "html"
    control.export()
    return seen


def test_export_writes_the_figure_drawn_not_the_widget_traces(ridge_app, monkeypatch, tmp_path):
    monkeypatch.setenv("WORKBENCH_OUTPUT", str(tmp_path))
    widget = ridge_app.figs["budget"]
    drawn = [t.y for t in widget.data]
    assert all(y is not None for y in drawn[:3])
    # what the browser's deltas did to the Python side of the widget
    with widget.batch_update():
        for t in widget.data[:3]:
            t.y = None
    try:
        seen = _captured(monkeypatch, ridge_app.figure_export)
        budget = next(f for name, f in seen.items() if name.endswith("-budget.html"))
        assert [t.y for t in budget.data][:3] == drawn[:3]
        assert budget.layout.template == widget.layout.template      # same look
    finally:
        with widget.batch_update():
            for t, y in zip(widget.data[:3], drawn[:3]):
                t.y = y


def test_exported_file_names_say_receptor_and_years(ridge_app, monkeypatch, tmp_path):
    monkeypatch.setenv("WORKBENCH_OUTPUT", str(tmp_path))
    names = set(_captured(monkeypatch, ridge_app.figure_export))
    assert "site-explorer-ridge-conifer-forest-2021-budget.html" in names


def test_refused_export_names_the_apps_overwrite_box(ridge_app, monkeypatch, tmp_path):
    monkeypatch.setenv("WORKBENCH_OUTPUT", str(tmp_path))
    (tmp_path / "run").mkdir()
    (tmp_path / "run" / "old.txt").write_text("x")
    with pytest.raises(Exception):
        ridge_app.export_run("run")
    text = __import__("html").unescape(ridge_app.message_w.value)
    assert "not exported" in text and "tick 'overwrite'" in text and "--overwrite" not in text


def test_tables_write_thousands_whole_and_headings_over_their_cells():
    from workbench.ui.controls import table_html, table_number
    assert table_number(1441.2) == "1,441" and table_number(0.01234) == "0.0123"
    assert table_number(12.345) == "12.3" and table_number(float("nan")) == "–"
    text = table_html(pd.DataFrame({"N [eq/ha/yr]": [1441.2, 615.0], "note": ["a", "b"]}))
    assert "1,441" in text and "e+0" not in text
    assert "text-align: right" not in text
    assert "wb-table" in text and ".wb-table th {text-align: left !important" in text


def test_partial_totals_of_a_sweep_are_open_and_named():
    from workbench.ui.figures import sensitivity_curves, status_note
    assert status_note(["complete", "filled"]) == ""
    assert status_note(["partial", "complete", "partial"]) == " (partial)"
    rows = []
    for v in (0.1, 0.5):
        for el in ("S", "N"):
            for pw in ("wet", "dry", "total"):
                st = "partial" if (el, pw) in {("N", "dry"), ("N", "total")} else "complete"
                rows.append({"value": v, "total": f"{el}_{pw}", "rate": 1.0 + v, "status": st})
    fig = sensitivity_curves(pd.DataFrame(rows), "fixed Vd of NH3 [cm/s]", 0.5)
    by = {t.name: t for t in fig.data if t.name != "baseline"}
    assert "N total (partial)" in by and "S total" in by
    assert set(by["N total (partial)"].marker.symbol) == {"circle-open"}
    assert set(by["S total"].marker.symbol) == {"circle"}


def test_sweep_table_heading_says_partial(two_sites_2021):
    from workbench.ui.apps_more import SensitivityExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SensitivityExplorer(Session.open(two_sites_2021), site="mere",
                                  years=(2021, 2021), key="fixed_velocity.SO2", run=False)
        app.steps_w.value = 2
        app.run()
    assert "N total [kg/ha/yr] (partial, no NO2)" in app.table_w.value   # mere: no NO2
    assert "S total [kg/ha/yr]<" in app.table_w.value                # complete: plain


def test_first_order_sobol_bars_beside_the_total_bars():
    from workbench.ui.figures_sensitivity import sensitivity_spec
    sob = pd.DataFrame({"site": "a", "receptor": "grass", "period": "2021", "element": "N",
                        "quantity": "total", "factor": ["f1", "f2"], "S1": [0.3, 0.1],
                        "S1_conf": [0.05, 0.05], "ST": [0.6, 0.2], "ST_conf": [0.05, 0.05]})
    spec = sensitivity_spec(sob, sob.iloc[:0], "a", "grass", "2021", "N", "total")
    first, total = spec["data"][:2]
    assert first["name"] == "first order" and total["name"] == "total"
    lo = lambda t: t["offset"]                                          # noqa: E731
    hi = lambda t: t["offset"] + t["width"]                              # noqa: E731
    assert hi(total) <= lo(first) or hi(first) <= lo(total)             # no overlap
    assert np.isclose(first["width"], total["width"])


def test_budget_legend_says_what_an_open_diamond_and_a_missing_bar_are(two_sites_2021):
    """fell/mere without NO2: the legend listed "dry NO2" like a part of the stack and
    showed only a filled diamond for "total" beside an open one on the N bar."""
    from workbench.ui.assumptions import Settings
    from workbench.ui.figures import budget_bars_spec
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        s = Session.open(two_sites_2021)
        settings = Settings.from_scenario(s.scenario)
        mere = s.run(settings, "mere", 2021, 2021, receptor="wetland")
        ridge = s.run(settings, "ridge", 2021, 2021, receptor="conifer_forest")
    note = budget_bars_spec(mere.years, "mere", "wetland")["layout"]["annotations"][0]["text"]
    # NO2 is not measured at mere at all (budget note), not a gap in 2021
    assert "◇ total partial or flagged" in note and "not measured: dry NO2" in note
    whole = budget_bars_spec(ridge.years, "ridge", "conifer_forest")["layout"]["annotations"]
    assert "no data" not in whole[0]["text"]


def test_critical_load_path_table_in_percent_with_units(session):
    """The path table read "cut_S 0.025" beside sliders in % and "1.44e+03" eq/ha/yr."""
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(session, site="ridge", years=(2021, 2021))
    text = app.table_w.value
    assert "cut S [%]" in text and "cut_S" not in text
    assert "N deposition [eq/ha/yr]" in text and "e+0" not in text
    cut = app.path["cut_S"].to_numpy()
    assert f"<td>{100 * cut[-1]:.3g}</td>" in text           # the last step, as a percent


def test_nh3_sentence_when_a_fixed_vd_replaces_the_net(ridge_app):
    """With 'NH3 exchange' on net and a fixed Vd of NH3, the sentence said "'NH3 exchange'
    under 'ammonia' gives the net" beside that very choice."""
    from workbench.ui.assumptions import ASSUMPTIONS
    before = ridge_app.settings
    try:
        s = ASSUMPTIONS["dry.nh3_treatment"].set(before, "ridge", "bidirectional")
        ridge_app.settings = ASSUMPTIONS["fixed_velocity.NH3"].set(s, "ridge", 0.5)
        ridge_app.recompute()
        text = html.unescape(ridge_app.nh3_w.value)
        assert "deposition only" in text and "fixed Vd of NH3 replaces" in text
        assert "gives the net)" in text and "under 'ammonia' gives" not in text
    finally:
        ridge_app.settings = before
        ridge_app.recompute()
