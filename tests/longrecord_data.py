"""An invented long site record (1998-2022) with the history real long records have.

``make_long_record(out_dir)`` writes ``sites.toml``, ``precipitation.csv``, ``air.csv``,
``met.csv.gz`` and ``scenario.toml`` of one invented site, "Corrie Haugh" (id
``haugh``), and returns the scenario path.  Every name and number is invented.  The
history of the record (:data:`HISTORY`):

- the laboratory reported mg/L until 2007 and ueq/L from 2008 (the file holds one
  column per unit, each filled in its own years); the detection limit of sulfate fell
  from 0.05 mg/L to 0.5 ueq/L in 2008; values below it are written ``<limit``;
- the rain gauge failed in May 2012: no gauge depth for 16 weeks (the chemistry of
  those weeks is kept), then a new gauge of 0.2 mm resolution (0.1 mm before);
- the sampler was run daily (sampler ``D1``) from 2010 to 2013, weekly (``W1``)
  before and after;
- the forest around the site was clear-felled in April 2014: grass since;
- air concentrations start in 2006 (years 1998-2005 have wet deposition only);
- 2016-2018 have many gaps (about half the weeks of precipitation and air missing).

The values: a sulfate in rain falling by about 4 % a year, nitrogen flat, invented
noise; air SO2 falling too.  Hourly met for 2006-2022 only (the years with air).
"""
from __future__ import annotations

import gzip
from pathlib import Path

import numpy as np
import pandas as pd

FIRST, LAST = 1998, 2022
AIR_FROM = 2006
UNIT_SWITCH = 2008
DAILY = (2010, 2014)                 # daily samples from 2010 to the end of 2013
GAUGE_GAP = ("2012-05-03", "2012-08-23")
FELLED = "2014-04-01"
GAPPY = (2016, 2019)                 # years with many gaps: 2016, 2017, 2018
SEED = 20261203
HISTORY = {"unit_switch": UNIT_SWITCH, "daily": DAILY, "gauge_gap": GAUGE_GAP,
           "felled": FELLED, "air_from": AIR_FROM, "gappy": GAPPY}

SITES = """\
# An invented site (no real place is meant).
[[site]]
id = "haugh"
name = "Corrie Haugh"
latitude = 55.31
longitude = 6.42
elevation_m = 240.0
land_use = "conifer_forest"
canopy_height_m = 12.0
wind_height_m = 10.0
sampler_height_m = 2.0
utc_offset_h = 0
met_land_use = "grass"
receptors = ["grass"]
"""

SCENARIO = """\
[inputs]
sites = "sites.toml"
precipitation = "precipitation.csv"
air = "air.csv"
met = "met.csv.gz"

[period]
start = "1998-01-01"
end = "2023-01-01"
resolution = "year"
"""

# molar masses [g/mol] and charges for the mg/L <-> ueq/L of the lab (common practice)
_MG = {"SO4": (96.06, 2), "NO3": (62.00, 1), "NH4": (18.04, 1), "Cl": (35.45, 1),
       "Na": (22.99, 1), "Ca": (40.08, 2), "Mg": (24.31, 2)}


def _samples(rng):
    """Sample periods (start, end, sampler) of the whole record, with the daily years."""
    rows = []
    t = pd.Timestamp(f"{FIRST}-01-06T09:00")
    end = pd.Timestamp(f"{LAST + 1}-01-01")
    while t < end:
        daily = DAILY[0] <= t.year < DAILY[1]
        step = pd.Timedelta(days=1 if daily else 7)
        if t + step > end:
            break
        rows.append((t, t + step, "D1" if daily else "W1"))
        t = t + step
    f = pd.DataFrame(rows, columns=["start", "end", "sampler_id"])
    gappy = (f["start"].dt.year >= GAPPY[0]) & (f["start"].dt.year < GAPPY[1])
    drop = gappy & (rng.random(len(f)) < 0.5)
    return f[~drop].reset_index(drop=True)


def precipitation_frame(rng, split_units=True) -> pd.DataFrame:
    """The samples; with `split_units` False every ion in ueq/L (a file converted by hand
    before reading), else in mg/L until :data:`UNIT_SWITCH` and ueq/L after."""
    f = _samples(rng)
    days = (f["end"] - f["start"]).dt.total_seconds().to_numpy() / 86400.0
    yrs = (f["start"].dt.year + f["start"].dt.day_of_year / 365.25 - FIRST).to_numpy()
    depth = rng.gamma(0.8, 3.6, len(f)) * days          # about 1000 mm a year
    dry = rng.random(len(f)) < np.where(days < 2, 0.45, 0.05)
    depth = np.where(dry, 0.0, depth)
    new_gauge = f["start"] >= pd.Timestamp(GAUGE_GAP[1])
    res = np.where(new_gauge, 0.2, 0.1)
    depth = np.round(depth / res) * res
    ueq = {"SO4": 60.0 * np.exp(-0.04 * yrs), "NO3": 30.0 + 0 * yrs, "NH4": 35.0 + 0 * yrs,
           "Cl": 70.0 + 0 * yrs, "Na": 60.0 + 0 * yrs, "Ca": 10.0 + 0 * yrs, "Mg": 14.0 + 0 * yrs}
    out = pd.DataFrame({"site": "haugh", "start": f["start"].dt.strftime("%Y-%m-%dT%H:%M"),
                        "end": f["end"].dt.strftime("%Y-%m-%dT%H:%M"),
                        "sampler_id": f["sampler_id"]})
    gap = (f["start"] >= pd.Timestamp(GAUGE_GAP[0])) & (f["start"] < pd.Timestamp(GAUGE_GAP[1]))
    out["gauge_depth [mm]"] = np.where(gap, np.nan, depth)
    out["sample_depth [mm]"] = np.round(depth * 0.95, 2)
    old = (f["start"].dt.year < UNIT_SWITCH).to_numpy() & split_units
    wet = depth > 0
    common = rng.lognormal(0.0, 0.35, len(f))         # one factor per sample: the ions
    vals = {ion: base * common * rng.lognormal(0.0, 0.03, len(f))   # keep their balance
            for ion, base in ueq.items()}
    low = rng.random(len(f)) < 0.03                  # a few samples below detection
    vals["SO4"] = np.where(low, 0.2, vals["SO4"])    # (0.2 ueq/L: below both limits)
    for ion, v in vals.items():
        mm, z = _MG[ion]
        mg = v / z * mm / 1000.0
        mg_txt = np.where(mg < 0.05, "<0.05", np.char.mod("%.3f", mg)) if ion == "SO4" \
            else np.char.mod("%.3f", mg)
        ueq_txt = np.where(v < 0.5, "<0.5", np.char.mod("%.1f", v)) if ion == "SO4" \
            else np.char.mod("%.1f", v)
        if split_units:
            out[f"{ion} [mg/L]"] = np.where(old & wet, mg_txt, "")
        out[f"{ion} [ueq/L]"] = np.where(~old & wet, ueq_txt, "")
    h = sum(vals[i] for i in ("SO4", "NO3", "Cl")) - sum(vals[i] for i in ("NH4", "Na", "Ca", "Mg"))
    out["pH"] = np.where(wet, np.round(-np.log10(np.clip(h, 1, None) * 1e-6), 2), np.nan)
    out["flags"] = ""
    return out


def air_frame(rng) -> pd.DataFrame:
    starts = pd.date_range(f"{AIR_FROM}-01-03T10:00", f"{LAST}-12-20", freq="7D")
    f = pd.DataFrame({"start": starts, "end": starts + pd.Timedelta(days=7)})
    gappy = (f["start"].dt.year >= GAPPY[0]) & (f["start"].dt.year < GAPPY[1])
    f = f[~(gappy & (rng.random(len(f)) < 0.5))].reset_index(drop=True)
    yrs = (f["start"].dt.year - AIR_FROM).to_numpy()
    n = len(f)
    noise = lambda s: rng.lognormal(0, s, n)  # noqa: E731
    return pd.DataFrame({
        "site": "haugh", "start": f["start"].dt.strftime("%Y-%m-%dT%H:%M"),
        "end": f["end"].dt.strftime("%Y-%m-%dT%H:%M"), "sampler_id": "F1",
        "SO2 [ug/m3]": np.round(2.0 * np.exp(-0.06 * yrs) * noise(0.5), 3),
        "HNO3 [ug/m3]": np.round(0.5 * noise(0.4), 3),
        "NH3 [ug/m3]": np.round(1.2 * noise(0.5), 3),
        "pSO4 [ug/m3]": np.round(1.5 * np.exp(-0.04 * yrs) * noise(0.4), 3),
        "pNO3 [ug/m3]": np.round(1.8 * noise(0.4), 3),
        "pNH4 [ug/m3]": np.round(0.9 * noise(0.4), 3)})


def _met_rain(t, precip, rng):
    """Hourly precipitation [mm] that sums to each sample's gauge depth: the depth on
    about a fifth of the sample's hours (hours of gauge gaps and between samples: 0)."""
    s = pd.to_datetime(precip["start"]).to_numpy()
    e = pd.to_datetime(precip["end"]).to_numpy()
    mid = (t - pd.Timedelta("30min")).to_numpy()
    k = np.searchsorted(s, mid, side="right") - 1
    inside = (k >= 0) & (mid < e[np.clip(k, 0, None)])
    wet = inside & (rng.random(t.size) < 0.2)
    n_wet = np.bincount(k[wet], minlength=s.size)
    depth = np.nan_to_num(precip["gauge_depth [mm]"].to_numpy(float))
    per = np.where(n_wet > 0, depth / np.maximum(n_wet, 1), 0.0)
    return np.where(wet, np.round(per[np.clip(k, 0, None)], 2), 0.0)


def met_frame(rng, precip) -> pd.DataFrame:
    t = pd.date_range(f"{AIR_FROM}-01-01T01:00", f"{LAST + 1}-01-01T00:00", freq="h")
    n = t.size
    doy = t.day_of_year.to_numpy()
    hour = t.hour.to_numpy()
    from workbench.io.metchecks import solar_elevation_deg
    elev = solar_elevation_deg((t - pd.Timedelta("30min")).values, 55.31, 6.42)
    temp = 8 + 7 * np.sin(2 * np.pi * (doy - 110) / 365) + 3 * np.sin(2 * np.pi * (hour - 9) / 24)
    return pd.DataFrame({
        "site": "haugh", "time": t.strftime("%Y-%m-%dT%H:%M"),
        "wind_speed [m/s]": np.round(np.clip(rng.gamma(3.0, 1.3, n), 0.3, None), 1),
        "temperature [degC]": np.round(temp + rng.normal(0, 1.5, n), 1),
        "relative_humidity [%]": np.round(np.clip(82 - 12 * np.sin(np.deg2rad(np.clip(elev, 0, None)))
                                                  + rng.normal(0, 6, n), 30, 100), 0),
        "solar_radiation [W/m2]": np.round(np.clip(800 * np.sin(np.deg2rad(elev)), 0, None)
                                           * rng.uniform(0.3, 1.0, n), 0),
        "precipitation [mm]": _met_rain(t, precip, rng),
        "pressure [hPa]": np.round(985 + rng.normal(0, 8, n), 1)})


def make_long_record(out_dir, sites_text=SITES, seed=SEED, split_units=True) -> Path:
    """Write the invented long record into `out_dir`; return the scenario path
    (`split_units`: :func:`precipitation_frame`)."""
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    (out / "sites.toml").write_text(sites_text)
    precip = precipitation_frame(rng, split_units)
    precip.to_csv(out / "precipitation.csv", index=False)
    air = air_frame(rng)
    (out / "air.csv").write_text("# reference_state: ambient\n" + air.to_csv(index=False))
    with gzip.open(out / "met.csv.gz", "wt") as fh:
        fh.write("# time_label: end\n")
        met_frame(rng, precip).to_csv(fh, index=False)
    (out / "scenario.toml").write_text(SCENARIO)
    return out / "scenario.toml"


if __name__ == "__main__":
    import sys
    print(make_long_record(sys.argv[1] if len(sys.argv) > 1 else "longrecord"))
