"""exceedance.csv in a run folder, and the critical loads of sites.toml per receptor."""
import numpy as np
import pandas as pd
import pytest

from workbench.analysis.exceedance import EXCEEDANCE_COLUMNS, acidity_exceedance
from workbench.errors import InputError
from workbench.io import read_sites

from tiny_inputs import alpha_site


def test_exceedance_csv_columns_and_values(analysis_run):
    out, result, study = analysis_run
    t = pd.read_csv(out / "exceedance.csv", keep_default_na=False, na_values=[""])
    assert list(t.columns[:len(EXCEEDANCE_COLUMNS)]) == list(EXCEEDANCE_COLUMNS)
    assert set(t["period"].astype(str)) == {"2020", "2021", "span"}
    # the deposition is the budget's S and N totals in eq/ha/yr
    b = pd.read_csv(out / "budget.csv")
    tot = b[(b["pathway"] == "total") & (b["species"] == "all")]
    row = t[(t["site"] == "ridge") & (t["receptor"] == "conifer_forest") & (t["period"] == "2021")].iloc[0]
    n = tot[(tot["site"] == "ridge") & (tot["receptor"] == "conifer_forest")
            & (tot["period"].astype(str) == "2021") & (tot["element"] == "N")]["flux_eq_ha_yr"].item()
    assert row["n_dep_eq_ha_yr"] == pytest.approx(n, rel=1e-9)
    ex = acidity_exceedance(row["s_dep_eq_ha_yr"], row["n_dep_eq_ha_yr"], 950.0, 357.0, 1420.0)
    assert row["ex_acidity_eq_ha_yr"] == pytest.approx(float(ex.exceedance), rel=1e-9)
    assert row["ex_nutrient_n_eq_ha_yr"] == pytest.approx(max(n - 714.0, 0.0), rel=1e-9)
    assert row["status"] == "complete"


def test_partial_total_gives_flagged_exceedance(analysis_run):
    out, _, _ = analysis_run
    t = pd.read_csv(out / "exceedance.csv", keep_default_na=False)
    mere = t[t["site"] == "mere"]
    assert len(mere) and (mere["status"] == "flagged").all()
    assert mere["note"].str.contains("total partial").all()


def test_receptor_table_takes_precedence(analysis_run):
    out, _, study = analysis_run
    site = study.catalogue()["ridge"]
    assert site.critical_loads_for("moorland")["cl_max_s"] == 600.0
    assert site.critical_loads_for("grass")["cl_max_s"] == 950.0
    t = pd.read_csv(out / "exceedance.csv", keep_default_na=False)
    moor = t[(t["site"] == "ridge") & (t["receptor"] == "moorland")]
    # its own loads: no note on borrowed loads (a note on flagged totals may stand)
    assert (moor["cl_max_s_eq_ha_yr"] == 600.0).all()
    assert not moor["note"].str.contains("given for").any()
    grass = t[(t["site"] == "ridge") & (t["receptor"] == "grass")]
    assert grass["note"].str.contains("given for conifer_forest").all()


SITE = alpha_site("moorland") + """
[site.critical_loads]
cl_max_s = 900.0
cl_min_n = 300.0
cl_max_n = 1500.0
"""


@pytest.mark.parametrize("table, line, message", [
    ("[site.critical_loads.moorland]\ncl_max_n = 200.0\n", 20,
     "impossible critical load function in [site.critical_loads.moorland]: cl_max_n below "
     "cl_min_n: got '200.0', expected cl_max_n >= cl_min_n = 300 eq/ha/yr"),
    ("[site.critical_loads.wetland]\ncl_max_n = 2000.0\n", 19,
     "critical loads for a receptor the site does not have: got 'wetland', expected one of "
     "the site's surfaces: grass, moorland"),
    ("[site.critical_loads.moorland]\ncl_maxn = 2000.0\n", 20, "unknown critical-load key"),
    ("[site.critical_loads.moorland]\ncl_nut_n = -1.0\n", 20, "bad critical load in"),
])
def test_bad_receptor_critical_loads(tmp_path, table, line, message):
    p = tmp_path / "sites.toml"
    p.write_text(SITE + "\n" + table, encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_sites(p)
    assert message in str(exc.value)
    assert f"line {line}" in str(exc.value) and "sites.toml" in str(exc.value)


def test_impossible_site_function_is_refused(tmp_path):
    p = tmp_path / "sites.toml"
    p.write_text(SITE.replace("cl_max_n = 1500.0", "cl_max_n = 100.0"), encoding="utf-8")
    with pytest.raises(InputError, match=r"line 17, column 'cl_max_n': impossible critical load"):
        read_sites(p)


def test_receptor_tables_read(tmp_path):
    p = tmp_path / "sites.toml"
    p.write_text(SITE + "\n[site.critical_loads.moorland]\ncl_nut_n = 400.0\n", encoding="utf-8")
    s = read_sites(p)["alpha"]
    assert s.critical_loads == {"cl_max_s": 900.0, "cl_min_n": 300.0, "cl_max_n": 1500.0}
    assert s.critical_loads_for("moorland") == {**s.critical_loads, "cl_nut_n": 400.0}
    assert np.isnan(s.critical_loads_for("grass").get("cl_nut_n", np.nan))
