"""The run folder as the analyst receives it: the NetCDF files pass the CF checker, and
the same number reads the same in budget.csv, summary.csv, budget.nc and report.html.

CF check: cfchecker (the CF community's checker, PyPI ``cfchecker``) against the CF
version the files declare (``Conventions = "CF-1.8"``: CF Metadata Conventions 1.8,
cfconventions.org), with the CF standard name table that compliance-checker ships.
Errors fail; warnings are listed (``pytest -rA`` shows them).
"""
import json
import re
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.cli import main

sys.path.insert(0, str(Path(__file__).parent))
from cf_check import cf_check                       # noqa: E402
from ui.demo_subset import write_demo_subset        # noqa: E402
from test_grid import _write as grid_write, site     # noqa: E402,F401  (site: a fixture)

#: Molar masses [kg mol-1] (IUPAC standard atomic weights, abridged: S 32.06, N 14.007;
#: recalled from memory).
MOLAR = {"S": 32.06e-3, "N": 14.007e-3}


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """Two demo sites (fell: no NO2, so its N totals are partial; farm: fertilised
    crops), one year, run plain and with bidirectional NH3 and both gas schemes."""
    base = tmp_path_factory.mktemp("cf_runs")
    scen = write_demo_subset(base / "in", ("fell", "farm"), 2021, 2021)
    text = scen.read_text()
    other = scen.parent / "scenario_bd.toml"
    other.write_text(text + '\n[dry]\nnh3_treatment = "bidirectional"\n'
                     'compare_schemes = true\n' if "[dry]" not in text else None)
    out = {}
    for name, s in (("plain", scen), ("bidirectional", other)):
        out[name] = base / name
        assert main(["run", str(s), "--out", str(out[name]), "--quiet",
                     "--resolution", "month"]) == 0
    return out


@pytest.mark.parametrize("run", ["plain", "bidirectional"])
@pytest.mark.parametrize("name", ["budget.nc", "velocities.nc"])
def test_run_folder_netcdf_passes_cfchecker(runs, run, name, tmp_path):
    """No CF error (CF 1.8 sections 2-8 as coded in cfchecker); warnings listed."""
    res = cf_check(runs[run] / name, tmp_path)
    for w in res["warnings"]:
        print(f"{name} ({run}) CF warning: {w}")
    assert not res["errors"], res["errors"]
    # the only warnings left: text labels as coordinate variables (CF 1.8 section 5
    # wants numeric ones; the labels are what a reader selects by)
    assert all("(5): Possible incorrect declaration of a coordinate" in w
               for w in res["warnings"]), res["warnings"]


def test_grid_nc_passes_cfchecker(site, tmp_path):
    """`workbench grid` on the grid of tests/test_grid.py: grid.nc has no CF error
    (CF 1.8, cfchecker); warnings listed."""
    grid_write(tmp_path / "in", site)
    (tmp_path / "in" / "scenario.toml").write_text(
        '[grid]\nmet = "met.nc"\nair = "air.nc"\nland_use = "land_use.nc"\n'
        '[period]\nresolution = "month"\n')
    assert main(["grid", str(tmp_path / "in" / "scenario.toml"), "--out",
                 str(tmp_path / "out"), "--quiet", "--block", "2"]) == 0
    res = cf_check(tmp_path / "out" / "grid.nc", tmp_path)
    for w in res["warnings"]:
        print(f"grid.nc CF warning: {w}")
    assert not res["errors"], res["errors"]


def test_every_unit_is_udunits_and_names_its_basis(runs):
    """Every data variable of budget.nc has a long_name; units are UDUNITS (cf_units,
    the UDUNITS-2 binding, parses them) with the dimension the name promises: `_kg_ha`
    a mass per area, `_eq_ha` an amount per area (moles of charge)."""
    cfu = pytest.importorskip("cfunits")
    ds = xr.open_dataset(runs["plain"] / "budget.nc")
    for name, v in ds.variables.items():
        assert v.attrs.get("long_name"), name
        if "units" not in v.attrs:
            continue
        u = cfu.Units(v.attrs["units"])
        assert u.isvalid, (name, v.attrs["units"])
        if name.endswith("_kg_ha"):
            assert u.equivalent(cfu.Units("kg m-2")), (name, v.attrs["units"])
            assert re.search(r"\[mass of [SN]\]", v.attrs["long_name"]), name
        if name.endswith("_eq_ha"):
            assert u.equivalent(cfu.Units("mol m-2")), (name, v.attrs["units"])


def _keyed(frame, el=None):
    key = ["site", "receptor", "period"] + (["scheme"] if "scheme" in frame else [])
    return frame.set_index(key)


@pytest.mark.parametrize("run", ["plain", "bidirectional"])
def test_same_numbers_in_every_file(runs, run):
    """budget.csv totals = summary.csv = budget.nc = report.html (3 digits), with the
    same status, for S and N of every (site, receptor, period)."""
    d = runs[run]
    b = pd.read_csv(d / "budget.csv", dtype={"period": str}, low_memory=False)
    s = pd.read_csv(d / "summary.csv", dtype={"period": str})
    ds = xr.open_dataset(d / "budget.nc")
    if "scheme" in b:                      # summary.csv and budget.nc: the chosen scheme
        chosen = json.loads((d / "provenance.json").read_text())["scenario"]["dry"]["gas_scheme"]
        assert set(b["scheme"]) >= {chosen} and len(set(b["scheme"])) == 2
        b = b[b["scheme"] == chosen].drop(columns="scheme")
    tot = b[(b["species"] == "all") & (b["pathway"] == "total") & (b["period"] != "span")]
    html = (d / "report.html").read_text()
    checked = 0
    for el in "SN":
        t = _keyed(tot[tot["element"] == el])
        ss = _keyed(s).reindex(t.index)
        assert len(ss) == len(t) == len(s)
        np.testing.assert_allclose(ss[f"{el}_total_kg_ha"], t["flux_kg_ha"], rtol=1e-9)
        assert (ss[f"{el}_total_status"] == t["status"]).all()
        nc = (ds["total_deposition"].sel(total=f"{el}_total") * MOLAR[el] * 1e4).to_series()
        np.testing.assert_allclose(nc.reindex(t.index), t["flux_kg_ha"], rtol=1e-8)
        st = ds["total_status"].sel(total=f"{el}_total").to_series().reindex(t.index)
        assert (st == t["status"]).all()
        from workbench.report import _MARK, plain
        for (site, rec, per), row in t.iterrows():
            if not np.isfinite(row["flux_kg_ha_yr"]):
                continue
            cell = f"<td>{plain(row['flux_kg_ha_yr'])}{_MARK[row['status']]}</td>"
            assert cell in html, (site, rec, per, el, cell)
            checked += 1
    assert checked > 20
    for name in ("oxidized_N", "reduced_N", "potential_acidity"):    # derived sums
        col = f"{name}_status"
        nc = ds[col].to_series().reindex(_keyed(s).index)
        assert (nc == _keyed(s)[col]).all(), col
    assert {"partial"} <= set(tot["status"])        # fell's N: NO2 not measured


def test_compared_schemes_are_not_mixed(runs):
    """With compare_schemes, budget.csv has both schemes; the report's tables, the
    exceedance and trend tables hold the chosen scheme once (before: every span and
    exceedance row twice, unlabelled, and trends fitted on both schemes' years)."""
    d = runs["bidirectional"]
    b = pd.read_csv(d / "budget.csv", dtype={"period": str}, low_memory=False)
    years = pd.to_datetime(b["period_start"]).dt.year.nunique()
    ex = pd.read_csv(d / "exceedance.csv", dtype={"period": str})
    assert not ex.duplicated(["site", "receptor", "period"]).any()
    tr = pd.read_csv(d / "trends.csv")
    assert (tr["n_years"].dropna() <= years).all()
    tables = pd.read_html(d / "report.html")
    span = tables[0]               # headed "Site" over "site" ...: the first three columns
    assert not span.duplicated(list(span.columns[:3])).any()
    html = (d / "report.html").read_text()
    assert "Gas scheme comparison" in html and "zhang2003" in html and "wesely1989" in html
    assert "NH3 net exchange beside deposition only" in html


def test_derived_sums_carry_their_status(runs):
    """summary.csv: oxidized N at fell lacks NO2 (not measured there), so it is
    `partial` naming NO2, like N_total; reduced N, which has no NO2, is not partial on
    its account. No derived sum with a missing part reads `complete`."""
    s = pd.read_csv(runs["plain"] / "summary.csv", keep_default_na=False)
    fell = s[s["site"] == "fell"]
    assert (fell["oxidized_N_status"] == "partial").all()
    assert (fell["oxidized_N_missing_components"] == "NO2").all()
    assert (fell["potential_acidity_status"] == fell["N_total_status"]).all()
    assert not fell["reduced_N_missing_components"].str.contains("NO2").any()
    for name in ("oxidized_N", "reduced_N", "potential_acidity"):
        lacks = s[f"{name}_missing_components"] != ""
        assert not (s.loc[lacks, f"{name}_status"] == "complete").any(), name
    assert (s.loc[s["site"] == "fell", "N_total_status"] == "partial").all()


def _dictionary() -> list:
    """Patterns of the column names in docs/data_formats.md section 6 (placeholders
    such as ``<ion>`` match any text)."""
    text = (Path(__file__).parents[1] / "docs" / "data_formats.md").read_text()
    section = text.split("## 6. Run folder: column dictionary", 1)[1].split("\n## ", 1)[0]
    names = set(re.findall(r"`([^`]+)`", section))
    return [re.compile("^" + re.sub(r"<[a-z]+>", ".+", re.escape(n).replace(r"\<", "<")
                                    .replace(r"\>", ">")) + "$") for n in names]


@pytest.mark.parametrize("run", ["plain", "bidirectional"])
def test_every_csv_column_is_in_the_dictionary(runs, run):
    """Every column of every CSV of the run folder has its unit and meaning in the
    documented dictionary (docs/data_formats.md section 6)."""
    patterns = _dictionary()
    assert len(patterns) > 50
    lacking = {}
    for f in sorted(runs[run].glob("*.csv")):
        cols = pd.read_csv(f, nrows=0).columns
        miss = [c for c in cols if not any(p.match(c) for p in patterns)]
        if miss:
            lacking[f.name] = miss
    assert not lacking, lacking
