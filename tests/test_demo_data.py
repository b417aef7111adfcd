"""Checks of the invented demo network in demo_data/ (read with pandas and tomllib only).

The files follow the input formats of issue 2 ("Input formats", "Demo network");
the package readers are not used here.  Each plausibility range names its source,
"common practice" where it is a fact of the trade, "from memory" where recalled.
"""
from __future__ import annotations

import gzip
import json
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import periodictable
import pytest
import scipy.constants as sc

DEMO = Path(__file__).resolve().parent.parent / "demo_data"
SMALL_FILES = ("sites.toml", "precipitation.csv", "air.csv", "planted_problems.json",
               "scenario.toml")

#: Our land-use classes as listed in issue 2 ("Input formats", item 1).
LAND_USE_CLASSES = {"conifer_forest", "deciduous_forest", "mixed_forest", "grass", "crops",
                    "moorland", "wetland", "water", "urban", "barren", "snow_ice"}
PRECIP_HEADER = ["site", "start", "end", "sampler_id", "gauge_depth [mm]", "sample_volume [mL]",
                 "collector_area [cm2]", "pH", "conductivity [uS/cm]", "SO4 [mg/L]",
                 "NO3_as_N [mg/L]", "NH4_as_N [mg/L]", "Cl [mg/L]", "Na [mg/L]", "K [mg/L]",
                 "Ca [mg/L]", "Mg [mg/L]", "PO4 [mg/L]", "flags"]
AIR_HEADER = ["site", "start", "end", "sampler_id", "SO2 [ug/m3]", "HNO3 [ug/m3]", "NH3 [ug/m3]",
              "pSO4 [ug/m3]", "pNO3 [ug/m3]", "pNH4 [ug/m3]", "pNa [ug/m3]", "NO2 [ppb]",
              "method_NH3"]
MET_HEADER = ["site", "time", "wind_speed [m/s]", "temperature [degC]", "relative_humidity [%]",
              "solar_radiation [W/m2]", "precipitation [mm]", "pressure [hPa]", "cloud_cover [1]"]
CHEM = PRECIP_HEADER[7:18]
#: Flag words of workbench/flags.py (written out here, not imported: the demo files are
#: checked without the package).
FLAG_CODES = {"contaminated", "lid_open", "trace", "not_analysed", "overflow", "sample_lost",
              "gauge_failed", "invalid_record", "depth_estimated"}

# --- reference values -------------------------------------------------------------------
#: Molar masses [g/mol] from periodictable (IUPAC atomic weights) and the charge per ion.
_M = {f: periodictable.formula(f).mass for f in ("SO4", "NO3", "NH4", "Cl", "Na", "K", "Ca", "Mg")}
_N = periodictable.N.mass
#: column -> (g per mol of the column basis, equivalents per mol)
EQ = {"SO4 [mg/L]": (_M["SO4"], 2), "NO3_as_N [mg/L]": (_N, 1), "NH4_as_N [mg/L]": (_N, 1),
      "Cl [mg/L]": (_M["Cl"], 1), "Na [mg/L]": (_M["Na"], 1), "K [mg/L]": (_M["K"], 1),
      "Ca [mg/L]": (_M["Ca"], 2), "Mg [mg/L]": (_M["Mg"], 2)}
CATIONS = ("NH4_as_N [mg/L]", "Na [mg/L]", "K [mg/L]", "Ca [mg/L]", "Mg [mg/L]")
ANIONS = ("SO4 [mg/L]", "NO3_as_N [mg/L]", "Cl [mg/L]")
#: Limiting equivalent conductances at 25 degC [S cm2 eq-1]; CRC Handbook of Chemistry
#: and Physics, "Ionic conductivity and diffusion at infinite dilution" (from memory).
LAMBDA = {"H": 349.65, "NH4_as_N [mg/L]": 73.5, "Na [mg/L]": 50.08, "K [mg/L]": 73.48,
          "Ca [mg/L]": 59.47, "Mg [mg/L]": 53.0, "SO4 [mg/L]": 80.0, "NO3_as_N [mg/L]": 71.42,
          "Cl [mg/L]": 76.31}
#: Solar constant [W m-2]; Kopp, G. and Lean, J. L. (2011), Geophys. Res. Lett. 38, L01706.
SOLAR_CONSTANT = 1361.0
#: Molar mass of dry air [kg mol-1]; U.S. Standard Atmosphere 1976.
M_AIR = 0.0289644


# --- fixtures ---------------------------------------------------------------------------
@pytest.fixture(scope="module")
def sites():
    with open(DEMO / "sites.toml", "rb") as f:
        return {s["id"]: s for s in tomllib.load(f)["site"]}


@pytest.fixture(scope="module")
def precip():
    return pd.read_csv(DEMO / "precipitation.csv", dtype=str, keep_default_na=False)


@pytest.fixture(scope="module")
def air():
    return pd.read_csv(DEMO / "air.csv", comment="#", dtype=str, keep_default_na=False)


@pytest.fixture(scope="module")
def met_lines():
    with gzip.open(DEMO / "met.csv.gz", "rt", encoding="utf-8") as f:
        return f.read().splitlines()


@pytest.fixture(scope="module")
def met(met_lines):
    from io import StringIO
    m = pd.read_csv(StringIO("\n".join(met_lines)), comment="#")
    m["t"] = pd.to_datetime(m["time"])
    return m


@pytest.fixture(scope="module")
def planted():
    return json.loads((DEMO / "planted_problems.json").read_text())


def lines_of(name):
    return (DEMO / name).read_text(encoding="utf-8").splitlines()


def num(s):
    """Text cells to float; "" and "<DL" become NaN."""
    return pd.to_numeric(pd.Series(s).where(~pd.Series(s).astype(str).str.startswith("<")),
                         errors="coerce").to_numpy(dtype=float)


def ueq(frame):
    """Ion columns as ueq/L (censored and empty -> NaN), H+ from pH."""
    out = {c: num(frame[c]) / EQ[c][0] * EQ[c][1] * 1000.0 for c in EQ}
    out["H"] = 10.0 ** (6.0 - num(frame["pH"]))
    return out


def ion_balance(frame):
    """100 (C - A) / (C + A) [%] and C + A [ueq/L] (no HCO3; common practice)."""
    u = ueq(frame)
    cat = u["H"] + sum(u[c] for c in CATIONS)
    an = sum(u[c] for c in ANIONS)
    return 100.0 * (cat - an) / (cat + an), cat + an


def valid(frame):
    """Rows with full chemistry, no flag and not planted as a problem."""
    ok = (frame["flags"] == "") & (frame["pH"] != "")
    for c in CHEM:
        ok &= ~frame[c].str.startswith("<") & ~frame[c].str.startswith("-")
    return ok.to_numpy()


# --- files and formats ----------------------------------------------------------------
def test_scenario_names_existing_inputs():
    with open(DEMO / "scenario.toml", "rb") as f:
        inputs = tomllib.load(f)["inputs"]
    assert set(inputs) == {"sites", "precipitation", "air", "met"}
    for path in inputs.values():
        assert (DEMO / path).is_file(), path


def test_site_catalogue(sites):
    required = ("id", "name", "latitude", "longitude", "elevation_m", "land_use",
                "canopy_height_m", "wind_height_m", "sampler_height_m", "utc_offset_h")
    assert 3 <= len(sites) <= 4
    for s in sites.values():
        for k in required:
            assert k in s, (s["id"], k)
        assert s["land_use"] in LAND_USE_CLASSES
        assert s.get("met_land_use", s["land_use"]) in LAND_USE_CLASSES
        assert set(s.get("receptors", [])) <= LAND_USE_CLASSES
        assert s.get("collector", "wet_only") in ("wet_only", "bulk")
        assert 52.0 <= s["latitude"] <= 55.0          # the brief: mid-latitude, 52-55 N
        if "lai" in s:
            assert len(s["lai"]) == 12 and all(0 <= v <= 12 for v in s["lai"])
        else:
            assert 0 <= s["lai_min"] <= s["lai_max"] <= 12
        cl = s["critical_loads"]
        # CLmaxN = CLminN + CLmaxS / (1 - fde) >= CLminN + CLmaxS: the critical load function
        # of the ICP Modelling and Mapping Manual (CLRTAP 2004, Chapter V; from memory).
        assert cl["cl_max_n"] >= cl["cl_min_n"] + cl["cl_max_s"]
        # empirical nutrient N critical loads span about 5-30 kg N/ha/yr (Bobbink and
        # Hettelingh 2011, RIVM report 680359002; from memory); 1 eq N = 14.007 g N.
        kg = cl["cl_nut_n"] * _N / 1000.0
        assert 5.0 <= kg <= 30.0
    assert sum(s.get("collector") == "bulk" for s in sites.values()) == 1
    assert any("met_land_use" in s for s in sites.values())


def test_headers_and_metadata_lines(met_lines):
    assert lines_of("precipitation.csv")[0].split(",") == PRECIP_HEADER
    air = lines_of("air.csv")
    assert air[0] == "# reference_state: ambient" and air[1].split(",") == AIR_HEADER
    assert met_lines[0] == "# time_label: end"
    assert met_lines[1].split(",")[: len(MET_HEADER)] == MET_HEADER


def test_weekly_samples_cover_the_span(precip, met, sites):
    t0, t1 = met["t"].min() - pd.Timedelta("1h"), met["t"].max()
    assert (t1 - t0) >= pd.Timedelta(days=8 * 365)
    for site in sites:
        g = precip[precip["site"] == site]
        start, end = pd.to_datetime(g["start"]), pd.to_datetime(g["end"])
        assert ((end - start) == pd.Timedelta(days=7)).all()
        assert (start.iloc[1:].to_numpy() == end.iloc[:-1].to_numpy()).all()   # no gaps, no overlap
        assert start.iloc[0] - t0 <= pd.Timedelta(days=7) and t1 - end.iloc[-1] <= pd.Timedelta(days=7)
        # the operator's round (demo_data/network.py): Thursday, collector at 14:00 local
        assert (start.dt.day_of_week == 3).all() and (start.dt.hour == 14).all()
        assert set(" ".join(g["flags"]).split()) <= FLAG_CODES


def test_air_periods(air, sites):
    for site in sites:
        g = air[air["site"] == site]
        for sampler, h in g.groupby("sampler_id"):
            s, e = pd.to_datetime(h["start"]), pd.to_datetime(h["end"])
            assert (s.iloc[1:].to_numpy() >= e.iloc[:-1].to_numpy()).all(), (site, sampler)
    passive = air[air["method_NH3"] == "passive"]
    assert set(passive["site"]) == {"farm"}
    others = [c for c in AIR_HEADER[4:12] if c != "NH3 [ug/m3]"]
    assert (passive[others] == "").all().all() and (passive["NH3 [ug/m3]"] != "").all()
    length = pd.to_datetime(passive["end"]) - pd.to_datetime(passive["start"])
    assert length.between(pd.Timedelta(days=25), pd.Timedelta(days=32)).all()
    fp = pd.to_datetime(air.loc[air["method_NH3"] != "passive", "start"])
    assert (fp.dt.day_of_week == 3).all() and (fp.dt.hour == 15).all()   # Thursday 15:00
    fp_farm = air[(air["site"] == "farm") & (air["method_NH3"] != "passive")]
    assert (fp_farm["NH3 [ug/m3]"] == "").all()
    assert set(passive["sampler_id"]).isdisjoint(set(fp_farm["sampler_id"]))
    assert 1 <= air.loc[air["NO2 [ppb]"] != "", "site"].nunique() <= 2


def test_hourly_met_per_site(met, sites):
    for site in sites:
        g = met[met["site"] == site]
        step = g["t"].diff().dropna()
        assert (step > pd.Timedelta(0)).all()                      # sorted, no duplicates
        assert len(g) >= 8 * 8760 - 24 * 7
        assert (step == pd.Timedelta("1h")).mean() > 0.999


# --- planted problems -------------------------------------------------------------------
def _row(lines, header, line):
    return dict(zip(header, lines[line - 1].split(",")))


def test_every_issue2_problem_is_planted(planted):
    kinds = [e["kind"] for e in planted]
    for k in ("contaminated_unflagged", "contaminated_flagged", "ion_balance_poor",
              "missing_met", "low_capture", "rh_fraction", "soil_dust", "lid_open",
              "below_detection_clean", "negative_after_blank", "gauge_failed",
              "gauge_estimated", "sample_lost", "not_analysed", "overflow", "trace_sample"):
        assert k in kinds, k
    assert sum(k.startswith("below_detection") for k in kinds) >= 3
    assert kinds.count("dry_week") >= 3
    for e in planted:
        assert {"kind", "site", "file", "line", "start", "expected"} <= set(e)


def test_planted_precipitation_rows(planted, precip):
    lines = lines_of("precipitation.csv")
    u_all = ueq(precip)
    ok = valid(precip)
    for e in (e for e in planted if e["file"] == "precipitation.csv"):
        r = _row(lines, PRECIP_HEADER, e["line"])
        assert r["site"] == e["site"] and r["start"] == e["start"][:16], e
        flags = r["flags"].split()
        chem_empty = all(r[c] == "" for c in CHEM)
        site_ok = ok & (precip["site"] == e["site"]).to_numpy()
        site_ok[e["line"] - 2] = False
        p99 = {c: np.nanpercentile(u_all[c][site_ok], 99) for c in EQ}
        one = ueq(pd.DataFrame([r]))
        k = e["kind"]
        if k == "dry_week":
            assert float(r["gauge_depth [mm]"]) == 0.0 and chem_empty and r["flags"] == ""
        elif k == "trace_sample":
            assert 0 < float(r["gauge_depth [mm]"]) < 0.5 and "trace" in flags and chem_empty
        elif k == "overflow":
            assert "overflow" in flags
            depth = float(r["sample_volume [mL]"]) / float(r["collector_area [cm2]"]) * 10.0
            assert float(r["gauge_depth [mm]"]) > depth
        elif k.startswith("below_detection"):
            cens = [c for c in PRECIP_HEADER if r[c].startswith("<")]
            assert cens and cens == e["columns"]
            assert all(float(r[c][1:]) > 0 for c in cens)
        elif k == "contaminated_unflagged":
            assert flags == []
            for c in ("K [mg/L]", "NH4_as_N [mg/L]"):
                assert one[c][0] > p99[c]
            po4 = num(precip["PO4 [mg/L]"])[site_ok]
            assert float(r["PO4 [mg/L]"]) > 10 * np.nanpercentile(po4, 99)
        elif k == "soil_dust":
            assert flags == [] and float(r["pH"]) > 6.0 and one["Ca [mg/L]"][0] > p99["Ca [mg/L]"]
        elif k == "ion_balance_poor":
            ib, total = ion_balance(pd.DataFrame([r]))
            site_ib, _ = ion_balance(precip[site_ok])
            # GAW acceptance for C + A > 100 ueq/L is +-15 % (WMO GAW Report 160, 2004,
            # Table 7.2; from memory); the site's ordinary samples sit well inside it.
            assert total[0] > 100 and abs(ib[0]) > 15 and abs(ib[0]) > 5 * np.median(np.abs(site_ib))
            assert ib[0] == pytest.approx(e["ion_balance_percent_as_written"], abs=0.5)
        elif k == "low_capture":
            depth = float(r["sample_volume [mL]"]) / float(r["collector_area [cm2]"]) * 10.0
            assert depth / float(r["gauge_depth [mm]"]) == pytest.approx(0.3, abs=0.03)
            assert r["start"][5:7] in ("06", "07", "08")
        elif k == "negative_after_blank":
            assert float(r[e["column"]]) < 0
        elif k == "sample_lost":
            assert flags == ["sample_lost"] and r["sample_volume [mL]"] == "" and chem_empty
        elif k == "not_analysed":
            assert flags == ["not_analysed"] and r["sample_volume [mL]"] != "" and chem_empty
        elif k == "gauge_failed":
            assert flags == ["gauge_failed"] and r["gauge_depth [mm]"] == "" and not chem_empty
        elif k == "gauge_estimated":
            assert flags == ["depth_estimated"] and float(r["gauge_depth [mm]"]).is_integer()
        elif k in ("contaminated_flagged", "lid_open"):
            assert flags == [{"contaminated_flagged": "contaminated", "lid_open": "lid_open"}[k]]
            assert not chem_empty
        else:
            raise AssertionError(f"untested kind {k}")


def test_planted_list_is_complete(planted, precip, air):
    """Every "<" cell, dry week, trace and overflow in the files is in the list."""
    listed = {(e["file"], e["line"]) for e in planted}
    for name, frame, first in (("precipitation.csv", precip, 2), ("air.csv", air, 3)):
        cens = frame.apply(lambda c: c.str.startswith("<")).any(axis=1).to_numpy()
        for i in np.flatnonzero(cens):
            assert (name, int(i) + first) in listed
    odd = (precip["gauge_depth [mm]"] == "0.0") | (precip["flags"] != "")
    for i in np.flatnonzero(odd.to_numpy()):
        assert ("precipitation.csv", int(i) + 2) in listed


def test_planted_met_problems(planted, met_lines):
    header = met_lines[1].split(",")
    gap = next(e for e in planted if e["kind"] == "missing_met")
    before = _row(met_lines, header, gap["line_before_gap"])
    after = _row(met_lines, header, gap["line"])
    assert before["site"] == after["site"] == gap["site"]
    jump = pd.Timestamp(after["time"]) - pd.Timestamp(before["time"])
    assert jump == pd.Timedelta(hours=gap["missing_rows"] + 1) and gap["missing_rows"] >= 7 * 24
    rh = next(e for e in planted if e["kind"] == "rh_fraction")
    col = header.index("relative_humidity [%]")
    vals = np.array([float(met_lines[i - 1].split(",")[col]) for i in range(rh["line"], rh["line_last"] + 1)])
    assert len(vals) >= 28 * 24 and (vals <= 1.0).all() and vals.mean() > 0.5
    for i in (rh["line"] - 1, rh["line_last"] + 1):
        assert float(met_lines[i - 1].split(",")[col]) > 5.0


# --- internal consistency and magnitudes --------------------------------------------------
def test_ion_balance_and_conductivity_close(precip):
    ok = valid(precip) & (num(precip["pH"]) < 5.6)     # HCO3 negligible below pH 5.6 (common practice)
    frame = precip[ok]
    ib, _ = ion_balance(frame)
    assert np.mean(np.abs(ib) < 5.0) > 0.9              # "within a few %" (the brief)
    u = ueq(frame)
    kappa = 1e-3 * sum(LAMBDA[c] * u[c] for c in LAMBDA)  # Kohlrausch sum (common practice)
    ratio = kappa / num(frame["conductivity [uS/cm]"])
    assert np.mean(np.abs(ratio - 1.0) < 0.1) > 0.95


def test_precipitation_magnitudes(precip, sites):
    ok = valid(precip)
    u = ueq(precip)
    depth = num(precip["gauge_depth [mm]"])
    years = pd.to_datetime(precip["start"]).dt.year.to_numpy()
    for site in sites:
        m = ok & (precip["site"] == site).to_numpy() & (depth > 0)
        w = depth[m]
        pwm = {c: np.sum(u[c][m] * w) / w.sum() for c in EQ}
        # ranges of a moderately polluted region (the brief; cf. the regional maps of
        # Vet et al. 2014, Atmos. Environ. 93, 3-100; from memory)
        assert 15 <= pwm["SO4 [mg/L]"] <= 65
        assert 10 <= pwm["NO3_as_N [mg/L]"] <= 45
        assert 10 <= pwm["NH4_as_N [mg/L]"] <= 70
        # sea-salt Cl/Na equivalent ratio of sea water 1.164 (Keene et al. 1986, JGR 91,
        # 6647; from memory); a little excess Cl from combustion is allowed
        assert 1.0 <= pwm["Cl [mg/L]"] / pwm["Na [mg/L]"] <= 1.5
        ph = np.median(num(precip["pH"])[m])
        assert 4.3 <= ph <= 5.6                             # the brief; common practice
        annual = pd.Series(depth[(precip["site"] == site).to_numpy()]).groupby(
            years[(precip["site"] == site).to_numpy()]).sum()
        assert annual.between(500, 2500).all()              # temperate maritime uplands (common practice)
    na = {s: np.nanmedian(u["Na [mg/L]"][ok & (precip["site"] == s).to_numpy()]) for s in sites}
    assert max(na, key=na.get) == "mere"                    # the site nearest the coast
    nh4 = {s: np.nanmedian(u["NH4_as_N [mg/L]"][ok & (precip["site"] == s).to_numpy()]) for s in sites}
    assert max(nh4, key=nh4.get) == "farm"


def test_air_magnitudes_and_trends(air):
    v = {c: num(air[c]) for c in AIR_HEADER[4:12]}
    med = lambda c, s: np.nanmedian(v[c][(air["site"] == s).to_numpy()])  # noqa: E731
    assert 1.0 <= med("SO2 [ug/m3]", "ridge") <= 5.0       # the brief (common practice)
    for s in ("fell", "mere", "farm"):
        assert med("SO2 [ug/m3]", s) < med("SO2 [ug/m3]", "ridge")
    for s in ("ridge", "fell", "mere"):
        assert 0.3 <= med("NH3 [ug/m3]", s) <= 2.0
    assert 5.0 <= med("NH3 [ug/m3]", "farm") <= 15.0
    for s in ("ridge", "fell", "mere", "farm"):
        assert 0.3 <= med("HNO3 [ug/m3]", s) <= 1.5
        assert 1.0 <= med("pSO4 [ug/m3]", s) <= 3.0
        assert 1.0 <= med("pNO3 [ug/m3]", s) <= 4.0
        assert 0.5 <= med("pNH4 [ug/m3]", s) <= 2.0
    # SO2 at the ridge falls by a few per cent a year; oxidized N less steeply (scenario)
    year = pd.to_datetime(air["start"]).dt.year.to_numpy()
    ridge = (air["site"] == "ridge").to_numpy()

    def slope(c):
        s = pd.Series(v[c][ridge]).groupby(year[ridge]).mean()
        return np.polyfit(s.index, np.log(s.to_numpy()), 1)[0]
    assert -0.12 < slope("SO2 [ug/m3]") < -0.02
    assert slope("SO2 [ug/m3]") < slope("HNO3 [ug/m3]")


def test_met_magnitudes(met, sites):
    g = sc.g
    for site, s in sites.items():
        m = met[met["site"] == site]
        t = m["temperature [degC]"]
        assert 4.0 <= t.mean() <= 12.0 and t.between(-30, 35).all()   # temperate maritime (common practice)
        assert m["wind_speed [m/s]"].between(0, 40).all() and 2 <= m["wind_speed [m/s]"].mean() <= 8
        rh = m["relative_humidity [%]"]
        frac = rh <= 1.0
        assert frac.mean() < 0.02 and rh[~frac].between(10, 100).all()
        assert m["cloud_cover [1]"].between(0, 1).all()
        solar = m["solar_radiation [W/m2]"]
        assert solar.between(0, SOLAR_CONSTANT).all()
        # hypsometric equation with CODATA R and standard g (scipy.constants) and the
        # US Standard Atmosphere 1976 air molar mass; mean-layer T ~ 283 K
        p_expect = 1013.25 * np.exp(-g * M_AIR * s["elevation_m"] / (sc.R * 283.0))
        assert m["pressure [hPa]"].mean() == pytest.approx(p_expect, abs=15.0)
        # the sun: at 54.5 N it is below the horizon between 22:30 and 02:30 local (UTC+1)
        # all year, and June's sunniest hour is the one around solar noon
        # (12:00 + utc_offset - longitude / 15 deg; NOAA solar calculator, common practice)
        hour = m["t"].dt.hour
        assert (solar[hour.isin([23, 0, 1, 2, 3])] == 0).all()
        june = m["t"].dt.month == 6
        peak_end = solar[june].groupby(hour[june]).mean().idxmax()
        noon = 12.0 + s["utc_offset_h"] - s["longitude"] / 15.0
        assert abs((peak_end - 0.5) - noon) <= 0.5      # a wrong utc_offset_h fails this


def test_gauge_matches_hourly_precipitation(precip, met):
    for site, g in precip.groupby("site"):
        h = met[met["site"] == site].set_index("t")["precipitation [mm]"].cumsum()
        s, e = pd.to_datetime(g["start"]), pd.to_datetime(g["end"])
        total = h.reindex(e).to_numpy() - h.reindex(s).to_numpy()
        gauge = num(g["gauge_depth [mm]"])
        m = np.isfinite(total) & np.isfinite(gauge) & (total > 5)
        ratio = gauge[m] / total[m]
        assert np.mean(np.abs(ratio - 1.0) < 0.15) > 0.95   # the brief: factor near 1
        dry = gauge == 0
        assert np.all(total[dry & np.isfinite(total)] == 0)


def test_regeneration_is_identical(tmp_path):
    """--out regenerates the same bytes as the committed files (fixed seed)."""
    run = subprocess.run([sys.executable, str(DEMO / "make_demo.py"), "--out", str(tmp_path)],
                         capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stderr
    for name in SMALL_FILES + ("met.csv.gz",):
        assert (tmp_path / name).read_bytes() == (DEMO / name).read_bytes(), name
