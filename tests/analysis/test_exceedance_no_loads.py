"""A receptor without any critical load has rows in exceedance.csv saying so (it had no
row and no note: a reader of the file found nothing about it)."""
import warnings

import numpy as np
import pandas as pd
import pytest

from workbench.analysis.exceedance import EXCEEDANCE_COLUMNS, NO_CRITICAL_LOADS
from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    """The demo ridge in 2021 with its critical loads given for its conifer forest only
    (`[site.critical_loads.conifer_forest]`): moorland and grass have none."""
    from workbench.cli import run_scenario
    tmp = tmp_path_factory.mktemp("no_loads")
    scenario = write_demo_subset(tmp / "in", ("ridge",), 2021, 2021)
    sites = scenario.parent / "sites.toml"
    text = sites.read_text(encoding="utf-8")
    first = text.index("[site.critical_loads]")
    sites.write_text(text[:first] + "[site.critical_loads.conifer_forest]"
                     + text[first + len("[site.critical_loads]"):], encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        run_scenario(scenario, tmp / "out", quiet=True)
    return tmp / "out"


def test_receptor_without_loads_has_rows_saying_so(run):
    ex = pd.read_csv(run / "exceedance.csv", keep_default_na=False, na_values=[""])
    ridge = ex[ex["site"] == "ridge"]
    assert set(ridge["receptor"]) == {"conifer_forest", "moorland", "grass"}
    for rec in ("moorland", "grass"):
        rows = ridge[ridge["receptor"] == rec]
        assert set(rows["period"].astype(str)) == {"2021", "span"}
        assert (rows["status"] == "missing").all()
        assert rows["note"].str.startswith(NO_CRITICAL_LOADS).all()
        assert rows["ex_acidity_eq_ha_yr"].isna().all() and rows["ex_nutrient_n_eq_ha_yr"].isna().all()
        assert (rows["region"] == -1).all()
        assert rows[[c for c in ex.columns if c.startswith("cl_")]].isna().all().all()
        assert np.isfinite(rows["s_dep_eq_ha_yr"]).all() and np.isfinite(rows["n_dep_eq_ha_yr"]).all()
        assert not rows["note"].str.contains("given for").any()    # not the borrowed note
    forest = ridge[ridge["receptor"] == "conifer_forest"]
    assert np.isfinite(forest["ex_nutrient_n_eq_ha_yr"]).all()
    assert not forest["note"].str.contains("no critical loads").any()
    # the columns are those of every run
    assert list(ex.columns[:len(EXCEEDANCE_COLUMNS)]) == list(EXCEEDANCE_COLUMNS)
    assert list(ex.columns[len(EXCEEDANCE_COLUMNS):]) == [
        "cl_max_s_eq_ha_yr", "cl_min_n_eq_ha_yr", "cl_max_n_eq_ha_yr", "cl_nut_n_eq_ha_yr",
        "s_reduction_eq_ha_yr", "n_reduction_eq_ha_yr", "passes", "note"]


def test_report_names_the_receptor_without_loads(run):
    import html
    text = html.unescape((run / "report.html").read_text(encoding="utf-8"))
    assert "no critical loads for this receptor" in text
