"""Sites side by side on a common receptor surface (common_surface.csv).

Checks by construction (common practice): wet deposition does not depend on the
surface, so a site's wet totals on the common surface equal those on its own land use;
a site that already has the common surface as a receptor gets the same numbers as in
the run itself.
"""
import warnings

import numpy as np
import pandas as pd
import pytest

from workbench.analysis.handover import COMMON_TOTALS, common_surface_table


@pytest.fixture(scope="module")
def run(analysis_scenario):
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc = load_scenario(analysis_scenario)
    study = Study.from_scenario(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                        sc.fixed_velocity, "year")
        common = common_surface_table(res, study, "grass")
    return study, res, common


def _rows(table, site, receptor, pathway):
    t = table[(table["site"] == site) & (table["receptor"] == receptor)
              & (table["pathway"] == pathway) & (table["species"] == "all")]
    return t.pivot_table(index="period", columns="element", values="flux_kg_ha_yr",
                         aggfunc="first", dropna=False)


def test_every_site_on_the_common_surface(run):
    study, res, common = run
    cat = study.catalogue()
    assert set(common["site"]) == set(cat.ids)                     # nothing left out
    assert (common["receptor"] == "grass").all()
    assert dict(zip(common["site"], common["own_land_use"])) == {s.id: s.land_use for s in cat}
    assert set(common["period"]) == set(res.table["period"].astype(str))
    for name in COMMON_TOTALS:
        assert f"{name}_kg_ha_yr" in common


def test_a_site_with_the_surface_gets_the_run_numbers(run):
    _, res, common = run
    c = common[common["site"] == "ridge"].set_index("period")
    for pathway in ("wet", "dry", "total"):
        ref = _rows(res.table, "ridge", "grass", pathway)
        for el in ("S", "N"):
            np.testing.assert_allclose(c[f"{el}_{pathway}_kg_ha_yr"].reindex(ref.index),
                                       ref[el], rtol=1e-12)


def test_wet_deposition_does_not_depend_on_the_surface(run):
    _, res, common = run
    c = common[common["site"] == "mere"].set_index("period")     # mere has no grass receptor
    ref = _rows(res.table, "mere", "wetland", "wet")
    assert np.isfinite(ref["S"]).any()
    for el in ("S", "N"):
        np.testing.assert_allclose(c[f"{el}_wet_kg_ha_yr"].reindex(ref.index), ref[el], rtol=1e-12)
    dry_own = _rows(res.table, "mere", "wetland", "dry")["S"]
    assert not np.allclose(c["S_dry_kg_ha_yr"].reindex(dry_own.index), dry_own, equal_nan=True)


def test_unknown_receptor_is_refused(run):
    study, res, _ = run
    with pytest.raises(ValueError, match="not a land-use class"):
        common_surface_table(res, study, "lawn")


def test_scenario_key_is_checked_and_writes_the_table(analysis_scenario, tmp_path):
    from workbench.cli import run_scenario
    from workbench.errors import ScenarioError
    from workbench.scenario import load_scenario
    text = analysis_scenario.read_text()
    bad = analysis_scenario.with_name("compare_bad.toml")
    bad.write_text(text + '\n[compare]\ncommon_receptor = "gras"\n')
    with pytest.raises(ScenarioError, match="grass"):
        load_scenario(bad)
    good = analysis_scenario.with_name("compare_good.toml")
    good.write_text(text + '\n[compare]\ncommon_receptor = "moorland"\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        written, _, _ = run_scenario(good, tmp_path / "out", quiet=True)
    t = pd.read_csv(written["common_surface.csv"])
    assert (t["receptor"] == "moorland").all() and {"ridge", "mere"} <= set(t["site"])


def test_trends_serial_correction_key_is_checked_and_adds_the_columns(analysis_scenario,
                                                                      tmp_path):
    """`[trends] serial_correction = "hamed_rao"` reaches trends.csv (the Hamed and Rao
    1998 columns, checked against pymannkendall in tests/analysis/test_trend_hamed_rao.py);
    a misspelt value is one located message; without the key the columns are absent."""
    from workbench.cli import run_scenario
    from workbench.errors import ScenarioError
    from workbench.scenario import load_scenario
    text = analysis_scenario.read_text()
    bad = analysis_scenario.with_name("trends_bad.toml")
    bad.write_text(text + '\n[trends]\nserial_correction = "hamed-rao"\n')
    with pytest.raises(ScenarioError, match="hamed_rao") as err:
        load_scenario(bad)
    assert "trends.serial_correction" in str(err.value) and "trends_bad.toml" in str(err.value)
    good = analysis_scenario.with_name("trends_good.toml")
    good.write_text(text + '\n[trends]\nserial_correction = "hamed_rao"\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        written, _, _ = run_scenario(good, tmp_path / "out", quiet=True)
    t = pd.read_csv(written["trends.csv"])
    cols = ["hamed_rao_factor", "var_s_hamed_rao", "z_hamed_rao", "p_value_hamed_rao"]
    assert set(cols) <= set(t.columns)
    annual = t[t["series"] == "annual"]
    assert len(annual) and t.loc[t["series"] != "annual", cols].isna().all().all()
    # two years (2020-2021) per series: fewer than 3 values, no corrected test (the
    # documented rule); the computation itself is checked in test_trend_hamed_rao.py
    assert (annual["n_years"] < 3).all() and annual[cols].isna().all().all()
    plain = pd.read_csv(run_scenario(analysis_scenario, tmp_path / "plain", quiet=True)[0]
                        ["trends.csv"])
    assert not set(cols) & set(plain.columns)
    assert load_scenario(analysis_scenario).data["trends"]["serial_correction"] is None
