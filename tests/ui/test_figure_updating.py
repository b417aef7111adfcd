"""A figure that may not show the latest state says so in the page.

Defect (browser, a loaded machine): anywidget 0.11 drops every message to a figure whose
plotly module took over 2 s to load; the figure is then opened anew ANSWER_S (4 s)
after the last unanswered change, and the new model loads plotly's module again, so the
page showed the old figure beside the control's new value for 4-16 s (12.3 s measured
in chromium, unit changed five times in 3 s) with nothing saying so.  Now the boxes
holding the figure carry ``wb-figure-updating`` (dimmed, "updating the figure…") from
the update until the view open now says it has drawn the last one; the app marks its
figures while it computes.  tests/test_browser_figure_updating.py checks the page.
"""
import asyncio

import ipywidgets as widgets
import numpy as np
import plotly.graph_objects as go
import pytest

from ui.test_figure_open_state import _boxed, _drawn_message, comms  # noqa: F401
from workbench.ui.controls import figure_widget, refresh
from workbench.ui.figure_open import UPDATING_CLASS, UPDATING_CSS

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


def _classes(box):
    return list(box._dom_classes)


def _bars(x, title):
    return go.Figure(go.Bar(x=x, y=["a", "b"]), layout={"title": {"text": title}})


def test_an_update_reads_as_updating_until_the_page_drew_the_last_one(comms):
    w, box = _boxed("a", [1.0, 2.0])
    seen = []

    async def change():
        refresh(w, _bars([5.0, 6.0], "b"))
        seen.append(_classes(box))
        first_edit = w._last_trace_edit_id
        refresh(w, _bars([7.0, 6.0], "c"))       # a second change before any answer
        late = _drawn_message(w)
        late["content"]["data"]["state"]["_js2py_traceDeltas"]["trace_edit_id"] = first_edit
        w._handle_msg(late)                      # the page drew the first one only
        seen.append(_classes(box))
        w._handle_msg(_drawn_message(w))         # ... then the last one
        seen.append(_classes(box))

    asyncio.run(change())
    assert seen == [[UPDATING_CLASS], [UPDATING_CLASS], []]
    assert not w.updating


def test_a_figure_opened_anew_reads_as_updating_until_the_new_view_drew(comms):
    """No page answered: the figure is opened anew; the old drawing stays beside the new
    model (figure_open.OpenedWhole._wb_swap_in), dimmed, until the new view says it has
    drawn.  An answer from the old comm's view does not count."""
    w, box = _boxed("a", [1.0, 2.0])
    seen = []

    async def change():
        refresh(w, _bars([5.0, 6.0], "b"))
        old = _drawn_message(w)                  # the old model's view, answered late
        assert w.reopen_unless_answered(w._last_trace_edit_id)
        seen.append(_classes(box))
        w._handle_msg(old)
        seen.append(_classes(box))
        w._handle_msg(_drawn_message(w))
        seen.append(_classes(box))

    asyncio.run(change())
    assert seen == [[UPDATING_CLASS], [UPDATING_CLASS], []]


def test_nothing_changed_nothing_to_wait_for(comms):
    w, box = _boxed("a", [1.0, 2.0])

    async def same():
        refresh(w, _bars([1.0, 2.0], "a"))

    asyncio.run(same())
    assert _classes(box) == [] and not w.updating


def test_an_app_marks_its_figures_while_it_computes(comms, monkeypatch):
    """The site explorer: from the control's change until the run is done, the budget's
    box and the open tab's box read as updating; then as long as no page has drawn."""
    import tempfile
    from pathlib import Path

    from ui.demo_subset import write_demo_subset
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.figure_open import _boxes_holding
    from workbench.ui.session import Session
    with tempfile.TemporaryDirectory() as tmp:
        scenario = write_demo_subset(Path(tmp) / "one", ("ridge",), 2021, 2021)
        app = SiteExplorer(Session.open(scenario), site="ridge")
        figs = [app.figs["budget"], app.figs["monthly fluxes"]]
        during = []
        run = app._run

        def watched_run(*a, **k):
            during.append([_classes(b) for f in figs for b in _boxes_holding(f)])
            return run(*a, **k)
        monkeypatch.setattr(app, "_run", watched_run)
        app.controls["wet.on_dust"].value = "exclude"
        assert during and all(UPDATING_CLASS in c for c in during[0]), during
        # no kernel here: nothing waits for a page, so the marks are gone
        assert all(UPDATING_CLASS not in _classes(b) for f in figs for b in _boxes_holding(f))

        def fail(*a, **k):
            raise RuntimeError("no such input")
        monkeypatch.setattr(app, "_run", fail)
        with pytest.raises(RuntimeError):
            app.controls["wet.on_dust"].value = "flag"
        assert all(UPDATING_CLASS not in _classes(b) for f in figs for b in _boxes_holding(f))


def test_every_app_with_figures_carries_the_style():
    from workbench.ui.controls import caution_box
    assert UPDATING_CSS in caution_box().value
    assert f".{UPDATING_CLASS} > .js-plotly-plot::after" in UPDATING_CSS


def test_a_figure_shown_alone_is_left_as_it_is(comms):
    alone = figure_widget(_bars([1.0, 2.0], "a"))

    async def change():
        refresh(alone, _bars([5.0, 6.0], "b"))

    asyncio.run(change())
    assert alone.updating            # no box to mark; the flag still says so


def _legend_click(w, comm=None):
    """The message a view sends when the reader clicks a legend entry (plotly's restyle
    from the page, which its Python side sends back as a new trace edit)."""
    return {"content": {"comm_id": (comm or w.comm).comm_id, "data": {
        "method": "update", "state": {"_js2py_restyle": {
            "style_data": {"visible": ["legendonly"]}, "style_traces": [0],
            "source_view_id": "view-1"}}, "buffer_paths": []}}, "buffers": []}


def test_an_edit_the_page_made_while_an_update_waits_is_waited_for_too(comms, monkeypatch):
    """Defect (found reading the code): the wait after an update (ANSWER_S) opened the
    figure anew only when no later trace edit had been sent, leaving that edit to its own
    wait; an edit the page made itself (a click on the legend, which plotly's Python side
    sends back to the page as a new trace edit) had none.  On a page that drops the
    figure's messages the figure then read "updating the figure…" for ever and kept its
    old drawing (chromium, the figures' messages dropped: still dimmed 90 s after a
    click on the budget's legend).  Now such an edit is waited for as an update sent."""
    import workbench.ui.figure_open as figure_open
    monkeypatch.setattr(figure_open, "ANSWER_S", 0.05)
    w, box = _boxed("a", [1.0, 2.0])
    first = w.comm
    seen = []

    async def change():
        refresh(w, _bars([5.0, 6.0], "b"))      # the page drops it (never answers)
        sent = w._last_trace_edit_id
        w._handle_msg(_legend_click(w))          # the reader clicks the old drawing
        assert w._last_trace_edit_id == sent + 1
        await asyncio.sleep(0.3)
        seen.append(w.comm is not first)         # opened anew
        w._handle_msg(_drawn_message(w))         # the new view has drawn
        seen.append(_classes(box))

    asyncio.run(change())
    assert seen == [True, []]
    assert not w.updating


def test_a_legend_click_on_a_figure_drawn_marks_nothing(comms):
    """A page that drew every update: a click on its legend does not dim the figure."""
    w, box = _boxed("a", [1.0, 2.0])

    async def click():
        refresh(w, _bars([5.0, 6.0], "b"))
        w._handle_msg(_drawn_message(w))
        w._handle_msg(_legend_click(w))

    asyncio.run(click())
    assert _classes(box) == [] and not w.updating


def test_a_click_on_the_old_drawing_beside_a_figure_opened_anew_is_waited_for(
        comms, monkeypatch):
    """Opened anew, the old drawing stays beside the new one until that has drawn; a
    click on its legend sends a new trace edit to the new model.  When the new view drew
    its opening state only (its later messages dropped), the figure is opened anew again
    instead of reading "updating the figure…" for ever."""
    import workbench.ui.figure_open as figure_open
    monkeypatch.setattr(figure_open, "ANSWER_S", 0.05)
    w, box = _boxed("a", [1.0, 2.0])
    seen = []

    async def change():
        refresh(w, _bars([5.0, 6.0], "b"))      # unanswered: opened anew
        old = w.comm
        await asyncio.sleep(0.2)
        new = w.comm
        assert new is not old
        opening = _drawn_message(w)              # what the new view answers when drawn
        w._handle_msg(_legend_click(w, old))     # the reader clicks the old drawing
        w._handle_msg(opening)                   # the new view drew its opening state
        seen.append(_classes(box))
        await asyncio.sleep(0.3)
        seen.append(w.comm is not new)           # opened anew again
        w._handle_msg(_drawn_message(w))
        seen.append(_classes(box))

    asyncio.run(change())
    assert seen == [[UPDATING_CLASS], True, []]
    assert not w.updating


def _with_gaps(y, title="a"):
    return go.Figure(go.Scatter(x=[1.0, 2.0, 3.0], y=y), layout={"title": {"text": title}})


@pytest.mark.parametrize("y", [lambda: [1.0, float("nan"), 3.0],     # a new NaN each time
                               lambda: np.array([1.0, np.nan, 3.0])], ids=["list", "array"])
def test_an_unchanged_figure_with_nan_sends_nothing(comms, y):
    """Defect: NaN compared unequal to itself, so a figure with NaN values resent those
    arrays at every refresh: a needless update message, and the figure marked updating
    until the page answered."""
    w = figure_widget(_with_gaps([1.0, 2.0, 3.0]))
    box = widgets.VBox([w])

    async def twice():
        refresh(w, _with_gaps(y()))
        w._handle_msg(_drawn_message(w))         # the page drew the first one
        edit = w._last_trace_edit_id
        out = refresh(w, _with_gaps(y()))        # the same figure again
        return out, edit

    out, edit = asyncio.run(twice())
    assert out == {"restyled": 0, "relayout": 0, "replaced": False}
    assert w._last_trace_edit_id == edit         # no update message sent
    assert _classes(box) == [] and not w.updating


def test_nan_and_none_read_alike_and_a_filled_gap_is_sent(comms):
    """plotly sends NaN and None both as null: one for the other is no change; a number
    where NaN was is one."""
    w = figure_widget(_with_gaps([1.0, float("nan"), 3.0]))
    assert refresh(w, _with_gaps([1.0, None, 3.0]))["restyled"] == 0
    out = refresh(w, _with_gaps([1.0, 2.0, 3.0]))
    assert out["restyled"] == 1 and list(w.data[0].y) == [1.0, 2.0, 3.0]


def test_one_ranking_updating_leaves_the_other_undimmed(comms, two_sites_2021):
    """Defect: the network overview's S and N rankings shared one box, and the class
    dims every figure of the box it is on (UPDATING_CSS): either updating dimmed both.
    Each is now in a box of its own, the two boxes side by side as the figures were."""
    from workbench.ui.apps import NetworkOverview
    from workbench.ui.figure_open import _boxes_holding
    from workbench.ui.session import Session
    net = NetworkOverview(Session.open(two_sites_2021))
    s, n = net.figs["S"], net.figs["N"]
    s.mark_updating()
    assert all(UPDATING_CLASS in _classes(b) for b in _boxes_holding(s))
    assert _boxes_holding(n) and all(UPDATING_CLASS not in _classes(b)
                                     for b in _boxes_holding(n))
    s.settle()
    assert all(UPDATING_CLASS not in _classes(b) for b in _boxes_holding(s))
    # side by side where the width allows, as before: one wrapping row of the two boxes
    row = next(c for c in net.children if isinstance(c, widgets.HBox)
               and any(getattr(b, "children", ()) == (s,) for b in c.children))
    assert [b.children for b in row.children] == [(s,), (n,)]
    assert row.layout.flex_flow == "row wrap"
