"""Widgets shared by the apps: a control per assumption, progress, in-place figures."""
from __future__ import annotations

import html
import time

import ipywidgets as widgets
import numpy as np
import pandas as pd
import plotly.graph_objects as go
import traitlets
from plotly.basedatatypes import Undefined

from ..budget import OMISSIONS
from ..report import CAUTION
from .assumptions import Assumption
from .figure_open import OpenedWhole

#: Width of a control's description [CSS].
DESCRIPTION_WIDTH = "230px"
#: Width of a control [CSS].
CONTROL_WIDTH = "420px"
#: Largest height of a table before it scrolls [CSS].
TABLE_HEIGHT = "320px"
#: CSS that lets a control's description wrap onto a second line instead of being cut
#: with an ellipsis ("precipitation with valid chemistr..."): the description column is
#: 230 px and some labels are longer; the row grows with its label.  The readout of a
#: years slider gets room for "2023 – 2023" (its last digit was cut in a full row).
WRAP_LABELS_CSS = ("<style>.wb-wrap-labels .widget-label {white-space: normal !important; "
                   "line-height: 1.15; height: auto !important;} "
                   ".wb-wrap-labels .widget-label-basic, .wb-wrap-labels .widget-label-basic "
                   "span {white-space: normal !important; overflow: visible !important; "
                   "line-height: 1.15; height: auto !important;} "
                   ".wb-wrap-labels .widget-inline-hbox {height: auto !important; "
                   "min-height: var(--jp-widgets-inline-height); align-items: center;} "
                   ".wb-years .widget-readout {min-width: 7.5em; overflow: visible;} "
                   # tab titles whole, on a second row where the row is full (ipywidgets
                   # gives each tab 144 px at most and shrinks it: "deposition veloci",
                   # "capture efficienc" at a 1,000 px window)
                   ".wb-tabs > .lm-TabBar .lm-TabBar-tab {flex: 0 0 auto !important; "
                   "max-width: none !important;} "
                   ".wb-tabs > .lm-TabBar .lm-TabBar-content {flex-wrap: wrap;}</style>")
#: Layout keys that never change between two figures of one kind (not resent).
STATIC_LAYOUT = ("template",)


def css_class(key: str) -> str:
    """CSS class of the control of an assumption (for tests and styling)."""
    return "wb-" + key.replace(".", "-").replace("_", "-").lower()


class OptionalFloat(widgets.HBox):
    """A number that may be unset: a check box ("set") and a number field.

    ``value`` is None while the box is unchecked (the model or the catalogue decides).
    The number field shows `default` while unchecked (the value in force, where one is
    known: checking the box starts from it), and `source`, when given, is said on a
    line below (:meth:`set_default`).
    """

    value = traitlets.Float(None, allow_none=True)

    def __init__(self, value=None, description="", bounds=(0.0, 1.0, 0.01), default=None,
                 source="", **kw):
        lo, hi, step = bounds
        start = default if default is not None else lo
        self._box = widgets.Checkbox(value=value is not None, description=description,
                                     indent=False, layout=widgets.Layout(width=DESCRIPTION_WIDTH))
        self._num = widgets.BoundedFloatText(value=value if value is not None else start, min=lo,
                                             max=hi, step=step, disabled=value is None,
                                             layout=widgets.Layout(width="120px"))
        self._source = widgets.HTML("", layout=widgets.Layout(width="100%", margin="0 0 4px 4px"))
        self._source.add_class("wb-in-force")
        kw.setdefault("layout", widgets.Layout())
        kw["layout"].flex_flow = "row wrap"            # the source on a line of its own
        super().__init__([self._box, self._num, self._source], **kw)
        self._bounds = (lo, hi)
        self.default = start
        self.source = ""
        self._syncing = False
        if source:
            self.set_default(default, source)
        self.value = value
        self._box.observe(self._from_parts, "value")
        self._num.observe(self._from_parts, "value")
        self.observe(self._to_parts, "value")

    def set_default(self, value, source):
        """The value in force while unset [the control's unit] (None: none fixed) and its
        source in words; the number field shows it while the box is unchecked."""
        lo, hi = self._bounds
        if value is not None:
            # 3 significant digits, as said on the line below (the field showed
            # "1.020072605427", cut)
            self.default = min(max(float(f"{float(value):.3g}"), lo), hi)
        self.source = source
        shown = f"{value:.3g}" if value is not None else "none fixed"
        self._source.value = (f"<small>unset: {html.escape(shown)} "
                              f"({html.escape(source)})</small>") if source else ""
        if self.value is None:
            self._syncing = True
            try:
                self._num.value = self.default
            finally:
                self._syncing = False

    def _from_parts(self, change):
        if self._syncing:
            return
        self._num.disabled = not self._box.value
        new = float(self._num.value) if self._box.value else None
        if new != self.value:
            self.value = new

    def _to_parts(self, change):
        v = change["new"]
        self._syncing = True
        try:
            if v is not None:
                self._num.value = v
            self._box.value = v is not None
            self._num.disabled = v is None
        finally:
            self._syncing = False


#: Width of a character of a drop-down's text [px], and of its arrow and padding [px]
#: (measured in chromium at JupyterLab's 13 px font: "automatic (surface state, month,
#: latitude)", 42 characters, took 236 px and the box 24 px more).
SELECT_CHAR_PX, SELECT_FRAME_PX = 5.6, 24


def select_room(control_width=CONTROL_WIDTH) -> int:
    """Characters a control's closed drop-down shows whole beside a
    :data:`DESCRIPTION_WIDTH` description."""
    free = int(control_width[:-2]) - int(DESCRIPTION_WIDTH[:-2]) - 10 - SELECT_FRAME_PX
    return int(free // SELECT_CHAR_PX)


def make_control(a: Assumption, value, in_force=None):
    """The widget of an assumption, showing `value`; its ``.value`` is the setting.

    `in_force`, for a number that may be unset: ``(value, source)`` of what holds while
    it is (:meth:`workbench.ui.session.Session.in_force`)."""
    style = {"description_width": DESCRIPTION_WIDTH}
    layout = widgets.Layout(width=CONTROL_WIDTH)
    if a.kind == "choice":
        options = list(a.choices)
        if value not in a.values:          # e.g. a scenario's 12 monthly categories
            options.append((f"as in the scenario: {value}", value))
        w = widgets.Dropdown(options=options, value=value, description=a.label,
                             style=style, layout=layout)
    elif a.kind == "bool":
        w = widgets.Checkbox(value=bool(value), description=a.label, indent=False, layout=layout)
    elif a.kind == "float":
        lo, hi, step = a.bounds
        w = widgets.FloatSlider(value=value, min=lo, max=hi, step=step, description=a.label,
                                continuous_update=False, readout_format=".3g", style=style,
                                layout=layout)
    elif a.kind == "optional_float":
        w = OptionalFloat(value, a.label, a.bounds, default=a.sweep[0] if a.sweep else None,
                          layout=layout)
        if in_force is not None:
            w.set_default(*in_force)
    else:
        raise ValueError(f"unknown kind of assumption {a.kind!r}")
    w.add_class(css_class(a.key))
    # the scenario key as a tooltip; never on a container: the front end's tooltip code
    # reads the description, which a Box has not (a TypeError: the view never renders)
    for part in (w.children if isinstance(w, widgets.Box) else [w]):
        part.tooltip = a.key
    return w


def wrap_labels_style() -> widgets.HTML:
    """An invisible widget carrying :data:`WRAP_LABELS_CSS`: place it in an app and add
    the class ``wb-wrap-labels`` to the box whose control descriptions may wrap."""
    w = widgets.HTML(WRAP_LABELS_CSS, layout=widgets.Layout(height="0px", margin="0px"))
    w.add_class("wb-style")
    return w


def set_quietly(w, value, handler):
    """Set a control's value without calling `handler` (used when the site changes)."""
    w.unobserve(handler, "value")
    try:
        w.value = value
    finally:
        w.observe(handler, "value")


class Progress(widgets.HBox):
    """A progress bar with a line of text; ``step(text, fraction)`` moves it."""

    def __init__(self):
        self.bar = widgets.FloatProgress(value=0.0, min=0.0, max=1.0, bar_style="info",
                                         layout=widgets.Layout(width="240px"))
        self.label = widgets.Label("")
        super().__init__([self.bar, self.label])
        self.add_class("wb-progress")
        self.started = time.perf_counter()

    def _repr_mimebundle_(self, **kwargs):
        """The bar in the page; nothing in a saved notebook's plain text (ipywidgets'
        own was the repr cut at 110 characters, ``Progress(children=(FloatProgress(...``,
        left in place of the bar of a failed open)."""
        data = super()._repr_mimebundle_(**kwargs)
        if data is not None:
            data["text/plain"] = ""
        return data

    def step(self, text, fraction=None):
        if fraction is not None:
            self.bar.value = max(0.0, min(1.0, float(fraction)))
        self.bar.bar_style = "success" if self.bar.value >= 1.0 else "info"
        self.label.value = text

    def start(self, text):
        self.started = time.perf_counter()
        self.step(text, 0.05)

    def done(self, text="ready"):
        self.step(f"{text} ({time.perf_counter() - self.started:.2f} s)", 1.0)

    def counted(self, items, what, span=(0.05, 1.0), echo=None, every_s=0.2):
        """Iterate over `items`, showing the count done in words ("engine runs: 40 of
        100"), with the bar moved across `span` of its length.

        Parameters
        ----------
        items : iterable
            Taken as a list (its length is the count shown).
        what : str
            What is counted (the text before the count).
        span : (float, float)
            Fractions [1] of the bar at the first and the last item.
        echo : callable, optional
            Also given each text shown (e.g. a label of the app).
        every_s : float
            Shortest time between two updates [s]; the first and the last count are
            always shown.

        Yields
        ------
        The items, in order; the count moves when the caller has taken the next one.
        """
        items = list(items)
        n, (lo, hi) = len(items), span

        def show(i):
            text = f"{what}: {i} of {n}"
            self.step(text, lo + (hi - lo) * i / n if n else hi)
            if echo is not None:
                echo(text)

        show(0)
        last = time.perf_counter()
        for i, item in enumerate(items, 1):
            yield item
            now = time.perf_counter()
            if i == n or now - last >= every_s:
                show(i)
                last = now


def _flatten(d: dict, prefix: str = "", out: dict | None = None) -> dict:
    """Nested plotly JSON as ``{"marker.line.color": value}`` (lists are leaves)."""
    out = {} if out is None else out
    for k, v in d.items():
        if isinstance(v, dict) and v:
            _flatten(v, f"{prefix}{k}.", out)
        else:
            out[f"{prefix}{k}"] = v
    return out


def _equal(a, b) -> bool:
    """Plain-JSON equality (numpy arrays compared by value)."""
    if a is b:
        return True
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        try:
            return np.array_equal(np.asarray(a), np.asarray(b))
        except (TypeError, ValueError):
            return False
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


#: Headings of a table over their cells (left, like the cells) with room between columns.
TABLE_CSS = ("<style>.wb-table th {text-align: left !important; padding-right: 1em;} "
             ".wb-table td {padding-right: 1em;}</style>")


def table_number(v: float) -> str:
    """A number of a table as a reader takes it in: three significant digits, and whole
    numbers with thousands separators from 1,000 up (``1,441``, never ``1.44e+03``)."""
    if not np.isfinite(v):
        return "–"
    return f"{v:,.0f}" if abs(v) >= 1000 else f"{v:.3g}"


#: Least width of a column of long sentences in a table [CSS] (:func:`table_html`'s
#: ``wide``): about 30 characters a line at the tables' 85 % font.
WIDE_COLUMN = "16em"


def table_html(frame: pd.DataFrame, empty="none", wide=(), fill=False) -> str:
    """A scrolling HTML table of a DataFrame (text escaped; headings over their columns,
    left-aligned like the cells; numbers by :func:`table_number`).

    Parameters
    ----------
    frame : DataFrame
        The rows shown (all columns, without the index).
    empty : str
        Said in place of a table when there is no row.
    wide : sequence of str
        Columns of long sentences that get at least :data:`WIDE_COLUMN` of width: the
        table then scrolls sideways in its box instead of squeezing them into a column
        of a few words a line (a network trend of 180 characters in a 60 px column made
        one row taller than the box, which showed a slice of it).
    fill : bool
        The box takes the width of the column it is in and nothing from the table: a
        table wider than the column scrolls inside it.  Without it the table's least
        width widens the HTML widget holding it past an app's column (beside an open
        file browser the trend table of the network overview cut its own heading at the
        right).  Only for a widget whose width the column sets (a VBox child).
    """
    if frame is None or frame.empty:
        return f"<p><i>{html.escape(empty)}</i></p>"
    classes = "wb-table"
    css = TABLE_CSS
    cols = [str(c) for c in frame.columns]
    wide_at = [cols.index(str(c)) + 1 for c in wide if str(c) in cols]
    if wide_at:
        # a class of this table's own: the style element applies to the whole page
        own = "wb-table-" + "-".join(map(str, wide_at))
        classes += f" {own}"
        css += ("<style>" + ", ".join(f".{own} td:nth-child({i})" for i in wide_at)
                + f" {{min-width: {WIDE_COLUMN};}}</style>")
    body = frame.to_html(index=False, border=0, escape=True, na_rep="–", justify="left",
                         float_format=table_number, classes=classes)
    # JupyterLab's stylesheet right-aligns a th: the headings stood off their cells
    body = css + body
    # width 0 with a least width of 100 %: no width of the table's own reaches the
    # column (a percentage least width counts for nothing while the column is sized)
    size = "width:0;min-width:100%;" if fill else ""
    return (f"<div style='max-height:{TABLE_HEIGHT};max-width:100%;{size}overflow:auto;"
            f"font-size:85%'>{body}</div>")


def caution_box() -> widgets.HTML:
    """The cautions of the README and the report, and what the budget leaves out."""
    left_out = "".join(f"<li><b>{html.escape(a)}</b>: {html.escape(b)}</li>" for a, b in OMISSIONS)
    return widgets.HTML(
        "<div style='background:#fff6e0;border-left:4px solid #E69F00;padding:.4em .8em;"
        f"font-size:90%'><b>Caution.</b> {html.escape(CAUTION)}"
        f"<details><summary>What the budget leaves out</summary><ul>{left_out}</ul></details>"
        "</div>")


def short_errors() -> bool:
    """Show the workbench's own errors (:class:`~workbench.errors.WorkbenchError`: bad
    input, bad scenario) in this IPython session as their one located message, without
    a traceback: the message names the file, line, column, value and what was expected,
    and 13 lines of the workbench's own frames above it only hid it.  The cell still
    fails (Run All stops there); any other error keeps its traceback.  What the failed
    cell did not make stands as a :class:`~workbench.ui.unopened.NotOpened`: a later cell
    that uses it says in one line that there is nothing to show until the input is fixed
    (no ``NameError``, and no app left from an earlier run of other inputs).

    Returns
    -------
    bool
        False outside IPython (nothing done).
    """
    try:
        from IPython import get_ipython
    except ImportError:
        return False
    shell = get_ipython()
    if shell is None:
        return False
    from ..errors import WorkbenchError
    from .unopened import NothingToShow, bind_unmade

    def one_line(self, etype, value, tb, tb_offset=None):
        text = str(value) if issubclass(etype, NothingToShow) else f"{etype.__name__}: {value}"
        self._showtraceback(etype, value, [text])
        bind_unmade(self.user_ns, tb)

    shell.set_custom_exc((WorkbenchError,), one_line)
    return True


class SavedText:
    """Mixin of the apps: the line a saved notebook keeps in place of the app.

    A notebook opened without running it (a colleague's copy, with its outputs) shows
    a widget's plain-text form where the widget cannot be drawn; ipywidgets' own is the
    widget's repr cut at 110 characters (``SiteExplorer(children=(HTML(value='<h3>...``).
    The apps give :meth:`saved_text` instead.
    """

    #: What the app is, in words (the start of the line).
    title = "workbench app"

    def shown_what(self) -> str:
        """What the app shows (site, years...), or ``""``."""
        return ""

    def saved_text(self) -> str:
        what = self.shown_what()
        return (f"[{self.title}{' · ' + what if what else ''}: an interactive app. Run the "
                "notebook's cells (Run > Run All Cells) to show and use it.]")

    def _repr_mimebundle_(self, **kwargs):
        data = super()._repr_mimebundle_(**kwargs)
        data["text/plain"] = self.saved_text()
        return data

    def _ipython_display_(self):
        """The app, then :func:`saved_hint` (a second output, hidden while the app is
        drawn).

        Defect: a notebook saved and opened again showed "Error displaying widget:
        model not found" in place of the app (JupyterLab draws the widget's output
        with the widget manager, never its plain text, and the app's widgets die with
        the kernel).  The hint's own style hides that line and shows the app's
        :meth:`saved_text` instead; while the app is drawn its class
        (:data:`~workbench.ui.saved_hint.APP_CLASS`) hides the hint."""
        from IPython.display import display

        from .saved_hint import APP_CLASS, saved_hint
        self.add_class(APP_CLASS)
        display(self._repr_mimebundle_(), raw=True)
        text = self.saved_text()
        handle = display(saved_hint(text), raw=True, display_id=True)
        if handle is None:                       # no IPython display (a plain script)
            return
        # the hint follows what the app shows: a notebook saved after the site or year
        # was changed named the state of the first drawing ("2023" over an app left on
        # 2018, seen in chromium after Save and opening again)
        hints = self.__dict__.setdefault("_saved_hints", [])
        hints.append([handle, text])
        if len(hints) == 1:
            for w in _walk(self):
                if isinstance(w, widgets.ValueWidget):
                    w.observe(self._renew_saved_hints, "value")

    def _renew_saved_hints(self, change=None):
        """Update each :func:`saved_hint` shown of this app whose text is no longer
        :meth:`saved_text` (one message per change of what the app shows)."""
        from .saved_hint import saved_hint
        text = self.saved_text()
        for entry in self.__dict__.get("_saved_hints", []):
            if entry[1] != text:
                entry[0].update(saved_hint(text), raw=True)
                entry[1] = text


def open_with_progress(cls, scenario_path, **kw):
    """Open a scenario with a progress bar shown while the inputs are read, then `cls`
    (a bad input or scenario is shown as its one located message, :func:`short_errors`).

    `scenario_path` is found as a notebook's first cell says
    (:func:`workbench.ui.notebook_paths.scenario_path`): ``"demo"``, absolute, or
    relative to the notebook (then to the working directory)."""
    from ..errors import WorkbenchError
    from .notebook_paths import scenario_path as find
    from .session import Session
    from IPython.display import display
    short_errors()
    scenario_path = find(scenario_path)       # beside the notebook, or a clear message
    prog = Progress()
    handle = display(prog, display_id=True)
    prog.start("opening the scenario")
    try:
        session = Session.open(scenario_path, progress=prog.step)
    except WorkbenchError:
        prog.step("not opened: the message below says what to mend", 0.0)
        raise
    try:
        session.check_site(kw.get("site"))      # one line, not ipywidgets' TraitError
    except WorkbenchError:
        prog.step("not opened: the message below says what to mend", 0.0)
        raise
    prog.step("first run", 0.85)
    app = cls(session, progress=prog, **kw)
    prog.done("ready")
    if handle is not None:      # no bar left behind (and no "HTML(value='')" in a saved file)
        handle.update({"text/plain": ""}, raw=True)
    return app


#: Characters of a control's description that fit ipywidgets' default label width
#: (80 px at the 13 px font of JupyterLab); a longer one is cut with an ellipsis
#: ("base sam..." under the Sobol analysis in the browser).
DEFAULT_LABEL_CHARS = 11


def _walk(root):
    yield root
    for c in getattr(root, "children", ()) or ():
        yield from _walk(c)


def cut_descriptions(root) -> list:
    """Descriptions of the controls under `root` that the browser would cut: longer than
    :data:`DEFAULT_LABEL_CHARS` at the default label width."""
    out = []
    for w in _walk(root):
        text = getattr(w, "description", "") or ""
        style = getattr(w, "style", None)
        width = getattr(style, "description_width", None) if style is not None else None
        if width == "" and len(text) > DEFAULT_LABEL_CHARS and not isinstance(
                w, (widgets.Button, widgets.Checkbox, widgets.ToggleButton)):
            out.append(text)
    return out


def fit_descriptions(root):
    """Give every control under `root` whose description :func:`cut_descriptions` names
    the width of its text (``description_width = "initial"``)."""
    for w in _walk(root):
        text = getattr(w, "description", "") or ""
        if text in cut_descriptions(w) and not getattr(w, "children", None):
            w.style.description_width = "initial"
    return root


#: Width of a dropdown's text per character [px] (13 px font, common practice for
#: JupyterLab's sans-serif) and of its label and arrow [px]; ipywidgets' default
#: dropdown is 300 px wide, label included, and cut "ridge · Tarnwick Ridge plantation".
OPTION_CHAR_PX, DROPDOWN_FRAME_PX, DROPDOWN_DEFAULT_PX = 8, 110, 300


def fit_options_width(w, most_px=520):
    """Widen dropdown `w` so that its longest option shows whole (at most `most_px`)."""
    longest = max((len(str(o)) for o in w.options), default=0)
    need = min(most_px, DROPDOWN_FRAME_PX + OPTION_CHAR_PX * longest)
    if need > DROPDOWN_DEFAULT_PX:
        w.layout.width = f"{need}px"
    return w
