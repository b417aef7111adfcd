"""Invented years of hourly global radiation with a clock offset, for the met clock check.

``radiation_year(lat, lon, offset_h, cloud_cycle, seed)`` returns one year of hourly mean
global radiation [W m-2] whose labels (hour ends, UTC) run ``offset_h`` hours early
against the sun (the value labelled t was measured over [t - 1 h - offset, t - offset]:
a logger labelling the middle of its interval gives offset 0.5 h, one in local time of
the next zone 1 h).  Built on 5-min steps, averaged to hours:

- the sun: the package's own (:func:`workbench.surface.solar.solar_elevation_sine`,
  checked against pvlib in tests/io/test_met_clock_offset.py);
- clear sky: Haurwitz (1945), GHI = 1098 cos(Z) exp(-0.057 / cos(Z)) [W m-2];
- cloud cover: an AR(1) of 6 h memory around 0.45 (sd 0.3), plus a daily cycle peaking
  at 15 h solar time (Gaussian, 3 h wide) of amplitude ``cloud_cycle`` (0: none; 0.3
  moderate; 0.6 strong, the afternoon convection that pulls the centroid early);
- cloud transmission: 1 - 0.75 C^3.4 (Kasten & Czeplak 1980, Solar Energy 24, 177);
- a radiometer noise of 2 % and an offset of -2 W/m2 at night (our choice).

Every name and number is invented; no real station is meant.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from workbench.surface.solar import solar_elevation_sine, time_parts

#: Invented sites: (id, latitude [deg], longitude [deg]).
SITES = (("ostvik", 65.0, 25.0), ("brackmoor", 54.5, 7.2), ("calder", 40.0, -3.5),
         ("tesserel", 10.0, -75.0), ("quillon", -33.0, 150.0), ("varden", -45.0, 172.0))
STEPS_PER_HOUR = 12


def radiation_year(lat, lon, offset_h=0.0, cloud_cycle=0.0, seed=0, year=2021,
                   cycle_hour=15.0):
    """One year of hourly radiation with labels `offset_h` early [W m-2]; the cloud
    maximum of amplitude `cloud_cycle` [-] at `cycle_hour` [h solar time].

    Returns
    -------
    time_end : ndarray of datetime64[ns]
        The labels (hour ends, UTC) of the year.
    radiation : ndarray
        [W m-2]
    """
    rng = np.random.default_rng(seed)
    t_end = pd.date_range(f"{year}-01-01T01:00", f"{year + 1}-01-01T00:00", freq="h").values
    shift = np.timedelta64(int(round(offset_h * 3600)), "s")
    step = np.timedelta64(300, "s")
    first = t_end[0] - np.timedelta64(1, "h") - shift
    mids = first + step * np.arange(len(t_end) * STEPS_PER_HOUR) + step // 2
    doy, hour = time_parts(mids.astype("datetime64[ns]"))
    mu = np.clip(solar_elevation_sine(doy, hour, lat, lon), 0.0, None)
    with np.errstate(divide="ignore", over="ignore"):
        clear = np.where(mu > 0.01, 1098.0 * mu * np.exp(-0.057 / np.fmax(mu, 1e-3)), 0.0)
    # AR(1) cloud of 6 h memory on 5-min steps (filtered in blocks: no loop over hours)
    phi = np.exp(-5.0 / 360.0)
    from scipy.signal import lfilter
    eps = rng.normal(0.0, np.sqrt(1 - phi ** 2), len(mids))
    ar = lfilter([1.0], [1.0, -phi], eps)
    solar_hour = (hour + lon / 15.0) % 24.0
    cycle = cloud_cycle * np.exp(-0.5 * ((solar_hour - cycle_hour) / 3.0) ** 2)
    cover = np.clip(0.45 + 0.3 * ar + cycle, 0.0, 1.0)
    ghi = clear * (1.0 - 0.75 * cover ** 3.4)
    hourly = ghi.reshape(-1, STEPS_PER_HOUR).mean(axis=1)
    hourly = hourly * (1.0 + 0.02 * rng.normal(size=len(hourly)))
    hourly = np.where(hourly < 1.0, -2.0, hourly)
    return t_end, np.round(hourly, 1)
