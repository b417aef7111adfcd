"""A figure shown in place: a ``FigureWidget`` that takes a new figure's changes in one
batched update, keeping what the reader did to it (zoom, hidden traces).

Moved from :mod:`workbench.ui.controls` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.basedatatypes import Undefined

from .figure_open import OpenedWhole


#: Layout keys that never change between two figures of one kind (not resent).
STATIC_LAYOUT = ("template",)


def _flatten(d: dict, prefix: str = "", out: dict | None = None) -> dict:
    """Nested plotly JSON as ``{"marker.line.color": value}`` (lists are leaves)."""
    out = {} if out is None else out
    for k, v in d.items():
        if isinstance(v, dict) and v:
            _flatten(v, f"{prefix}{k}.", out)
        else:
            out[f"{prefix}{k}"] = v
    return out


def _missing(v) -> bool:
    """None or a NaN number: what plotly sends as JSON ``null``."""
    return v is None or (isinstance(v, (float, np.floating)) and bool(np.isnan(v)))


def _arrays_equal(a, b) -> bool:
    """Two arrays (numpy arrays, lists) equal by value, a missing value (None, NaN,
    NaT) equal to a missing one in the same place.  Lists are compared as objects
    (``"1"`` is not ``1``), never coerced to one dtype."""
    try:
        x = a if isinstance(a, np.ndarray) else np.asarray(a, dtype=object)
        y = b if isinstance(b, np.ndarray) else np.asarray(b, dtype=object)
        if x.shape != y.shape:
            return False
        gap_x, gap_y = pd.isna(x), pd.isna(y)
        if not np.array_equal(gap_x, gap_y):
            return False
        return bool(np.array_equal(x[~gap_x], y[~gap_y]))
    except (TypeError, ValueError):
        return False


def _equal(a, b) -> bool:
    """Equality of two values of plotly JSON as a page draws them: numpy arrays and
    lists by value, None and NaN alike (plotly sends both as ``null``), so NaN equals
    NaN in the same place.

    Defect: NaN compared unequal to itself, and a figure with NaN values resent those
    arrays at every refresh (a needless update message, and a figure marked updating
    until the page answered).

    >>> _equal([1.0, float("nan")], np.array([1.0, np.nan]))
    True
    >>> _equal([1.0, None], [1.0, float("nan")]), _equal(float("nan"), None)
    (True, True)
    >>> _equal([1.0, float("nan")], [1.0, 2.0]), _equal(["1"], [1])
    (False, False)
    """
    if a is b:
        return True
    if _missing(a) or _missing(b):
        return _missing(a) and _missing(b)
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray) or (
            isinstance(a, (list, tuple)) and isinstance(b, (list, tuple))):
        return _arrays_equal(a, b)
    try:
        return bool(a == b)
    except (TypeError, ValueError):
        return False


def _is_object_list(v) -> bool:
    return isinstance(v, (list, tuple)) and any(isinstance(x, dict) for x in v)


def _as_spec(fig) -> dict:
    """A figure or spec as ``{"data": [dict], "layout": dict}`` without the template."""
    if not isinstance(fig, dict):
        # plotly's validated trace and layout dicts (its to_dict() encodes arrays as
        # base64 strings, which are not values a restyle can take)
        spec = {"data": list(fig._data), "layout": fig._layout}
    else:
        spec = fig
    layout = {k: v for k, v in spec.get("layout", {}).items() if k not in STATIC_LAYOUT}
    return {"data": [dict(t) for t in spec["data"]], "layout": layout}


def _remember(widget, spec: dict):
    widget._wb_shown = {"types": [t.get("type", "scatter") for t in spec["data"]],
                        "traces": [_flatten(t) for t in spec["data"]],
                        "layout": _flatten(spec["layout"]), "spec": spec}


def shown_figure(fig) -> go.Figure:
    """The figure an app last drew into `fig`, as a new plotly Figure.

    A FigureWidget updated by :func:`refresh` gives the figure built from the last spec
    sent to it (with the widget's template), not the widget's Python-side traces: those
    also take deltas the browser sends back, and were seen holding ``y = None`` for
    bars the page showed (an exported budget drew them flat along the axis).  Any other
    figure is copied as it is.
    """
    shown = getattr(fig, "_wb_shown", None)
    if shown is None or "spec" not in shown:
        return go.Figure(fig)
    spec = shown["spec"]
    return go.Figure({"data": spec["data"],
                      "layout": {**spec["layout"], "template": fig.layout.template}})


def refresh(widget: go.FigureWidget, fig) -> dict:
    """Copy a new figure into a displayed FigureWidget: the changed properties in one
    update message (:func:`send_changes`), and the whole figure anew when no page
    answers that update.

    anywidget 0.11's front end drops every message to a model whose module took more
    than 2 s to load, for the life of that model in the page (a loaded machine; also the
    models of a reloaded page): such a plot kept its first drawing while the numbers
    beside it changed.  A page that draws an update answers with plotly's trace deltas;
    when none came :data:`~workbench.ui.figure_open.ANSWER_S` seconds after it, a
    widget made by :func:`figure_widget` and placed in a box is opened anew with the
    whole figure (:meth:`OpenedWhole.reopen_unless_answered`).  Opening anew every time was measured
    and dropped: each new model sends and evaluates plotly's 5 MB module again (10 MB
    and 7-17 s per change of the site explorer against 63 kB and 0.1-1.2 s, and 35 MB of
    the page's memory kept per change).

    Parameters
    ----------
    widget : plotly.graph_objects.FigureWidget
        Made by :func:`figure_widget` (it remembers what it shows).
    fig : plotly Figure or dict
        The new figure, or its plain JSON spec.

    Returns
    -------
    dict
        As :func:`send_changes`.
    """
    sent_before = getattr(widget, "_last_trace_edit_id", None)
    out = send_changes(widget, fig)
    if isinstance(widget, OpenedWhole) and (out["restyled"] or out["relayout"]
                                            or out["replaced"]):
        edit = widget._last_trace_edit_id
        # the figure reads as updating in the page until a page says it has drawn this
        # (a page whose messages anywidget drops drew it 4-16 s later, after the
        # opening anew, and showed the old figure meanwhile with nothing said)
        widget.expect_drawing()
        if edit == sent_before:              # nothing a page answers (shapes only): anew
            widget.reopen()
        else:
            widget.await_answer(edit)
    return out


def send_changes(widget: go.FigureWidget, fig) -> dict:
    """Copy a new figure into a displayed FigureWidget in one update message.

    Parameters
    ----------
    widget : plotly.graph_objects.FigureWidget
        Made by :func:`figure_widget` (it remembers what it shows).
    fig : plotly Figure or dict
        The new figure, or its plain JSON spec (``{"data": [...], "layout": {...}}``,
        as the ``*_spec`` functions of :mod:`workbench.ui.figures` give).

    Returns
    -------
    dict
        ``{"restyled": n, "relayout": n, "replaced": bool}``: how many trace and layout
        properties were sent.

    Notes
    -----
    When the new figure has the same number and types of traces as the one shown
    (the usual case), only the properties whose values changed are sent, in one
    ``plotly_update`` (the message a batched update sends), each with its value for
    every trace that has it (never plotly's ``Undefined`` for a trace holding the
    property: the front end would hand the drawn value back as a default and plotly's
    Python side drop it, tests/ui/test_widget_data.py); the spec functions build
    valid plotly JSON, and their figures are validated where they are built as plotly
    objects (the ``budget_bars`` ... functions and their tests).  Otherwise the traces
    are replaced through plotly's validated objects.
    """
    spec = _as_spec(fig)
    shown = getattr(widget, "_wb_shown", None)
    types = [t.get("type", "scatter") for t in spec["data"]]
    if shown is None or shown["types"] != types or len(widget.data) != len(types):
        with widget.batch_update():
            widget.data = ()
        widget.add_traces(spec["data"])
        with widget.batch_update():
            widget.layout.update(spec["layout"], overwrite=True)
        _remember(widget, spec)
        keep_state(widget)
        return {"restyled": len(types), "relayout": len(spec["layout"]), "replaced": True}
    n = len(types)
    new_traces = [_flatten(t) for t in spec["data"]]
    changed = {k for old, new in zip(shown["traces"], new_traces) for k in new.keys() | old.keys()
               if not (k in old and k in new and _equal(old[k], new[k]))}
    # a changed property goes to every trace that has it, with its value (None: no
    # longer set), never with plotly's placeholder for "as it is" (Undefined): the
    # widget's front end stores the placeholder as the trace's value in its copy of the
    # figure, finds the drawn value differs and sends it back as a default, and plotly's
    # Python side then drops the property from the trace (bars the page showed held
    # y = None in Python).  A trace without the property before and after gets the
    # placeholder: it has nothing to drop, and None would be an invalid path for it
    # (marker.pattern of a scatter trace).
    restyle = {k: [new[k] if k in new else None if k in old else Undefined
                   for old, new in zip(shown["traces"], new_traces)] for k in sorted(changed)}
    new_layout = _flatten(spec["layout"])
    relayout = {k: new_layout.get(k) for k in new_layout.keys() | shown["layout"].keys()
                if not (k in new_layout and k in shown["layout"]
                        and _equal(shown["layout"][k], new_layout[k]))}
    # lists of objects (shapes, annotations) go through plotly's validated layout, which
    # keeps its objects for them in step with the data
    compound = {k: relayout.pop(k) or [] for k in list(relayout)
                if _is_object_list(relayout[k]) or _is_object_list(shown["layout"].get(k))}
    if compound:
        with widget.batch_update():
            widget.layout.update(compound, overwrite=True)
    if restyle or relayout:
        widget.plotly_update(restyle_data=restyle, relayout_data=relayout,
                             trace_indexes=list(range(n)))
    shown_before = shown["traces"]
    shown.update(traces=new_traces, layout=new_layout, spec=spec)
    keep_state(widget)
    return {"restyled": sum(not (k in old and k in new and _equal(old[k], new[k]))
                            for k in changed for old, new in zip(shown_before, new_traces)),
            "relayout": len(relayout) + len(compound), "replaced": False}


def keep_state(widget: go.FigureWidget) -> None:
    """Copy what a FigureWidget shows into its synced state.

    Plotly sends updates to the views open now as one-off messages; a view opened
    later (a reloaded page, a second view of the output) starts from the synced state,
    which plotly sets only at construction and display.  The views open now do not
    draw again when it changes.

    The state is the figure last drawn by :func:`refresh` (the spec that
    :func:`shown_figure` exports, with the widget's trace uids and template), not the
    widget's Python-side traces: those also take deltas the browser sends back and were
    seen holding ``y = None`` for bars the page showed.  A widget that :func:`refresh`
    has not drawn (or whose traces no longer match the spec) keeps its own data.
    """
    from copy import deepcopy
    shown = getattr(widget, "_wb_shown", None)
    spec = shown.get("spec") if shown else None
    if spec is None or len(spec["data"]) != len(widget._data):
        widget._widget_layout = deepcopy(widget._layout_obj._props)
        widget._widget_data = deepcopy(widget._data)
        return
    data = []
    for drawn, live in zip(spec["data"], widget._data):
        trace = deepcopy(dict(drawn))
        trace.setdefault("type", live.get("type", "scatter"))
        if "uid" in live:                    # the views match traces by their uid
            trace["uid"] = live["uid"]
        data.append(trace)
    layout = deepcopy(dict(spec["layout"]))
    for k in STATIC_LAYOUT:                  # the template: the widget's own
        if k in widget._layout_obj._props:
            layout[k] = deepcopy(widget._layout_obj._props[k])
    widget._widget_layout = layout
    widget._widget_data = data


def figure_widget(fig) -> go.FigureWidget:
    """A FigureWidget built from a figure (layout given at construction) whose comm
    opens with the whole figure (:class:`OpenedWhole`); it remembers what it shows so
    that :func:`refresh` sends only changes."""
    w = OpenedWhole(fig)
    _remember(w, _as_spec(fig))
    return w
