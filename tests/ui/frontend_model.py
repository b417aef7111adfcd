"""What plotly's widget front end does with a FigureWidget's messages, in Python.

A FigureWidget's front end (``plotly/package_data/widgetbundle.js`` of plotly 7.1, the
model class and the view class) keeps two copies of the traces:

- the *model* copy (``_widget_data``): the messages from Python are applied to it as
  they arrived, before the serializer's decoding, so plotly's "leave this trace as it
  is" placeholder (``Undefined``, sent as the string ``"_undefined_"``) is stored as the
  trace's value;
- the *drawn* copy (plotly.js's ``gd.data``): the same messages decoded, where the
  placeholder is ``undefined`` and leaves the trace's value as it was.

After each restyle or update the view sends back, per trace, every property whose
drawn value differs from the model copy ("trace deltas"), and plotly's Python handler
(``BaseFigureWidget._handler_js2py_traceDeltas``) takes those as defaults and removes
them from the Python-side trace.  :class:`FrontEnd` does the same on a widget with no
browser, so a test sees the Python-side data a user's session would hold (seen in
JupyterLab with chromium: a placeholder for y left ``y`` missing from ``_data``).
"""
from __future__ import annotations

import copy

import numpy as np
from plotly.basedatatypes import Undefined

#: The serialized placeholder (plotly/serializers.py).
PLACEHOLDER = "_undefined_"
_MISSING = object()


def _raw(v):
    """A value as the front end's model holds it (arrays as lists, the placeholder as
    its string)."""
    if isinstance(v, dict):
        return {k: _raw(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_raw(x) for x in v]
    if isinstance(v, np.ndarray):
        return v.tolist()
    if isinstance(v, np.generic):
        return v.item()
    return PLACEHOLDER if v is Undefined else v


def _decoded(v):
    """A raw value decoded (the placeholder becomes missing)."""
    if isinstance(v, dict):
        return {k: _decoded(x) for k, x in v.items() if not _is_placeholder(x)}
    if isinstance(v, list):
        return [None if _is_placeholder(x) else _decoded(x) for x in v]
    return v


def _is_placeholder(v):
    return isinstance(v, str) and v == PLACEHOLDER


def _set(d, path, v):
    keys = path.split(".")
    for k in keys[:-1]:
        d = d.setdefault(k, {})
    d[keys[-1]] = v


def _unset(d, path):
    keys = path.split(".")
    for k in keys[:-1]:
        d = d.get(k)
        if not isinstance(d, dict):
            return
    d.pop(keys[-1], None)


def _apply(traces, style, indexes, decoded):
    """A restyle applied to `traces` as the model (raw) or plotly.js (decoded) does."""
    for key, vals in style.items():
        vals = vals if isinstance(vals, list) else [vals]
        for j, i in enumerate(indexes):
            v = vals[j % len(vals)]
            if decoded and _is_placeholder(v):
                continue                      # undefined: the trace keeps its value
            if v is None:
                _unset(traces[i], key)
            else:
                _set(traces[i], key, _decoded(v) if decoded else v)


def _delta(drawn, model):
    """Properties of `drawn` that differ from `model` (the bundle's ``createDeltaObject``)."""
    out = {}
    for k, v in drawn.items():
        m = model.get(k, _MISSING) if isinstance(model, dict) else _MISSING
        if k != "uid" and m is not _MISSING and m == v:
            continue
        if isinstance(v, dict) and isinstance(m, dict):
            sub = _delta(v, m)
            if sub:
                out[k] = sub
        else:
            out[k] = copy.deepcopy(v)
    return out


class FrontEnd:
    """One browser view of a FigureWidget, emulated (see the module's text).

    Messages are taken as the widget sends them and their trace deltas computed at once;
    :meth:`flush` sends the deltas back, as the browser's replies arrive after Python has
    finished the cell or callback.
    """

    def __init__(self, widget):
        self.widget = widget
        self.model = _raw(widget._widget_data)
        self.drawn = _decoded(copy.deepcopy(self.model))
        self.pending = []
        widget.observe(self._on_data, "_widget_data")
        widget.observe(self._on_update, "_py2js_update")
        widget.observe(self._on_restyle, "_py2js_restyle")
        widget.observe(self._on_add, "_py2js_addTraces")
        widget.observe(self._on_delete, "_py2js_deleteTraces")
        widget.observe(self._on_remove_props, "_py2js_removeTraceProps")

    def _on_data(self, change):
        self.model = _raw(change["new"])

    def _restyled(self, style, indexes, edit_id):
        style = _raw(style)
        indexes = list(range(len(self.model))) if indexes is None else list(indexes)
        _apply(self.model, style, indexes, decoded=False)
        _apply(self.drawn, style, indexes, decoded=True)
        self._deltas(edit_id)

    def _on_update(self, change):
        msg = change["new"]
        if msg:
            self._restyled(msg["style_data"] or {}, msg["style_traces"], msg["trace_edit_id"])

    def _on_restyle(self, change):
        msg = change["new"]
        if msg:
            self._restyled(msg["restyle_data"], msg["restyle_traces"], msg["trace_edit_id"])

    def _on_add(self, change):
        msg = change["new"]
        if msg:
            traces = _raw(msg["trace_data"])
            self.model.extend(copy.deepcopy(traces))
            self.drawn.extend(_decoded(copy.deepcopy(traces)))
            self._deltas(msg["trace_edit_id"])

    def _on_delete(self, change):
        msg = change["new"]
        if msg:
            for i in sorted(msg["delete_inds"], reverse=True):
                del self.model[i]
                del self.drawn[i]
            self._deltas(msg["trace_edit_id"])

    def _on_remove_props(self, change):
        msg = change["new"]
        if msg:
            for path in msg["remove_props"]:
                _unset(self.model[msg["remove_trace"]], ".".join(map(str, path)))

    def _deltas(self, edit_id):
        """The trace deltas of a message, computed when it is drawn (as the view does)."""
        model = _decoded(copy.deepcopy(self.model))
        deltas = [{**_delta(d, m), "uid": d.get("uid")} for d, m in zip(self.drawn, model)]
        self.pending.append({"trace_deltas": deltas, "trace_edit_id": edit_id})

    def flush(self):
        """Send the trace deltas of every message taken since the last flush (the
        browser's replies reach the kernel when the callback has finished)."""
        pending, self.pending = self.pending, []
        for msg in pending:
            self.widget._js2py_traceDeltas = msg
