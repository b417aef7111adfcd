"""Sites of an analyst's network whose record is shorter than the network's (a site
closed a year early): picking one kept the years shown, and the explorer drew a near-
zero flagged total for a year the site has no samples in (seen in the browser on the
30-site network).  The site dropdown names each site (thirty bare ids read alike)."""
import warnings

import pytest

from tiny_inputs import make_analyst_network


@pytest.fixture(scope="module")
def session(tmp_path_factory):
    from workbench.ui.session import Session
    sc = make_analyst_network(tmp_path_factory.mktemp("closed") / "in", n_sites=2, years=3,
                              imperfections={"closed": 1})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return Session.open(sc)


def test_site_years_end_with_the_record(session):
    assert session.years == (2016, 2018)
    assert session.site_years("v01") == (2016, 2018)
    assert session.site_years("v02") == (2016, 2017)       # closed one year early
    assert session.years_for("v02", (2018, 2018)) == (
        (2017, 2017), "v02 has samples in 2016-2017 only: years set to 2017")
    assert session.years_for("v02", (2016, 2018))[0] == (2016, 2017)
    assert session.years_for("v01", (2018, 2018)) == ((2018, 2018), "")


def test_site_explorer_moves_the_years_into_the_new_sites_record(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(session, site="v01", years=(2018, 2018))
        labels = dict((v, k) for k, v in app.site_w.options)
        assert labels["v01"].startswith("v01 · ") and len(labels["v01"]) > 8
        # wide enough for the longest name ("ridge · Tarnwick Ridge plantatio" was cut)
        from workbench.ui.controls import DROPDOWN_FRAME_PX, OPTION_CHAR_PX
        longest = max(len(k) for k, _ in app.site_w.options)
        assert int(app.site_w.layout.width.removesuffix("px")) >= min(
            520, DROPDOWN_FRAME_PX + OPTION_CHAR_PX * longest)
        app.site_w.value = "v02"
    assert app.years == (2017, 2017)
    assert list(app.result.years["period"].values) == ["2017"]
    assert "v02 has samples in 2016-2017 only: years set to 2017" in app.change_w.value
    # a site's default years: the last year of its own record
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        assert SiteExplorer(session, site="v02").years == (2017, 2017)


def test_sensitivity_and_sobol_move_the_years_too(session):
    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.apps import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sens = SensitivityExplorer(session, site="v01", years=(2018, 2018), run=False)
        sens.site_w.value = "v02"
        sob = SobolExplorer(session, site="v01", years=(2018, 2018), run=False)
        sob.site_w.value = "v02"
    assert sens.years_w.value == (2017, 2017) and sob.years_w.value == (2017, 2017)


def test_network_overview_names_a_listed_site_without_data(tmp_path):
    """The 30-site network lists v30 with no row anywhere: the overview drew 29 sites
    and said nothing of the 30th."""
    from workbench.ui.apps import NetworkOverview
    from workbench.ui.session import Session
    sc = make_analyst_network(tmp_path / "in", n_sites=2, years=1,
                              imperfections={"no_data": 1})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        s = Session.open(sc)
        assert s.sites == ["v01"] and s.sites_without_data() == ["v02"]
        net = NetworkOverview(s)
    assert "Not computed" in net.apart_w.value and "v02" in net.apart_w.value


def test_sensitivity_keeps_saying_the_years_moved_after_a_sweep(session):
    """With a figure drawn, a site change moved the years and said so, and the line
    was at once overwritten by "changed: press Run sweep" (seen in the browser): both
    now stand in the progress line until the next sweep."""
    from workbench.ui.apps import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sens = SensitivityExplorer(session, site="v01", years=(2018, 2018), run=False)
        sens.shown = "a drawn sweep · v01 · grass · 2018"      # as after a sweep
        sens.site_w.value = "v02"
    text = sens.progress.label.value
    assert "v02 has samples in 2016-2017 only: years set to 2017" in text
    assert "changed: press Run sweep (the figure shows a drawn sweep" in text
    with warnings.catch_warnings():                      # a later change: no stale sentence
        warnings.simplefilter("ignore", RuntimeWarning)
        sens.run()
        sens.steps_w.value = sens.steps_w.value + 1
    assert "years set to" not in sens.progress.label.value
    assert "changed: press Run sweep" in sens.progress.label.value


def test_sobol_keeps_saying_the_years_moved(session):
    """The Sobol app had the same overwrite as the sensitivity sweep."""
    from workbench.ui.app_sobol import SobolExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sob = SobolExplorer(session, site="v01", years=(2018, 2018), run=False)
        sob.shown = ("v01", "grass", (2018, 2018))               # as after an analysis
        sob.site_w.value = "v02"
    text = sob.progress.label.value
    assert "v02 has samples in 2016-2017 only: years set to 2017" in text
    assert "changed: press Run analysis (the figure shows v01 · grass · 2018)" in text


def test_critical_loads_figure_has_the_apps_template(session):
    """The critical-loads figure was drawn on plotly's grey default template, unlike the
    other apps' figures (seen in the browser)."""
    from workbench.ui.apps_analysis import CriticalLoadsExplorer
    from workbench.ui.palette import TEMPLATE
    import plotly.io as pio
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = CriticalLoadsExplorer(session)
    want = pio.templates[TEMPLATE].layout.plot_bgcolor
    assert app.fig.layout.template.layout.plot_bgcolor == want
