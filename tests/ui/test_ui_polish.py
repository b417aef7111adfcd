"""Polish after a browser walk-through: the Sobol app's progress in words, a control
without effect that says why, and the saved widget state of the figure last drawn."""
import numpy as np
import plotly.graph_objects as go

from workbench.ui.controls import figure_widget, keep_state, refresh, shown_figure


def _bars(ys):
    return go.Figure([go.Bar(x=["wet", "dry"], y=y, name=n) for n, y in ys.items()],
                     layout={"yaxis": {"title": {"text": "kg/ha/yr"}}, "barmode": "stack"})


def test_saved_state_is_the_figure_drawn_even_if_python_side_data_went_stale():
    """The reloaded page starts from ``_widget_data``: after a redraw it holds the figure
    drawn, even when the widget's Python-side y was set to None (as once seen)."""
    w = figure_widget(_bars({"S": [1.0, 2.0], "N": [3.0, 4.0]}))
    uids = [t.uid for t in w.data]
    refresh(w, _bars({"S": [5.0, 6.0], "N": [7.0, 8.0]}))
    w.data[0].y = None                       # stale Python-side data
    assert w.data[0].y is None
    keep_state(w)
    state = w.get_state()
    drawn = shown_figure(w)
    assert [t["name"] for t in state["_widget_data"]] == [t.name for t in drawn.data]
    for got, want in zip(state["_widget_data"], drawn.data):
        assert got["y"] is not None
        np.testing.assert_allclose(np.asarray(got["y"], float), np.asarray(want.y, float))
    np.testing.assert_allclose(np.asarray(state["_widget_data"][0]["y"], float), [5.0, 6.0])
    assert [t["uid"] for t in state["_widget_data"]] == uids
    assert state["_widget_layout"]["yaxis"]["title"]["text"] == "kg/ha/yr"
    assert state["_widget_layout"]["barmode"] == "stack"
    assert "template" in state["_widget_layout"]


def test_saved_state_follows_the_next_redraw():
    w = figure_widget(_bars({"S": [1.0, 2.0]}))
    w.data[0].y = None
    refresh(w, _bars({"S": [9.0, 1.0]}))     # a redraw saves the state again
    np.testing.assert_allclose(np.asarray(w.get_state()["_widget_data"][0]["y"], float),
                               [9.0, 1.0])


def test_progress_counts_in_words():
    from workbench.ui.controls import Progress
    prog, seen = Progress(), []
    prog.label.observe(lambda c: seen.append(c["new"]), "value")
    echoed = []
    out = list(prog.counted("abcde", "engine runs", (0.2, 0.6), echo=echoed.append, every_s=0))
    assert out == list("abcde")
    assert seen == [f"engine runs: {i} of 5" for i in range(6)] == echoed
    assert prog.bar.value == 0.6
    prog2, seen2 = Progress(), []
    prog2.label.observe(lambda c: seen2.append(c["new"]), "value")
    list(prog2.counted(range(300), "runs", every_s=3600.0))    # first and last always
    assert seen2 == ["runs: 0 of 300", "runs: 300 of 300"]


def test_sobol_app_shows_its_progress_in_words(session):
    """The Sobol app showed tqdm's text bar ("engine runs: 100%|###...") in the page."""
    import re
    import warnings

    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.controls import Progress
    prog, texts = Progress(), []
    prog.label.observe(lambda c: texts.append(c["new"]), "value")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SobolExplorer(session, site="ridge", years=(2021, 2021), output="S dry",
                            samples=16, progress=prog, run=False)
        app.bar_w.observe(lambda c: texts.append(c["new"]), "value")
        app.run()
    shown = app.bar_w.value
    for text in texts + [shown]:
        assert "|" not in text and "#" not in text and "%" not in text, text
    counts = {what: (int(a), int(b)) for what, a, b in re.findall(
        r"engine runs for the (Sobol indices|tornado): (\d+) of (\d+)", shown)}
    assert set(counts) == {"Sobol indices", "tornado"}, shown
    assert all(a == b > 0 for a, b in counts.values()), shown
    assert any(re.fullmatch(r"engine runs for the Sobol indices: \d+ of \d+", t)
               for t in texts)                            # the bar of the app, in words
    assert app.progress.label.value.startswith("analysis done")
    # the tornado's axis says the unit of a year's deposition (it said "kg S/ha per
    # period", the period being the year shown)
    axis = app.fig.layout.xaxis2.title.text
    assert axis.startswith("kg S ha-1 yr-1 (base "), axis
    assert (app.tornado["unit"].isin(["kg S ha-1 yr-1", "kg N ha-1 yr-1", "eq ha-1 yr-1"])).all()
    # seen in the walk-through: a drop-down labelled "N" (the sample count) beside
    # "total: N total"; "2021-2021" for one year; "potential_acidity" and "1.89e+03"
    assert app.samples_w.description == "base samples"
    app.samples_w.value = [v for v in app.samples_w.options if v != app.samples_w.value][0]
    assert app.progress.label.value == ("changed: press Run analysis (the figure shows "
                                        "ridge · conifer_forest · 2021)")


def test_sobol_figure_words_and_base():
    import pandas as pd

    from workbench.ui.figures_sensitivity import sensitivity_spec
    tornado = pd.DataFrame({"site": "a", "receptor": "grass", "period": "2021",
                            "element": "S+N", "quantity": "potential_acidity",
                            "factor": ["f1"], "low": [0.5], "high": [2.0],
                            "output_low": [1800.0], "output_high": [2100.0],
                            "output_base": [1890.0]})
    sobol = pd.DataFrame({"site": "a", "receptor": "grass", "period": "2021",
                          "element": "S+N", "quantity": "potential_acidity", "factor": ["f1"],
                          "S1": [0.3], "S1_conf": [0.05], "ST": [0.6], "ST_conf": [0.05]})
    spec = sensitivity_spec(sobol, tornado, "a", "grass", "2021", "S+N", "potential_acidity")
    assert spec["layout"]["title"]["text"].startswith("Sensitivity of S+N potential acidity")
    titles = [v["title"]["text"] for k, v in spec["layout"].items()
              if k.startswith("xaxis") and "title" in v]
    assert "eq ha-1 yr-1 (base 1,890)" in titles       # a year's deposition: per year


def _components(missing=()):
    import pandas as pd
    species = ("SO2", "pSO4", "HNO3", "pNO3", "NH3", "pNH4", "NO2")
    return pd.DataFrame({"period": "2021", "pathway": "dry", "species": species,
                         "value": [float("nan") if sp in missing else 1.0 for sp in species],
                         "status": ["missing" if sp in missing else "complete"
                                    for sp in species]})


def test_no_effect_names_the_reason_it_can_know():
    from workbench.ui.summaries import no_effect_text
    comp = _components()
    text = no_effect_text("fixed_velocity.HNO3", "fixed Vd of HNO3", comp,
                          pair_split="all_particle")
    assert "no HNO3 left" in text and "all as particle" in text and "Vd of pNO3" in text
    text = no_effect_text("dry.nh3_treatment", "NH3 exchange", comp, pair_split="all_particle")
    assert "no NH3 left" in text
    text = no_effect_text("particles.pNO3.fine_fraction", "pNO3 fine", comp,
                          pair_split="all_gas")
    assert "no pNO3 left" in text and "all as gas" in text
    # the member the pair is moved into still acts: no reason invented
    assert no_effect_text("fixed_velocity.pNO3", "fixed Vd of pNO3", comp,
                          pair_split="all_particle").endswith("these years.")
    assert no_effect_text("fixed_velocity.HNO3", "x", comp).endswith("these years.")
    text = no_effect_text("fixed_velocity.NO2", "fixed Vd of NO2", _components(("NO2",)))
    assert text.endswith("(no NO2 concentrations here)")
    # a pair with a member unmeasured is not moved (workbench.drypairs.split_pairs)
    text = no_effect_text("fixed_velocity.HNO3", "x", _components(("pNO3",)),
                          pair_split="all_particle")
    assert "left" not in text
    text = no_effect_text("budget.pair_split", "split", _components(("pNO3", "pNH4")),
                          pair_split="all_gas")
    assert "split moves nothing" in text
    text = no_effect_text("wet.seasalt_tracer", "sea-salt tracer", comp, sulfate_basis="total")
    assert "sulfate basis is total" in text
    assert no_effect_text("wet.seasalt_tracer", "t", comp).endswith(".")
    both = no_effect_text("fixed_velocity.pNH4", "fixed Vd of pNH4", comp, "bulk",
                          "exclude_particles", "all_gas")
    assert "no pNH4 left" in both and both.endswith("docs/budget.md)")


def test_site_explorer_says_why_a_control_had_no_effect(ridge_2021):
    """Seen in the walk-through: with the split all as particle, the fixed Vd of HNO3
    moved nothing and the page said only '+0.0 %'."""
    import warnings

    from workbench.ui.apps import SiteExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(Session.open(ridge_2021), site="ridge", years=(2021, 2021))
        app.controls["budget.pair_split"].value = "all_particle"
        assert "no effect" not in app.change_w.value
        app.controls["fixed_velocity.HNO3"].value = 2.0
        assert "no effect on the totals" in app.change_w.value
        assert "no HNO3 left" in app.change_w.value
        app.controls["budget.sulfate_basis"].value = "total"
        app.controls["wet.seasalt_tracer"].value = "Mg"
        assert "the sulfate basis is total" in app.change_w.value


def test_sweep_without_effect_says_why(session):
    """A sweep that moves no total says why, as the site explorer does: the fixed Vd of
    HNO3 under the split all as particle."""
    import warnings

    from workbench.ui.apps_more import SensitivityExplorer
    app_settings = session.baseline
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SensitivityExplorer(session, site="ridge", years=(2021, 2021),
                                  key="fixed_velocity.HNO3")
        assert "no effect" not in app.note_w.value            # it acts as measured
        from workbench.ui.assumptions import ASSUMPTIONS
        app.settings = ASSUMPTIONS["budget.pair_split"].set(app_settings, "ridge",
                                                            "all_particle")
        app.run()
    assert "no effect over the sweep" in app.note_w.value
    assert "no HNO3 left" in app.note_w.value


def test_network_trend_table_headings_in_words(two_sites_2021):
    """The walk-through's network table headed its columns S_trend, ex_acidity_eq_ha_yr,
    exceedance_status; the frame keeps those names (handover tables), the page words."""
    import warnings

    from workbench.ui.apps_more import NetworkOverview
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        net = NetworkOverview(Session.open(two_sites_2021), years=(2021, 2021))
    page = net.analysis_w.value
    for name in ("S trend", "acidity exceedance", "nutrient-N exceedance", "status of the totals"):
        assert f">{name}<" in page, name
    assert "ex_acidity_eq_ha_yr" not in page and "S_trend" not in page
    assert "ex_acidity_eq_ha_yr" in net.analysis.columns


def test_sobol_figure_names_every_axis():
    """Browser trial: the Sobol panel's axis of indices had no title (its panel title
    only); every axis holding data is named, the tornado's with its unit."""
    import pandas as pd

    from workbench.ui.figures_sensitivity import sensitivity_spec
    keys = {"site": "a", "receptor": "grass", "period": "2021", "element": "N",
            "quantity": "total"}
    sobol = pd.DataFrame([{**keys, "factor": "vd_NH3", "S1": 0.6, "S1_conf": 0.01,
                           "ST": 0.65, "ST_conf": 0.02}])
    tornado = pd.DataFrame([{**keys, "factor": "vd_NH3", "low": 0.5, "high": 2.0,
                             "output_low": 8.0, "output_high": 14.0, "output_base": 10.0}])
    for tor in (tornado, tornado.iloc[:0]):
        layout = sensitivity_spec(sobol, tor, "a", "grass", "2021", "N", "total")["layout"]
        axes = [k for k in layout if k.startswith("xaxis")] + ["yaxis"]
        titles = {k: (layout[k].get("title") or {}).get("text") for k in axes}
        assert all(titles.values()), titles
        assert titles["xaxis"] == "Sobol index [1]" and "kg N ha-1 yr-1" in titles["xaxis2"]
