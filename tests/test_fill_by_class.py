"""A hole in the hourly Vd of a site whose surface changed class is filled from the
hours of the class in force only (docs/methods_dry.md, the diurnal fill;
workbench/dryflux.py ``fill_diurnal(classes=)``).

The expected fills are means over the hours of one class, computed here with pandas
(group by class, month and hour of the hour's middle), never written in.
"""
from __future__ import annotations

import gzip
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

sys.path.insert(0, str(Path(__file__).resolve().parent))


def test_a_hole_in_the_month_of_a_change_takes_its_own_class_hours():
    """An invented month (June 2021) of hourly Vd: 0.2 cm/s under class 0 before the
    15th, 0.8 under class 1 after, with a diurnal cycle; a hole of one day under each
    class.  Each hole takes the (year, month, hour) mean of its own class's hours; the
    old fill (both classes' hours pooled) gives values between the two: the test can
    fail."""
    from workbench.dryflux import fill_diurnal
    t = pd.date_range("2021-06-01T01:00", "2021-07-01T00:00", freq="h").values
    hour = pd.DatetimeIndex(t - np.timedelta64(30, "m")).hour.to_numpy()
    cls = (t > np.datetime64("2021-06-15T00:00")).astype(np.int8)
    base = np.where(cls == 1, 0.008, 0.002) * (1 + 0.5 * np.sin(2 * np.pi * hour / 24))
    vd = base.copy()
    hole = ((t > np.datetime64("2021-06-05T00:00")) & (t <= np.datetime64("2021-06-06T00:00"))
            | (t > np.datetime64("2021-06-20T00:00")) & (t <= np.datetime64("2021-06-21T00:00")))
    vd[hole] = np.nan
    da = xr.DataArray(vd[None, None], dims=("site", "receptor", "time"),
                      coords={"time": t})
    c = xr.DataArray(cls[None, None], dims=("site", "receptor", "time"))
    got, was = fill_diurnal(da, 7, classes=c)
    frame = pd.DataFrame({"vd": vd, "cls": cls, "hour": hour})
    want = frame.groupby(["cls", "hour"])["vd"].mean()           # NaN skipped
    expect = want.loc[list(zip(cls[hole], hour[hole]))].to_numpy()
    np.testing.assert_allclose(got.values[0, 0, hole], expect, rtol=1e-12)
    np.testing.assert_allclose(got.values[0, 0, hole], base[hole], rtol=1e-12)
    assert was.values[0, 0].sum() == hole.sum()
    pooled, _ = fill_diurnal(da, 7)
    assert not np.allclose(pooled.values[0, 0, hole], base[hole], rtol=1e-3)


def test_without_classes_the_fill_is_unchanged():
    """classes=None, or one class in every hour: the same numbers as before."""
    from workbench.dryflux import fill_diurnal
    rng = np.random.default_rng(3)
    t = pd.date_range("2021-01-01T01:00", periods=24 * 60, freq="h").values
    v = rng.uniform(0.001, 0.01, (2, 3, t.size))
    v[rng.uniform(size=v.shape) < 0.2] = np.nan
    da = xr.DataArray(v, dims=("site", "receptor", "time"), coords={"time": t})
    a, _ = fill_diurnal(da, 3)
    b, _ = fill_diurnal(da, 3, classes=np.zeros(v.shape, np.int8))
    np.testing.assert_array_equal(a.values, b.values)


KEEP = ("2012-01-01", "2016-01-01")


def test_long_record_april_of_the_felling_filled_from_grass_aprils_only(tmp_path):
    """The long record (forest clear-felled on 2014-04-01), its met of April 2014 blank
    (no temperature: no Vd): every hour of that April is filled, and with no April 2014
    hour to average, from the mean April diurnal cycle over the years -- of the grass
    hours only (April 2015), not of the forest Aprils of 2012-2013 too."""
    from test_surfacehistory import SITE, LAND_CHANGE, _cut, _run  # noqa: F401
    import test_surfacehistory as th
    from longrecord_data import make_long_record
    d = tmp_path
    scen = make_long_record(d, sites_text=SITE.format(land_use="grass", height=0.15,
                                                      collector="wet_only", receptors=""))
    th._cut(d)
    with gzip.open(d / "met.csv.gz", "rt") as fh:
        lines = fh.read().splitlines()
    out = []
    for ln in lines:
        parts = ln.split(",")
        if ln.startswith("haugh,") and "2014-04-01T01:00" <= parts[1] <= "2014-05-01T00:00":
            parts[3] = ""                        # temperature blank
        out.append(",".join(parts))
    with gzip.open(d / "met.csv.gz", "wt") as fh:
        fh.write("\n".join(out) + "\n")
    scen.write_text(scen.read_text().replace('"1998-01-01"', f'"{KEEP[0]}"')
                    .replace('"2023-01-01"', f'"{KEEP[1]}"'))
    text = (SITE.format(land_use="grass", height=0.15, collector="wet_only", receptors="")
            + LAND_CHANGE.format(date="2014-04-01", frm="conifer_forest", to="grass"))
    study, res = th._run(d, text, "felled_hole")
    o = res.options
    sets = study._velocity_sets(o["dry"], o["budget"], o["fixed_velocity"], None)
    filled, was, _ = sets["SO2"]
    raw = res.velocities["vd_SO2"].sel(site="haugh", receptor="grass")
    cls = res.velocities["land_use_in_force"].sel(site="haugh", receptor="grass").values
    t = raw["time"].values
    mid = pd.DatetimeIndex(t - np.timedelta64(30, "m"))
    april14 = (mid.year == 2014) & (mid.month == 4)
    assert np.isnan(raw.values[april14]).all() and april14.sum() == 720
    got = filled.sel(site="haugh", receptor="grass").values[april14]
    frame = pd.DataFrame({"vd": raw.values, "cls": cls, "month": mid.month, "hour": mid.hour})
    grass = frame[(frame["cls"] == cls[april14][0]) & (frame["month"] == 4)]
    want = grass.groupby("hour")["vd"].mean().loc[mid.hour[april14]].to_numpy()
    assert np.isfinite(want).all()
    np.testing.assert_allclose(got, want, rtol=1e-12)
    pooled = frame[frame["month"] == 4].groupby("hour")["vd"].mean().loc[
        mid.hour[april14]].to_numpy()
    assert not np.allclose(got, pooled, rtol=1e-3)
