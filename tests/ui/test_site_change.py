"""A site change in the site explorer: what it computes and that it computes.

Seen in the browser (JupyterLab, the demo notebook): after "roughness length z0 of the
site" was set at ridge, choosing another site put "unknown site id in a what-if
override: got 'ridge', expected one of fell" under the buttons and every later change
computed nothing; a scenario with a ``[sites.<id>]`` table stopped the explorer, the
critical-loads range and the Sobol analysis of every other site the same way (the
app's study of one site was given the other sites' overrides).
"""
import dataclasses
import warnings
from collections import Counter

import numpy as np
import pytest

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


def _counts(graph, before):
    return {k: v - before[k] for k, v in graph.counts.items() if v - before[k]}


@pytest.fixture(scope="module")
def two_site_session(two_sites_2021):
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return Session.open(two_sites_2021)


@pytest.fixture(scope="module")
def ridge_table_scenario(tmp_path_factory):
    """Two demo sites in 2021 and a ``[sites.ridge]`` table in the scenario."""
    from ui.demo_subset import write_demo_subset
    sc = write_demo_subset(tmp_path_factory.mktemp("ridge_table"), ("ridge", "mere"), 2021, 2021)
    sc.write_text(sc.read_text(encoding="utf-8") + "\n[sites.ridge]\nroughness_length_m = 0.9\n",
                  encoding="utf-8")
    return sc


def test_a_site_set_at_one_site_does_not_stop_the_next(two_site_session):
    from workbench.ui.apps import SiteExplorer
    app = SiteExplorer(two_site_session, site="ridge", years=(2021, 2021))
    app.controls["site.roughness_length_m"].value = 0.5
    ridge_total = app._current_totals()["value"].copy()
    app.site_w.value = "mere"                       # raised InputError on the old code
    assert app.message_w.value == ""
    assert list(app.result.years["site"].values) == ["mere"]
    assert np.isfinite(app._current_totals()["value"]).any()
    assert app.controls["site.roughness_length_m"].value is None    # mere: none set
    # back at ridge its z0 is still set and gives the totals it gave
    app.site_w.value = "ridge"
    assert app.controls["site.roughness_length_m"].value == 0.5
    np.testing.assert_array_equal(app._current_totals()["value"], ridge_total)
    app.reset()


def test_a_site_change_runs_the_site_once(two_sites_2021):
    """One run of the new site: one ``app_run``, its budget once per resolution shown
    (the monthly tab's months and the bars' years), none twice.  (Counted through the
    stage graph; this held on the old code too: it guards against a second observer.)"""
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.session import Session
    session = Session.open(two_sites_2021)          # its own: nothing of mere cached
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    graph = session.graph
    before = Counter(graph.counts)
    app.site_w.value = "mere"
    done = _counts(graph, before)
    assert done["app_run"] == 1 and done["site_study"] == 1, done
    assert done["budget"] == 2 and done["screen"] == 1, done        # months and years
    before = Counter(graph.counts)
    app.site_w.value = "ridge"      # cached: no run at all
    assert _counts(graph, before) == {}, _counts(graph, before)


def test_a_scenario_site_table_leaves_the_other_sites_open(ridge_table_scenario):
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        session = Session.open(ridge_table_scenario)
        app = SiteExplorer(session, site="mere", years=(2021, 2021))   # raised
        assert np.isfinite(app._current_totals()["value"]).any()
        app.site_w.value = "ridge"
        assert app.controls["site.roughness_length_m"].value == 0.9
        cl = CriticalLoadsExplorer(session, site="mere", years=(2021, 2021))
        cl.unc_options = dataclasses.replace(cl.unc_options, draws=20)
        cl.range_w.value = True                                         # raised
        assert cl.total_draws() is not None
