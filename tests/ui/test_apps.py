"""Widget tests of the apps: build an app, set a control, check the figure's data.

The expected numbers come from the flux modules called directly (wet chain, the
budget's pair bracket, a fresh study), from the definition of the deposition velocity
(F = Vd C, so the dry flux is linear in a fixed Vd; common practice), and from molar
masses of ``periodictable``.  Timings are not asserted here (see benchmarks/).
"""
import dataclasses
import warnings

import numpy as np
import periodictable
import pytest

from workbench.ui.apps import TABS, NetworkOverview, SensitivityExplorer, SiteExplorer
from workbench.ui.session import Session
from workbench.ui.summaries import mean_totals

#: kg ha-1 per (mol m-2 x g mol-1): 1e-3 kg/g x 1e4 m2/ha.
KG_HA_PER_G_M2 = 10.0
pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")


@pytest.fixture()
def app(session):
    a = SiteExplorer(session, site="ridge", years=(2021, 2021))
    yield a
    a.reset()


def _bar(app, name):
    return next(t for t in app.figs["budget"].data if t.name == name)


def _y(app, name):
    return _bar(app, name).y[0]


def test_sea_salt_basis_gives_the_wet_chain_total_sulfate(app):
    """Total-sulfate basis: the wet SO4 bar is dep_SO4 of the wet chain, in kg S/ha."""
    from workbench.wet import screen, wet_deposition
    st = app.study
    before = _y(app, "wet SO4")
    app.controls["budget.sulfate_basis"].value = "total"
    wet_opt = app.settings.wet
    scr = screen(st.inputs.precipitation, wet_opt, met=st.inputs.met)
    periods = st.periods("year", "2021-01-01", "2022-01-01")
    wd = wet_deposition(scr, periods, wet_opt, met=st.inputs.met)
    expected = float(wd["dep_SO4"].sel(site="ridge").values[0]) * periodictable.S.mass * KG_HA_PER_G_M2
    assert _y(app, "wet SO4") == pytest.approx(expected, rel=1e-9)
    nss = float(wd["dep_nssSO4"].sel(site="ridge").values[0]) * periodictable.S.mass * KG_HA_PER_G_M2
    assert before == pytest.approx(nss, rel=1e-9) and before < expected
    assert "S total" in app.change_w.value and "%" in app.change_w.value


def test_wet_option_change_never_recomputes_velocities(app):
    counts = dict(app.study.counts)
    app.controls["wet.min_gauge_fraction"].value = 0.37      # values no other test uses
    app.controls["wet.min_coverage_fraction"].value = 0.41
    assert app.study.counts["velocities"] == counts["velocities"]
    # completeness criteria act on periods only: the samples are not screened again
    assert app.study.counts["screened"] == counts["screened"]
    assert app.study.counts["wet"] > counts["wet"]
    app.controls["wet.detection_limit"].value = "zero"       # a QA option: screened again
    assert app.study.counts["screened"] == counts["screened"] + 1
    assert app.study.counts["velocities"] == counts["velocities"]
    app.controls["wet.detection_limit"].value = "half"


def test_view_changes_do_not_recompute(app):
    counts = dict(app.study.counts)
    app.unit_w.value = "eq/ha/yr"
    assert app.study.counts == counts
    app.unit_w.value = "kg/ha/yr"
    assert app.study.counts == counts


def test_a_new_receptor_is_computed_once_and_the_wet_chain_not_at_all(app):
    """The explorer computes the receptor it shows: another receptor is computed on
    first view (its velocities; the screening and the wet chain are reused), and
    coming back to one seen before computes nothing."""
    app.controls["dry.wetness_rule"].value = "always_dry"   # settings no other test runs
    first = app.receptor_w.value
    other = next(r for r in app.receptor_w.options if r != first)
    counts = dict(app.study.counts)
    app.receptor_w.value = other
    assert list(app.result.years["receptor"].values) == [other]
    after = dict(app.study.counts)
    assert after["screened"] == counts["screened"] and after["wet"] == counts["wet"]
    assert after["velocities"] == counts["velocities"] + 1
    app.receptor_w.value = first
    app.receptor_w.value = other
    assert app.study.counts["velocities"] == after["velocities"]
    # the figure shows the receptor's numbers from the budget
    bars = {t.name: t for t in app.figs["budget"].data if t.type == "bar"}
    total = sum(y for t in bars.values() for y in t.y if y is not None and t.legendgroup == "S")
    t = mean_totals(app.result.years, app.site, other, None, app.unit_w.value)
    assert total == pytest.approx(t.loc["S_total", "value"], rel=1e-9)
    app.receptor_w.value = first
    app.reset()


def test_fixed_velocity_what_if_is_linear_and_equals_c_times_vd(app):
    """Fixed Vd v [cm/s]: dry SO2 = v/100 x sum of C x overlap with the year (F = Vd C)."""
    app.controls["fixed_velocity.SO2"].value = 1.0
    y1 = _y(app, "dry SO2")
    app.controls["fixed_velocity.SO2"].value = 2.0
    assert _y(app, "dry SO2") == pytest.approx(2 * y1, rel=1e-9)
    air = app.study.inputs.air
    t0, t1 = np.datetime64("2021-01-01"), np.datetime64("2022-01-01")
    overlap_s = np.clip((np.minimum(air["end"].values, t1) - np.maximum(air["start"].values, t0))
                        / np.timedelta64(1, "s"), 0, None)
    mol_m2 = 0.01 * np.nansum(air["SO2"].values * overlap_s)     # 1 cm/s
    assert y1 == pytest.approx(mol_m2 * periodictable.S.mass * KG_HA_PER_G_M2, rel=1e-6)
    app.controls["fixed_velocity.SO2"].value = None
    assert app.settings.fixed_velocity == {}


def test_pair_split_all_gas_equals_the_reported_bracket(app):
    """All nitrate as HNO3: the dry HNO3 bar is the budget's all-gas bracket."""
    bracket = float(app.result.years["bracket_nitrate_all_gas"].sel(
        site="ridge", receptor="conifer_forest").values[0])
    app.controls["budget.pair_split"].value = "all_gas"
    assert _y(app, "dry HNO3") == pytest.approx(bracket * periodictable.N.mass * KG_HA_PER_G_M2,
                                                rel=1e-9)
    assert _y(app, "dry pNO3") == pytest.approx(0.0, abs=1e-12)


def test_roughness_override_recomputes_velocities_as_the_study_does(app, session):
    counts = dict(app.study.counts)
    vd_before = list(app.figs["deposition velocity"].data[0].y)
    app.controls["site.roughness_length_m"].value = 0.3
    assert app.study.counts["velocities"] == counts["velocities"] + 1
    fresh = Session(session.study, session.scenario)
    res = fresh.run(app.settings, "ridge", 2021, 2021, "year")
    dep = res.years["deposition"].sel(site="ridge", receptor="conifer_forest",
                                      component="S/dry/SO2").values[0]
    assert _y(app, "dry SO2") == pytest.approx(dep * periodictable.S.mass * KG_HA_PER_G_M2, rel=1e-9)
    app.tabs.selected_index = 1
    assert list(app.figs["deposition velocity"].data[0].y) != vd_before


def test_excluding_failed_ion_balance_lists_the_sample_with_its_reason(session):
    """The demo's poor ion balance (ridge, April 2020; demo_data/planted_problems.json) is
    flagged by default; excluding it puts it in the table and on the QA figure."""
    from workbench.wet import screen
    app = SiteExplorer(session, site="ridge", years=(2020, 2020))
    reason = "ion balance outside acceptance"
    app.tabs.selected_index = TABS.index("excluded samples")
    n_before = app.excluded_w.value.count("<td>excluded</td>")
    assert reason in app.excluded_w.value                  # flagged, kept
    app.controls["wet.on_ion_balance_fail"].value = "exclude"
    opts = dataclasses.replace(app.session.baseline.wet, on_ion_balance_fail="exclude")
    scr = screen(app.study.inputs.precipitation, opts, met=app.study.inputs.met)
    in_2020 = (scr["end"].values > np.datetime64("2020-01-01")) & (scr["start"].values < np.datetime64("2021-01-01"))
    excluded = (scr["status"].values == "excluded") & in_2020
    by_balance = excluded & (np.char.find(scr["reasons"].values.astype(str), reason) >= 0)
    assert by_balance.sum() >= 1
    assert app.excluded_w.value.count("<td>excluded</td>") == int(excluded.sum()) > n_before
    app.tabs.selected_index = 3
    excl = next(t for t in app.figs["ion balance"].data if t.name.startswith("excluded"))
    plotted = excluded & np.isfinite(scr["cation_sum"].values) & np.isfinite(scr["anion_sum"].values)
    assert excl.name == f"excluded ({int(plotted.sum())})" and plotted.sum() >= 1


def test_save_scenario_reads_back_and_export_writes_the_run_files(app, tmp_path):
    from workbench.cli import run_scenario
    from workbench.scenario import load_scenario
    app.controls["wet.detection_limit"].value = "limit"
    app.controls["fixed_velocity.NH3"].value = 0.8
    app.controls["budget.pair_split"].value = "all_particle"
    app.controls["site.roughness_length_m"].value = 0.9
    path = app.save_scenario(tmp_path / "colleague.toml")
    back = load_scenario(path)
    assert back.options["wet"].detection_limit == "limit"
    assert back.options["budget"].pair_split == "all_particle"
    assert back.fixed_velocity == {"NH3": 0.8}
    assert back.data["sites"]["ridge"]["roughness_length_m"] == 0.9
    written = app.export_run(tmp_path / "run")
    from workbench.runcheck import verify_run          # no scenario file: still verified
    check = verify_run(tmp_path / "run")
    assert check.ok, check.text()
    assert "scenario: no file recorded (a run exported from the apps" in check.text()
    against = verify_run(tmp_path / "run", scenario=path)   # the scenario saved beside it
    assert against.ok, against.text()
    assert "compared by its options (the run records no scenario file)" in against.text()
    cli_written, cli_result, _ = run_scenario(path, tmp_path / "cli_run", quiet=True)
    assert set(written) == set(cli_written)
    import pandas as pd
    ours = pd.read_csv(written["budget.csv"])
    theirs = pd.read_csv(cli_written["budget.csv"])
    key = ["site", "receptor", "period", "element", "pathway", "species"]
    merged = ours.merge(theirs, on=key, suffixes=("", "_cli"))
    merged = merged[merged["site"] == "ridge"]
    assert len(merged) == len(ours[ours["site"] == "ridge"]) > 0
    np.testing.assert_allclose(merged["flux_kg_ha_yr"], merged["flux_kg_ha_yr_cli"], rtol=1e-9)


def test_sensitivity_explorer_marks_the_baseline_and_is_linear_in_vd(session):
    app = SensitivityExplorer(session, site="ridge", years=(2021, 2021), run=False)
    app.key_w.value = "fixed_velocity.SO2"
    app.range_w.value = (0.2, 1.0)
    app.steps_w.value = 3
    t = app.run()
    s_dry = t[t["total"] == "S_dry"].set_index("value")["rate"]
    assert list(s_dry.index) == [0.2, 0.6, 1.0]
    # S dry = SO2 (linear in its Vd) + pSO4 (unchanged): equal steps give equal rises
    assert s_dry[1.0] - s_dry[0.6] == pytest.approx(s_dry[0.6] - s_dry[0.2], rel=1e-9)
    assert "model" in app.note_w.value
    assert any(s.type == "line" for s in app.fig.layout.shapes)   # the baseline line
    app.key_w.value = "budget.sulfate_basis"
    t = app.run()
    assert set(t["value"]) == {"nss", "total"}
    star = [tr for tr in app.fig.data if tr.name == "baseline"]
    assert list(star[0].x) == ["non-sea-salt"]          # the label of the drop-down


def test_network_overview_never_ranks_a_partial_total(two_sites_2021):
    s = Session.open(two_sites_2021)
    app = NetworkOverview(s)
    t = app.network
    mere_n = t[(t["site"] == "mere") & (t["element"] == "N")].iloc[0]
    assert mere_n["status"] == "partial" and "NO2" in mere_n["missing"]
    ranked_n = app.figs["N"].data[0].y
    assert not any("mere" in y for y in ranked_n) and any("ridge" in y for y in ranked_n)
    assert "mere" in app.apart_w.value
    assert "whole span [kg/ha/yr]" in app.apart_w.value        # the unit of the values shown
    app.unit_w.value = "mmol/m2/yr"
    assert "whole span [mmol/m2/yr]" in app.apart_w.value


def test_year_range_gives_a_bar_per_year_and_the_mean_in_the_change_line(session):
    from workbench.ui.summaries import mean_totals, total_rates
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    app.years_w.value = (2020, 2021)
    total, n_total = [t for t in app.figs["budget"].data if t.name == "total"]  # S, N panels
    assert list(total.x) == list(n_total.x) == ["2020", "2021"]
    rates = total_rates(app.result.years, "ridge", "conifer_forest")
    s = rates[rates["total"] == "S_total"]["value"].to_numpy()
    assert list(total.y[:2]) == pytest.approx(list(s))
    m = mean_totals(app.result.years, "ridge", "conifer_forest")
    assert m.loc["S_total", "value"] == pytest.approx(s.mean())
    assert f"S total {s.mean():.1f} kg/ha/yr" in app.change_w.value


def test_switching_site_picks_its_receptors_and_recomputes(two_sites_2021):
    s = Session.open(two_sites_2021)
    app = SiteExplorer(s, site="ridge", years=(2021, 2021))
    app.site_w.value = "mere"
    assert list(app.receptor_w.options) == s.receptors("mere") and app.receptor_w.value == "wetland"
    assert app.figs["budget"].layout.title.text.endswith("mere · wetland · 2021")
    dep = app.result.years["deposition"].sel(site="mere", receptor="wetland", component="N/dry/NO2")
    assert not np.isfinite(float(dep.values[0]))              # no NO2 at mere: missing
    assert _y(app, "dry NO2") is None


def test_site_year_subset_gives_the_numbers_of_the_whole_study(two_sites_2021):
    """The explorer computes on one site and its years; the budget is the same as the
    whole study's (samples straddling New Year are shared, not counted whole)."""
    s = Session.open(two_sites_2021)
    res = s.run(s.baseline, "ridge", 2021, 2021, "year")
    whole = s.study.run(resolution="year", start="2021-01-01", end="2022-01-01",
                        **s.baseline.run_args())
    recs = list(res.years["receptor"].values)
    a = res.years["total_deposition"].sel(site="ridge").values
    b = whole.years["total_deposition"].sel(site="ridge", receptor=recs).values
    np.testing.assert_allclose(a, b, rtol=1e-12)


def test_saved_scenario_holds_particle_sizes_and_dry_options(session, tmp_path):
    """Particle sizes are written as [dry.particle_modes.<species>] tables and read
    back; a seasonal category and a wetness rule are written as options."""
    from workbench.scenario import load_scenario
    from workbench.ui.assumptions import apply
    st = apply(session.baseline, "ridge", {"particles.pNO3.fine_fraction": 0.2,
                                           "dry.seasonal_category": 4,
                                           "dry.wetness_rule": "always_dry"})
    path = session.save_scenario(tmp_path / "s.toml", st, 2021, 2021)
    text = path.read_text()
    assert "NOTE" not in text and "[dry.particle_modes.pNO3]" in text
    back = load_scenario(path)
    assert back.options["dry"].mode_of("pNO3").fine_fraction == 0.2
    assert back.options["dry"].mode_of("pNO3").coarse == session.baseline.dry.mode_of("pNO3").coarse
    assert back.options["dry"].seasonal_category == 4
    assert back.options["dry"].wetness_rule == "always_dry"
    assert back.data["period"]["start"] == "2021-01-01" and back.data["period"]["end"] == "2022-01-01"


def test_cautions_progress_and_units(app):
    """The app carries the report's caution (and the README's words); the progress bar
    reports the last recomputation; mmol/m2/yr is N in mmol (arithmetic from kg)."""
    import html as _html
    from pathlib import Path
    from workbench.report import CAUTION
    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text()
    for phrase in ("model-based and uncertain", "methods your authority requires"):
        assert phrase in CAUTION and phrase in readme
    assert any(_html.escape(CAUTION) in getattr(w, "value", "") for w in _walk(app))
    app.controls["budget.sulfate_basis"].value = "total"
    assert app.progress.bar.value == pytest.approx(1.0)
    kg = _y(app, "wet SO4")
    app.unit_w.value = "mmol/m2/yr"
    assert _y(app, "wet SO4") == pytest.approx(kg / (periodictable.S.mass * 1e-3 * 1e4) * 1e3, rel=1e-9)
    app.unit_w.value = "kg/ha/yr"


def _walk(w):
    yield w
    for c in getattr(w, "children", ()):
        yield from _walk(c)


def test_monthly_tab_says_weekly_samples_make_months_strict(session):
    """Under the monthly figure: one weekly sample is 25.0 % of February (672 h) against
    the 10 % that [wet] min_coverage_fraction = 0.9 lets a month miss, and the options to
    set; at 0.75 a week of any month may go (75.0 % equals the minimum) and the words go."""
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    try:
        app.tabs.selected_index = TABS.index("monthly fluxes")
        assert "one precipitation sample (the median, 168 h) is 25.0 % of the shortest " \
               "period (2021-02, 672 h)" in app.monthly_w.value
        assert "min_coverage_fraction" in app.monthly_w.value
        app.controls["wet.min_coverage_fraction"].value = 0.75
        assert "precipitation sample" not in app.monthly_w.value
    finally:
        app.reset()
