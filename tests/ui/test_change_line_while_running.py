"""The line of the totals' change while a control's change is computed.

Browser trial: the first option change of a session (ion balance fails -> exclude) was
read with the line still showing the opening totals, without an arrow or a "no effect"
note.  The line is set once the run is done (with the arrow and, here, the note); the
first change of a session takes longest (cold stages), and until then the page kept
the previous line as if it were the answer.  The line now says that the totals are
being recomputed from the moment the control moves.
"""
import html
import warnings

import pytest

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


@pytest.fixture()
def app(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2021, 2021))


def _lines(app):
    seen = []
    app.change_w.observe(lambda c: seen.append(html.unescape(c["new"])), "value")
    return seen


def test_first_option_change_says_it_is_computing_then_gives_the_change(app):
    opening = app.change_w.value
    assert "->" not in html.unescape(opening)
    seen = _lines(app)
    app.controls["wet.on_ion_balance_fail"].value = "exclude"
    # what the page shows between the control's move and the run's end
    assert seen[0].startswith("<i>recomputing") and seen[0] != opening
    assert "->" in seen[-1] and "recomputing" not in seen[-1]
    # 2021 at ridge: no sample fails the ion balance (the demo plants it in April 2020)
    assert "ion balance fails: no effect on the totals" in seen[-1]


def test_a_failed_run_puts_the_previous_line_back(app, monkeypatch):
    before = app.change_w.value

    def fail(*a, **k):
        raise RuntimeError("no such input")
    monkeypatch.setattr(app, "_run", fail)
    with pytest.raises(RuntimeError):
        app.controls["wet.on_dust"].value = "exclude"
    assert app.change_w.value == before
    assert "no such input" in app.message_w.value
