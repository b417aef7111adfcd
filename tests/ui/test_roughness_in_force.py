"""The roughness control of the site explorer starts at the z0 in force and says where
it comes from (it started at 0.01 m, the bottom of the sensitivity range: checking the
box over a 14 m conifer forest cut its z0 a hundredfold)."""
import dataclasses
import warnings

import numpy as np
import pytest

from workbench.drydep.receptors import receptor_roughness
from workbench.ui.assumptions import ASSUMPTIONS, roughness_in_force

KEY = "site.roughness_length_m"


def _engine_z0(session, settings, site):
    """z0 [m] of the site's own surface as the engine takes it (the study's catalogue
    with the settings' overrides, drydep.receptors.receptor_roughness)."""
    over = {s: {k: v for k, v in t.items() if k != "roughness_length_m"}
            for s, t in settings.overrides.items()}
    surf = session.study.catalogue(over).surfaces()
    receptors = [str(r) for r in surf["receptor"].values]
    z0, _ = receptor_roughness(surf, receptors, settings.dry)
    i = [str(s) for s in surf["site"].values].index(site)
    return float(z0[i, receptors.index(session.study.inputs.catalogue[site].land_use)])


def test_the_value_in_force_is_the_engines(session):
    st = session.baseline
    value, source = session.in_force(KEY, st, "ridge")
    assert value == pytest.approx(_engine_z0(session, st, "ridge"), rel=1e-12)
    assert source.startswith("conifer_forest: forest rule, Raupach 1994, 0.0729 x canopy "
                             "height 14 m")
    # a canopy height of the scenario's [sites.ridge] table moves it, and says so
    st2 = st.replace(overrides={"ridge": {"canopy_height_m": 20.0}})
    value2, source2 = session.in_force(KEY, st2, "ridge")
    assert value2 == pytest.approx(_engine_z0(session, st2, "ridge"), rel=1e-12)
    assert value2 == pytest.approx(value * 20 / 14)
    assert "[sites.ridge]" in source2 and "20 m" in source2
    # the scenario's [dry] roughness table for the class
    st3 = st.replace(dry=dataclasses.replace(st.dry, roughness={"conifer_forest": (0.9, None)}))
    assert session.in_force(KEY, st3, "ridge") == (0.9, "the scenario's [dry] roughness "
                                                        "for conifer_forest")
    assert _engine_z0(session, st3, "ridge") == pytest.approx(0.9)
    assert session.in_force("fixed_velocity.SO2", st, "ridge") is None


def test_a_catalogue_roughness_and_open_water():
    from workbench.drydep import DryOptions

    class Site:                           # the fields of workbench.io.sites.Site read
        id, land_use, canopy_height_m, roughness_length_m = "s1", "grass", 0.1, 0.03
    assert roughness_in_force(Site, {}, DryOptions()) == (
        0.03, "roughness_length_m of s1 in sites.toml")
    Site.roughness_length_m, Site.land_use = None, "water"
    value, source = roughness_in_force(Site, {}, DryOptions())
    assert value is None and "Charnock" in source
    Site.land_use, Site.canopy_height_m = "grass", 0.0      # the smooth floor, said
    value, source = roughness_in_force(Site, {}, DryOptions())
    assert value == 0.005 and "floor" in source


def test_the_control_starts_at_the_value_in_force(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    w = app.controls[KEY]
    z0, source = session.in_force(KEY, app.settings, "ridge")
    assert w.value is None and w._num.disabled
    assert w._num.value == float(f"{z0:.3g}")              # not 0.01; as the line says
    assert f"unset: {z0:.3g}" in w._source.value and "Raupach 1994" in w._source.value
    before = app._current_totals()["value"].to_numpy()
    w._box.value = True                   # set, at the value in force: the same totals
    assert w.value == pytest.approx(z0, rel=5e-3)
    assert app.settings.overrides["ridge"]["roughness_length_m"] == pytest.approx(z0, rel=5e-3)
    np.testing.assert_allclose(app._current_totals()["value"].to_numpy(), before, rtol=1e-3)
    w._num.value = 0.1                    # then moved: the totals follow
    assert not np.allclose(app._current_totals()["value"].to_numpy(), before, rtol=1e-3)
    app.reset()
    assert w.value is None and w._num.value == float(f"{z0:.3g}")
    assert ASSUMPTIONS[KEY].get(app.settings, "ridge") is None


def test_the_roughness_sweep_marks_the_z0_in_force(session):
    """The sensitivity explorer drew the roughness baseline as "left to the model" (a
    dotted line) although the z0 in force is known: now a star at it, with its source;
    its totals are those of the run with no roughness set."""
    from workbench.ui.apps import SensitivityExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sens = SensitivityExplorer(session, site="ridge", years=(2021, 2021), key=KEY)
    z0, source = session.in_force(KEY, session.baseline, "ridge")
    assert f"Baseline: {z0:.3g}, in force (" in sens.note_w.value
    assert "Raupach 1994" in sens.note_w.value
    at = sens.table[np.isclose(sens.table["value"].astype(float), z0)]
    unset = session.sweep(KEY, [None], session.baseline, "ridge", 2021, 2021,
                          sens.receptor_w.value, sens.unit_w.value)
    for total in ("S_total", "N_total"):
        assert at.loc[at["total"] == total, "rate"].iloc[0] == pytest.approx(
            unset.loc[unset["total"] == total, "rate"].iloc[0], rel=1e-9)
