"""Detection and false alarms of the met check for a temperature (or, with
``--column relative_humidity``, a humidity) column pasted rows off
(docs/data_formats.md, section 4; workbench/io/metcolumns.py).

Run: ``python benchmarks/met_row_shift.py``.  The demo's four sites (two years each,
2019-2020) and invented years (tests/clock_years.py radiation at 6 sites, seeds 0-2,
with a temperature that follows the radiation through a thermal response of 1.5, 3 or
5 h plus a synoptic AR(1) of 2 days' memory, 3 K, and a seasonal cycle), with the
temperature column moved k rows (positive: down, the temperature comes late) from the
first of January or of July of the second half.  Prints a Markdown table: per case
the share of records with a finding, and of those the share whose flagged lines
include the first moved line; then the wind-as-temperature figures of invented winds
(hourly persistence 0.85-0.98, a seasonal cycle up to 4 m/s); then the CPU time of the
pasted-rows check alone per site-hour.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.signal import lfilter

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
from clock_years import SITES, radiation_year  # noqa: E402
from workbench.constants import ZERO_CELSIUS  # noqa: E402

SHIFTS = (0, -6, -4, -3, -2, -1, 1, 2, 3, 4, 6)


def invented_temperature(radiation, time_end, tau_h, seed, lat):
    """An invented hourly temperature [K]: the radiation through a first-order thermal
    response of `tau_h` hours, a seasonal cycle and a synoptic AR(1) of 2 days."""
    rng = np.random.default_rng(seed + 100)
    a = np.exp(-1.0 / tau_h)
    resp = lfilter([1 - a], [1, -a], np.clip(radiation, 0, None)) * 0.02 * tau_h ** 0.5
    doy = pd.DatetimeIndex(time_end).day_of_year.to_numpy()
    season = -10.0 * np.sign(lat) * np.cos(2 * np.pi * (doy - 20) / 365.0)
    phi = np.exp(-1.0 / 48.0)
    syn = lfilter([1.0], [1.0, -phi], rng.normal(0, 3 * np.sqrt(1 - phi ** 2), len(radiation)))
    return ZERO_CELSIUS + 10.0 + season + resp + syn + rng.normal(0, 0.3, len(radiation))


def invented_humidity(temperature, time_end, seed):
    """An invented hourly relative humidity [-] of a temperature [K]: vapour pressure
    held at a dew point 5 K below the day's mean temperature (plus a slow AR(1) of
    1.5 K, and for seeds 1 and 2 a daily cycle of its own of 1.5 K peaking at 09 or
    20 UTC, as dew points do in the field), so the humidity is lowest near the warmest
    hours (Magnus formula over water, a = 17.62, b = 243.12 degC, WMO-No. 8 (2018)
    Annex 4.B; from memory), clipped to 0.05-1."""
    rng = np.random.default_rng(seed + 200)
    tc = temperature - ZERO_CELSIUS
    hour = pd.DatetimeIndex(time_end).hour.to_numpy()
    peak = {1: 9, 2: 20}.get(seed % 3)
    own = 0.0 if peak is None else 1.5 * np.cos(2 * np.pi * (hour - peak) / 24.0)
    daily = pd.Series(tc).rolling(24, center=True, min_periods=1).mean().to_numpy()
    phi = np.exp(-1.0 / 72.0)
    dew = daily - 5.0 + lfilter([1.0], [1.0, -phi],
                                rng.normal(0, 1.5 * np.sqrt(1 - phi ** 2), len(tc))) + own

    def es(x):
        return np.exp(17.62 * x / (243.12 + x))
    return np.clip(es(np.minimum(dew, tc)) / es(tc), 0.05, 1.0)


def records(column="temperature"):
    """(label, time_end, column [K or -], radiation [W m-2]) of the clean records."""
    df = pd.read_csv(ROOT / "demo_data" / "met.csv.gz", comment="#")
    t = pd.to_datetime(df["time"])
    df = df[(t > "2019-01-01") & (t <= "2021-01-01")]
    for site, g in df.groupby("site"):
        x = (g["temperature [degC]"].to_numpy(float) + ZERO_CELSIUS
             if column == "temperature" else g["relative_humidity [%]"].to_numpy(float) / 100)
        yield ("demo", pd.to_datetime(g["time"]).values, x,
               g["solar_radiation [W/m2]"].to_numpy(float))
    for _, lat, lon in SITES:
        for seed in range(3):
            for tau in (1.5, 3.0, 5.0):
                t, r = radiation_year(lat, lon, 0.0, 0.0, seed)
                x = invented_temperature(r, t, tau, seed, lat)
                if column != "temperature":
                    x = invented_humidity(x, t, seed)
                yield "invented", t, x, r


def invented_wind(n, persistence, season_ms, seed):
    """An invented hourly wind speed [m s-1]: 3.5 m/s, a seasonal cycle of amplitude
    `season_ms` (a monsoon), a daily cycle of 1 m/s (afternoon maximum) and an AR(1)
    of hourly `persistence` (sd 1.8 m/s), clipped at 0."""
    rng = np.random.default_rng(seed)
    h = np.arange(n)
    sd = 1.8 * np.sqrt(1 - persistence ** 2)
    ar = lfilter([1.0], [1.0, -persistence], rng.normal(0, sd, n))
    u = (3.5 + season_ms * np.sin(2 * np.pi * h / 8760.0)
         + np.cos(2 * np.pi * (h % 24 - 15) / 24.0) + ar)
    return np.clip(u, 0.0, None)


def wind_table():
    """The wind-as-temperature figures of invented winds and of the temperatures."""
    from workbench.io.metcolumns import (WIND_SEASON_MIN, WIND_SMOOTHNESS_MAX,
                                         smoothness_and_season)
    t = pd.date_range("2021-01-01T01:00", "2022-01-01T00:00", freq="h").values
    codes = np.zeros(len(t), np.int64)
    print("\n| invented wind: hourly persistence | seasonal amplitude [m/s] | "
          "hour-to-hour / spread | monthly means' range / spread | flagged |")
    print("|---|---|---|---|---|")
    for pers in (0.85, 0.9, 0.95, 0.98):
        for season in (0.0, 2.0, 4.0):
            sm, se = [], []
            for seed in range(5):
                a, b, _ = smoothness_and_season(invented_wind(len(t), pers, season, seed),
                                                codes, 1, t)
                sm.append(a[0])
                se.append(b[0])
            flagged = np.mean((np.array(sm) < WIND_SMOOTHNESS_MAX)
                              & (np.array(se) >= WIND_SEASON_MIN))
            print(f"| {pers:g} | {season:g} | {min(sm):.2f}-{max(sm):.2f} | "
                  f"{min(se):.2f}-{max(se):.2f} | {flagged:.0%} |")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--column", default="temperature",
                    choices=["temperature", "relative_humidity"],
                    help="the column pasted rows off (the humidity: the demo's, and one "
                    "invented from each invented temperature)")
    args = ap.parse_args(argv)
    from workbench.io.metcolumns import _temperature_shift
    humid = args.column == "relative_humidity"
    found, hit, n, cpu, hours = {}, {}, {}, 0.0, 0
    for kind, t, temp, rad in records(args.column):
        middle = str(t[len(t) // 2].astype("datetime64[Y]"))      # 2020 (demo), 2021
        for month in (("01", "07") if kind == "demo" else ("07",)):
            start = np.datetime64(f"{middle}-{month}-01T01:00")
            i0 = int(np.searchsorted(t, start))
            for k in SHIFTS:
                x = temp.copy()
                if k > 0:
                    x[i0 + k:] = temp[i0:len(temp) - k]
                    x[i0:i0 + k] = np.nan
                elif k < 0:
                    x[i0:len(temp) + k] = temp[i0 - k:]
                    x[len(temp) + k:] = np.nan
                codes = np.zeros(len(t), np.int64)
                c0 = time.process_time()
                out = (_temperature_shift(-x, rad, codes, 1, t, "column relative_humidity",
                                          name="relative_humidity") if humid else
                       _temperature_shift(x, rad, codes, 1, t, "column temperature"))
                cpu += time.process_time() - c0
                hours += len(t)
                key = (kind, month, k)
                n[key] = n.get(key, 0) + 1
                found[key] = found.get(key, 0) + bool(out)
                hit[key] = hit.get(key, 0) + bool(out and out[0][1][i0 + max(k, 0)])
    print("| record | moved from | rows moved | records | finding | lines include the move |")
    print("|---|---|---|---|---|---|")
    for (kind, month, k), m in n.items():
        f = found[(kind, month, k)]
        print(f"| {kind} | {'January' if month == '01' else 'July'} | {k:+d} | {m} | "
              f"{f / m:.0%} | {hit[(kind, month, k)] / f:.0%} |" if f else
              f"| {kind} | {'January' if month == '01' else 'July'} | {k:+d} | {m} | 0% | - |")
    if not humid:
        wind_table()
    print(f"\nCPU of the check {cpu:.2f} s for {hours} site-hours: "
          f"{cpu / hours * 1e6:.2f} s per million site-hours")


if __name__ == "__main__":
    main()
