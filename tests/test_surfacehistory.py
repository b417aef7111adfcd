"""A site's own surface and collector follow the declared history in one run
(workbench/surfacehistory.py; docs/data_formats.md, "A long record").

The invented long record of tests/longrecord_data.py (forest clear-felled on
2014-04-01), cut to 2012-2015 so that each run takes a few seconds.  Every check
compares the one run against plain runs of the same inputs with the surface (or
collector) of each part fixed: the expected numbers are computed, never written here.
"""
from __future__ import annotations

import gzip
import json
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from longrecord_data import make_long_record  # noqa: E402

FELLED = np.datetime64("2014-04-01T00:00", "ns")
KEEP = ("2012-01-01", "2016-01-01")

SITE = """\
[[site]]
id = "haugh"
name = "Corrie Haugh"
latitude = 55.31
longitude = 6.42
elevation_m = 240.0
land_use = "{land_use}"
canopy_height_m = {height}
wind_height_m = 10.0
sampler_height_m = 2.0
utc_offset_h = 0
met_land_use = "grass"
collector = "{collector}"
receptors = [{receptors}]
"""
LAND_CHANGE = """
[[site.change]]
date = {date}
what = "land_use"
from = "{frm}"
to = "{to}"
note = "invented"
"""
COLLECTOR_CHANGE = """
[[site.change]]
date = {date}
what = "collector"
from = "wet_only"
to = "bulk"
"""


def _cut(d: Path):
    """Keep the rows of precipitation, air and met inside :data:`KEEP`."""
    a, b = KEEP
    for name in ("precipitation.csv", "air.csv"):
        lines = (d / name).read_text().splitlines()
        head = [ln for ln in lines if ln.startswith("#") or ln.startswith("site,")]
        body = [ln for ln in lines if ln.startswith("haugh,")
                and a <= ln.split(",")[1] and ln.split(",")[2] <= b]
        (d / name).write_text("\n".join(head + body) + "\n")
    with gzip.open(d / "met.csv.gz", "rt") as fh:
        lines = fh.read().splitlines()
    keep = [ln for ln in lines if not ln.startswith("haugh,")
            or a < ln.split(",")[1] <= b]
    with gzip.open(d / "met.csv.gz", "wt") as fh:
        fh.write("\n".join(keep) + "\n")


@pytest.fixture(scope="module")
def record(tmp_path_factory):
    d = tmp_path_factory.mktemp("history")
    scen = make_long_record(d, sites_text=SITE.format(land_use="grass", height=0.15,
                                                      collector="wet_only", receptors=""))
    _cut(d)
    scen.write_text(scen.read_text().replace('"1998-01-01"', f'"{KEEP[0]}"')
                    .replace('"2023-01-01"', f'"{KEEP[1]}"'))
    return d


def _run(record, sites_text, name, budget="", resolution="year"):
    """(study, result) of the record with `sites_text` as its catalogue."""
    from workbench.comparison import run as run_compared
    from workbench.preflight import prepare
    d = record / name
    d.mkdir(exist_ok=True)
    (d / "sites.toml").write_text(sites_text)
    text = (record / "scenario.toml").read_text()
    for f in ("precipitation.csv", "air.csv", "met.csv.gz"):
        text = text.replace(f'"{f}"', f'"{(record / f).as_posix()}"')
    text = text.replace('"year"', f'"{resolution}"') + budget
    (d / "scenario.toml").write_text(text)
    prep = prepare(d / "scenario.toml")
    sc, study, o = prep.scenario, prep.study, prep.scenario.options
    p = sc.data["period"]
    return study, run_compared(study, o["wet"], o["dry"], o["budget"], sc.fixed_velocity,
                               p["resolution"], p["start"], p["end"])


def _felled(receptors=""):
    return (SITE.format(land_use="grass", height=0.15, collector="wet_only",
                        receptors=receptors)
            + LAND_CHANGE.format(date="2014-04-01", frm="conifer_forest", to="grass"))


@pytest.fixture(scope="module")
def runs(record):
    """The felled record in one run, and the plain runs of each surface (the forest
    with its class defaults, as the engine takes a surface before a change)."""
    from workbench.landuse import LAND_USE
    forest = SITE.format(land_use="conifer_forest", height=LAND_USE["conifer_forest"][1],
                         collector="wet_only", receptors="")
    grass = SITE.format(land_use="grass", height=0.15, collector="wet_only", receptors="")
    return {"history": _run(record, _felled('"conifer_forest"'), "history"),
            "forest": _run(record, forest, "forest"), "grass": _run(record, grass, "grass")}


def _own(result, receptor="grass"):
    return result.velocities.sel(site="haugh", receptor=receptor)


@pytest.mark.parametrize("var", ["vd_SO2", "vd_HNO3", "vd_NH3", "vd_pSO4", "rc_SO2", "rb_NH3",
                                 "ra"])
def test_own_surface_hour_by_hour_before_and_after_the_felling(runs, var):
    """Before 2014-04-01 00:00 UTC the site's own row is the forest of a plain run with
    land_use = conifer_forest, from that hour on the grass of a plain run with
    land_use = grass (rtol 1e-12 over every hour)."""
    h = _own(runs["history"][1])
    before = h["time"].values <= FELLED              # hours ending at or before midnight
    got = h[var].values
    forest = _own(runs["forest"][1], "conifer_forest")[var].values
    grass = _own(runs["grass"][1])[var].values
    assert before.sum() > 1000 and (~before).sum() > 1000
    np.testing.assert_allclose(got[before], forest[before], rtol=1e-12)
    np.testing.assert_allclose(got[~before], grass[~before], rtol=1e-12)
    assert not np.allclose(forest[before], grass[before], rtol=1e-3)   # the test can fail


def test_land_use_in_force_and_the_declared_receptor_keeps_its_class(runs):
    """``land_use_in_force`` names the class of each hour of the own row; the declared
    receptor conifer_forest is a forest in every hour (a what-if surface)."""
    from workbench.surfacehistory import CLASSES
    v = runs["history"][1].velocities
    code = v["land_use_in_force"].sel(site="haugh")
    names = np.array(CLASSES)[code.sel(receptor="grass").values]
    t = v["time"].values
    assert set(names[t <= FELLED]) == {"conifer_forest"}
    assert set(names[t > FELLED]) == {"grass"}
    assert set(np.array(CLASSES)[code.sel(receptor="conifer_forest").values]) == {"conifer_forest"}
    rec = _own(runs["history"][1], "conifer_forest")["vd_SO2"].values
    forest = _own(runs["forest"][1], "conifer_forest")["vd_SO2"].values
    np.testing.assert_allclose(rec, forest, rtol=1e-12)
    assert "haugh: surface conifer_forest until 2014-04-01, grass after" in v.attrs[
        "land_use_history"]


def _dry(result, years, receptor="grass"):
    from workbench.tables import budget_table
    y = budget_table(result.years)
    y = y[(y["site"] == "haugh") & (y["receptor"] == receptor) & (y["pathway"] == "dry")]
    return y[y["period"].isin(years)].set_index(["period", "element", "species"])


def test_site_row_equals_each_surface_in_its_years_and_notes_the_change(runs):
    """The grass row: 2012-2013 equal the forest run, 2015 the grass run (value and
    status); 2013 says the forest was in force, 2014 names both."""
    h = _dry(runs["history"][1], ["2012", "2013", "2014", "2015"])
    f = _dry(runs["forest"][1], ["2012", "2013"], "conifer_forest")
    g = _dry(runs["grass"][1], ["2015"])
    for ref in (f, g):
        got = h.loc[ref.index]
        np.testing.assert_allclose(got["flux_kg_ha"], ref["flux_kg_ha"], rtol=1e-12)
        assert (got["status"] == ref["status"]).all()
    g_old = _dry(runs["grass"][1], ["2013"])
    s_all = ("2013", "S", "all")
    assert abs(h.loc[s_all, "flux_kg_ha"] - g_old.loc[s_all, "flux_kg_ha"]) > 1e-3
    assert h.loc[s_all, "note"].startswith("surface conifer_forest (land_use before 2014-04-01)")
    assert "surface conifer_forest until 2014-04-01, grass after" in h.loc[("2014", "S", "all"),
                                                                           "note"]
    assert "surface" not in str(h.loc[("2015", "S", "all"), "note"])


def test_straddling_year_is_the_sum_of_both_parts(runs):
    """2014 of the own row = forest over 2014-01-01..04-01 + grass over 04-01..2015-01-01,
    species by species (the dry components over custom periods of the plain runs)."""
    from workbench.periods import make_periods
    study, res = runs["history"]
    o = res.options
    parts = make_periods(np.datetime64("2014-01-01"), np.datetime64("2015-01-01"), "custom",
                         ranges=[("2014-01-01", "2014-04-01", "a"),
                                 ("2014-04-01", "2015-01-01", "b")])
    got, _ = study.dry(o["dry"], o["budget"], make_periods(
        np.datetime64("2014-01-01"), np.datetime64("2015-01-01"), "custom",
        ranges=[("2014-01-01", "2015-01-01", "y")]), o["fixed_velocity"])
    fs, fr = runs["forest"]
    gs, gr = runs["grass"]
    a, _ = fs.dry(fr.options["dry"], fr.options["budget"], parts, fr.options["fixed_velocity"])
    b, _ = gs.dry(gr.options["dry"], gr.options["budget"], parts, gr.options["fixed_velocity"])
    dep = got["deposition"].sel(site="haugh", receptor="grass").isel(period=0).values
    want = (a["deposition"].sel(site="haugh", receptor="conifer_forest").isel(period=0).values
            + b["deposition"].sel(site="haugh", receptor="grass").isel(period=1).values)
    assert np.isfinite(dep).sum() >= 5
    np.testing.assert_allclose(dep, want, rtol=1e-9)


def test_several_changes_in_sequence(record):
    """crops until 2013-01-01, conifer_forest until 2014-04-01, grass after: each hour of
    the own row from its class (the declared receptors of those classes, computed with
    the class defaults)."""
    text = (SITE.format(land_use="grass", height=0.15, collector="wet_only",
                        receptors='"crops", "conifer_forest"')
            + LAND_CHANGE.format(date="2013-01-01", frm="crops", to="conifer_forest")
            + LAND_CHANGE.format(date="2014-04-01", frm="conifer_forest", to="grass"))
    _, res = _run(record, text, "sequence")
    v = res.velocities.sel(site="haugh")
    t = v["time"].values
    first = t <= np.datetime64("2013-01-01T00:00", "ns")
    mid = ~first & (t <= FELLED)
    own = v["vd_SO2"].sel(receptor="grass").values
    np.testing.assert_allclose(own[first], v["vd_SO2"].sel(receptor="crops").values[first],
                               rtol=1e-12)
    np.testing.assert_allclose(own[mid], v["vd_SO2"].sel(receptor="conifer_forest").values[mid],
                               rtol=1e-12)
    from workbench.surfacehistory import CLASSES
    names = np.array(CLASSES)[v["land_use_in_force"].sel(receptor="grass").values]
    assert list(dict.fromkeys(names)) == ["crops", "conifer_forest", "grass"]


def test_the_earlier_class_alone_is_not_shown_as_a_receptor(runs):
    """Without a declared forest receptor the forest is computed for the history and not
    shown: the velocities and the budget have the site's own surface only."""
    from workbench.tables import budget_table
    assert list(runs["forest"][1].velocities["receptor"].values) == ["conifer_forest"]
    study, _ = runs["history"]
    from workbench.comparison import run as run_compared
    from workbench.preflight import prepare
    d = Path(study.inputs.catalogue.path).parent.parent / "alone"
    d.mkdir(exist_ok=True)
    (d / "sites.toml").write_text(_felled())
    sc_text = (Path(study.inputs.catalogue.path).parent / "scenario.toml").read_text()
    (d / "scenario.toml").write_text(sc_text)
    prep = prepare(d / "scenario.toml")
    o = prep.scenario.options
    p = prep.scenario.data["period"]
    res = run_compared(prep.study, o["wet"], o["dry"], o["budget"], prep.scenario.fixed_velocity,
                       p["resolution"], p["start"], p["end"])
    assert list(res.velocities["receptor"].values) == ["grass"]
    own = res.velocities["vd_SO2"].sel(site="haugh", receptor="grass")
    before = own["time"].values <= FELLED
    np.testing.assert_allclose(own.values[before], _own(runs["forest"][1], "conifer_forest")[
        "vd_SO2"].values[before], rtol=1e-12)
    assert set(budget_table(res.years)["receptor"]) == {"grass"}
    np.testing.assert_allclose(res.velocities["vd_SO2"].sel(site="haugh", receptor="grass").values,
                               runs["history"][1].velocities["vd_SO2"].sel(
                                   site="haugh", receptor="grass").values, rtol=1e-12)


# ------------------------------------------------------------------- the collector
BULK = '\n[budget]\nbulk_correction = "exclude_particles"\n'
SCALE = '\n[budget]\nbulk_correction = "scale_wet"\nbulk_wet_factor = 0.8\n'


def _table(result, years):
    from workbench.tables import budget_table
    y = budget_table(result.years)
    y = y[(y["site"] == "haugh") & (y["receptor"] == "grass")]
    return y[y["period"].isin(years)].set_index(["period", "element", "pathway", "species"])


@pytest.fixture(scope="module")
def collectors(record):
    def site(c, change=""):
        return SITE.format(land_use="grass", height=0.15, collector=c, receptors="") + change
    return {"history": _run(record, site("bulk", COLLECTOR_CHANGE.format(date="2014-01-01")),
                            "c_history", BULK),
            "straddle": _run(record, site("bulk", COLLECTOR_CHANGE.format(date="2014-07-01")),
                             "c_straddle", BULK),
            "wet_only": _run(record, site("wet_only"), "c_wet_only", BULK),
            "bulk": _run(record, site("bulk"), "c_bulk", BULK)}


def _sampled_hours(record, a, b):
    """Hours of [a, b) covered by the precipitation rows of the record (from the file)."""
    p = pd.read_csv(record / "precipitation.csv", comment="#")
    s = pd.to_datetime(p["start"]).clip(lower=pd.Timestamp(a))
    e = pd.to_datetime(p["end"]).clip(upper=pd.Timestamp(b))
    return ((e - s).dt.total_seconds().clip(lower=0) / 3600).sum()


def test_collector_change_years_equal_runs_of_each_collector(collectors, record):
    """Before 2014 the rules of the wet-only collector (particle dry deposition added),
    from 2015 those of the bulk one (taken as caught): every row, value and status, as
    the two separate runs; the years before say which collector.  2014 holds the first 9
    hours of the last daily sample of the wet-only collector (2013-12-31 09:00 to
    2014-01-01 09:00: a collector is swapped between samples, so the change dated
    2014-01-01 falls after it): the particle dry deposition of those sampled hours is
    added, the row is not flagged for it (every sample under one collector) and names
    both collectors."""
    h = _table(collectors["history"][1], ["2012", "2013", "2014", "2015"])
    for years, ref in ((["2012", "2013"], "wet_only"), (["2014", "2015"], "bulk")):
        r = _table(collectors[ref][1], years)
        got = h.loc[r.index]
        keep = ~((got.index.get_level_values("period") == "2014")
                 & (got.index.get_level_values("pathway") != "wet"))
        np.testing.assert_allclose(got["flux_kg_ha"][keep], r["flux_kg_ha"][keep], rtol=1e-12)
        assert (got["status"] == r["status"]).all(), ref
    p = ("2013", "S", "dry", "pSO4")
    assert h.loc[p, "flux_kg_ha"] > 0 and _table(collectors["bulk"][1], ["2013"]).loc[
        p, "flux_kg_ha"] == 0
    assert "collector wet_only (before 2014-01-01)" in h.loc[("2013", "S", "wet", "SO4"), "note"]
    p = ("2014", "S", "dry", "pSO4")
    share = 9.0 / _sampled_hours(record, "2014-01-01", "2015-01-01")
    w = _table(collectors["wet_only"][1], ["2014"])
    np.testing.assert_allclose(h.loc[p, "flux_kg_ha"], w.loc[p, "flux_kg_ha"] * share,
                               rtol=1e-9)
    assert "collector wet_only until 2014-01-01, bulk after" in h.loc[p, "note"]


def test_collector_change_inside_a_year_is_shared_by_hours_and_flagged(collectors, record):
    """A change on 2014-07-01, inside the weekly sample of 2014-06-25 to 07-02: that
    sample is split at 07-01 00:00 by its hours; the particle dry deposition of 2014 is
    that of the hours sampled by the wet-only collector (the 2014 part of the last
    daily sample, the weekly ones to 06-25 and the straddling one's hours before 07-01:
    181 days of the year when every hour is sampled), flagged (the split is an
    estimate) and noted; the other years follow their collector."""
    h = _table(collectors["straddle"][1], ["2013", "2014", "2015"])
    w = _table(collectors["wet_only"][1], ["2014"])
    p = ("2014", "S", "dry", "pSO4")
    share = (_sampled_hours(record, "2014-01-01", "2014-07-01")
             / _sampled_hours(record, "2014-01-01", "2015-01-01"))
    np.testing.assert_allclose(h.loc[p, "flux_kg_ha"], w.loc[p, "flux_kg_ha"] * share,
                               rtol=1e-12)
    assert h.loc[p, "status"] == "flagged"
    assert "collector wet_only until 2014-07-01, bulk after" in h.loc[p, "note"]
    assert h.loc[("2015", "S", "dry", "pSO4"), "flux_kg_ha"] == 0


@pytest.mark.parametrize("name", ["history", "m_history_c"])
def test_run_folder_of_a_changed_site_accounts_rows_and_verifies(record, runs, tmp_path, name):
    """`workbench run` of the felled record (and of the felled record whose mast follows
    the land use, its collector changed to bulk inside 2014 with scale_wet):
    input_rows.csv counts every data line of each input, provenance.json verifies,
    velocities.nc has land_use_in_force, the NetCDF outputs are CF-clean."""
    import xarray as xr

    from workbench.cli import main
    case = name                 # (`name` is taken by the loop over the files below)
    if name != "history":
        text = (_mast_site("grass", 0.15, '"conifer_forest"').replace(
            'collector = "wet_only"', 'collector = "bulk"')
            + LAND_CHANGE.format(date="2014-04-01", frm="conifer_forest", to="grass")
            + COLLECTOR_CHANGE.format(date="2014-07-01"))
        _run(record, text, name, SCALE)
    d = record / name
    out = tmp_path / "run"
    assert main(["run", str(d / "scenario.toml"), "--out", str(out), "--quiet"]) == 0
    rows = pd.read_csv(out / "input_rows.csv", keep_default_na=False)
    read = rows[rows["reason"] == ""].groupby("file")["rows"].sum()
    by_status = rows[rows["reason"] == ""].pivot_table(index="file", columns="status",
                                                      values="rows", aggfunc="sum")
    for name, n in read.items():
        path = Path(name) if Path(name).is_absolute() else d / name
        if path.suffix == ".gz":
            with gzip.open(path, "rt") as fh:
                text = fh.read()
        else:
            text = path.read_text()
        lines = [ln for ln in text.splitlines() if ln and not ln.startswith("#")]
        assert by_status.loc[name].drop("read", errors="ignore").sum() in (n, n / 2), name
        assert len(lines) - 1 in (n, n / 2), name
    assert main(["verify", str(out)]) == 0
    prov = json.loads((out / "provenance.json").read_text())
    assert "velocities.nc" in prov["outputs"]
    v = xr.open_dataset(out / "velocities.nc")
    assert "land_use_in_force" in v and v["land_use_in_force"].attrs["flag_meanings"].split()[0] \
        == "conifer_forest"
    # the class under the wind mast per hour (stage mast_in_force), read back: a CF flag
    # variable; with met_land_use = "grass" given ("history") grass in every hour, without
    # it ("m_history_c") the forest until the felling at 2014-04-01 00:00 UTC (the hour
    # ending then is the forest's last), the grass after (2026-12 audit; before, velocities.nc
    # had no such variable)
    mast = v["mast_land_use"].sel(site="haugh")
    meanings = v["mast_land_use"].attrs["flag_meanings"].split()
    values = [int(x) for x in np.atleast_1d(v["mast_land_use"].attrs["flag_values"])]
    assert len(meanings) == len(values) and mast.dims == ("time",)
    named = np.array([meanings[values.index(int(c))] for c in mast.values])
    before = v["time"].values <= FELLED
    assert before.any() and (~before).any()
    assert (named[~before] == "grass").all()
    assert (named[before] == ("grass" if case == "history" else "conifer_forest")).all()
    v.close()
    from cf_check import cf_check        # cfchecker (CF 1.8), as tests/test_cf_outputs.py
    for name in ("velocities.nc", "budget.nc"):
        res = cf_check(out / name, tmp_path)
        assert not res["errors"], (name, res["errors"])
    b = pd.read_csv(out / "budget.csv", keep_default_na=False)
    row = b[(b["period"].astype(str) == "2014") & (b["pathway"] == "dry")
            & (b["species"] == "all") & (b["element"] == "S") & (b["receptor"] == "grass")]
    assert row["note"].str.contains("surface conifer_forest until 2014-04-01, grass after").all()



def test_check_refuses_particles_of_an_earlier_bulk_collector_without_a_correction(record):
    """A site now wet-only whose collector was bulk before 2014, with particles measured
    and no [budget] bulk_correction: `check` (preflight) refuses as it does for a bulk
    site, naming the site (before, only the budget refused it, after the engine ran)."""
    from workbench.preflight import PreflightError, prepare
    text = (SITE.format(land_use="grass", height=0.15, collector="wet_only", receptors="")
            + COLLECTOR_CHANGE.format(date="2014-01-01").replace(
                'from = "wet_only"\nto = "bulk"', 'from = "bulk"\nto = "wet_only"'))
    d = record / "c_refused"
    d.mkdir(exist_ok=True)
    (d / "sites.toml").write_text(text)
    sc = (record / "scenario.toml").read_text()
    for f in ("precipitation.csv", "air.csv", "met.csv.gz"):
        sc = sc.replace(f'"{f}"', f'"{(record / f).as_posix()}"')
    (d / "scenario.toml").write_text(sc)
    with pytest.raises(PreflightError, match="site 'haugh' had a bulk collector"):
        prepare(d / "scenario.toml")



def test_month_holding_a_collector_change_is_the_sum_of_each_collectors_samples(record):
    """The long record, months, a change to bulk dated 2014-10-15 (the day one weekly
    sample ends and the next starts at 09:00), scale_wet 0.8: October 2014's wet
    deposition is the wet chain on the wet-only samples alone plus 0.8 x the wet chain
    on the bulk samples alone, ion by ion (exact where every sample of the month has
    valid chemistry and gauge depth: checked first), not flagged for the change, and
    its note names both collectors.  The share-of-hours rule of before gave 0.8 on
    17/31 of the month whatever the samples held: it fails here."""
    from workbench.wet import wet_deposition
    from workbench.tables import budget_table
    text = (SITE.format(land_use="grass", height=0.15, collector="bulk", receptors="")
            + COLLECTOR_CHANGE.format(date="2014-10-15"))
    study, res = _run(record, text, "c_month", SCALE, resolution="month")
    wet = res.wet.sel(site="haugh", period="2014-10")
    assert float(wet["valid_precip_fraction"]) == 1.0 and float(wet["gauge_fraction"]) == 1.0
    scr = res.screened
    cut = np.datetime64("2014-10-15T09:00", "ns")
    per = res.periods[res.periods["label"] == "2014-10"]
    a = wet_deposition(scr.isel(sample=np.flatnonzero(scr["end"].values <= cut)), per,
                       res.options["wet"]).sel(site="haugh").isel(period=0)
    b = wet_deposition(scr.isel(sample=np.flatnonzero(scr["start"].values >= cut)), per,
                       res.options["wet"]).sel(site="haugh").isel(period=0)
    t = budget_table(res.budget)
    t = t[(t["period"] == "2014-10") & (t["pathway"] == "wet")].set_index("species")
    bud = res.budget.sel(site="haugh", period="2014-10").isel(receptor=0)
    for ion, el in (("NO3", "N"), ("NH4", "N")):
        want = float(a[f"dep_{ion}"]) + 0.8 * float(b[f"dep_{ion}"])
        np.testing.assert_allclose(float(bud["deposition"].sel(component=f"{el}/wet/{ion}")),
                                   want, rtol=1e-12)
        old = (float(a[f"dep_{ion}"]) + float(b[f"dep_{ion}"])) * (1 - 0.2 * 17 / 31)
        assert abs(want - old) > 1e-4 * want
        assert t.loc[ion, "status"] != "flagged" or "flagged samples" in t.loc[ion, "note"]
        assert "collector wet_only until 2014-10-15, bulk after" in t.loc[ion, "note"]


# ------------------------------------------------------------------- the wind mast
def _mast_site(land_use, height, receptors=""):
    """The site with a 25 m mast (above the forest's displacement height) and no
    met_land_use: the mast stands over the site's own surface."""
    return (SITE.format(land_use=land_use, height=height, collector="wet_only",
                        receptors=receptors)
            .replace('met_land_use = "grass"\n', "").replace("wind_height_m = 10.0",
                                                               "wind_height_m = 25.0"))


@pytest.fixture(scope="module")
def mast_runs(record):
    """The felled record without met_land_use (the mast follows the land use), and the
    plain runs of the forest (class defaults) and of the grass, each with its mast over
    its own surface."""
    from workbench.landuse import LAND_USE
    felled = (_mast_site("grass", 0.15, '"conifer_forest"')
              + LAND_CHANGE.format(date="2014-04-01", frm="conifer_forest", to="grass"))
    return {"history": _run(record, felled, "m_history"),
            "forest": _run(record, _mast_site("conifer_forest",
                                              LAND_USE["conifer_forest"][1]), "m_forest"),
            "grass": _run(record, _mast_site("grass", 0.15, '"conifer_forest"'), "m_grass")}


@pytest.mark.parametrize("var", ["friction_velocity", "ra", "vd_SO2", "vd_pSO4", "vd_HNO3"])
def test_the_mast_follows_the_land_use_when_met_land_use_is_not_given(mast_runs, var):
    """Before 2014-04-01 00:00 UTC the mast stood over the forest: the own row is the
    forest of a plain forest run (its mast over the forest too), and so is the declared
    forest receptor (u* carried from the forest mast); from then on both are the grass
    run's (mast over grass).  Before, the mast was taken as grass in every hour: the
    forest hours differed (the test can fail)."""
    h = mast_runs["history"][1].velocities.sel(site="haugh")
    before = h["time"].values <= FELLED
    f = _own(mast_runs["forest"][1], "conifer_forest")[var].values
    g = mast_runs["grass"][1].velocities.sel(site="haugh")
    np.testing.assert_allclose(h[var].sel(receptor="grass").values[before], f[before],
                               rtol=1e-12)
    np.testing.assert_allclose(h[var].sel(receptor="grass").values[~before],
                               g[var].sel(receptor="grass").values[~before], rtol=1e-12)
    np.testing.assert_allclose(h[var].sel(receptor="conifer_forest").values[before],
                               f[before], rtol=1e-12)
    np.testing.assert_allclose(h[var].sel(receptor="conifer_forest").values[~before],
                               g[var].sel(receptor="conifer_forest").values[~before],
                               rtol=1e-12)
    grass_mast = g[var].sel(receptor="conifer_forest").values[before]
    assert not np.allclose(f[before], grass_mast, rtol=1e-3, equal_nan=True)


def test_a_declared_met_land_use_stays_fixed(runs):
    """met_land_use = "grass" given: the mast is grass in every hour (what the user
    declared), so the declared forest receptor is the same in every hour as in a plain
    grass-site run with that receptor (the felled record of the fixtures above)."""
    h = runs["history"][1].velocities.sel(site="haugh", receptor="conifer_forest")
    f = _own(runs["forest"][1], "conifer_forest")
    np.testing.assert_allclose(h["friction_velocity"].values,
                               f["friction_velocity"].values, rtol=1e-12)


def test_the_mast_history_on_chunked_met_gives_the_same_numbers(mast_runs):
    """The felled record whose mast follows the land use, its met dask-backed (chunks of
    30 days, some straddling the felling): the same hourly u* and Vd as in memory."""
    pytest.importorskip("dask")
    import dataclasses

    from workbench.pipeline import Study
    study, res = mast_runs["history"]
    lazy = Study(dataclasses.replace(study.inputs, met=study.inputs.met.chunk({"time": 24 * 30})),
                 study.site_overrides)
    o = res.options
    got = lazy.velocities(o["dry"])
    for var in ("friction_velocity", "vd_SO2"):
        np.testing.assert_allclose(got[var].sel(site="haugh").values,
                                   res.velocities[var].sel(site="haugh").values, rtol=1e-12)
