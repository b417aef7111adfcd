"""A new analyst brings their own data: the user trial as a test.

An invented station (Corrowbeck Moss, a moorland bog with a conifer receptor; every name
and number invented) sets itself up from the docs alone, with records in the shapes its
own instruments write, unlike the demo: an hourly continuous monitor (SO2 in ppb, NH3 in
ug/m3) beside a weekly filter pack in one air file, an hourly met logger's export
(wind in km/h on a 2 m mast, pressure in hPa, local-time hour-ending labels, its own
column names until renamed), weekly precipitation chemistry with the gauge depth summed
from a daily gauge, two receptor surfaces and critical loads for one of them.

The dry flux of the hourly species is checked by hand from the raw files: for each hour,
C_h x Vd_h x 3600 s with the Vd the run wrote to velocities.nc and, for the mixing ratio,
the molar density of air n = p / (R T) from the met file's own hour (ideal-gas law,
R = 8.314462618 J/(mol K), CODATA 2018); molar masses from IUPAC standard atomic weights
(H 1.008, N 14.007, O 15.999, S 32.06).  Every step below that failed in the trial has
its own test (docs/data_formats.md, "Setting up your own site, step by step").
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.cli import main
from workbench.errors import InputError

R = 8.314462618                           # J/(mol K), CODATA 2018
M_NH3 = 14.007 + 3 * 1.008                # g/mol, IUPAC standard atomic weights
M_S_SO2 = 32.06 / (32.06 + 2 * 15.999)   # S per SO2 by mass [1]
UTC_OFFSET = 1                            # the station's loggers write local standard time

SITES = """
[[site]]
id = "corrow"
name = "Corrowbeck Moss (invented)"
latitude = 51.31
longitude = 9.47
elevation_m = 310.0
land_use = "moorland"
canopy_height_m = 0.35
wind_height_m = 2.0           # the logger's 2 m mast
sampler_height_m = 1.5
utc_offset_h = 1
lai_min = 0.8
lai_max = 2.0
receptors = ["conifer_forest"]

[site.critical_loads.moorland]
cl_max_s = 820.0
cl_min_n = 142.0
cl_max_n = 1050.0
cl_nut_n = 500.0
"""


def _hours():
    """Hour-ending local labels of March 2022 (UTC+1) and their UTC hour ends."""
    local = pd.date_range("2022-03-01 02:00", "2022-04-01 01:00", freq="h")
    return local, local - pd.Timedelta(hours=UTC_OFFSET)


def _raw_met(local):
    """The logger's own export: its names, day/month/year labels, km/h, hPa."""
    rng = np.random.default_rng(3)
    n = len(local)
    day = np.clip(np.sin(np.pi * (local.hour.values - 6) / 12), 0, None)
    return pd.DataFrame({
        "station": "corrow",
        "datetime_local": local.strftime("%d/%m/%Y %H:%M"),
        "AirT_C": (5 + 6 * day + rng.normal(0, 1, n)).round(2),
        "RH_pct": np.clip(85 - 25 * day + rng.normal(0, 4, n), 30, 100).round(1),
        "WS_kmh": (3.6 * (1.0 + 3.5 * day + rng.gamma(2, 0.4, n))).round(2),
        "GlobRad_Wm2": (450 * day ** 1.5).round(1),
        "Rain_mm": np.where(rng.random(n) < 0.08, 1.2, 0.0),
        "BaroP_hPa": (975 + rng.normal(0, 3, n)).round(1)})


def _as_workbench_met(raw):
    """What the analyst writes after reading docs/data_formats.md section 4."""
    m = raw.rename(columns={"station": "site", "datetime_local": "time",
                            "AirT_C": "temperature [degC]", "RH_pct": "relative_humidity [%]",
                            "WS_kmh": "wind_speed [km/h]",
                            "GlobRad_Wm2": "solar_radiation [W/m2]",
                            "Rain_mm": "precipitation [mm]", "BaroP_hPa": "pressure [hPa]"})
    m["time"] = pd.to_datetime(m["time"], format="%d/%m/%Y %H:%M").dt.strftime("%Y-%m-%dT%H:%M")
    return m


def _monitor(local):
    """The continuous monitor: SO2 [ppb] high by day (as Vd), NH3 [ug/m3]; a few gaps."""
    rng = np.random.default_rng(5)
    n = len(local)
    day = np.clip(np.sin(np.pi * (local.hour.values - 6) / 12), 0, None)
    so2 = (0.2 + 3.0 * day * rng.uniform(0.7, 1.3, n)).round(3)
    nh3 = (1.0 + 2.0 * day + rng.uniform(0, 0.5, n)).round(2)
    so2[[30, 31, 200]] = np.nan               # monitor outages
    nh3[[50, 400]] = np.nan
    return pd.DataFrame({"hour_end_local": local, "SO2_ppb": so2, "NH3_ugm3": nh3})


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    """The analyst's folder with the inputs as the docs ask for them, and one run."""
    d = tmp_path_factory.mktemp("ownsite")
    local, _ = _hours()
    (d / "sites.toml").write_text(SITES, encoding="utf-8")
    _as_workbench_met(_raw_met(local)).to_csv(d / "met.csv", index=False)
    mon = _monitor(local)
    mon.to_csv(d / "monitor_raw.csv", index=False)
    fmt = "%Y-%m-%dT%H:%M"
    hourly = pd.DataFrame({"site": "corrow",
                           "start": (mon.hour_end_local - pd.Timedelta("1h")).dt.strftime(fmt),
                           "end": mon.hour_end_local.dt.strftime(fmt), "sampler_id": "MON1",
                           "SO2 [ppb]": mon.SO2_ppb, "NH3 [ug/m3]": mon.NH3_ugm3})
    weeks = pd.date_range("2022-03-01 09:00", "2022-03-29 09:00", freq="7D")
    weekly = pd.DataFrame({"site": "corrow", "start": weeks[:-1].strftime(fmt),
                           "end": weeks[1:].strftime(fmt), "sampler_id": "FP1",
                           "HNO3 [ug/m3]": [0.6, 0.5, 0.7, 0.4], "pSO4 [ug/m3]": [1.2, 1.0, 1.4, 0.9],
                           "pNO3 [ug/m3]": [2.0, 1.6, 2.2, 1.5], "pNH4 [ug/m3]": [0.9, 0.8, 1.0, 0.7]})
    with open(d / "air.csv", "w", encoding="utf-8") as f:
        f.write("# reference_state: ambient\n")
        pd.concat([hourly, weekly]).to_csv(f, index=False)
    # weekly chemistry; gauge depth = the sum of the daily gauge read at 09:00 local
    daily = pd.Series([3.1, 0, 0, 5.2, 1.0, 0, 0] * 4,
                      index=pd.date_range("2022-03-02 09:00", periods=28, freq="D"))
    gauge = [daily[(daily.index > a) & (daily.index <= b)].sum() for a, b in zip(weeks[:-1], weeks[1:])]
    pd.DataFrame({"site": "corrow", "start": weeks[:-1].strftime(fmt), "end": weeks[1:].strftime(fmt),
                  "sampler_id": "WO1", "gauge_depth [mm]": gauge, "pH": [4.9, 5.1, 4.8, 5.0],
                  "SO4 [mg/L]": [0.9, 0.7, 1.1, 0.8], "NO3_as_N [mg/L]": [0.35, 0.3, 0.4, 0.3],
                  "NH4_as_N [mg/L]": [0.4, 0.35, 0.45, 0.3], "Cl [mg/L]": [1.1, 0.9, 1.2, 1.0],
                  "Na [mg/L]": [0.6, 0.5, 0.65, 0.55], "K [mg/L]": [0.04] * 4,
                  "Ca [mg/L]": [0.08] * 4, "Mg [mg/L]": [0.07] * 4}
                 ).to_csv(d / "precipitation.csv", index=False)
    (d / "scenario.toml").write_text(
        '[inputs]\nsites = "sites.toml"\nprecipitation = "precipitation.csv"\n'
        'air = "air.csv"\nmet = "met.csv"\n\n[period]\nstart = "2022-03-01"\n'
        'end = "2022-04-01"\nresolution = "month"\n', encoding="utf-8")
    assert main(["run", str(d / "scenario.toml"), "--out", str(d / "run")]) == 0
    return d


def _hand_flux(d, species, receptor, t0, t1):
    """Dry deposition [mol m-2] of an hourly species over the hours whose middle lies in
    [t0, t1) (UTC), from the raw monitor and met files and the run's velocities.nc:
    (sum of C_h Vd_h 3600 s over the measured hours, measured hours, hours)."""
    mon = pd.read_csv(d / "monitor_raw.csv", parse_dates=["hour_end_local"])
    mon.index = mon.hour_end_local - pd.Timedelta(hours=UTC_OFFSET)         # UTC hour end
    met = pd.read_csv(d / "met.csv", parse_dates=["time"])
    met.index = met["time"] - pd.Timedelta(hours=UTC_OFFSET)
    vd = xr.open_dataset(d / "run" / "velocities.nc")[f"vd_{species}"].sel(
        surface=f"corrow/{receptor}").to_series()
    # an hour without Vd (the record's first: no hour before it) takes the mean of the
    # same hour of the day in that month (docs/budget.md, "Gaps in Vd"; >= 7 valid hours)
    slot = [vd.index.year, vd.index.month, (vd.index - pd.Timedelta("1h")).hour]
    vd = vd.fillna(vd.groupby(slot).transform("mean"))
    ends = pd.date_range(t0 + pd.Timedelta("1h"), t1, freq="h")        # hours inside
    if species == "SO2":      # ppb: mixing ratio x n = p / (R T) of the hour [mol m-3]
        n_air = met["pressure [hPa]"] * 100.0 / (R * (met["temperature [degC]"] + 273.15))
        c = (mon["SO2_ppb"] * 1e-9 * n_air).reindex(ends)
    else:                     # ug/m3 at ambient conditions -> mol m-3
        c = (mon["NH3_ugm3"] * 1e-6 / M_NH3).reindex(ends)
    f = c * vd.reindex(ends) * 3600.0
    return float(f.sum()), int(f.notna().sum()), len(ends)


@pytest.mark.parametrize("species", ["SO2", "NH3"])
@pytest.mark.parametrize("receptor", ["moorland", "conifer_forest"])
def test_week_of_hourly_dry_flux_by_hand(site, species, receptor):
    """One week of the dry flux: the workbench's deposition over a custom week equals the
    sum over hours of C_h x Vd_h x 3600 s, scaled by hours / measured hours (the
    documented coverage rule, docs/budget.md), and not the week's mean C times mean Vd:
    the hourly concentrations are used hour by hour."""
    from workbench.periods import make_periods
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    t0, t1 = pd.Timestamp("2022-03-07"), pd.Timestamp("2022-03-14")
    total, measured, hours = _hand_flux(site, species, receptor, t0, t1)
    expected = total * hours / measured
    sc = load_scenario(site / "scenario.toml")
    dry, _ = Study.from_scenario(sc).dry(sc.options["dry"], sc.options["budget"],
                                         make_periods(None, None, "custom",
                                                      ranges=[(t0, t1, "week")]))
    got = float(dry["deposition"].sel(site="corrow", receptor=receptor, species=species)
                .squeeze())
    assert got == pytest.approx(expected, rel=1e-5)
    # the SO2 monitor's outage of 9 March falls in this week: the coverage rule is used
    assert (measured, hours) == ((167, 168) if species == "SO2" else (168, 168))


def test_month_budget_matches_hand_sum(site):
    """budget.csv's dry SO2 of March (kg S/ha) = the hourly hand sum over the month's
    measured hours x hours / measured hours, at both receptor surfaces."""
    b = pd.read_csv(site / "run" / "budget.csv")
    for rec in ("moorland", "conifer_forest"):
        total, measured, hours = _hand_flux(site, "SO2", rec, pd.Timestamp("2022-03-01"),
                                            pd.Timestamp("2022-04-01"))
        row = b[(b.period == "2022-03") & (b.receptor == rec) & (b.species == "SO2")
                & (b.pathway == "dry")].iloc[0]
        kg_s_ha = total * hours / measured * 32.06e-3 * 1e4          # mol m-2 -> kg S/ha
        assert row.flux_kg_ha == pytest.approx(kg_s_ha, rel=1e-5)
        assert row.air_coverage == pytest.approx(measured / hours, abs=1e-9)


def test_hourly_not_averaged(site):
    """Hour by hour against averaging: with SO2 and Vd both high by day, mean C x mean Vd
    underestimates; the run's number is the hour-by-hour one."""
    t0, t1 = pd.Timestamp("2022-03-01"), pd.Timestamp("2022-04-01")
    total, measured, hours = _hand_flux(site, "SO2", "moorland", t0, t1)
    mon = pd.read_csv(site / "monitor_raw.csv", parse_dates=["hour_end_local"])
    met = pd.read_csv(site / "met.csv")
    n_air = met["pressure [hPa]"].values * 100.0 / (R * (met["temperature [degC]"].values + 273.15))
    vd = xr.open_dataset(site / "run" / "velocities.nc")["vd_SO2"].sel(
        surface="corrow/moorland").values
    ok = np.isfinite(mon.SO2_ppb.values)
    averaged = np.mean(mon.SO2_ppb.values[ok] * 1e-9 * n_air[ok]) * np.nanmean(vd[ok]) * 3600 * measured
    assert abs(averaged / total - 1) > 0.05        # the two readings differ here
    b = pd.read_csv(site / "run" / "budget.csv")
    row = b[(b.period == "2022-03") & (b.receptor == "moorland") & (b.species == "SO2")
            & (b.pathway == "dry")].iloc[0]
    assert row.flux_kg_ha == pytest.approx(total * hours / measured * 32.06e-3 * 1e4, rel=1e-5)


def test_report_and_csvs_read_as_that_user(site):
    """The run folder of the trial: both receptors, critical loads for the moorland only,
    an N total without NO2 marked as lacking it, the bracket note in hours."""
    run = site / "run"
    s = pd.read_csv(run / "summary.csv")
    assert set(s.receptor) == {"moorland", "conifer_forest"}
    assert (s.N_total_missing_components.astype(str) == "NO2").all()
    ex = pd.read_csv(run / "exceedance.csv")
    assert "moorland" in set(ex.receptor)
    html = (run / "report.html").read_text(encoding="utf-8")
    # the hourly monitor's samples were "of about 0 d" before
    assert "MON1 (" in html and "samples of about 1 h" in html
    assert "samples of about 0 d" not in html


# ---------------------------------------------------------------- the trial's defects


def test_report_figure_of_a_month_study_shows_its_month(site):
    """A study of one month at resolution "month": no calendar year passes, and the
    report's budget figure drew the year 2022 (completeness 8 %, the dry parts scaled
    to the year and the wet not) beside a table of 2022-03; it draws the month now, and
    the exceedance section no longer says "no critical loads" for a site that has them."""
    html = (site / "run" / "report.html").read_text(encoding="utf-8")
    assert "S total 2022-03:" in html and "N total 2022-03:" in html
    assert "S total 2022:" not in html
    assert "No critical loads in sites.toml" not in html
    assert "No year passes completeness: each year's exceedance" in html

def test_met_from_another_logger_names_every_missing_column(site, tmp_path):
    """Before: one missing column per attempt (site, time, wind_speed, ... six runs of
    check for a logger export). Now every missing column, header examples with units,
    and the file's own columns, in one located message."""
    from workbench.io.met import read_met
    from workbench.io.sites import read_sites
    local, _ = _hours()
    raw = _raw_met(local).rename(columns={"station": "site"})
    raw.to_csv(tmp_path / "logger.csv", index=False)
    cat = read_sites(site / "sites.toml")
    with pytest.raises(InputError) as e:
        read_met(tmp_path / "logger.csv", cat)
    msg = str(e.value)
    assert "line 1" in msg and "logger.csv" in msg
    for name in ("'time'", "'wind_speed'", "'temperature'", "'relative_humidity'",
                 "'solar_radiation'", "'precipitation'", "'pressure'"):
        assert name in msg
    assert "'wind_speed [m/s]'" in msg and "'pressure [hPa]'" in msg
    assert "'WS_kmh'" in msg and "'BaroP_hPa'" in msg


def test_hourly_monitor_with_one_time_column_gets_the_period_hint(site, tmp_path):
    """A monitor's export has one label per hour; the air file takes periods. Before:
    'expected a column named start' only."""
    from workbench.io.samples import read_air
    from workbench.io.sites import read_sites
    pd.DataFrame({"site": "corrow", "time": ["2022-03-01T01:00", "2022-03-01T02:00"],
                  "SO2 [ppb]": [0.5, 0.6]}).to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(InputError) as e:
        read_air(tmp_path / "a.csv", read_sites(site / "sites.toml"))
    msg = str(e.value)
    assert "column 'start'" in msg and "'end'" in msg
    assert "a 'time' column" in msg and "start 2022-01-01T00:00, end 2022-01-01T01:00" in msg


def test_period_inside_a_year_is_said(site, capsys):
    """Before: [period] start/end of one week at resolution "year" gave the whole year
    2022 without a word. Now check (and run) say that the periods are whole years."""
    text = (site / "scenario.toml").read_text(encoding="utf-8")
    week = site / "week.toml"
    week.write_text(text.replace('start = "2022-03-01"', 'start = "2022-03-07T00:00"')
                    .replace('end = "2022-04-01"', 'end = "2022-03-14T00:00"')
                    .replace('"month"', '"year"'), encoding="utf-8")
    assert main(["check", str(week)]) == 0
    out = " ".join(capsys.readouterr().out.split())      # the words, lines unwrapped
    assert ("note: [period] start 2022-03-07 lies inside a year period: the budget covers "
            "whole year periods, from 2022-01-01 to 2023-01-01") in out
    assert "note: [period] end 2022-03-14 lies inside a year period" in out
    assert main(["check", str(site / "scenario.toml")]) == 0
    assert "lies inside" not in capsys.readouterr().out       # on the boundaries: nothing


def test_flagged_total_lacking_a_component_is_not_ranked_as_full():
    """A total flagged for kept samples that also lacks NO2 (flagged wins over partial
    in the status of a sum) was ranked among the totals holding every component, and
    report.html marked it 'f' only."""
    from workbench.ranking import EVERY_COMPONENT, ranking
    from workbench.report import _pivot_html
    span = pd.DataFrame({"site": ["a", "b", "c"], "element": "N",
                         "flux_kg_ha_yr": [10.0, 12.0, 9.0],
                         "status": ["complete", "flagged", "flagged"],
                         "missing_components": [None, "NO2", None],
                         "years_used": ["2022", "2022", "2022"]})
    r = ranking(span, "N").set_index("site")
    assert r.loc["a", "group"] == EVERY_COMPONENT and r.loc["c", "group"] == EVERY_COMPONENT
    assert r.loc["b", "group"] == "partial: without NO2"
    per = span.assign(receptor="moorland", period="2022")
    html = _pivot_html(per)
    assert "<td>12.0 f p</td>" in html and "<td>9.00 f</td>" in html and "<td>10.0</td>" in html


def _precip_with_gauge_rows(site, tmp_path, flag=""):
    """The trial's weekly samples plus the daily gauge appended as sampler 'RG1'."""
    p = pd.read_csv(site / "precipitation.csv")
    days = pd.date_range("2022-03-02 09:00", periods=8, freq="D")
    g = pd.DataFrame({"site": "corrow", "start": (days - pd.Timedelta("1D")).strftime("%Y-%m-%dT%H:%M"),
                      "end": days.strftime("%Y-%m-%dT%H:%M"), "sampler_id": "RG1",
                      "gauge_depth [mm]": [3.1, 0, 0, 5.2, 1.0, 0, 0, 3.1]})
    if flag:
        p["flags"] = ""
        g["flags"] = flag
    pd.concat([p, g]).to_csv(tmp_path / "p.csv", index=False)
    return tmp_path / "p.csv"


def test_daily_gauge_rows_as_a_sampler_are_refused(site, tmp_path):
    """Before: the daily gauge appended under its own sampler_id was read as samples
    without chemistry (excluded one by one), and the share of precipitation in kept
    flagged samples fell by half without a word. Now an error at its first wet row."""
    from workbench.io.samples import read_precipitation
    from workbench.io.sites import read_sites
    path = _precip_with_gauge_rows(site, tmp_path)
    with pytest.raises(InputError) as e:
        read_precipitation(path, read_sites(site / "sites.toml"))
    msg = str(e.value)
    assert "p.csv" in msg and "line 6" in msg and "column 'sampler_id'" in msg
    assert "'RG1'" in msg and "a separate gauge record?" in msg and "'WO1'" in msg
    assert "summed over the sample's period" in msg


def test_unanalysed_samples_of_a_second_collector_are_read(site, tmp_path):
    """Samples collected and not analysed carry a flag: read as before, not refused."""
    from workbench.io.samples import read_precipitation
    from workbench.io.sites import read_sites
    ds, ledger = read_precipitation(_precip_with_gauge_rows(site, tmp_path, "not_analysed"),
                                    read_sites(site / "sites.toml"))
    assert (ds["sampler_id"].values == "RG1").sum() == 8


@pytest.mark.parametrize("header, hint", [
    ("pressure [mb]", "write 'mbar' or 'hPa' (pint reads 'mb' as millibarn, an area)"),
    ("temperature [deg C]", "write 'degC'"),
    ("temperature [C]", "write 'degC' (pint reads 'C' as coulomb)"),
    ("wind_speed [kmh]", "write 'km/h'"),
    ("relative_humidity [%RH]", "write '%'"),
    ("precipitation [mm/h]", "write 'mm' (the hour's total)")])
def test_logger_unit_spellings_get_the_spelling_to_write(site, tmp_path, header, hint):
    """A logger's unit spellings that pint reads as another unit (mb: millibarn, C:
    coulomb) or not at all. Before: the dimension error alone ('unit 'mb' has dimension
    [length] ** 2'), puzzling to a meteorologist."""
    from workbench.io.met import read_met
    from workbench.io.sites import read_sites
    m = pd.read_csv(site / "met.csv").head(48)
    name = header.split(" [")[0]
    m = m.rename(columns={c: header for c in m.columns if c.split(" [")[0] == name})
    m.to_csv(tmp_path / "m.csv", index=False)
    with pytest.raises(InputError) as e:
        read_met(tmp_path / "m.csv", read_sites(site / "sites.toml"))
    assert f"column '{header}'" in str(e.value) and hint in str(e.value)
