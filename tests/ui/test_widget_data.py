"""The Python side of the apps' FigureWidgets stays the figure drawn, through control
changes, with a browser's replies (tests/ui/frontend_model.py emulates plotly's widget
front end; the same was seen in JupyterLab with chromium).

A previous walk-through exported a budget whose three stacked components were flat:
their ``y`` was None in Python while the page showed them.  The cause: ``refresh`` sent
plotly's "as it is" placeholder for the traces whose value had not changed; the front
end stored the placeholder in its copy of the traces, sent the drawn value back as a
default, and plotly's Python handler removed ``y`` from those traces.
"""
import warnings

import numpy as np
import plotly.graph_objects as go
import pytest

from ui.frontend_model import FrontEnd
from workbench.ui.controls import _flatten, figure_widget, refresh


def _bars(ys):
    return go.Figure([go.Bar(x=["wet", "dry"], y=y, name=n) for n, y in ys.items()],
                     layout={"barmode": "stack"})


def _same(a, b):
    try:
        return np.array_equal(np.asarray(a, dtype=object), np.asarray(b, dtype=object))
    except ValueError:
        return a == b


def _python_side_is_the_drawn_spec(widget):
    """Every property of every trace of the last spec drawn is in the widget's
    Python-side traces with the same value."""
    wrong = []
    for i, (want, have) in enumerate(zip(widget._wb_shown["spec"]["data"], widget._data)):
        have = _flatten(dict(have))
        for k, v in _flatten(dict(want)).items():
            if k not in have or not _same(have[k], v):
                wrong.append((i, k, have.get(k)))
    return wrong


def test_front_end_emulation_drops_a_property_sent_as_a_placeholder():
    """The emulation does what the browser did (checked with JupyterLab and chromium:
    ``plotly_update`` with ``y = [Undefined, [5, 6], Undefined]`` left traces 0 and 2
    without ``y`` in ``_data``)."""
    from plotly.basedatatypes import Undefined
    w = go.FigureWidget(_bars({"a": [1.0, 2.0], "b": [1.0, 2.0], "c": [1.0, 2.0]}))
    fe = FrontEnd(w)
    w.plotly_update(restyle_data={"y": [Undefined, [5.0, 6.0], Undefined]},
                    trace_indexes=[0, 1, 2])
    fe.flush()
    assert [d.get("y") for d in w._data] == [None, [5.0, 6.0], None]


def test_refresh_keeps_unchanged_traces_on_the_python_side():
    w = figure_widget(_bars({"a": [1.0, 2.0], "b": [3.0, 4.0], "c": [5.0, 6.0]}))
    fe = FrontEnd(w)
    refresh(w, _bars({"a": [1.0, 2.0], "b": [7.0, 8.0], "c": [5.0, 6.0]}))   # only b moves
    fe.flush()
    assert _python_side_is_the_drawn_spec(w) == []
    np.testing.assert_allclose(w.data[0].y, [1.0, 2.0])
    np.testing.assert_allclose(w.data[1].y, [7.0, 8.0])


def _placeholders_for_set_properties(widget, sent):
    """(message, key, trace) of every placeholder sent for a property the trace has."""
    from plotly.basedatatypes import Undefined
    out = []
    for n, (msg, traces) in enumerate(sent):
        for k, vals in msg["style_data"].items():
            out += [(n, k, i) for i, v in zip(msg["style_traces"], vals)
                    if v is Undefined and k in traces[i]]
    return out


def _recorder(widget):
    sent = []
    widget.observe(lambda c: sent.append((c["new"], [_flatten(dict(t)) for t in widget._data]))
                   if c["new"] else None, "_py2js_update")
    return sent


def test_refresh_sends_no_placeholder_for_a_set_property():
    w = figure_widget(_bars({"a": [1.0, 2.0], "b": [3.0, 4.0]}))
    sent = _recorder(w)
    refresh(w, _bars({"a": [1.0, 2.0], "b": [3.0, 9.0]}))
    assert sent and _placeholders_for_set_properties(w, sent) == []
    # and a trace of another length in place of the old one (a longer year span)
    refresh(w, go.Figure([go.Bar(x=["wet", "dry", "x"], y=[1.0, 2.0, 3.0], name="a"),
                          go.Bar(x=["wet", "dry"], y=[3.0, 9.0], name="b")],
                         layout={"barmode": "stack"}))
    assert _placeholders_for_set_properties(w, sent) == []
    assert w.data[0].y == (1.0, 2.0, 3.0) and w.data[1].y == (3.0, 9.0)


def test_site_explorer_figures_after_control_changes(session):
    """The sequence of the walk-through: an assumption, the unit, the years and back;
    after each the browser replies, and every figure's Python side is what was drawn."""
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(session, site="ridge", years=(2021, 2021))
        views = {k: FrontEnd(w) for k, w in app.figs.items()}
        steps = [(app.controls["budget.sulfate_basis"], "total"),
                 (app.unit_w, "mmol/m2/yr"), (app.years_w, (2020, 2021)),
                 (app.controls["budget.sulfate_basis"], "nss"),
                 (app.unit_w, "kg/ha/yr")]
        for control, value in steps:
            control.value = value
            for fe in views.values():
                fe.flush()
            for name, w in app.figs.items():
                assert _python_side_is_the_drawn_spec(w) == [], (name, value)
    budget = app.figs["budget"]
    assert all(t.y is not None for t in budget.data)



def test_critical_loads_and_sensitivity_figures_after_control_changes(session):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.apps_more import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        cl = CriticalLoadsExplorer(session, site="ridge")
        cl.range_w.value = False
        sens = SensitivityExplorer(session, site="ridge", years=(2021, 2021),
                                   key="fixed_velocity.SO2")
        views = [FrontEnd(cl.fig), FrontEnd(sens.fig)]
        for control, value in ((cl.cut_w["S"], 80), (cl.mode_w, "air_only"),
                               (cl.year_w, cl.year_w.options[0]), (cl.cut_w["NHx"], 10),
                               (sens.unit_w, "eq/ha/yr"), (sens.steps_w, 3)):
            control.value = value
            if control is sens.steps_w:
                sens.run()
            for fe in views:
                fe.flush()
            for w in (cl.fig, sens.fig):
                assert _python_side_is_the_drawn_spec(w) == [], value
