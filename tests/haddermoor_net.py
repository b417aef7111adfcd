"""A small piece of the invented Haddermoor network (fictional sites and numbers): the
user trial of a coastal grass site with sea salt ("saltcove", weekly filter pack with
pNa) and an inland farm ("tillby", crops with a deciduous receptor, HOURLY air without
pNa), eight weeks of 2021 with hourly met.  Field slips of the trial are kept where a
test needs them: a -999 sodium on one saltcove sample (its sea salt then comes from the
other samples, a note with a parenthesis holding "; "), no pNa at tillby (the total
pSO4 note, whose parenthesis holds "; " too).

``make_haddermoor(out_dir)`` writes sites.toml, precipitation.csv, air.csv, met.csv and
scenario.toml and returns the scenario path.
"""
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.io.metchecks import solar_elevation_deg

SITES = """\
[[site]]
id = "saltcove"
name = "Saltcove Links dune grassland"
latitude = 56.10
longitude = -4.90
elevation_m = 12.0
land_use = "grass"
canopy_height_m = 0.2
wind_height_m = 10.0
sampler_height_m = 1.5
utc_offset_h = 0
coast_distance_km = 1.5

[[site]]
id = "tillby"
name = "Tillby Farm arable"
latitude = 55.90
longitude = -2.60
elevation_m = 95.0
land_use = "crops"
canopy_height_m = 0.6
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
receptors = ["deciduous_forest"]
"""

SCENARIO = """\
[inputs]
sites = "sites.toml"
precipitation = "precipitation.csv"
air = "air.csv"
met = "met.csv"

[air]
reference_state = "ambient"

[period]
start = "2021-01-01"
end = "2021-03-01"
resolution = "month"
"""

#: Site -> (latitude, longitude) [deg], as in SITES.
PLACES = {"saltcove": (56.10, -4.90), "tillby": (55.90, -2.60)}
START, WEEKS = pd.Timestamp("2021-01-05T09:00"), 8


def _met(rng, start, weeks):
    t = pd.date_range(start - pd.Timedelta("8h"), periods=24 * 7 * weeks + 24, freq="h")
    frames = []
    for site, (lat, lon) in PLACES.items():
        n = len(t)
        elev = solar_elevation_deg((t - pd.Timedelta("30min")).values, lat, lon)
        sun = np.clip(np.sin(np.deg2rad(elev)), 0, None)
        frames.append(pd.DataFrame({
            "site": site, "time": t.strftime("%Y-%m-%dT%H:%M"),
            "wind_speed [m/s]": np.round(4 + 2 * np.sin(np.arange(n) / 19) + rng.normal(0, .5, n), 2),
            "temperature [degC]": np.round(4 + 3 * sun + rng.normal(0, .8, n), 2),
            "relative_humidity [%]": np.round(np.clip(86 - 15 * sun + rng.normal(0, 4, n), 40, 100), 1),
            "solar_radiation [W/m2]": np.round(600 * sun, 1),
            "precipitation [mm]": np.where(rng.random(n) < .12, np.round(rng.gamma(.8, 1.2, n), 1), 0.0),
            "pressure [hPa]": 1005.0}))
    return pd.concat(frames, ignore_index=True)


def _precipitation(rng, met, start, weeks):
    rows = []
    for site in PLACES:
        m = met[met.site == site]
        times = pd.to_datetime(m["time"])
        for w in range(weeks):
            st, en = start + pd.Timedelta(weeks=w), start + pd.Timedelta(weeks=w + 1)
            depth = float(m.loc[(times > st) & (times <= en), "precipitation [mm]"].sum())
            na = (6.0 if site == "saltcove" else 0.5) * rng.lognormal(0, .2)
            so4 = 0.25 * na + 0.9 * rng.lognormal(0, .2)
            no3, nh4 = 0.35 * rng.lognormal(0, .2), 0.30 * rng.lognormal(0, .2)
            ueq = {"SO4": so4 / 48.03, "NO3": no3 / 14.007, "Cl": 1.8 * na / 35.45,
                   "Na": na / 22.99, "NH4": nh4 / 14.007, "Mg": 0.12 * na / 12.15}
            h = max(ueq["SO4"] + ueq["NO3"] + ueq["Cl"] - ueq["Na"] - ueq["NH4"] - ueq["Mg"], 2e-3)
            rows.append({"site": site, "start": f"{st:%Y-%m-%dT%H:%M}", "end": f"{en:%Y-%m-%dT%H:%M}",
                         "sampler_id": site[:3].upper() + "-W1", "gauge_depth [mm]": round(depth, 1),
                         "sample_volume [mL]": round(depth * .92 * 31.42), "collector_area [cm2]": 314.2,
                         "pH": round(-np.log10(h * 1e-3), 2), "SO4 [mg/L]": round(so4, 3),
                         "NO3_as_N [mg/L]": round(no3, 3), "NH4_as_N [mg/L]": round(nh4, 3),
                         "Cl [mg/L]": round(1.8 * na, 3), "Na [mg/L]": round(na, 3),
                         "Mg [mg/L]": round(.12 * na, 3)})
    frame = pd.DataFrame(rows)
    frame["Na [mg/L]"] = frame["Na [mg/L]"].astype(object)
    frame.loc[2, "Na [mg/L]"] = "-999"            # the trial's missing-value code (saltcove)
    return frame


def _air(rng, start, weeks):
    weekly = pd.DataFrame([{
        "site": "saltcove", "start": f"{start + pd.Timedelta(weeks=w, hours=1):%Y-%m-%dT%H:%M}",
        "end": f"{start + pd.Timedelta(weeks=w + 1, hours=1):%Y-%m-%dT%H:%M}", "sampler_id": "SAL-F1",
        "SO2 [ug/m3]": round(.6 * rng.lognormal(0, .4), 2), "HNO3 [ug/m3]": round(.5 * rng.lognormal(0, .3), 2),
        "NH3 [ug/m3]": round(1.0 * rng.lognormal(0, .4), 2), "pSO4 [ug/m3]": round(1.8 * rng.lognormal(0, .3), 2),
        "pNO3 [ug/m3]": round(1.5 * rng.lognormal(0, .4), 2), "pNH4 [ug/m3]": round(.8 * rng.lognormal(0, .3), 2),
        "pNa [ug/m3]": round(2.5 * rng.lognormal(0, .3), 2)} for w in range(weeks)])
    ht = pd.date_range(start, periods=24 * 7 * weeks, freq="h")
    n = len(ht)
    hourly = pd.DataFrame({
        "site": "tillby", "start": ht.strftime("%Y-%m-%dT%H:%M"),
        "end": (ht + pd.Timedelta("1h")).strftime("%Y-%m-%dT%H:%M"), "sampler_id": "TIL-M1",
        "SO2 [ug/m3]": np.round(.8 * rng.lognormal(0, .2, n), 2),
        "HNO3 [ug/m3]": np.round(.6 * rng.lognormal(0, .2, n), 2),
        "NH3 [ug/m3]": np.round(8 * rng.lognormal(0, .2, n), 2),
        "pSO4 [ug/m3]": np.round(1.4 * rng.lognormal(0, .2, n), 2),
        "pNO3 [ug/m3]": np.round(2.2 * rng.lognormal(0, .2, n), 2),
        "pNH4 [ug/m3]": np.round(1.1 * rng.lognormal(0, .2, n), 2)})
    return pd.concat([weekly, hourly], ignore_index=True)


def make_haddermoor(out_dir, start=START, weeks=WEEKS, period=True) -> Path:
    """Write the network's files into `out_dir`; return the scenario path.

    `start` (Tuesday 09:00 UTC) and `weeks`: the record; `period` False leaves
    ``[period]`` start and end out (the chemistry's span, as the trial's scenario) and
    reports years."""
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(2021)
    start = pd.Timestamp(start)
    met = _met(rng, start, weeks)
    met.to_csv(out / "met.csv", index=False)
    _precipitation(rng, met, start, weeks).to_csv(out / "precipitation.csv", index=False)
    _air(rng, start, weeks).to_csv(out / "air.csv", index=False)
    (out / "sites.toml").write_text(SITES, encoding="utf-8")
    path = out / "scenario.toml"
    text = SCENARIO if period else "\n".join(
        line for line in SCENARIO.splitlines() if not line.startswith(("start =", "end ="))) + "\n"
    path.write_text(text.replace('resolution = "month"', 'resolution = "month"' if period
                                 else 'resolution = "year"'), encoding="utf-8")
    return path
