"""Figure widgets whose comm opens with the whole figure, and opened anew when a page
did not hear an update (used by :func:`workbench.ui.controls.figure_widget` and
:func:`workbench.ui.controls.refresh`)."""
from __future__ import annotations

import ipywidgets as widgets
import plotly.graph_objects as go

#: Output area of a notebook in a 1,000 px browser window beside JupyterLab's open
#: file browser [px] (measured in chromium, JupyterLab 4.6): the narrowest area the
#: apps are made to fit.
NARROW_OUTPUT_PX = 568
#: Width of a figure in a :func:`page` box outside a tab [px] (the network overview's
#: annual totals, the sensitivity curves, the Sobol indices): the narrowest output area
#: less the box's and the widgets' margins (the network's rankings, 540 px, drew whole
#: there).  plotly 7.1 draws a FigureWidget without a width at its 700 px fallback
#: where it cannot tell its box's width (seen in chromium beside an open file browser:
#: the figure then scrolled inside its box), so these figures are given this width.
PAGE_FIGURE_WIDTH = NARROW_OUTPUT_PX - 28
#: Most seconds the old drawing stays beside a figure opened anew (:meth:`OpenedWhole.
#: reopen`) when the new one never says it has drawn (a page closed meanwhile).
SWAP_S = 60.0
#: Seconds a figure's page has to answer an update before the figure is opened anew
#: (:func:`workbench.ui.controls.refresh`).  A page that heard the update answers in
#: about a second (0.1-1.2 s from the change to the redraw at load average 15 on a
#: shared 2-core machine); a later answer only costs a needless new opening.
ANSWER_S = 4.0
#: Class of a box whose figure may not show the latest state yet (:meth:`OpenedWhole.
#: mark_updating`, :func:`workbench.ui.controls.refresh`): :data:`UPDATING_CSS` dims the
#: drawing and writes :data:`UPDATING_TEXT` over it.
UPDATING_CLASS = "wb-figure-updating"
#: The words over a figure that does not show the latest state yet.
UPDATING_TEXT = "updating the figure…"
#: CSS of :data:`UPDATING_CLASS` (carried by :func:`workbench.ui.controls.caution_box`,
#: which every app with figures shows).  Only the box's class changes: a box is an
#: ipywidgets model of its own, whose messages arrive when the figure's are dropped.
UPDATING_CSS = (
    f"<style>.{UPDATING_CLASS} > .js-plotly-plot {{position: relative;}}"
    f".{UPDATING_CLASS} > .js-plotly-plot > * {{opacity: 0.3;}}"
    f".{UPDATING_CLASS} > .js-plotly-plot::after {{content: '{UPDATING_TEXT}';"
    "position: absolute; top: 45%; left: 0; right: 0; margin: 0 auto; width: max-content;"
    "padding: 2px 10px; background: #fff6e0; border: 1px solid #E69F00;"
    "font-weight: bold; z-index: 2000; pointer-events: none;}</style>")


class OpenedWhole(go.FigureWidget):
    """A FigureWidget whose comm opens with its figure in the opening state.

    plotly 7.1's FigureWidget opens its comm (ipywidgets opens it at the end of the
    widget's own constructor) with an empty ``_widget_data`` and ``_widget_layout`` and
    sends the figure a moment later as an update.  anywidget 0.11's front end holds
    every message to a model until the model's module is loaded, and gives that 2 s;
    plotly's module is 5 MB per figure, and on a loaded machine (the full demo network,
    three figures) it took longer: the held updates were then dropped without a console
    error, and the figures drew as empty default axes (x -1..6, y -1..4, no title).
    Here the comm opens after plotly has set the figure, so the model starts with it.
    """

    def __init__(self, *args, **kwargs):
        self._wb_opening = True
        self._wb_marked = False     # an app is computing what the figure will show
        self._wb_awaited = None     # trace edit id a page has not said it drew
        try:
            super().__init__(*args, **kwargs)
        finally:
            self._wb_opening = False
        self.open()

    def open(self):
        if getattr(self, "_wb_opening", False):
            return
        super().open()

    def mark_updating(self) -> None:
        """Say in the page that this figure is about to change (an app computing what it
        will show): its boxes get :data:`UPDATING_CLASS` until :meth:`settle` and every
        update sent meanwhile has been drawn."""
        self._wb_marked = True
        self._wb_show_updating()

    def settle(self) -> None:
        """The app's computing is done (:meth:`mark_updating`): the figure reads as
        current once a page has drawn every update sent (at once if none waits)."""
        self._wb_marked = False
        self._wb_show_updating()

    def expect_drawing(self) -> None:
        """An update was sent (:func:`workbench.ui.controls.refresh`): the figure reads
        as updating until the page that shows it says it has drawn the last one (plotly's
        trace deltas for the last trace edit, from the comm open now).  Only in a kernel
        (an event loop runs): nothing answers a script or a test."""
        if _event_loop() is None:
            return
        self._wb_awaited = self._last_trace_edit_id
        self._wb_show_updating()

    @property
    def updating(self) -> bool:
        """True while the page may show this figure other than its Python side holds it
        (:data:`UPDATING_CLASS` on its boxes)."""
        return bool(getattr(self, "_wb_marked", False)
                    or getattr(self, "_wb_awaited", None) is not None)

    def _wb_show_updating(self):
        """Put :data:`UPDATING_CLASS` on the boxes holding the figure, or take it off."""
        on = self.updating
        for box in _boxes_holding(self):
            if on:
                box.add_class(UPDATING_CLASS)
            else:
                box.remove_class(UPDATING_CLASS)

    def await_answer(self, edit_id: int, seconds: float | None = None) -> bool:
        """Call :meth:`reopen_unless_answered` in `seconds` (default :data:`ANSWER_S`)
        on the kernel's event loop; False where none runs (a script, a test: nothing
        answers there)."""
        import asyncio
        try:
            loop = asyncio.get_running_loop()
        except RuntimeError:
            return False
        loop.call_later(ANSWER_S if seconds is None else seconds,
                        self.reopen_unless_answered, edit_id)
        return True

    def reopen_unless_answered(self, edit_id: int) -> bool:
        """Open the figure anew (:meth:`reopen`) unless a page answered the update of
        trace edit `edit_id` (plotly's trace deltas) or a later update was sent (its
        own wait decides).  True when opened anew."""
        if self.comm is None or self._last_trace_edit_id != edit_id:
            return False
        if not self._trace_edit_in_process:  # a page drew it and said so
            return False
        return self.reopen()

    def reopen(self) -> bool:
        """Open a new comm with the whole figure (a new model in the page) and show it
        in place of the old one in every box holding this widget; the old comm is
        closed (its model and views leave the page).

        Why: anywidget 0.11's front end drops every message to a model whose module
        took more than 2 s to load, for the life of that model in the page (a loaded
        machine; also the models a reloaded page makes).  An update sent to such a
        model never drew: the plot kept its first drawing while the numbers beside it
        changed.  A new model starts from its opening state, which holds the figure.

        Returns
        -------
        bool
            False (nothing done) when no box holds the widget or its comm is closed: a
            widget shown on its own cannot be put back in its place.
        """
        boxes = _boxes_holding(self)
        if not boxes or self.comm is None:
            return False
        self._wb_finish_swap()              # a swap still waiting: its old model goes now
        old = self._wb_detach()
        if _event_loop() is None or any(isinstance(b, _SELECTION) for b in boxes):
            self._wb_attach_new(old, boxes)
        else:
            self._wb_swap_in(old, boxes)
        return True

    def _wb_swap_in(self, old, boxes):
        """Open a new comm with the current state and show its view beside the old one
        (each box names both, the old first); the old comm is closed when the new view
        says it has drawn (:meth:`_handle_msg`: plotly sends its trace deltas after its
        first drawing), or after :data:`SWAP_S`.

        Why: a box that named the new model alone removed the old view at once, and the
        new one stayed an empty box until its module had loaded and drawn (about 4 s
        after the change on a slow page: a flicker).  Closing the old comm removes its
        view and nothing else (the boxes are not sent again: a box's view re-creates
        every child view from the first child that differs, the new one included).
        Tabs and accordions are swapped at once (:meth:`_wb_attach_new`): a child more
        there is a page more, with the titles off by one; the apps put their figures in
        a page of their own (:func:`page`), where the swap is as here."""
        self.open()
        new_ref = f"IPY_MODEL_{self.model_id}"
        for box in boxes:
            refs = []
            for child in box.children:
                if child is self:
                    refs += [f"IPY_MODEL_{old.comm_id}", new_ref]
                else:
                    refs.append(f"IPY_MODEL_{child.model_id}")
            box._send({"method": "update", "state": {"children": refs}, "buffer_paths": []})
        self._trace_edit_in_process = False  # the new model holds every edit
        self._wb_swap = old
        _event_loop().call_later(SWAP_S, self._wb_finish_swap, old)

    def _wb_finish_swap(self, old=None):
        """Close the old comm of a swap (:meth:`_wb_swap_in`); `old`: only that one."""
        pending = getattr(self, "_wb_swap", None)
        if pending is None or (old is not None and pending is not old):
            return
        self._wb_swap = None
        pending.close()

    def _handle_msg(self, msg):
        sent_before = self._last_trace_edit_id
        super()._handle_msg(msg)
        if self.comm is None:
            return
        if self._last_trace_edit_id != sent_before and \
                getattr(self, "_wb_awaited", None) is not None:
            # an edit a page made itself (a click on the legend), which plotly sends
            # back as a new trace edit, while an update waits for its answer: waited for
            # as an update sent.  Defect: the update's wait left it to a wait of its own
            # (reopen_unless_answered) that nothing made, and a page that drops the
            # figure's messages kept the old drawing, marked updating, for ever.
            self._wb_awaited = self._last_trace_edit_id
            self.await_answer(self._last_trace_edit_id)
        content = msg.get("content", {})
        state = content.get("data", {}).get("state", {})
        if content.get("comm_id") != self.comm.comm_id:
            return                           # an old comm's view: not what is shown now
        if getattr(self, "_wb_swap", None) is not None and (
                "_js2py_traceDeltas" in state or "_js2py_layoutDelta" in state):
            self._wb_finish_swap()           # the new view has drawn
        answer = state.get("_js2py_traceDeltas") or {}
        awaited = getattr(self, "_wb_awaited", None)
        if awaited is not None and isinstance(answer, dict) and \
                answer.get("trace_edit_id") == self._last_trace_edit_id:
            self._wb_awaited = None          # the page drew the last update
            self._wb_show_updating()

    def _wb_detach(self):
        """Take the comm off the widget (updates of the Python side then send nothing)."""
        from ipywidgets.widgets.widget import _instances
        old = self.comm
        _instances.pop(old.comm_id, None)
        self.comm = None
        self._model_id = None               # else open() reuses the old comm id
        return old

    def _wb_attach_new(self, old, boxes):
        """Open a new comm with the current state, point `boxes` at it, close `old`
        (in this order: the page has the new model before a box names it)."""
        self.open()
        for box in boxes:
            box.send_state("children")
        old.close()
        self._trace_edit_in_process = False  # the new model holds every edit


#: Boxes whose children are pages (a child more is a page more).
_SELECTION = (widgets.Tab, widgets.Accordion, widgets.Stack)


def page(child) -> widgets.Widget:
    """A page of a Tab, Accordion or Stack (or a place in any box) holding `child`: a
    figure in a box of its own (a VBox as wide as the page, scrolling a wider figure),
    so that a figure opened anew keeps its old
    drawing until the new one has drawn (:meth:`OpenedWhole._wb_swap_in` in the box),
    as a figure elsewhere does; any other widget as it is.

    Defect: a figure placed directly in a tab was swapped at once when opened anew
    (a tab's child more is a page more), and the page showed an empty box until
    plotly's module had loaded (a flicker)."""
    if isinstance(child, go.FigureWidget):
        # as wide as its page, never wider: a figure wider than a narrow output area
        # scrolls in its box instead of being cut
        return widgets.VBox([child], layout=widgets.Layout(width="100%", max_width="100%",
                                                           overflow="auto hidden"))
    return child


def _event_loop():
    """The running event loop (the kernel's), or None (a script, a test)."""
    import asyncio
    try:
        return asyncio.get_running_loop()
    except RuntimeError:
        return None


def _boxes_holding(widget) -> list:
    """The open boxes (VBox, HBox, Tab, Accordion...) whose children hold `widget`."""
    from ipywidgets.widgets.widget import _instances    # the open widgets, by model id
    return [w for w in list(_instances.values())
            if isinstance(w, widgets.Box) and any(c is widget for c in w.children)]
