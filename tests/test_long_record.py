"""A user trial: an analyst inherits an invented 25-year record (tests/longrecord_data.py)
with a unit switch, a gauge gap and a new gauge, a daily sampler for four years, a
clear-felled forest, air from the ninth year on and three years of many gaps.

Reference checks: pymannkendall 1.4 (Hussain and Mahmud 2019, a general reference
library) ``original_test`` (S, Var S, z, p on the values present) and ``sens_slope``
(the median of the pair slopes over the positions of the full series, NaN skipped, so
a missing year keeps its place: years 1998... are consecutive positions here).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from longrecord_data import AIR_FROM, GAPPY, make_long_record  # noqa: E402

SITES_WITH_HISTORY = """\
[[site]]
id = "haugh"
name = "Corrie Haugh"
latitude = 55.31
longitude = 6.42
elevation_m = 240.0
land_use = "grass"
canopy_height_m = 0.15
wind_height_m = 10.0
sampler_height_m = 2.0
utc_offset_h = 0
met_land_use = "grass"
receptors = ["conifer_forest"]

[[site.change]]
date = 2008-01-01
what = "units"
note = "lab reports ueq/L"

[[site.change]]
date = 2014-04-01
what = "land_use"
from = "conifer_forest"
to = "grass"
note = "forest clear-felled"
"""


@pytest.fixture(scope="module")
def long_run(tmp_path_factory):
    """The record (converted to ueq/L, no declared history: a file the workbench read
    before either was possible) run once through the scenario path a user takes."""
    from workbench.comparison import run as run_compared
    from workbench.preflight import prepare
    from workbench.tables import budget_table
    d = tmp_path_factory.mktemp("longrecord")
    sc_path = make_long_record(d, split_units=False)
    prep = prepare(sc_path)
    sc, study, o = prep.scenario, prep.study, prep.scenario.options
    p = sc.data["period"]
    result = run_compared(study, o["wet"], o["dry"], o["budget"], sc.fixed_velocity,
                          p["resolution"], p["start"], p["end"])
    return {"dir": d, "study": study, "result": result,
            "years": budget_table(result.years), "table": result.table}


def _total(t, element="S", receptor="grass"):
    return t[(t["pathway"] == "total") & (t["species"] == "all") & (t["element"] == element)
             & (t["receptor"] == receptor)].set_index("period")


def test_wet_only_years_are_partial_and_left_out_of_the_span(long_run):
    """Years before the air are wet deposition only: partial, naming the dry species,
    and the whole-span mean does not mix them with the wet + dry years (it did: the
    span used 1998-2005 too)."""
    t = long_run["table"]
    tot = _total(t)
    early = tot.loc[[str(y) for y in range(1998, AIR_FROM)]]
    assert set(early["status"]) <= {"partial", "flagged"}
    assert early["missing_components"].str.contains("SO2").all()
    span = tot.loc["span"]
    used = span["years_used"].split()
    assert not any(int(y) < AIR_FROM for y in used), span["years_used"]
    assert "1998" in span["years_excluded"] and "smaller sum" in span["note"]
    want = tot.loc[used, "flux_kg_ha_yr"].mean()
    assert span["flux_kg_ha_yr"] == pytest.approx(want, rel=1e-12)
    assert span["status"] != "partial"             # the years used hold every component


def test_gauge_gap_year_is_filled_and_says_so(long_run):
    """16 weeks of gauge depths filled from the collector in 2012: the wet rows and the
    total say 'filled' with the share (they read 'complete', no note, before)."""
    t = long_run["table"]
    wet = t[(t["pathway"] == "wet") & (t["species"] == "SO4") & (t["receptor"] == "grass")
            ].set_index("period")
    assert wet.loc["2012", "status"] == "filled"
    assert "gauge depths filled" in wet.loc["2012", "note"]
    assert wet.loc["2011", "status"] == "complete"
    assert _total(t).loc["2012", "status"] == "filled"
    # the record measures pSO4 without pNa: its dry pSO4 is total pSO4 on one basis over
    # the whole record, said in the note, not flagged (docs/budget.md; flagged in every
    # year, it left the site without an S trend)
    dry_so4 = t[(t["pathway"] == "dry") & (t["species"] == "pSO4") & (t["receptor"] == "grass")
                ].set_index("period")
    assert dry_so4.loc["2012", "note"].count("no pNa measured at the site: total pSO4") == 1
    assert dry_so4.loc["2012", "status"] == "complete"


def test_gappy_years_are_not_complete(long_run):
    tot = _total(long_run["table"])
    for y in range(*GAPPY):
        assert tot.loc[str(y), "status"] not in ("complete", "filled"), y


def test_daily_sampler_years_are_no_gap(long_run):
    """The weekly sampler stood aside for the daily one 2010-2013: not a 208-week gap."""
    notes = "\n".join(long_run["study"].inputs.ledger.notes)
    assert "208" not in notes
    from workbench.io.samplegaps import sampler_turns
    turns = sampler_turns(long_run["study"].inputs.precipitation)
    assert [t[2].split(" (")[0] for t in turns] == ["sampler W1 -> D1", "sampler D1 -> W1"]
    assert str(turns[0][1])[:10] == "2010-01-05"


def test_unit_switch_in_the_file_reads_as_one_column(long_run, tmp_path):
    """mg/L to 2007, ueq/L from 2008 in one file: the same samples as the file converted
    to ueq/L by hand (to the 3 decimals of the mg/L text)."""
    from workbench.io.inputs import load_inputs
    d = tmp_path / "split"
    make_long_record(d, sites_text=SITES_WITH_HISTORY, split_units=True)
    inp = load_inputs(d / "sites.toml", precipitation=d / "precipitation.csv")
    notes = "\n".join(inp.ledger.notes)
    assert "SO4 in mg/L" in notes and "in ueq/L" in notes
    one = long_run["study"].inputs.precipitation
    two = inp.precipitation
    a, b = one["SO4"].values, two["SO4"].values
    ok = np.isfinite(a) & np.isfinite(b)
    assert ok.sum() > 1500 and (np.isfinite(a) == np.isfinite(b)).all()
    np.testing.assert_allclose(b[ok], a[ok], rtol=0.02)      # 3 decimals of mg/L


def _annual(long_run, element, pathway, species, receptor="grass"):
    y = long_run["years"]
    s = y[(y["element"] == element) & (y["pathway"] == pathway) & (y["species"] == species)
          & (y["receptor"] == receptor)].copy()
    s["year"] = s["period_start"].dt.year
    return s.set_index("year")


@pytest.mark.parametrize("element,pathway,species", [("S", "wet", "SO4"),
                                                     ("S", "total", "all"),
                                                     ("N", "dry", "NH3")])
def test_trends_of_the_record_pymannkendall(long_run, element, pathway, species):
    """The trend of the project's own annual series against pymannkendall: flagged and
    partial years left out (NaN in the full series of years, which keeps their place),
    values rounded to 1 decimal so that ties occur."""
    mk = pytest.importorskip("pymannkendall")
    from workbench.analysis.trends import trend_table
    s = _annual(long_run, element, pathway, species)
    s = s.assign(flux_kg_ha_yr=s["flux_kg_ha_yr"].round(1))
    years = np.arange(s.index.min(), s.index.max() + 1)
    use = s["status"].isin(["complete", "filled"]) & np.isfinite(s["flux_kg_ha_yr"])
    x = s["flux_kg_ha_yr"].where(use).reindex(years).to_numpy(float)
    assert np.isnan(x).any()                      # missing or left-out years
    present = x[~np.isnan(x)]
    assert present.size > np.unique(present).size or element == "N"   # ties (S series)
    row = trend_table(s.reset_index(drop=True))
    row = row[(row["series"] == "annual") & (row["values"] == "all")].iloc[0]
    ref = mk.original_test(x)
    assert row["n_years"] == present.size
    assert row["s"] == ref.s and row["var_s"] == pytest.approx(ref.var_s, rel=1e-12)
    assert row["z"] == pytest.approx(ref.z, rel=1e-12)
    if present.size >= 10:
        assert row["p_value"] == pytest.approx(ref.p, rel=1e-9)
    assert row["sen_slope_per_yr"] == pytest.approx(mk.sens_slope(x).slope, rel=1e-12)


def test_seasonal_trend_of_the_record_pymannkendall(long_run):
    """The seasonal Kendall test (uncorrected variant) on the monthly wet SO4 of the
    record against pymannkendall ``seasonal_test`` (period 12) on the same grid."""
    mk = pytest.importorskip("pymannkendall")
    from workbench.analysis.trends import seasonal_kendall
    from workbench.scenario import load_scenario
    study = long_run["study"]
    o = load_scenario(long_run["dir"] / "scenario.toml").options
    wet = study.wet(o["wet"], study.periods("month", "1998-01-01", "2023-01-01"))
    flux = wet["dep_SO4_kg_ha"].sel(site="haugh").values.astype(float)
    st = wet["status"].sel(site="haugh").values.astype(str)
    v = np.where(np.isin(st, ["complete", "filled"]), np.round(flux, 2), np.nan)
    assert np.isnan(v).any()                          # months left out (the gappy years)
    grid = v.reshape(25, 12)
    r = seasonal_kendall(grid, np.arange(1998, 2023), correct=False)
    ref = mk.seasonal_test(grid.reshape(-1), period=12)
    assert r.s == ref.s and r.var_s == pytest.approx(ref.var_s, rel=1e-12)
    assert r.p_value == pytest.approx(ref.p, rel=1e-9)
    assert r.slope == pytest.approx(ref.slope, rel=1e-12)


def test_trends_name_the_changes_they_cross(long_run, tmp_path):
    """A trend over the years of a unit switch or of the clear-felling says so, in
    ``method_changes`` and in its note; a series whose years do not cross a change
    (dry, all after the felling) does not."""
    from workbench.analysis.trends import change_notes, trend_table
    from workbench.io.sites import read_sites
    y = long_run["years"]
    (tmp_path / "sites.toml").write_text(SITES_WITH_HISTORY)
    ch = change_notes(read_sites(tmp_path / "sites.toml"), long_run["study"].inputs)
    tr = trend_table(y, changes=ch)
    a = tr[(tr["series"] == "annual") & (tr["values"] == "all") & (tr["receptor"] == "grass")
           & (tr["species"] == "all")].set_index(["element", "pathway"])
    assert "2008-01-01 units" in a.loc[("S", "wet"), "method_changes"]
    assert "land_use" not in a.loc[("S", "wet"), "method_changes"]     # not a wet change
    assert "land_use conifer_forest -> grass" in a.loc[("S", "dry"), "method_changes"]
    assert "units" not in a.loc[("S", "dry"), "method_changes"]
    assert "crosses a change of method" in a.loc[("S", "total"), "note"]
    assert "sampler W1 -> D1" in a.loc[("S", "wet"), "method_changes"]
    late = y[y["period_start"].dt.year >= 2015]
    t2 = trend_table(late, changes=ch)
    assert (t2["method_changes"] == "").all()
    assert not t2["note"].str.contains("crosses").any()


def test_trend_without_changes_keeps_its_note():
    """No declared change: the note and columns as before, method_changes empty."""
    from workbench.analysis.trends import trend_table
    years = np.arange(2000, 2012)
    rows = pd.DataFrame({"site": "a", "receptor": "grass", "element": "S", "pathway": "wet",
                         "species": "SO4", "period": years.astype(str),
                         "period_start": pd.to_datetime([f"{y}-01-01" for y in years]),
                         "flux_kg_ha_yr": np.linspace(5, 3, years.size), "status": "complete"})
    t = trend_table(rows)
    assert (t["method_changes"] == "").all() and t["note"].iloc[0] == "values: all"


def test_network_overview_trend_says_it_crosses_a_change(long_run, tmp_path):
    """The network overview's trend cell of a site with a declared change says so."""
    from workbench.io.sites import read_sites
    from workbench.ui.apps_analysis import network_analysis_table
    (tmp_path / "sites.toml").write_text(SITES_WITH_HISTORY)
    cat = read_sites(tmp_path / "sites.toml")
    t = network_analysis_table({"haugh": long_run["result"]}, cat)
    assert "crosses a change of method: 2008-01-01 units" in t["S_trend"].iloc[0]
    assert "land_use conifer_forest -> grass" in t["S_trend"].iloc[0]


def test_monte_carlo_span_leaves_out_the_wet_only_years_too(long_run):
    """The span quantiles of the Monte Carlo follow the span row's years: their median
    of the S total lies near the span mean of the wet + dry years, not near the mean
    that mixed in the wet-only years (these differ by about 20 % on this record)."""
    from workbench.analysis.uncertainty import UncertaintyOptions, monte_carlo
    res, study = long_run["result"], long_run["study"]
    q = monte_carlo(res, study, UncertaintyOptions(draws=60, seed=3), years_only=True)
    tot = _total(long_run["table"])
    span = tot.loc["span", "flux_kg_ha_yr"]
    used = [y for y in tot.index if y != "span" and str(tot.loc[y, "passes"]) == "True"]
    mixed = tot.loc[used, "flux_kg_ha_yr"].mean()
    assert abs(mixed - span) > 0.1 * span             # the two means differ
    med = q.span["total_deposition"].sel(quantile=0.5, site="haugh", receptor="grass",
                                         total="S_total").item()
    med_kg = med * 32.06e-3 * 1e4                     # mol S m-2 yr-1 -> kg S ha-1 yr-1
    assert med_kg == pytest.approx(span, rel=0.05), (med_kg, span, mixed)
