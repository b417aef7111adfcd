"""Controls of the apps: a control per assumption (with its optional number), the room
of a drop-down, and descriptions fitted so that the browser does not cut them.

Moved from :mod:`workbench.ui.controls` (which re-exports every name here).
"""
from __future__ import annotations

import html

import ipywidgets as widgets
import traitlets

from .assumptions import Assumption


#: Width of a control's description [CSS].
DESCRIPTION_WIDTH = "230px"
#: Width of a control [CSS].
CONTROL_WIDTH = "420px"
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
        if new is None:             # unchecked: the field shows what holds while unset
            self._show_default()
        if new != self.value:
            self.value = new

    def _show_default(self):
        """The number field at :attr:`default` (a greyed 2.04 stood beside "unset: 1.02
        (...)" after the box was unchecked, and a fixed Vd's field kept its last number
        after "Reset to scenario", unlike the page as opened)."""
        self._syncing = True
        try:
            self._num.value = self.default
        finally:
            self._syncing = False

    def _to_parts(self, change):
        v = change["new"]
        self._syncing = True
        try:
            self._num.value = v if v is not None else self.default
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
