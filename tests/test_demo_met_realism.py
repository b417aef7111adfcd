"""Global radiation of the invented demo network against pvlib's sun and clear sky.

The demo's hourly global radiation (demo_data/gen_weather.py) is Haurwitz's clear sky
times Kasten and Czeplak's cloud factor times a lognormal scatter, at the sun of the
middle of each hour.  Checked here, for every demo site and every hour of
demo_data/met.csv.gz (read with pandas; labels are the END of the hour in the site's
local standard time, ``utc_offset_h`` of sites.toml):

* the sun: pvlib's Solar Position Algorithm (Reda and Andreas 2004, Solar Energy 76,
  577; ``pvlib.location.Location.get_solarposition``), at four instants per hour (the
  middles of its quarters), so that each clear-sky value is an hour mean;
* clear sky: Haurwitz, B. (1945), J. Meteorol. 2, 154 (``model="haurwitz"``, the
  generator's model as pvlib implements it), and Ineichen, P. and Perez, R. (2002),
  Solar Energy 73, 151 (``model="ineichen"``, with pvlib's monthly Linke turbidity
  climatology of Remund et al. 2003);
* limits: the "extremely rare" limit of the BSRN quality control, global < 1.2 S_a
  mu^1.2 + 50 W m-2 (Long, C. N. and Shi, Y. 2008, Open Atmos. Sci. J. 2, 23-37;
  from memory), S_a the extraterrestrial irradiance of the day
  (``pvlib.irradiance.get_extra_radiation``).

Margins.  An hour may exceed the clear sky through cloud enhancement at the edges of
cumulus, by up to about 1.3 times for an hour (common practice).  Against Ineichen-Perez
the demo needs an allowance at low sun, where the two clear-sky models part (measured
2026-12-03, pvlib 0.16.1: Haurwitz exceeds Ineichen-Perez by a median 23-25 % at 5-10
deg elevation, 42-47 % below 5 deg, 2-4 % above 30 deg); we take the additive 50 W m-2 of the
BSRN limit's form for it (largest excess over 1.3 x Ineichen-Perez measured: 34 W m-2,
at 11-15 deg elevation).
"""
from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

pvlib = pytest.importorskip("pvlib")
# pvlib 0.16 still calls DatetimeIndex.dayofyear, deprecated by pandas 3
pytestmark = pytest.mark.filterwarnings("ignore:DatetimeIndex.dayofyear")

DEMO = Path(__file__).resolve().parent.parent / "demo_data"
#: Hourly cloud enhancement over the clear sky (common practice).
ENHANCEMENT = 1.3
#: Low-sun allowance against Ineichen-Perez [W m-2] (the additive term of the BSRN
#: "extremely rare" limit, Long and Shi 2008).
LOW_SUN_ALLOWANCE = 50.0
#: Instants per hour for the hour means (middles of the quarter hours).
N_SUB = 4
#: The sun below the horizon including refraction [degree elevation] (common practice:
#: 50' for refraction and the sun's radius).
BELOW_HORIZON = -0.833


def _sites():
    with open(DEMO / "sites.toml", "rb") as fh:
        return tomllib.load(fh)["site"]


@pytest.fixture(scope="module")
def radiation():
    """Per site: the demo's radiation and pvlib's sun and clear sky, hour by hour."""
    met = pd.read_csv(DEMO / "met.csv.gz", comment="#",
                      usecols=["site", "time", "solar_radiation [W/m2]"])
    out = {}
    for s in _sites():
        m = met[met["site"] == s["id"]]
        label = pd.DatetimeIndex(pd.to_datetime(m["time"]))
        end = (label - pd.Timedelta(hours=s["utc_offset_h"])).tz_localize("UTC")
        n = len(end)
        sub = [end - pd.Timedelta(minutes=60.0 - 15.0 * (k + 0.5)) for k in range(N_SUB)]
        inst = sub[0].append(sub[1:])
        loc = pvlib.location.Location(s["latitude"], s["longitude"], altitude=s["elevation_m"])
        sp = loc.get_solarposition(inst)

        def hour_mean(x):
            return np.asarray(x, float).reshape(N_SUB, n).mean(axis=0)

        mu = np.clip(np.cos(np.deg2rad(sp["zenith"].to_numpy())), 0.0, None)
        s_a = pvlib.irradiance.get_extra_radiation(inst).to_numpy()
        out[s["id"]] = {
            "site": s, "end": end, "g": m["solar_radiation [W/m2]"].to_numpy(float),
            "haurwitz": hour_mean(loc.get_clearsky(inst, model="haurwitz",
                                                   solar_position=sp)["ghi"]),
            "ineichen": hour_mean(loc.get_clearsky(inst, model="ineichen",
                                                   solar_position=sp)["ghi"]),
            "night": (sp["apparent_elevation"].to_numpy().reshape(N_SUB, n)
                      < BELOW_HORIZON).all(axis=0),
            "bsrn_rare": hour_mean(1.2 * s_a * mu ** 1.2 + 50.0),
            "eot_min": sp["equation_of_time"].to_numpy()[:n],
        }
    return out


def test_every_site_and_hour_checked(radiation):
    assert set(radiation) == {s["id"] for s in _sites()}
    for r in radiation.values():
        assert len(r["g"]) > 8 * 8760 * 0.99 and np.isfinite(r["g"]).all()


def test_zero_at_night(radiation):
    for sid, r in radiation.items():
        assert r["night"].mean() > 0.3
        assert (r["g"][r["night"]] == 0.0).all(), sid
        assert (r["g"][r["haurwitz"] == 0.0] == 0.0).all(), sid


def test_not_above_clear_sky_haurwitz(radiation):
    # the generator's own clear-sky model (from memory there) as pvlib implements it:
    # also checks its sun (time zone, hour label) hour by hour
    for sid, r in radiation.items():
        assert (r["g"] <= ENHANCEMENT * r["haurwitz"] + 0.5).all(), sid   # 0.5: rounding


def test_not_above_clear_sky_ineichen_perez(radiation):
    for sid, r in radiation.items():
        assert (r["g"] <= ENHANCEMENT * r["ineichen"] + LOW_SUN_ALLOWANCE).all(), sid
        # the brightest 1 % of the hours of high sun reach at most 1.2 x the clear sky
        # (measured: 1.14-1.18)
        day = r["ineichen"] > 300.0
        assert np.percentile(r["g"][day] / r["ineichen"][day], 99) < 1.2, sid


def test_below_bsrn_extremely_rare_limit(radiation):
    for sid, r in radiation.items():
        assert (r["g"] < r["bsrn_rare"]).all(), sid


def test_daily_maximum_near_solar_noon(radiation):
    for sid, r in radiation.items():
        lon = r["site"]["longitude"]
        mid = r["end"] - pd.Timedelta(minutes=30)
        day = mid.floor("D")
        frame = pd.DataFrame({
            "day": day, "hour": np.asarray((mid - day) / pd.Timedelta(hours=1)),
            "g": r["g"], "clear": r["haurwitz"],
            # solar noon [h UTC] from SPA's equation of time (common practice)
            "noon": 12.0 - lon / 15.0 - r["eot_min"] / 60.0})
        frame["gt"], frame["ct"] = frame["g"] * frame["hour"], frame["clear"] * frame["hour"]
        days = frame.groupby("day").sum()
        noon = frame.groupby("day")["noon"].mean()
        lit = days["g"] > 0
        # the radiation-weighted time of each day: on average at solar noon (a wrong
        # hour label or UTC offset shifts it by 30 min or more); the clear sky's too
        centre = (days["gt"] / days["g"] - noon)[lit]
        assert abs(centre.mean()) < 5.0 / 60.0, (sid, centre.mean())
        assert abs((days["ct"] / days["clear"] - noon)[lit].mean()) < 1.0 / 60.0
        # on clear days (85 % of the clear-sky day) the sunniest hour is that of solar
        # noon or next to it (midpoint within 1.5 h) on most days (measured 93-95 %: the
        # generator's hourly scatter and broken clouds move it), and on nearly all days
        # within 3 h (measured: 5 of 2,705 days beyond 2.5 h, one beyond 3 h)
        clear = days.index[lit & (days["g"] >= 0.85 * days["clear"])]
        peak = frame.loc[frame.groupby("day")["g"].idxmax(), ["day", "hour"]].set_index("day")
        off = (peak["hour"] - noon).loc[clear].abs()
        assert len(clear) > 100 and (off <= 1.5).mean() > 0.9, (sid, len(clear))
        assert (off <= 3.0).mean() > 0.99, sid
