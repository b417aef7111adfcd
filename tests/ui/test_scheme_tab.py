"""The "gas schemes" tab of the site explorer: both published gas schemes side by side.

Expected numbers come from two fresh ``Study.run`` calls (one per scheme) on the app's
inputs, not from the tab's code path; kg of S or N from moles with the molar masses of
``periodictable``; a seasonal mean Vd from the hourly velocities of the fresh run
(seasons DJF/MAM/JJA/SON by calendar month, common practice).
"""
import dataclasses

import numpy as np
import periodictable
import pytest

from workbench.pipeline import Study
from workbench.ui.apps import TABS, SiteExplorer

#: kg ha-1 per (mol m-2 x g mol-1): 1e-3 kg/g x 1e4 m2/ha.
KG_HA_PER_G_M2 = 10.0
MOLAR = {"S": periodictable.S.mass, "N": periodictable.N.mass}
START, END = "2021-01-01", "2022-01-01"
pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


@pytest.fixture()
def app(session):
    a = SiteExplorer(session, site="ridge", years=(2021, 2021))
    yield a
    a.tabs.selected_index = 0
    a.reset()


def fresh_runs(app, dry):
    """The budget of the receptor shown under each scheme, from a new study."""
    st = Study(app.study.inputs, app.study.site_overrides)
    rec = app.receptor_w.value
    out = {}
    for scheme in ("wesely1989", "zhang2003"):
        opts = dataclasses.replace(dry, gas_scheme=scheme)
        out[scheme] = st.run(app.settings.wet, opts, app.settings.budget,
                             dict(app.settings.fixed_velocity), "year", START, END,
                             overrides=app.settings.overrides, receptors=[rec])
    return out


def dry_kg(res, element, rec):
    """Dry deposition of S or N over the year [kg ha-1 yr-1]."""
    y = res.years.sel(site="ridge", receptor=rec)
    names = y["total"].values.astype(str)
    i = list(names).index(f"{element}_dry")
    mol = float(y["total_deposition"].values[0, i]) * float(y["annual_factor"].values[0])
    return mol * MOLAR[element] * KG_HA_PER_G_M2


def seasonal_mean_cm_s(res, gas, rec, months):
    v = res.velocities[f"vd_{gas}"].sel(site="ridge", receptor=rec)
    t = v["time"].values
    keep = (t > np.datetime64(START)) & (t <= np.datetime64(END)) \
        & np.isin(v["time"].dt.month.values, months)
    return float(np.nanmean(v.values[keep])) * 100.0


def _trace(app, scheme, season_axis="x3"):
    """The bars of one scheme in one season's panel (x3: the third panel, JJA)."""
    return next(d for d in app.schemes.figs["vd"].data
                if d.name == scheme and (d.xaxis or "x") == season_axis)


def test_the_tab_is_computed_only_when_opened_and_draws_both_schemes(app):
    rec = app.receptor_w.value
    assert "gas schemes" in TABS
    before = app.study.counts["velocities"]
    # the tab is closed; a rule no other test of the session's study runs
    app.controls["dry.wetness_rule"].value = "inferred"
    assert app.study.counts["velocities"] == before + 1       # the chosen scheme only
    assert len(app.schemes.figs["vd"].data) == 0 and app.schemes.runs == {}
    app.controls["dry.wetness_rule"].value = "met"
    app.tabs.selected_index = TABS.index("gas schemes")
    assert {d.name for d in app.schemes.figs["vd"].data} == {"wesely1989", "zhang2003"}
    assert len(app.schemes.figs["vd"].data) == 4 * 2          # four seasons, two schemes
    fresh = fresh_runs(app, app.settings.dry)
    for scheme in ("wesely1989", "zhang2003"):
        bars = _trace(app, scheme)
        so2 = bars.x[list(bars.y).index("SO2")]   # horizontal bars
        assert so2 == pytest.approx(seasonal_mean_cm_s(fresh[scheme], "SO2", rec, [6, 7, 8]),
                                    rel=1e-9)
    # the two schemes differ: the figure shows two sets of numbers, not one twice
    assert _trace(app, "wesely1989").x != _trace(app, "zhang2003").x
    diff = app.schemes.figs["budget"].data[0]
    assert "N dry" in diff.y and "dry NH3" in diff.y


def test_the_sentence_names_the_difference_of_two_runs(app):
    app.tabs.selected_index = TABS.index("gas schemes")
    rec = app.receptor_w.value
    fresh = fresh_runs(app, app.settings.dry)
    sentence = app.schemes.sentence_w.value
    for el, lead in (("N", "Dry N differs by"), ("S", "dry S by")):
        a, b = (dry_kg(fresh[s], el, rec) for s in ("wesely1989", "zhang2003"))
        assert a > 0
        pct = abs(100 * (b - a) / a)          # whole from 1 %, 2 significant digits below
        assert f"{lead} {pct:.0f} %" in sentence if pct >= 1 else f"{lead} {pct:.2g} %" in sentence
        assert f"{b - a:+.3g} kg {el} ha-1 yr-1" in sentence
        row = app.schemes.table.loc[f"{el} dry"]
        assert row["difference"] == pytest.approx(b - a, rel=1e-9)
    assert "between the two published gas schemes" in sentence
    bar = dict(zip(app.schemes.figs["budget"].data[0].y, app.schemes.figs["budget"].data[0].x))
    assert bar["N dry"] == pytest.approx(app.schemes.table.loc["N dry", "difference"])


def test_a_dry_option_updates_the_open_tab(app):
    app.tabs.selected_index = TABS.index("gas schemes")
    rec = app.receptor_w.value
    y_before = list(_trace(app, "zhang2003").x)
    sentence_before = app.schemes.sentence_w.value
    app.controls["dry.wetness_rule"].value = "always_wet"
    y_after = list(_trace(app, "zhang2003").x)
    assert y_after != y_before
    fresh = fresh_runs(app, app.settings.dry)
    assert app.settings.dry.wetness_rule == "always_wet"
    so2 = y_after[list(_trace(app, "zhang2003").y).index("SO2")]
    assert so2 == pytest.approx(seasonal_mean_cm_s(fresh["zhang2003"], "SO2", rec, [6, 7, 8]),
                                rel=1e-9)
    a, b = (dry_kg(fresh[s], "N", rec) for s in ("wesely1989", "zhang2003"))
    assert f"Dry N differs by {abs(100 * (b - a) / a):.0f} %" in app.schemes.sentence_w.value
    assert app.schemes.sentence_w.value != sentence_before
    app.unit_w.value = "eq/ha/yr"                              # a view change redraws it
    assert "eq ha-1 yr-1" in app.schemes.sentence_w.value
    app.unit_w.value = "kg/ha/yr"


def test_fixed_velocities_are_named_beside_the_spread(app):
    """A fixed Vd is the same under both schemes: the sentence says which gases still
    compare them (with every gas fixed, "differs by 0 %" alone read as agreement)."""
    app.tabs.selected_index = TABS.index("gas schemes")
    app.controls["fixed_velocity.SO2"].value = 0.5
    text = app.schemes.sentence_w.value
    assert "The Vd of SO2 is fixed" in text and "only " in text and "NO2" in text
    for g in ("HNO3", "NH3", "NO2"):
        app.controls[f"fixed_velocity.{g}"].value = 0.5
    assert "no gas compares the schemes" in app.schemes.sentence_w.value
    for g in ("SO2", "HNO3", "NH3", "NO2"):
        app.controls[f"fixed_velocity.{g}"].value = None
    assert "fixed" not in app.schemes.sentence_w.value


def test_export_writes_the_tab_figures_once_drawn_for_the_state_shown(app, tmp_path):
    """"Export figures" of the explorer: the gas-schemes tab's two figures are written
    when the tab has been drawn for the state on screen, and left out (the message says
    why) before it is opened or once it shows an earlier state."""
    control = app.figure_export
    control.format_w.value = "html"
    control._folder = lambda: tmp_path / "before"
    before = control.export()
    assert not any("gas-schemes" in p.name for p in before)
    assert "once that tab has been opened" in control.message_w.value
    app.tabs.selected_index = TABS.index("gas schemes")
    control._folder = lambda: tmp_path / "open"
    after = control.export()
    names = {p.name for p in after}
    stem = f"site-explorer-ridge-{app.receptor_w.value.replace('_', '-')}-2021-gas-schemes"
    assert {f"{stem}-vd.html", f"{stem}-budget.html"} <= names
    assert len(after) == len(before) + 2 and "Not written" not in control.message_w.value
    vd = (tmp_path / "open" / f"{stem}-vd.html").read_text(encoding="utf-8")
    assert "wesely1989" in vd and "zhang2003" in vd          # both schemes' bars
    budget = (tmp_path / "open" / f"{stem}-budget.html").read_text(encoding="utf-8")
    assert "dry NH3" in budget
    # another unit with the tab closed: the tab's figures show the earlier state
    app.tabs.selected_index = 0
    app.unit_w.value = "eq/ha/yr"
    control._folder = lambda: tmp_path / "stale"
    stale = control.export()
    assert not any("gas-schemes" in p.name for p in stale)
    assert "earlier state" in control.message_w.value
    app.tabs.selected_index = TABS.index("gas schemes")          # redrawn when opened
    control._folder = lambda: tmp_path / "again"
    assert sum("gas-schemes" in p.name for p in control.export()) == 2
