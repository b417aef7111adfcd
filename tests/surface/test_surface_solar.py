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
