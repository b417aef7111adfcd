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
