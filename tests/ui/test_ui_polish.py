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
