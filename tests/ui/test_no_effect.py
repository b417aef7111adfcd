"""A control that leaves every total as it was says why (seen on the demo's mere, a bulk
collector without NO2: the particle sliders and the fixed Vd of NO2 moved nothing and
the page said only '+0.0 %')."""
import warnings

import pytest


@pytest.fixture(scope="module")
def mere_app(two_sites_2021):
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(Session.open(two_sites_2021), site="mere", years=(2021, 2021))


def test_particles_at_a_bulk_collector(mere_app):
    mere_app.controls["particles.fine_mmd"].value = 0.8
    assert "no effect on the totals" in mere_app.change_w.value
    assert "a bulk collector" in mere_app.change_w.value


def test_fixed_vd_of_a_species_without_data(mere_app):
    mere_app.controls["fixed_velocity.NO2"].value = 0.3
    assert "(no NO2 concentrations here)" in mere_app.change_w.value


def test_a_control_that_acts_says_nothing_more(mere_app):
    mere_app.controls["fixed_velocity.SO2"].value = 0.9
    assert "no effect" not in mere_app.change_w.value and "S total" in mere_app.change_w.value


def test_sweep_of_a_choice_shows_its_labels(session):
    """The sweep of a drop-down assumption is drawn with the labels of the drop-down
    ('net: deposition - emission'), not the scenario's values ('bidirectional')."""
    from workbench.ui.apps_more import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SensitivityExplorer(session, site="ridge", years=(2021, 2021),
                                  key="dry.nh3_treatment")
    xs = {x for d in app.fig.data for x in (list(d.x) if d.x is not None else [])}
    assert {"deposition only", "net: deposition - emission"} <= xs
    assert "bidirectional" not in xs and set(app.table["value"]) == {"deposition_only",
                                                                      "bidirectional"}
    assert "Baseline: deposition only (star)." == app.note_w.value
