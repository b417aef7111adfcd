"""Make the invented demo network of the deposition workbench (fixed seed).

Scenario
--------
The *Vellmoor Uplands* are an invented temperate maritime upland region at about
54.4-54.6 N, with the sea some 20 km to the west, prevailing south-westerly winds, mild
wet winters (snow on the higher ground in cold spells) and cool summers.  An invented
coal-fired plant, *Corvale power station*, stands in the lowland west of the hills; its
emissions were cut step by step over the record, so SO2 and sulfate decline by a few
per cent a year and oxidized nitrogen more slowly, while ammonia stays level.  The
region counts as moderately polluted (rain SO4 ~ 20-60 ueq/L, NO3 ~ 15-40, NH4
~ 15-60 ueq/L, pH mostly 4.3-5.5).  Four invented sites (local standard time,
UTC+1, no daylight saving; coordinates invented to give a plausible sun path):

``ridge``  Tarnwick Ridge plantation, 420 m: a Sitka-spruce-like conifer plantation on
           a ridge 15 km downwind of the plant (highest SO2, some HCl in rain).  The
           met mast stands in a grass clearing (``met_land_use = "grass"``) and
           carries a sonic anemometer (``friction_velocity``).  The wet-only
           collector was replaced at the start of 2020 (sampler RDG-P1 -> RDG-P2).
``fell``   Skelvane Fell grassland, 560 m: upland acid grassland and moorland, the
           wettest and windiest site.
``mere``   Orrimere Moss wetland, 85 m: a lakeside fen nearest the coast (most sea
           salt), sampled with a bulk (always open) collector.
``farm``   Quellby Grange arable farm, 60 m: crops and livestock nearby, high NH3
           (monthly passive samplers beside the weekly filter pack) and NH4 in rain.

Records run from 2016-01-01 (local) for ``--years`` years (default 8): hourly
meteorology, weekly precipitation samples (Thursday 14:00 to Thursday 14:00 local) and
weekly filter packs (Thursday 15:00), monthly passive NH3 at the farm: the operator's
weekly round (see ``network.py``).  The deliberate
problems for the QA features are listed, with file and line, in
``planted_problems.json``.

Usage: ``python demo_data/make_demo.py [--out DIR] [--years N]`` (default: write into
this folder).  Same arguments, same bytes.
"""
from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

HERE = Path(__file__).resolve().parent
sys.dont_write_bytecode = True                 # leave no __pycache__ beside the data
for p in (str(HERE), str(HERE.parent)):        # our helpers and the workbench package
    if p not in sys.path:
        sys.path.insert(0, p)

import gen_chemistry as chem  # noqa: E402
import gen_weather as weather  # noqa: E402
import plant  # noqa: E402
import tables as tb  # noqa: E402
from network import (AIR_CHANGE_HOUR, BOTTLE_ML, CATALOGUE_KEYS,  # noqa: E402
                     CHANGE_WEEKDAY, DETECTION_LIMIT_AIR, DETECTION_LIMIT_PRECIP,
                     PRECIP_CHANGE_HOUR, SITES, TRACE_MM)

SEED = 20160105
START = np.datetime64("2016-01-01T00:00")
HOUR = np.timedelta64(60, "m")
DAY = np.timedelta64(1, "D")
WEEK_H = 168
PRECIP_CHANGE = np.timedelta64(PRECIP_CHANGE_HOUR, "h")   # collector change, local
AIR_CHANGE = np.timedelta64(AIR_CHANGE_HOUR, "h")         # filter change, local
RIDGE_NEW_COLLECTOR = np.datetime64("2020-01-01T00:00")
#: Manual gauge over the sum of the hourly tipping bucket: bias and log sigma [-].
GAUGE_BIAS, GAUGE_SIGMA = 1.02, 0.04
#: Capture (sample depth / gauge depth) of rain: mean, sigma, bounds; of snow [-]
#: (common practice: collectors catch 90-100 % of rain, much less of snow).
RAIN_CAPTURE, RAIN_CAPTURE_SIGMA, RAIN_CAPTURE_RANGE, SNOW_CAPTURE = 0.955, 0.02, (0.88, 1.0), 0.6
#: Analytical noise: log sigma of ions and conductivity, sigma of pH [-].
ION_SIGMA, KAPPA_SIGMA, PH_SIGMA = 0.025, 0.03, 0.02
#: Log sigma of a filter-pack and of a passive-sampler result about the true mean [-].
FILTER_SIGMA, PASSIVE_SIGMA = 0.03, 0.08
ION_COLUMN = {"SO4": "SO4 [mg/L]", "NO3": "NO3_as_N [mg/L]", "NH4": "NH4_as_N [mg/L]",
              "Cl": "Cl [mg/L]", "Na": "Na [mg/L]", "K": "K [mg/L]", "Ca": "Ca [mg/L]",
              "Mg": "Mg [mg/L]", "PO4": "PO4 [mg/L]"}
AIR_SPECIES = ["SO2", "HNO3", "NH3", "pSO4", "pNO3", "pNH4", "pNa"]
AIR_COLUMNS = [f"{s} [ug/m3]" for s in AIR_SPECIES] + ["NO2 [ppb]"]
MET_COLUMNS = {"wind_speed": ("wind_speed [m/s]", 1), "temperature": ("temperature [degC]", 1),
               "relative_humidity": ("relative_humidity [%]", 0),
               "solar_radiation": ("solar_radiation [W/m2]", 0),
               "precipitation": ("precipitation [mm]", 1), "pressure": ("pressure [hPa]", 1),
               "cloud_cover": ("cloud_cover [1]", None),
               "friction_velocity": ("friction_velocity [m/s]", 2)}
OKTA_TEXT = np.array(["0", "0.125", "0.25", "0.375", "0.5", "0.625", "0.75", "0.875", "1"],
                     dtype=object)


def day_of_year(t):
    return (t - t.astype("datetime64[Y]")).astype("timedelta64[m]").astype(float) / 1440.0


def years_since_start(t):
    return (t - START).astype("timedelta64[m]").astype(float) / (1440.0 * 365.25)


def weekly_starts(end, change):
    """Weekly starts (local, on the round's weekday) of periods that end by `end`."""
    days = START.astype("datetime64[D]")
    weekday = (days.astype(np.int64) + 3) % 7      # Monday = 0 (1970-01-01 was a Thursday)
    ahead = np.timedelta64(int((CHANGE_WEEKDAY - weekday) % 7), "D")
    first = (days + ahead).astype("datetime64[m]") + change
    n = int((end - first) // np.timedelta64(7, "D"))
    return first + np.arange(n) * np.timedelta64(7, "D")


def monthly_periods(end, change):
    months = np.arange(START.astype("datetime64[M]"), end.astype("datetime64[M]"))
    starts = months.astype("datetime64[D]").astype("datetime64[m]") + change
    ends = (months + 1).astype("datetime64[D]").astype("datetime64[m]") + change
    # the last exposure is taken in early, at the change hour three days before the record ends
    ends = np.minimum(ends, end - np.timedelta64(3, "D") + change)
    return starts, ends


def precipitation_tables(rng, met, end, plan):
    """Weekly precipitation rows of every site (text columns) and their planted problems."""
    starts = weekly_starts(end, PRECIP_CHANGE)
    ends = starts + WEEK_H * HOUR
    i0 = ((starts - START) // HOUR).astype(np.int64)          # first hour index of the week
    cum = lambda x: np.concatenate([np.zeros((x.shape[0], 1)), np.cumsum(x, axis=1)], axis=1)  # noqa: E731
    wsum = lambda x: (cum(x)[:, i0 + WEEK_H] - cum(x)[:, i0])  # noqa: E731
    met_week = wsum(met["precipitation"])
    snow_frac = np.divide(wsum(met["precipitation"] * met["snow"]), met_week,
                          out=np.zeros_like(met_week), where=met_week > 0)
    wind_week = wsum(met["wind_speed"]) / WEEK_H
    mid = starts + WEEK_H // 2 * HOUR
    frames = []
    for s, site in enumerate(SITES):
        m = starts.size
        gauge = np.round(met_week[s] * GAUGE_BIAS * np.exp(GAUGE_SIGMA * rng.standard_normal(m)), 1)
        capture = np.clip(RAIN_CAPTURE + RAIN_CAPTURE_SIGMA * rng.standard_normal(m), *RAIN_CAPTURE_RANGE)
        capture = (1 - snow_frac[s]) * capture + snow_frac[s] * SNOW_CAPTURE
        ions = chem.base_ions(rng, site["chemistry"], day_of_year(mid), years_since_start(mid),
                              gauge, wind_week[s] / wind_week[s].mean())
        sampler = np.where(starts < RIDGE_NEW_COLLECTOR, site["precip_sampler"][0],
                           site["precip_sampler"][-1]).astype(object)
        ctx = plant.SiteSamples(site=site, starts=starts, ends=ends, gauge=gauge,
                                capture=capture, snow=snow_frac[s], ions=ions,
                                flags=np.full(m, "", dtype=object))
        plan.physical(ctx)                                   # changes before chemistry settles
        _, _, ph, kappa = chem.acidity(ctx.ions)
        noisy = {k: v * np.exp(ION_SIGMA * rng.standard_normal(m)) for k, v in ctx.ions.items()}
        ph = ph + PH_SIGMA * rng.standard_normal(m)
        kappa = kappa * np.exp(KAPPA_SIGMA * rng.standard_normal(m))
        area = site["collector_area_cm2"]
        volume = np.round(ctx.gauge * ctx.capture * area / 10.0)   # mm * cm2 / 10 = mL
        trace = (ctx.gauge > 0) & (ctx.gauge < TRACE_MM)
        dry = ctx.gauge == 0
        over = volume > BOTTLE_ML
        volume = np.where(over, BOTTLE_ML, volume)
        ctx.flags = plant.add_flag(ctx.flags, trace, "trace")
        ctx.flags = plant.add_flag(ctx.flags, over, "overflow")
        mg = {k: chem.ueq_to_mg(k, noisy[k]) for k in chem.IONS}
        mg["PO4"] = noisy["PO4_mgl"]
        cols = {"gauge_depth [mm]": ctx.gauge, "sample_volume [mL]": volume,
                "pH": ph, "conductivity [uS/cm]": kappa, **{ION_COLUMN[k]: v for k, v in mg.items()}}
        no_chem = dry | trace
        for c in cols:
            if c not in ("gauge_depth [mm]", "sample_volume [mL]"):
                cols[c] = np.where(no_chem, np.nan, cols[c])
        ctx.columns = cols
        ctx.sampler = sampler
        plan.reported(ctx)                                   # reporting slips, lost samples
        text = {"site": np.full(m, site["id"], dtype=object), "start": tb.iso(starts),
                "end": tb.iso(ends), "sampler_id": ctx.sampler}
        text["gauge_depth [mm]"] = tb.fmt(ctx.columns["gauge_depth [mm]"], 1)
        text["sample_volume [mL]"] = tb.fmt(ctx.columns["sample_volume [mL]"], 0)
        text["collector_area [cm2]"] = np.full(m, "%.1f" % area, dtype=object)
        text["pH"] = tb.fmt(ctx.columns["pH"], 2)
        text["conductivity [uS/cm]"] = tb.fmt(ctx.columns["conductivity [uS/cm]"], 1)
        censored = {}
        for ion, c in ION_COLUMN.items():
            text[c], censored[ion] = tb.fmt_censored(ctx.columns[c], 3, DETECTION_LIMIT_PRECIP[ion])
        text["flags"] = ctx.flags
        ctx.censored = censored
        ctx.dry, ctx.trace, ctx.overflow = dry, trace, over
        frames.append((ctx, text))
    return frames


def air_tables(rng, met, end):
    """Weekly filter-pack rows (and monthly passive NH3 at the farm), text columns."""
    nd = met["wind_speed"].shape[1] // 24
    days = START.astype("datetime64[D]") + np.arange(nd)
    wind_day = met["wind_speed"][:, : nd * 24].reshape(len(SITES), nd, 24).mean(axis=2)
    doy = day_of_year(days.astype("datetime64[m]") + np.timedelta64(12, "h"))
    yrs = years_since_start(days.astype("datetime64[m]"))
    fp_start = weekly_starts(end, AIR_CHANGE)
    fp_end = fp_start + np.timedelta64(7, "D")
    pm_start, pm_end = monthly_periods(end, AIR_CHANGE)
    rows = []
    for s, site in enumerate(SITES):
        daily = chem.daily_air(rng, site["air"], doy, yrs, wind_day[s] / wind_day[s].mean())
        cum = {k: np.concatenate([[0.0], np.cumsum(v)]) for k, v in daily.items()}

        def mean_over(st, en, k):
            a = ((st.astype("datetime64[D]") - days[0]) // DAY).astype(np.int64)
            b = ((en.astype("datetime64[D]") - days[0]) // DAY).astype(np.int64)
            return (cum[k][b] - cum[k][a]) / (b - a)

        passive = "passive_sampler" in site
        m = fp_start.size
        vals = {}
        for sp in AIR_SPECIES + ["NO2"]:
            if sp not in daily or (sp == "NH3" and passive):
                vals[sp] = np.full(m, np.nan)
            else:
                vals[sp] = mean_over(fp_start, fp_end, sp) * np.exp(FILTER_SIGMA * rng.standard_normal(m))
        method = np.where(np.isfinite(vals["NH3"]), "filter_pack", "").astype(object)
        rows.append(dict(site=site["id"], start=fp_start, end=fp_end,
                         sampler=np.full(m, site["air_sampler"], dtype=object),
                         vals=vals, method=method))
        if passive:
            k = pm_start.size
            v = {sp: np.full(k, np.nan) for sp in AIR_SPECIES + ["NO2"]}
            v["NH3"] = mean_over(pm_start, pm_end, "NH3") * np.exp(PASSIVE_SIGMA * rng.standard_normal(k))
            rows.append(dict(site=site["id"], start=pm_start, end=pm_end,
                             sampler=np.full(k, site["passive_sampler"], dtype=object),
                             vals=v, method=np.full(k, "passive", dtype=object)))
    return rows


def air_frame(rows):
    parts, censored = [], []
    for r in rows:
        m = r["start"].size
        d = {"site": np.full(m, r["site"], dtype=object), "start": tb.iso(r["start"]),
             "end": tb.iso(r["end"]), "sampler_id": r["sampler"]}
        cens = {}
        for sp, col in zip(AIR_SPECIES + ["NO2"], AIR_COLUMNS):
            if sp == "NO2":
                d[col] = tb.fmt(r["vals"][sp], 1)
            else:
                d[col], cens[sp] = tb.fmt_censored(r["vals"][sp], 2, DETECTION_LIMIT_AIR[sp])
        d["method_NH3"] = r["method"]
        f = pd.DataFrame(d)
        f["_order"] = [s["id"] for s in SITES].index(r["site"])
        f["_t"] = r["start"]
        parts.append(f)
        censored.append(pd.DataFrame(cens))
    frame = pd.concat(parts, ignore_index=True)
    cens = pd.concat(censored, ignore_index=True).fillna(False).astype(bool)
    order = np.lexsort((frame["sampler_id"].to_numpy().astype(str), frame["_t"].to_numpy(),
                        frame["_order"].to_numpy()))
    frame = frame.iloc[order].drop(columns=["_order", "_t"]).reset_index(drop=True)
    return frame, cens.iloc[order].reset_index(drop=True)


def met_frame(met, times, plan):
    """Hourly met text (site blocks), with the planted gap and the RH-as-fraction month."""
    t_text = tb.iso(times)
    parts = []
    for s, site in enumerate(SITES):
        d = {"site": np.full(times.size, site["id"], dtype=object), "time": t_text}
        for var, (col, dec) in MET_COLUMNS.items():
            x = met[var][s]
            if var == "cloud_cover":
                d[col] = OKTA_TEXT[np.rint(x * 8).astype(int)]
            elif var == "relative_humidity":
                frac = plan.rh_fraction_mask(site["id"], times)
                d[col] = tb.fmt(x, 0)
                d[col][frac] = tb.fmt(x[frac] / 100.0, 2)
            else:
                d[col] = tb.fmt(x, dec)
        f = pd.DataFrame(d)
        keep = ~plan.met_gap_mask(site["id"], times)
        parts.append(f[keep])
    return pd.concat(parts, ignore_index=True)


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=HERE, help="output folder (default: demo_data/)")
    ap.add_argument("--years", type=int, default=8, help="length of the record in years (default 8)")
    args = ap.parse_args(argv)
    t0 = time.perf_counter()
    out = args.out
    out.mkdir(parents=True, exist_ok=True)
    end = np.datetime64(f"{2016 + args.years}-01-01T00:00")
    n = int((end - START) // HOUR)
    times = START + (np.arange(n) + 1) * HOUR                  # hour-ending, local
    rng = np.random.default_rng(SEED)

    plan = plant.Plan(START, end, weekly_starts(end, PRECIP_CHANGE), [s["id"] for s in SITES])
    met = weather.hourly_weather(rng, SITES, times, force_dry=plan.dry_hours(times))
    precip = precipitation_tables(rng, met, end, plan)
    air_rows = air_tables(rng, met, end)

    pframe = pd.concat([pd.DataFrame(text) for _, text in precip], ignore_index=True)
    aframe, acens = air_frame(air_rows)
    mframe = met_frame(met, times, plan)
    problems = plan.collect(precip, pframe, aframe, acens, mframe, times)

    tb.write_text(out / "sites.toml", tb.sites_toml(SITES, CATALOGUE_KEYS, [
        "Site catalogue of the invented Vellmoor Uplands demo network (made by make_demo.py).",
        "All names are invented; coordinates are invented to give a plausible sun path.",
        "Heights in m, utc_offset_h in h, critical loads in eq/ha/yr."]))
    tb.write_text(out / "precipitation.csv", tb.csv_text(pframe))
    tb.write_text(out / "air.csv", tb.csv_text(aframe, ["reference_state: ambient"]))
    tb.write_gzip(out / "met.csv.gz", tb.csv_text(mframe, ["time_label: end"]))
    tb.write_text(out / "scenario.toml", SCENARIO)
    tb.write_text(out / "planted_problems.json", json.dumps(problems, indent=1) + "\n")
    dt = time.perf_counter() - t0
    sizes = {p.name: p.stat().st_size for p in sorted(out.iterdir()) if p.name in FILES}
    print(f"demo network written to {out} in {dt:.1f} s: "
          + ", ".join(f"{k} {v / 1024:.0f} KiB" for k, v in sizes.items())
          + f"; {len(problems)} planted problems")
    if plan.skipped:
        print("not planted (no suitable sample in the record): " + ", ".join(plan.skipped),
              file=sys.stderr)
    return 0


FILES = ("sites.toml", "precipitation.csv", "air.csv", "met.csv.gz", "scenario.toml",
         "planted_problems.json")
SCENARIO = """# Minimal scenario of the invented Vellmoor Uplands demo network (made by make_demo.py).
# Paths are relative to this file.
[inputs]
sites = "sites.toml"
precipitation = "precipitation.csv"
air = "air.csv"
met = "met.csv.gz"

[period]
resolution = "year"

[budget]
# The mere site has a bulk collector, whose "wet" deposition already holds some dry
# deposition: particle dry deposition is not added there (see docs/budget.md).
bulk_correction = "exclude_particles"
"""

if __name__ == "__main__":
    sys.exit(main())
