"""Solar geometry of the workbench against pvlib's Solar Position Algorithm.

Reference: ``pvlib.solarposition.get_solarposition(..., method="nrel_numpy")``, the
NREL Solar Position Algorithm (SPA) of Reda, I. and Andreas, A. (2004), Solar Energy 76,
577-589 (uncertainty +-0.0003 deg), as implemented by pvlib (Holmgren, Hansen and
Mikofski 2018, J. Open Source Softw. 3(29), 884).  We compare the geometric zenith
(pvlib's ``zenith``, no refraction), as the workbench computes no refraction.

Tolerance.  The workbench uses the Fourier series of Spencer (1971) for the declination
and the equation of time (workbench/surface/solar.py).  About 0.5 deg in zenith is the
accuracy commonly assumed for such series (common practice); Iqbal (1983) quotes a
maximum error of 0.0006 rad in declination for the fitted year (from memory).  Measured
here against SPA (2026-12-03, pvlib 0.16.1, the sites of POINTS, every hour of
2016-2030): the series ties the seasons to the calendar day of a 365-day year, so its
declination drifts with the leap-year phase and with the calendar's drift since the
year it was fitted to.  The largest zenith error is 0.52-0.57 deg in the years after a
leap year (2017, 2021, 2025, 2029; near the September equinox), 0.24-0.27 deg in leap
years, and grows by about 0.013 deg every four years; the RMS error is 0.09-0.38 deg.
The bounds below are 0.6 deg (largest) and 0.4 deg (RMS), which hold (extrapolated)
to about 2037.  That is an error of at most 0.01 in cos zenith, far below what the
stomatal light response or the cloud estimate from radiation can resolve.

Time stamps.  Hourly met records carry the END of their hour (docs/data_model.md); a
naive label is the site's local standard time, UTC = label - utc_offset_h
(:meth:`workbench.io.table.RawTable.times`); the engine takes the sun at the middle of
the hour (:func:`workbench.drydep.canopy.cos_zenith`, ``HALF_HOUR``).
"""
from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

pvlib = pytest.importorskip("pvlib")

from workbench.drydep.canopy import cos_zenith                          # noqa: E402
from workbench.io.metchecks import solar_elevation_deg                  # noqa: E402
from workbench.surface.solar import declination, equation_of_time      # noqa: E402

from tiny_inputs import grass_sites                                    # noqa: E402

#: Spencer (1971) against SPA: largest and RMS zenith error [degree] (measured, see above).
MAX_ZENITH_ERROR = 0.6
RMS_ZENITH_ERROR = 0.4
#: Day/night may differ only where SPA puts the sun within this of the horizon [degree]
#: (the zenith tolerance).
HORIZON_BAND = MAX_ZENITH_ERROR

#: Invented sites (latitude, longitude [degree]): both hemispheres, both sides of
#: Greenwich, the tropics, high latitude and the date line.
POINTS = [(52.0, 5.0), (-40.0, 175.0), (0.5, -75.0), (65.0, -150.0), (-33.5, -70.5),
          (35.0, 139.5), (-12.0, 131.0), (70.0, 25.0)]


def _site(lat, lon):
    """The engine's site accessor: name -> (site, 1, 1)."""
    vals = {"latitude": np.atleast_1d(np.asarray(lat, float)),
            "longitude": np.atleast_1d(np.asarray(lon, float))}
    return lambda name: vals[name][:, None, None]


def _spa_zenith(times_utc, lat, lon):
    """SPA geometric zenith [degree] at tz-aware instants."""
    return pvlib.solarposition.get_solarposition(times_utc, lat, lon,
                                                 method="nrel_numpy")["zenith"].to_numpy()


def _engine_zenith(labels_utc_naive, lat, lon):
    """Zenith [degree] the engine takes for hour-ending UTC labels (datetime64)."""
    cz = cos_zenith(np.asarray(labels_utc_naive, "datetime64[ns]"), _site(lat, lon))[0, 0]
    return np.rad2deg(np.arccos(np.clip(cz, -1.0, 1.0)))


@pytest.mark.parametrize("year", [2016, 2021, 2024, 2029])
def test_engine_zenith_matches_spa_at_mid_hour(year):
    # every hour of the year at each site: the engine's zenith for the record labelled
    # by the end of its hour equals SPA's at the middle of that hour
    labels = pd.date_range(f"{year}-01-01 01:00", f"{year + 1}-01-01 00:00", freq="h")
    mid = (labels - pd.Timedelta(minutes=30)).tz_localize("UTC")
    for lat, lon in POINTS:
        err = _engine_zenith(labels.values, lat, lon) - _spa_zenith(mid, lat, lon)
        assert np.abs(err).max() < MAX_ZENITH_ERROR, (year, lat, lon, np.abs(err).max())
        assert np.sqrt(np.mean(err ** 2)) < RMS_ZENITH_ERROR, (year, lat, lon)


def test_hour_label_is_the_end_of_the_hour():
    # the check above can tell the instant: the start or the end of the hour (the sun
    # moves up to 15 deg in an hour, here about 4.7 deg in half an hour) misses SPA by
    # far more than the tolerance
    labels = pd.date_range("2021-06-01 01:00", periods=24 * 30, freq="h")
    lat, lon = 52.0, 5.0
    ours = _engine_zenith(labels.values, lat, lon)
    for shift in ("0min", "60min"):        # label taken as the instant / as hour-beginning
        wrong = _spa_zenith((labels - pd.Timedelta(shift)).tz_localize("UTC"), lat, lon)
        assert np.abs(ours - wrong).max() > 5 * MAX_ZENITH_ERROR


def test_day_night_classification_agrees_with_spa():
    labels = pd.date_range("2021-01-01 01:00", "2022-01-01 00:00", freq="h")
    mid = (labels - pd.Timedelta(minutes=30)).tz_localize("UTC")
    for lat, lon in POINTS:
        z_spa = _spa_zenith(mid, lat, lon)
        day_ours = _engine_zenith(labels.values, lat, lon) < 90.0      # cos zenith > 0
        differ = day_ours != (z_spa < 90.0)
        assert (np.abs(z_spa[differ] - 90.0) < HORIZON_BAND).all(), (lat, lon)
        # and the day has its length: the share of daytime hours agrees closely
        assert abs(day_ours.mean() - (z_spa < 90.0).mean()) < 0.005


def test_met_checks_elevation_matches_spa():
    # the QA check of night-time radiation (workbench.io.metchecks) uses the same series
    t = pd.date_range("2023-01-01 00:30", periods=24 * 365, freq="h")
    for lat, lon in POINTS[:4]:
        el = solar_elevation_deg(t.values, lat, lon)
        spa = pvlib.solarposition.get_solarposition(t.tz_localize("UTC"), lat, lon,
                                                    method="nrel_numpy")["elevation"]
        assert np.abs(el - spa.to_numpy()).max() < MAX_ZENITH_ERROR


def test_spencer_series_as_pvlib_implements_it():
    # pvlib's own Spencer (1971) declination and equation of time (day angle
    # 2 pi (n - 1) / 365): ours adds the hour of day to the day number, so the two
    # agree at 12 UTC; the equation of time to 0.03 min, the effect of two coefficients
    # printed differently (pvlib 0.0000075 and 0.040849, Iqbal 1983 Eq. 1.4.1 0.000075
    # and 0.04089)
    doy = np.arange(1, 366, dtype=float)
    np.testing.assert_allclose(declination(doy, 12.0),
                               pvlib.solarposition.declination_spencer71(doy), atol=1e-9)
    np.testing.assert_allclose(equation_of_time(doy, 12.0),
                               pvlib.solarposition.equation_of_time_spencer71(doy), atol=0.03)


# --- met time labels through the reader --------------------------------------------------

#: Invented sites with offsets west and east of Greenwich and in the southern
#: hemisphere.  (A half-hour offset such as 9.5 h puts naive hour-ending labels on the
#: half UTC hour; the met readers move them to the nearest whole UTC hour end, and the
#: sun of such a site is checked in tests/io/test_met_fractional_offsets.py.)
LABEL_SITES = [("westfield", "West Test Field", 38.5, -77.0, -5.0),
               ("southmoor", "South Test Moor", -34.5, 150.5, 10.0),
               ("northfen", "North Test Fen", 60.0, 11.0, 1.0)]


def _met_csv(path, site_rows, zoned=False, label="end"):
    """A met CSV of hourly labels (hour-ending, or hour-beginning with ``# time_label:
    start``); naive local time, or with the site's zone."""
    frames = []
    for sid, _, _, _, off in site_rows:
        local = pd.date_range("2022-03-18 01:00", periods=24 * 8, freq="h")
        local = local.append(pd.date_range("2022-06-19 01:00", periods=24 * 4, freq="h"))
        local = local.append(pd.date_range("2022-12-19 01:00", periods=24 * 4, freq="h"))
        if label == "start":
            local = local - pd.Timedelta(hours=1)
        text = local.strftime("%Y-%m-%dT%H:%M")
        if zoned:
            hh, mm = divmod(abs(int(round(off * 60))), 60)
            text = text + f"{'+' if off >= 0 else '-'}{hh:02d}:{mm:02d}"
        frames.append(pd.DataFrame({
            "site": sid, "time": text, "wind_speed [m/s]": 3.0, "temperature [degC]": 12.0,
            "relative_humidity [%]": 70.0, "solar_radiation [W/m2]": 0.0,
            "precipitation [mm]": 0.0, "pressure [hPa]": 1005.0}))
    head = "# time_label: start\n" if label == "start" else ""
    path.write_text(head + pd.concat(frames).to_csv(index=False))
    return path


@pytest.mark.parametrize("zoned, label", [(False, "end"), (True, "end"), (False, "start")])
def test_reader_labels_give_the_sun_of_the_utc_instant(tmp_path, zoned, label):
    # a site with a UTC offset gets, through the met reader, the sun SPA gives at the
    # corresponding UTC instant: the label in the site's fixed zone, minus half an hour
    # (plus half an hour for a file that declares hour-beginning labels)
    from workbench.io.met import read_met
    from workbench.io.sites import read_sites
    (tmp_path / "sites.toml").write_text(grass_sites(LABEL_SITES, elevation_m=50.0))
    cat = read_sites(tmp_path / "sites.toml")
    met, _ = read_met(_met_csv(tmp_path / "met.csv", LABEL_SITES, zoned, label), cat)
    raw = pd.read_csv(tmp_path / "met.csv", comment="#")
    to_mid = pd.Timedelta(minutes=30 if label == "start" else -30)
    for sid, _, lat, lon, off in LABEL_SITES:
        rows = raw[raw["site"] == sid]
        zone = dt.timezone(dt.timedelta(hours=off))
        if zoned:
            stamp = pd.DatetimeIndex(pd.to_datetime(rows["time"], format="ISO8601"))
        else:
            stamp = pd.DatetimeIndex(pd.to_datetime(rows["time"])).tz_localize(zone)
        mid_utc = stamp.tz_convert("UTC") + to_mid
        times = met["time"].values[~np.isnan(met["temperature"].sel(site=sid).values)]
        assert len(times) == len(rows)
        ours = _engine_zenith(times, lat, lon)
        spa = _spa_zenith(mid_utc, lat, lon)
        assert np.abs(ours - spa).max() < MAX_ZENITH_ERROR, (sid, np.abs(ours - spa).max())
        # the opposite sign of the offset would put the sun hours away
        flipped = _spa_zenith(mid_utc + pd.Timedelta(hours=2 * off), lat, lon)
        assert np.abs(ours - flipped).max() > 10.0
