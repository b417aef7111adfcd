"""The line a reopened notebook shows in place of an app names what the app showed
when the notebook was saved, not what it first drew.

Seen in JupyterLab + chromium: the critical-loads app opened on ridge 2023, moved to
2018 with the year control, saved, closed and opened again read "Critical loads and
what-if cuts · ridge · conifer_forest · 2023: an interactive app..." over the saved
notebook.  No browser here: the display messages of IPython's shell are caught, as
JupyterLab receives them (an ``update_display_data`` replaces the output of the same
display id: Jupyter messaging protocol 5.x, "Update Display Data").
"""
import warnings

import pytest


@pytest.fixture(scope="module")
def app(ridge_2021):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return CriticalLoadsExplorer(Session.open(ridge_2021), site="ridge")


def _caught(action):
    from IPython.core.interactiveshell import InteractiveShell
    shell = InteractiveShell.instance()
    shown = []
    pub = shell.display_pub
    old = pub.publish
    pub.publish = lambda data, metadata=None, **kw: shown.append((data, kw))
    try:
        action()
    finally:
        pub.publish = old
    return shown


def test_the_hint_follows_the_year_and_the_site(app):
    from IPython.core.interactiveshell import InteractiveShell
    from IPython.display import display

    from workbench.ui.saved_hint import HINT_CLASS
    try:
        shown = _caught(lambda: display(app))
        assert len(shown) == 2
        hint, kw = shown[1]
        assert HINT_CLASS in hint["text/html"] and "· 2021:" in hint["text/html"]
        display_id = kw["transient"]["display_id"]
        years = list(app.year_w.options)
        assert "2020" in years and app.year_w.value == "2021"

        def change_year():
            app.year_w.value = "2020"
        updates = _caught(change_year)
        assert updates, "no update of the hint"
        data, kw = updates[-1]
        assert kw.get("update") is True and kw["transient"]["display_id"] == display_id
        assert "· 2020:" in data["text/html"] and "2021" not in data["text/html"]
        assert data["text/plain"] == ""            # a plain viewer shows the app's line once
        import html
        assert html.escape(app.saved_text()) in data["text/html"]
        # no message where what the app shows stays the same
        assert _caught(lambda: app._renew_saved_hints()) == []
    finally:
        app.year_w.value = "2021"
        InteractiveShell.clear_instance()
