"""Budgets computed by hand: a tiny scenario with fixed velocities and known rain.

Everything expected here follows from arithmetic on the inputs (molar masses from the
IUPAC atomic weights of the species table: S 32.06, N 14.007 g/mol).
"""
import json

import numpy as np
import pandas as pd
import pytest

from workbench.cli import run_scenario

SITES = """\
[[site]]
id = "alpha"
name = "Alpha Test Meadow"
latitude = 52.0
longitude = 5.0
elevation_m = 10.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
"""
WEEKS = pd.date_range("2021-02-01", periods=5, freq="7D")
GAUGE = [10.0, 0.0, 20.0, 5.0]           # mm per week; week 2 is dry
SO4_UMOL = [20.0, np.nan, 10.0, 40.0]    # umol/L sulfate
NO3_UMOL = [30.0, np.nan, 15.0, 60.0]
NH4_UMOL = [25.0, np.nan, 20.0, 50.0]
SO2_UG = [2.0, 4.0, 1.0, 3.0]            # ug/m3 weekly
HNO3_UG = [0.5, 0.6, 0.4, 0.5]
VD = {"SO2": 0.5, "HNO3": 2.0}           # cm/s, fixed


def _write(tmp_path, drop_air_week=None, budget=""):
    (tmp_path / "sites.toml").write_text(SITES)
    rows = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],"
            "NH4 [umol/L],Na [umol/L]"]
    for i in range(4):
        if GAUGE[i] == 0:
            rows.append(f"alpha,{WEEKS[i]:%Y-%m-%dT%H:%M},{WEEKS[i + 1]:%Y-%m-%dT%H:%M},0,0,,,,,")
        else:
            # H+ closes the ion balance: 2 SO4 + NO3 - NH4 (ueq/L)
            h = 2 * SO4_UMOL[i] + NO3_UMOL[i] - NH4_UMOL[i]
            ph = -np.log10(h * 1e-6)
            rows.append(f"alpha,{WEEKS[i]:%Y-%m-%dT%H:%M},{WEEKS[i + 1]:%Y-%m-%dT%H:%M},"
                        f"{GAUGE[i]},{GAUGE[i] * 0.95},{ph:.4f},{SO4_UMOL[i]},{NO3_UMOL[i]},"
                        f"{NH4_UMOL[i]},0.0")
    (tmp_path / "precip.csv").write_text("\n".join(rows) + "\n")
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],HNO3 [ug/m3]"]
    for i in range(4):
        if i == drop_air_week:
            continue
        air.append(f"alpha,{WEEKS[i]:%Y-%m-%dT%H:%M},{WEEKS[i + 1]:%Y-%m-%dT%H:%M},"
                   f"{SO2_UG[i]},{HNO3_UG[i]}")
    (tmp_path / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range("2021-02-01T01:00", "2021-03-01T00:00", freq="h")
    week = np.minimum(((t - pd.Timedelta("1h")) - WEEKS[0]) // pd.Timedelta("7D"), 3)
    rain = np.zeros(len(t))
    for i in range(4):   # spread each week's rain over its first 10 hours
        idx = np.flatnonzero(week == i)[:10]
        rain[idx] = GAUGE[i] / 10
    met = pd.DataFrame({"site": "alpha", "time": t.strftime("%Y-%m-%dT%H:%M"),
                        "wind_speed [m/s]": 3.0, "temperature [degC]": 5.0,
                        "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": 0.0,
                        "precipitation [mm]": rain, "pressure [hPa]": 1012.0})
    met.to_csv(tmp_path / "met.csv", index=False)
    fixed = "\n".join(f"{k} = {v}" for k, v in VD.items())
    (tmp_path / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "2021-02-01"
end = "2021-03-01"
resolution = "month"

[budget]
sulfate_basis = "total"
{budget}

[dry.fixed_velocity]
{fixed}
""")
    return tmp_path / "scenario.toml"


def _get(table, element, pathway, species, period="2021-02"):
    r = table[(table["element"] == element) & (table["pathway"] == pathway)
              & (table["species"] == species) & (table["period"].astype(str) == str(period))]
    assert len(r) == 1, r
    return r.iloc[0]


def test_tiny_budget_by_hand(tmp_path):
    sc = _write(tmp_path)
    written, result, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    # wet S: PWM x total gauge depth = sum(C_i P_i); umol/L x mm = umol/m2 ... 1e-6 mol/m2
    wet_s_mol = sum(c * p for c, p in zip(SO4_UMOL, GAUGE) if p > 0) * 1e-6
    assert _get(table, "S", "wet", "SO4")["flux_kg_ha"] == pytest.approx(wet_s_mol * 32.06e-3 * 1e4, rel=1e-6)
    wet_n = sum((a + b) * p for a, b, p in zip(NO3_UMOL, NH4_UMOL, GAUGE) if p > 0) * 1e-6
    got_n = _get(table, "N", "wet", "NO3")["flux_kg_ha"] + _get(table, "N", "wet", "NH4")["flux_kg_ha"]
    assert got_n == pytest.approx(wet_n * 14.007e-3 * 1e4, rel=1e-6)
    # dry S: C [ug/m3] / M [g/mol] x Vd [m/s] x 7 days, per week
    week_s = 7 * 86400
    so2_mol = sum(c * 1e-6 / 64.058 * VD["SO2"] / 100 * week_s for c in SO2_UG)
    dry_s = _get(table, "S", "dry", "SO2")
    assert dry_s["flux_kg_ha"] == pytest.approx(so2_mol * 32.06e-3 * 1e4, rel=1e-6)
    assert dry_s["status"] == "complete"
    hno3_mol = sum(c * 1e-6 / 63.012 * VD["HNO3"] / 100 * week_s for c in HNO3_UG)
    assert _get(table, "N", "dry", "HNO3")["flux_kg_ha"] == pytest.approx(hno3_mol * 14.007e-3 * 1e4, rel=1e-6)
    # totals equal the sum of their pathways
    tot = _get(table, "S", "total", "all")
    assert tot["flux_kg_ha"] == pytest.approx(_get(table, "S", "wet", "all")["flux_kg_ha"]
                                             + _get(table, "S", "dry", "all")["flux_kg_ha"])
    # eq/ha from charge and molar mass: 2 eq per mol S, 1 per mol N
    assert tot["flux_eq_ha"] == pytest.approx(tot["flux_kg_ha"] / 32.06e-3 * 2, rel=1e-9)
    # a yearly rate of a 28-day month of a common year: x 365/28
    assert tot["flux_kg_ha_yr"] == pytest.approx(tot["flux_kg_ha"] * 365 / 28)
    # NH3 and particles were not measured: the N total is partial, and says so
    assert _get(table, "N", "dry", "NH3")["status"] == "missing"
    n_tot = _get(table, "N", "total", "all")
    assert n_tot["status"] == "partial"
    assert set(n_tot["missing_components"].split()) == {"pNO3", "pNH4", "NH3", "NO2"}


def test_missing_week_scales_and_flags(tmp_path):
    sc = _write(tmp_path, drop_air_week=1, budget="min_air_coverage = 0.8")
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    week_s = 7 * 86400
    kept = [c for i, c in enumerate(SO2_UG) if i != 1]
    so2_mol = sum(c * 1e-6 / 64.058 * VD["SO2"] / 100 * week_s for c in kept) * 4 / 3
    row = _get(table, "S", "dry", "SO2")
    assert row["flux_kg_ha"] == pytest.approx(so2_mol * 32.06e-3 * 1e4, rel=1e-6)
    assert row["completeness"] == pytest.approx(0.75)
    assert row["status"] == "flagged"
    assert _get(table, "S", "total", "all")["status"] == "flagged"


def test_provenance_hash_changes_with_one_byte(tmp_path):
    sc = _write(tmp_path)
    w1, _, _ = run_scenario(sc, tmp_path / "out1", quiet=True)
    p1 = json.loads(w1["provenance.json"].read_text())
    air = tmp_path / "air.csv"
    text = air.read_text()
    air.write_text(text.replace("2.0,0.5", "2.1,0.5", 1))
    w2, _, _ = run_scenario(sc, tmp_path / "out2", quiet=True)
    p2 = json.loads(w2["provenance.json"].read_text())
    assert p1["inputs"]["air"]["sha256"] != p2["inputs"]["air"]["sha256"]
    assert p1["inputs"]["met"]["sha256"] == p2["inputs"]["met"]["sha256"]
    assert p2["scenario"]["budget"]["sulfate_basis"] == "total"
    assert p2["scenario"]["dry"]["fixed_velocity"] == VD


def _with_particles(tmp_path, collector="wet_only", correction=None, pna=True):
    tmp_path.mkdir(parents=True, exist_ok=True)
    sc = _write(tmp_path)
    if collector != "wet_only":
        sites = tmp_path / "sites.toml"
        sites.write_text(sites.read_text() + f'collector = "{collector}"\n')
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    lines[1] += ",pSO4 [ug/m3]" + (",pNa [ug/m3]" if pna else "")
    lines[2:] = [ln + ",2.0" + (",1.0" if pna else "") for ln in lines[2:]]
    air.write_text("\n".join(lines) + "\n")
    text = sc.read_text().replace("SO2 = 0.5", "SO2 = 0.5\npSO4 = 0.2")
    if correction:
        text = text.replace('sulfate_basis = "total"', f'sulfate_basis = "total"\nbulk_correction = "{correction}"')
    sc.write_text(text)
    return sc


def test_nss_particulate_sulfate_from_sodium(tmp_path):
    """nss pSO4 = pSO4 - r pNa with Keene et al. (1986) SO4/Na = 0.121 in equivalents,
    i.e. 0.0605 mol/mol (arithmetic)."""
    sc = _with_particles(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    so4 = 2.0e-6 / 96.056          # mol/m3
    na = 1.0e-6 / 22.990
    nss = so4 - 0.121 / 2 * na
    expected = nss * 0.2 / 100 * 28 * 86400 * 32.06e-3 * 1e4
    assert _get(table, "S", "dry", "pSO4")["flux_kg_ha"] == pytest.approx(expected, rel=1e-3)


def test_bulk_collector_corrections(tmp_path):
    """scale_wet multiplies the bulk deposition by bulk_wet_factor (0.8); exclude_particles
    takes the particles as caught in the bulk wet ion (0 in the dry pathway, the wet
    ion's status), with the reason in the note."""
    base, _, _ = run_scenario(_with_particles(tmp_path / "a", pna=False), tmp_path / "a" / "o", quiet=True)
    wet_only = _get(pd.read_csv(base["budget.csv"]), "S", "wet", "SO4")["flux_kg_ha"]
    scaled, _, _ = run_scenario(_with_particles(tmp_path / "b", "bulk", "scale_wet", pna=False),
                                tmp_path / "b" / "o", quiet=True)
    t = pd.read_csv(scaled["budget.csv"])
    assert _get(t, "S", "wet", "SO4")["flux_kg_ha"] == pytest.approx(0.8 * wet_only)
    assert "scale_wet" in _get(t, "S", "wet", "SO4")["note"]
    assert _get(t, "S", "dry", "pSO4")["status"] == "complete"
    excl, _, _ = run_scenario(_with_particles(tmp_path / "c", "bulk", "exclude_particles", pna=False),
                              tmp_path / "c" / "o", quiet=True)
    t = pd.read_csv(excl["budget.csv"])
    # one rule (docs/budget.md): taken as caught, the particles add 0 in the dry pathway
    # and take the status of the wet ion that holds them, so the totals are not partial
    row = _get(t, "S", "dry", "pSO4")
    wet = _get(t, "S", "wet", "SO4")
    assert row["flux_kg_ha"] == 0.0 and row["status"] == wet["status"]
    assert "caught by the bulk collector" in row["note"] and "SO4" in row["note"]
    total = _get(t, "S", "total", "all")
    assert "pSO4" not in str(total["missing_components"]).split()
    assert total["flux_kg_ha"] == pytest.approx(
        wet_only + _get(t, "S", "dry", "SO2")["flux_kg_ha"])     # wet (bulk) + SO2 only


def test_potential_acidity_and_shares(tmp_path):
    """Potential acidity = 2 nss-S + oxidized N + reduced N [eq/ha] (common practice)."""
    sc = _write(tmp_path)
    written, result, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"])
    s = pd.read_csv(written["summary.csv"]).iloc[0]
    s_eq = _get(t, "S", "total", "all")["flux_eq_ha"]
    n_eq = _get(t, "N", "total", "all")["flux_eq_ha"]
    assert s["potential_acidity_eq_ha"] == pytest.approx(s_eq + n_eq)
    assert s["oxidized_N_kg_ha"] + s["reduced_N_kg_ha"] == pytest.approx(_get(t, "N", "total", "all")["flux_kg_ha"])
    assert s["S_dry_share"] + s["S_wet_share"] == pytest.approx(1.0)


def test_span_mean_of_passing_years():
    """The span is the mean of the yearly rates of the years that pass; flagged years
    are excluded and listed."""
    from workbench.tables import span_table
    rows = []
    for year, value, status in ((2019, 10.0, "complete"), (2020, 30.0, "flagged"), (2021, 14.0, "partial")):
        for pathway, species in (("wet", "SO4"), ("total", "all")):
            rows.append(dict(site="a", receptor="grass", period_start=pd.Timestamp(f"{year}-01-01"),
                             period_end=pd.Timestamp(f"{year + 1}-01-01"), element="S",
                             pathway=pathway, species=species, flux_kg_ha=value, flux_eq_ha=value * 62.4,
                             flux_kg_ha_yr=value, flux_eq_ha_yr=value * 62.4, completeness=0.9,
                             status=status, period=str(year)))
    span = span_table(pd.DataFrame(rows))
    tot = span[span["species"] == "all"].iloc[0]
    assert tot["flux_kg_ha_yr"] == pytest.approx(12.0)
    assert tot["years_used"] == "2019 2021" and tot["years_excluded"] == "2020"
    assert tot["status"] == "partial"


def test_year_needs_every_season(tmp_path):
    """Weekly SO2 over 2021 except September-November: coverage passes 0.7 but a season
    is missing, so the year is flagged; with require_all_seasons = false it is complete
    (common practice: a year needs every season represented)."""
    (tmp_path / "sites.toml").write_text(SITES)
    weeks = pd.date_range("2021-01-01", "2022-01-01", freq="7D")
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3]"]
    for a, b in zip(weeks[:-1], weeks[1:]):
        if not (9 <= a.month <= 11 or 9 <= b.month <= 11 and b.day > 1):
            air.append(f"alpha,{a:%Y-%m-%dT%H:%M},{b:%Y-%m-%dT%H:%M},2.0")
    (tmp_path / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range("2021-01-01T01:00", "2022-01-01T00:00", freq="h")
    pd.DataFrame({"site": "alpha", "time": t.strftime("%Y-%m-%dT%H:%M"), "wind_speed [m/s]": 3.0,
                  "temperature [degC]": 10.0, "relative_humidity [%]": 80.0,
                  "solar_radiation [W/m2]": 0.0, "precipitation [mm]": 0.0,
                  "pressure [hPa]": 1012.0}).to_csv(tmp_path / "met.csv", index=False)
    for require, expected in (("true", "flagged"), ("false", "complete")):
        (tmp_path / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
air = "air.csv"
met = "met.csv"
[period]
start = "2021-01-01"
end = "2022-01-01"
[budget]
min_air_coverage = 0.7
require_all_seasons = {require}
[dry.fixed_velocity]
SO2 = 0.5
""")
        written, _, _ = run_scenario(tmp_path / "scenario.toml", tmp_path / f"out_{require}", quiet=True)
        row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "SO2", period="2021")
        assert row["air_coverage"] == pytest.approx(row["completeness"])
        assert 0.7 <= row["air_coverage"] < 0.8
        assert row["status"] == expected


def _model_case(tmp_path, met_change=None, no2=False):
    """The tiny scenario with the velocity model instead of fixed Vd (NO2 in ppb if
    asked) and the met file changed by `met_change`."""
    sc = _write(tmp_path)
    sc.write_text(sc.read_text().split("[dry.fixed_velocity]")[0])
    if no2:
        air = (tmp_path / "air.csv").read_text().splitlines()
        air[1] += ",NO2 [ppb]"
        air[2:] = [ln + ",5.0" for ln in air[2:]]
        (tmp_path / "air.csv").write_text("\n".join(air) + "\n")
    if met_change:
        met = pd.read_csv(tmp_path / "met.csv")
        met_change(met)
        met.to_csv(tmp_path / "met.csv", index=False)
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    return pd.read_csv(written["budget.csv"])


def test_no_velocity_is_missing_not_zero(tmp_path):
    """A masked temperature leaves no Vd for any hour: the dry components are missing
    with the reason, never 0.0 complete, and the totals name them."""
    t = _model_case(tmp_path, lambda m: m.__setitem__("temperature [degC]", np.nan), no2=True)
    for el, sp in (("S", "SO2"), ("N", "HNO3"), ("N", "NO2")):
        row = _get(t, el, "dry", sp)
        assert row["status"] == "missing" and np.isnan(row["flux_kg_ha"])
        assert "no deposition velocity" in row["note"]
    assert "SO2" in _get(t, "S", "total", "all")["missing_components"].split()
    assert _get(t, "S", "dry", "all")["status"] == "missing"
    assert _get(t, "S", "wet", "SO4")["status"] == "complete"


def test_masked_pressure_makes_a_mixing_ratio_missing(tmp_path):
    """NO2 in ppb needs the molar density of air: with pressure masked it is missing
    (SO2 in ug/m3 is not touched)."""
    t = _model_case(tmp_path, lambda m: m.__setitem__("pressure [hPa]", np.nan), no2=True)
    row = _get(t, "N", "dry", "NO2")
    assert row["status"] == "missing" and np.isnan(row["flux_kg_ha"])
    assert "molar density of air" in row["note"]
    assert _get(t, "S", "dry", "SO2")["status"] == "complete"
    assert _get(t, "S", "dry", "SO2")["flux_kg_ha"] > 0


def test_free_acidity_precipitation_and_pwm_outputs(tmp_path):
    """H+ closes each sample's balance (2 SO4 + NO3 - NH4 ueq/L: 45, 15, 90); its PWM
    is (45 x 10 + 15 x 20 + 90 x 5) / 35 = 34.29 umol/L, pH 4.465; H+ deposited is
    34.29 umol/L x 35 mm = 1.2 mmol m-2 = 12 eq/ha (1 eq per mol H+).  The PWM of SO4
    is (20 x 10 + 10 x 20 + 40 x 5) / 35 = 17.14 umol/L (arithmetic)."""
    sc = _write(tmp_path)
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"])
    so4 = _get(t, "S", "wet", "SO4")
    assert so4["precipitation_mm"] == pytest.approx(35.0)
    assert so4["pwm_umol_L"] == pytest.approx(600 / 35, rel=1e-6)
    h_pwm = (45 * 10 + 15 * 20 + 90 * 5) / 35
    assert so4["pH_pwm"] == pytest.approx(-np.log10(h_pwm * 1e-6), abs=1e-3)
    assert so4["wet_H_eq_ha"] == pytest.approx(12.0, rel=1e-3)   # pH given to 4 decimals
    s = pd.read_csv(written["summary.csv"]).iloc[0]
    assert s["precipitation_mm"] == pytest.approx(35.0)
    assert s["wet_H_eq_ha"] == pytest.approx(12.0, rel=1e-3)
    assert s["pwm_NO3_umol_L"] == pytest.approx((30 * 10 + 15 * 20 + 60 * 5) / 35)
    assert s["S_total_kg_ha"] == pytest.approx(_get(t, "S", "total", "all")["flux_kg_ha"])
    assert s["N_total_kg_ha"] == pytest.approx(_get(t, "N", "total", "all")["flux_kg_ha"])
    import xarray as xr
    with xr.open_dataset(written["budget.nc"]) as nc:
        assert float(nc["precipitation"].item()) == pytest.approx(35.0)
        assert nc["pwm"].attrs["units"] == "mol m-3"
        assert float(nc["pH_pwm"].item()) == pytest.approx(so4["pH_pwm"])


def test_summary_lists_only_configured_pairs(tmp_path):
    """A second site on another land use adds a receptor: summary.csv keeps the pairs
    each site asks for (those of budget.csv), not every site x receptor."""
    sc = _write(tmp_path)
    (tmp_path / "sites.toml").write_text(SITES + SITES.replace('"alpha"', '"beta"').replace(
        '"grass"', '"deciduous_forest"').replace("canopy_height_m = 0.1", "canopy_height_m = 20.0")
        .replace("wind_height_m = 10.0", "wind_height_m = 30.0")
        .replace("sampler_height_m = 3.0", "sampler_height_m = 25.0"))
    written, result, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    assert result.budget.sizes["receptor"] == 2
    s = pd.read_csv(written["summary.csv"])
    t = pd.read_csv(written["budget.csv"])
    t = t[t["period"].astype(str) != "span"]
    pairs = set(zip(s["site"], s["receptor"]))
    assert pairs == set(zip(t["site"], t["receptor"]))
    assert pairs == {("alpha", "grass"), ("beta", "deciduous_forest")}


def test_site_without_sodium_falls_back_and_the_total_says_so(tmp_path):
    """nss basis, no Na at the site: wet SO4 is total SO4, flagged with the reason, and
    the S total keeps it and names it in flagged_components (it used to drop it)."""
    sc = _write(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    precip = tmp_path / "precip.csv"
    lines = precip.read_text().splitlines()
    precip.write_text("\n".join(ln.rsplit(",", 1)[0] + "," for ln in lines[1:])
                      .join([lines[0] + "\n", "\n"]))
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"])
    so4 = _get(t, "S", "wet", "SO4")
    assert so4["status"] == "flagged" and "total SO4 used" in so4["note"]
    wet_s_mol = sum(c * p for c, p in zip(SO4_UMOL, GAUGE) if p > 0) * 1e-6
    assert so4["flux_kg_ha"] == pytest.approx(wet_s_mol * 32.06e-3 * 1e4, rel=1e-6)
    tot = _get(t, "S", "total", "all")
    assert "SO4" in tot["flagged_components"].split()
    dry = _get(t, "S", "dry", "all")["flux_kg_ha"]
    assert tot["flux_kg_ha"] == pytest.approx(so4["flux_kg_ha"] + dry)


def test_an_ion_measured_in_few_samples_is_flagged(tmp_path):
    """SO4 blank in the 20 mm week: it stands for 15 of 35 mm (43 % < 70 %), so wet SO4
    fails completeness (flagged, passes false) while NO3 and NH4 stay complete."""
    sc = _write(tmp_path)
    precip = tmp_path / "precip.csv"
    lines = precip.read_text().splitlines()
    cells = lines[3].split(",")
    cells[6] = ""                                   # SO4 of the third week (20 mm)
    lines[3] = ",".join(cells)
    precip.write_text("\n".join(lines) + "\n")
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"])
    so4 = _get(t, "S", "wet", "SO4")
    assert so4["status"] == "flagged" and not so4["passes"]
    assert "SO4 valid for 42.9 % of the precipitation only" in so4["note"]
    assert _get(t, "N", "wet", "NO3")["status"] == "complete"
    assert not _get(t, "S", "total", "all")["passes"]


def test_span_uses_a_year_flagged_only_for_kept_samples():
    """A year flagged for kept flagged samples passes completeness (passes true): the span
    uses it and says flagged; a year failing completeness is still excluded."""
    from workbench.tables import span_table
    rows = []
    for year, value, status, passes in ((2019, 10.0, "complete", True),
                                        (2020, 20.0, "flagged", True),
                                        (2021, 90.0, "flagged", False)):
        for pathway, species in (("wet", "SO4"), ("total", "all")):
            rows.append(dict(site="a", receptor="grass", period_start=pd.Timestamp(f"{year}-01-01"),
                             period_end=pd.Timestamp(f"{year + 1}-01-01"), element="S",
                             pathway=pathway, species=species, flux_kg_ha=value,
                             flux_eq_ha=value * 62.4,
                             flux_kg_ha_yr=value, flux_eq_ha_yr=value * 62.4, completeness=0.9,
                             status=status, passes=passes, period=str(year)))
    tot = span_table(pd.DataFrame(rows)).query("species == 'all'").iloc[0]
    assert tot["flux_kg_ha_yr"] == pytest.approx(15.0)
    assert tot["years_used"] == "2019 2020" and tot["years_excluded"] == "2021"
    assert tot["status"] == "flagged"


def test_wet_sulfate_rows_say_their_basis(tmp_path):
    """budget.csv's wet S rows keep the label SO4 and say which sulfate they hold in
    `sulfate_basis`: total on the total basis, non-sea-salt on the nss basis with Na,
    total where the nss basis fell back (no Na at the site; the note says why); empty
    on every other row.  Before, the column did not exist and SO4 held nss SO4 silently."""
    (tmp_path / "total").mkdir()
    sc = _write(tmp_path / "total")
    written, _, _ = run_scenario(sc, tmp_path / "total" / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"], keep_default_na=False)
    assert _get(t, "S", "wet", "SO4")["sulfate_basis"] == "total"
    assert _get(t, "S", "wet", "all")["sulfate_basis"] == "total"
    rest = t[~((t["element"] == "S") & (t["pathway"] == "wet")) & (t["period"] != "span")]
    assert len(rest) and (rest["sulfate_basis"] == "").all()
    (tmp_path / "nss").mkdir()
    sc = _write(tmp_path / "nss")
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    precip = tmp_path / "nss" / "precip.csv"           # Na 1 umol/L in the wet weeks
    precip.write_text(precip.read_text().replace(",0.0\n", ",1.0\n"))
    written, _, _ = run_scenario(sc, tmp_path / "nss" / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"], keep_default_na=False)
    assert _get(t, "S", "wet", "SO4")["sulfate_basis"] == "non-sea-salt"
    assert _get(t, "S", "wet", "all")["sulfate_basis"] == "non-sea-salt"
    assert _get(t, "S", "total", "all")["sulfate_basis"] == ""
    (tmp_path / "nona").mkdir()
    sc = _write(tmp_path / "nona")
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    precip = tmp_path / "nona" / "precip.csv"
    lines = precip.read_text().splitlines()
    precip.write_text("\n".join(ln.rsplit(",", 1)[0] + "," for ln in lines[1:])
                      .join([lines[0] + "\n", "\n"]))
    written, _, _ = run_scenario(sc, tmp_path / "nona" / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"], keep_default_na=False)
    so4 = _get(t, "S", "wet", "SO4")
    assert so4["sulfate_basis"] == "total" and "total SO4 used" in so4["note"]
    assert _get(t, "S", "wet", "all")["sulfate_basis"] == "total"


def test_a_dry_component_without_vd_names_the_met_variable_with_no_value():
    """No Vd in any hour: the reason named no cause ("check the met record and the
    site's roughness and heights"); where the site's met has a variable the Vd reads in
    no hour, it is named, by variable; elsewhere the old words stay."""
    from workbench.budget import BudgetOptions
    from workbench.budgetstatus_dry import dry_status
    shape = (3, 1, 1)
    cov, none = np.ones(shape), np.zeros(shape)
    yes = np.ones(shape, bool)
    lacks = np.array(["wind speed", "temperature and solar radiation", ""],
                     object)[:, None, None]
    st, _, note = dry_status(cov, none, none, none, yes, yes, False, BudgetOptions(),
                             met_without=lacks)
    assert (st == "missing").all()
    note = note.ravel()
    assert note[0] == ("no deposition velocity for any hour of the period: wind speed has "
                       "no value in any hour of the site's met record")
    assert note[1].endswith(": temperature and solar radiation have no value in any hour "
                            "of the site's met record")
    assert "check the met record" in note[2]
    # a site with a Vd: nothing said of its met
    st, _, note = dry_status(cov, cov, none, cov, yes, yes, False, BudgetOptions(),
                             met_without=lacks)
    assert (note == "").all() and (st == "complete").all()
