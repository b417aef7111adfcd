"""The in-place figure update: only changes are sent, and the widget ends up showing
what a freshly built figure shows.

Reference: plotly's own validated objects (``plotly.graph_objects``): a widget updated
by :func:`workbench.ui.controls.refresh` must read back the same values as a Figure
built from scratch by plotly.
"""
import numpy as np
import plotly.graph_objects as go
import pytest

from workbench.ui import figures
from workbench.ui.controls import figure_widget, refresh


@pytest.fixture(scope="module")
def result(session):
    return session.run(session.baseline, "ridge", 2021, 2021, "month")


def _values(fig):
    """Trace name -> (y, marker opacity, customdata) as plain lists."""
    out = {}
    for tr in fig.data:
        op = getattr(tr.marker, "opacity", None)
        out[tr.name] = (list(tr.y), None if op is None or np.isscalar(op) else list(op),
                        list(tr.customdata) if tr.customdata is not None else None)
    return out


def test_the_spec_is_valid_plotly_and_the_figure_is_built_from_it(result):
    spec = figures.budget_bars_spec(result.years, "ridge", "grass")
    fig = go.Figure(spec["data"], spec["layout"])          # plotly validates every key
    assert _values(fig) == _values(figures.budget_bars(result.years, "ridge", "grass"))
    spec = figures.monthly_fluxes_spec(result.budget, "ridge", "grass")
    fig = go.Figure(spec["data"], spec["layout"])
    ref = figures.monthly_fluxes(result.budget, "ridge", "grass")
    assert [t.yaxis for t in fig.data] == [t.yaxis for t in ref.data] == ["y", "y", "y2", "y2"]
    assert _values(fig) == _values(ref)
    assert fig.layout.yaxis2.title.text == ref.layout.yaxis2.title.text


def test_refresh_sends_only_what_changed_and_matches_a_fresh_figure(result):
    w = figure_widget(figures.budget_bars(result.years, "ridge", "grass"))
    first = refresh(w, figures.budget_bars_spec(result.years, "ridge", "grass"))
    assert not first["replaced"]
    again = refresh(w, figures.budget_bars_spec(result.years, "ridge", "grass"))
    assert again == {"restyled": 0, "relayout": 0, "replaced": False}
    # another receptor: new numbers and a new title, same traces
    step = refresh(w, figures.budget_bars_spec(result.years, "ridge", "conifer_forest"))
    assert not step["replaced"] and step["restyled"] > 0 and step["relayout"] == 1
    fresh = figures.budget_bars(result.years, "ridge", "conifer_forest")
    assert _values(w) == _values(fresh)
    assert w.layout.title.text == fresh.layout.title.text
    # another unit: the axis titles change too
    refresh(w, figures.budget_bars_spec(result.years, "ridge", "conifer_forest", None, "eq/ha/yr"))
    fresh = figures.budget_bars(result.years, "ridge", "conifer_forest", None, "eq/ha/yr")
    assert _values(w) == _values(fresh)
    assert w.layout.yaxis.title.text == fresh.layout.yaxis.title.text == "deposition [eq ha-1 yr-1]"


def test_refresh_replaces_traces_of_another_kind_and_keeps_shapes_in_step():
    w = figure_widget(go.Figure(go.Scatter(y=[1.0, 2.0]), layout={"title": {"text": "a"}}))
    f = go.Figure(go.Scatter(y=[3.0, 4.0]))
    f.add_hline(y=3.5)
    assert refresh(w, f)["replaced"] is False
    assert list(w.data[0].y) == [3.0, 4.0] and len(w.layout.shapes) == 1
    assert refresh(w, go.Figure(go.Scatter(y=[3.0, 4.0])))["relayout"] >= 1
    assert len(w.layout.shapes) == 0                         # a removed line is gone
    out = refresh(w, {"data": [{"type": "bar", "y": [1, 2]}, {"type": "bar", "y": [2, 1]}],
                      "layout": {}})
    assert out["replaced"] and [t.type for t in w.data] == ["bar", "bar"]


def test_qa_figures_refresh_to_what_a_fresh_figure_shows(session, result):
    """The precipitation-QA figures through the diff path: the widget reads back what
    a figure built from scratch by plotly shows, for other screening options."""
    import dataclasses
    from workbench.ui import figures_wet
    wet = session.baseline.wet
    strict = dataclasses.replace(wet, ion_balance_tiers=((50.0, 5.0), (float("inf"), 2.0)))
    for build, spec in ((figures_wet.ion_balance, figures_wet.ion_balance_spec),
                        (figures_wet.capture_efficiency, figures_wet.capture_efficiency_spec)):
        w = figure_widget(build(result.screened, "ridge", wet))
        refresh(w, spec(result.screened, "ridge", strict))
        fresh = build(result.screened, "ridge", strict)
        for a, b in zip(w.data, fresh.data):
            assert a.name == b.name
            np.testing.assert_allclose(np.asarray(a.x, float), np.asarray(b.x, float))
            np.testing.assert_allclose(np.asarray(a.y, float), np.asarray(b.y, float))
    w = figure_widget(figures_wet.excluded_by_reason(result.screened, "ridge"))
    refresh(w, figures_wet.excluded_by_reason_spec(result.screened, "ridge", "2021-06-01"))
    fresh = figures_wet.excluded_by_reason(result.screened, "ridge", "2021-06-01")
    assert [list(t.x) for t in w.data] == [list(t.x) for t in fresh.data]
    assert w.layout.height == fresh.layout.height


def test_refresh_keeps_the_synced_state_that_a_reloaded_page_starts_from(result):
    """A view opened later (a reload) draws ``_widget_data`` / ``_widget_layout``:
    after a refresh they hold the new figure, not the figure as built."""
    a = figures.budget_bars_spec(result.years, "ridge", "conifer_forest", None, "kg/ha/yr")
    b = figures.budget_bars_spec(result.years, "ridge", "conifer_forest", None, "eq/ha/yr")
    w = figure_widget(figures.from_spec(a, "simple_white"))
    refresh(w, b)
    fresh = go.Figure(figures.from_spec(b, "simple_white"))
    state = w.get_state()
    assert [t.get("name") for t in state["_widget_data"]] == [t.name for t in fresh.data]
    for got, want in zip(state["_widget_data"], fresh.data):
        np.testing.assert_allclose(np.asarray(got["y"], float), np.asarray(want.y, float))
    assert state["_widget_layout"]["yaxis"]["title"]["text"] == fresh.layout.yaxis.title.text


def test_sensitivity_baseline_lines_have_a_width():
    """The template's shape default has a line width of 0 (plotly's simple_white): a
    baseline line must set its own width, or the browser draws nothing."""
    import pandas as pd
    from plotly import io as pio
    assert pio.templates["simple_white"].layout.shapedefaults.line.width == 0
    table = pd.DataFrame({"value": [0.1, 0.2] * 6, "total": sorted(
        [f"{el}_{pw}" for el in "SN" for pw in ("wet", "dry", "total")] * 2),
        "rate": np.arange(12.0), "status": "complete"})
    fig = figures.sensitivity_curves(table, "x", 0.1)
    assert fig.layout.shapes and all(s.line.width > 0 for s in fig.layout.shapes)


def test_no_tooltip_on_a_container_control():
    """The front end's tooltip code reads a description that boxes have not (the view
    then never renders): tooltips go on the parts of a composite control."""
    import ipywidgets as widgets
    from workbench.ui.assumptions import ASSUMPTIONS, Settings
    from workbench.ui.controls import make_control
    for key, a in ASSUMPTIONS.items():
        w = make_control(a, a.get(Settings(), "ridge"))
        if isinstance(w, widgets.Box):
            assert not w.tooltip and all(p.tooltip == key for p in w.children), key
        else:
            assert w.tooltip == key


def test_a_bad_input_in_a_notebook_is_its_located_message_only(tmp_path, capsys):
    """A notebook that opens a scenario with a bad input shows the one located message
    (no traceback of the workbench's frames); the cell still fails, so Run All stops."""
    from IPython.core.interactiveshell import InteractiveShell

    from workbench.errors import InputError
    from workbench.ui.controls import short_errors
    shell = InteractiveShell.instance()
    try:
        assert short_errors()
        res = shell.run_cell("from workbench.errors import InputError\n"
                             "raise InputError('site not in the catalogue', file='p.csv', "
                             "line=4, column='site', value='Ridge', expected='one of ridge')")
        out = capsys.readouterr().out
        assert isinstance(res.error_in_exec, InputError)
        assert ("InputError: p.csv, line 4, column 'site': site not in the catalogue: got "
                "'Ridge', expected one of ridge") in out
        assert "Traceback" not in out and "run_cell" not in out
        res = shell.run_cell("1 / 0")                       # other errors: as before
        assert "Traceback" in capsys.readouterr().out
    finally:
        shell.set_custom_exc((), None)
        InteractiveShell.clear_instance()
