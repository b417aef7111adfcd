"""Every drop-down of the apps shows its value in the page.

The page draws a drop-down from its ``index``; ipywidgets keeps ``index`` in step with
``value`` through its own observer of ``value``.  An app that removed that observer
(``unobserve_all("value")``) showed an empty "year" (and, after a change of site, an
empty "receptor") in the critical-loads explorer while the figure showed a year.
"""
import warnings

import ipywidgets as widgets
import pytest


def _dropdowns(w):
    """Every selection widget under `w` (depth first)."""
    if isinstance(w, widgets.widgets.widget_selection._Selection):
        yield w
    for c in getattr(w, "children", ()) or ():
        yield from _dropdowns(c)


def _in_step(app):
    for d in _dropdowns(app):
        if d.options:
            assert d.index is not None, f"{d.description!r}: no index, the page shows nothing"
            labels = [o[1] if isinstance(o, tuple) else o for o in d.options]
            assert labels[d.index] == d.value, d.description


@pytest.fixture
def clf(two_sites_2021):
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return CriticalLoadsExplorer(Session.open(two_sites_2021), site="ridge")


def test_critical_loads_year_and_receptor_shown(clf):
    _in_step(clf)
    assert clf.year_w.index == len(clf.year_w.options) - 1
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        clf.site_w.value = "mere"
    _in_step(clf)
    assert clf.receptor_w.value == clf.receptor_w.options[clf.receptor_w.index]
    assert "mere" in clf.statement


def test_critical_loads_value_set_from_python_reaches_page_and_figure(clf):
    clf.receptor_w.value = clf.receptor_w.options[-1]
    assert clf.receptor_w.index == len(clf.receptor_w.options) - 1
    assert clf.receptor_w.options[-1] in clf.fig.layout.title.text


def test_every_app_dropdown_in_step(session, two_sites_2021):
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.apps_more import NetworkOverview, SensitivityExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        for app in (SiteExplorer(session, site="ridge", years=(2021, 2021)),
                    SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False),
                    NetworkOverview(Session.open(two_sites_2021))):
            _in_step(app)


def test_critical_loads_warns_of_a_partial_total(clf):
    """mere has no NO2 in the demo: its N total is partial, a lower bound."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        clf.site_w.value = "mere"
    assert clf.status_note.startswith("Read with care: N total partial (no NO2) in 2021")
    assert "Read with care" in clf.text_w.value
    clf.site_w.value = "ridge"
    assert "N total partial" not in clf.status_note


def test_critical_loads_exceedance_on_a_partial_total_is_bounded(clf):
    """The explorer follows the rule of exceedance.csv (analysis.exceedance.not_determined):
    on mere's partial N total an exceedance of 0 is not determined and a positive one is
    a lower bound; ridge's complete totals give plain figures."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        clf.site_w.value = "mere"
    words = clf.exceedance_words
    assert "(partial: a lower bound)" in clf.text_w.value
    for part in words.split("; "):
        assert "not determined (0 on a partial deposition" in part or " at least " in f" {part}", part
    assert " 0 eq/ha/yr" not in words
    assert "cuts needed may be larger" in clf.statement
    clf.site_w.value = "ridge"
    assert "at least" not in clf.exceedance_words
    assert "lower bound" not in clf.text_w.value
    assert "may be larger" not in clf.statement
