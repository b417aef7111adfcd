"""Solar geometry against almanac values (common practice)."""
import numpy as np
import pytest

from workbench.surface.solar import declination, equation_of_time, solar_elevation_sine, time_parts


def test_declination_at_solstices_and_equinox():
    # Astronomical almanac: +23.44 deg on 21 June, -23.44 on 21 December, ~0 on 20 March.
    assert np.rad2deg(declination(172)) == pytest.approx(23.44, abs=0.15)
    assert np.rad2deg(declination(355)) == pytest.approx(-23.44, abs=0.15)
    assert abs(np.rad2deg(declination(79))) < 0.6


def test_equation_of_time_extremes():
    # Almanac (from memory): about -14.2 min around 11 February, +16.4 min around 3 November.
    assert equation_of_time(42) == pytest.approx(-14.2, abs=0.6)
    assert equation_of_time(307) == pytest.approx(16.4, abs=0.6)


@pytest.mark.parametrize("lat", [-40.0, 0.0, 52.0])
def test_noon_elevation(lat):
    # at local apparent noon the elevation is 90 - |lat - delta| (spherical geometry)
    doy = 172
    delta = np.rad2deg(declination(doy))
    hours = np.linspace(10, 14, 2401)
    el = np.rad2deg(np.arcsin(solar_elevation_sine(doy, hours, lat, 0.0)))
    assert el.max() == pytest.approx(90 - abs(lat - delta), abs=0.05)


def test_time_parts():
    t = np.array(["2021-03-01T06:30"], dtype="datetime64[ns]")
    doy, hour = time_parts(t)
    assert doy[0] == 60 and hour[0] == 6.5


def test_time_parts_equal_pandas_calendar():
    # numpy datetime arithmetic against pandas' day_of_year and floor (leap years,
    # before 1970, the last nanosecond of a day, a 2-D array, NaT)
    import pandas as pd
    rng = np.random.default_rng(1)
    t = np.datetime64("1899-03-01", "ns") + rng.integers(
        0, 200 * 365 * 86400 * 10**9, 5000).astype("timedelta64[ns]")
    t = np.concatenate([t, np.array(["2020-02-29T23:59:59.999999999", "2020-12-31T12:00",
                                     "1969-12-31T23:30", "2021-01-01T00:00"],
                                    dtype="datetime64[ns]")])
    idx = pd.DatetimeIndex(t)
    expect_doy = np.asarray(idx.day_of_year, dtype=float)
    expect_hour = np.asarray((idx - idx.floor("D")) / pd.Timedelta(hours=1), dtype=float)
    doy, hour = time_parts(t.reshape(-1, 2))
    np.testing.assert_array_equal(doy.ravel(), expect_doy)
    np.testing.assert_array_equal(hour.ravel(), expect_hour)
    assert doy[-2, 0] == 60 and doy[-2, 1] == 366 and doy[-1, 1] == 1
    with_nat = t[:3].copy()
    with_nat[1] = np.datetime64("NaT")
    doy, hour = time_parts(with_nat)
    assert np.isnan(doy[1]) and np.isnan(hour[1]) and doy[0] == expect_doy[0]
