"""Holtslag-van Ulden day, van Ulden-Holtslag/Venkatram night: references and solvers."""
import numpy as np
import pytest

from workbench.constants import BUSINGER_DYER_BETA, GRAVITY, STEFAN_BOLTZMANN, VON_KARMAN
from workbench.surface import energy_balance as eb
from workbench.surface.aerodynamic import wind_profile_factor


def test_swinbank_longwave_against_brutsaert_clear_sky():
    # HvU's clear-sky term c1 T^6 (Swinbank 1963) against Brutsaert (1975), Water
    # Resour. Res. 11, 742: eps = 1.24 (e/T)^(1/7), e in hPa (from memory), for a
    # moist 20 degC day (e = 14 hPa); the two agree within a few per cent.
    t = 293.15
    brutsaert = 1.24 * (14.0 / t) ** (1 / 7) * STEFAN_BOLTZMANN * t ** 4
    assert eb.HVU_C1 * t ** 6 == pytest.approx(brutsaert, rel=0.03)


def test_midday_net_radiation_over_grass():
    # Clear summer noon over grass: Q* of about 450-600 W m-2 (Oke 1987, Boundary
    # Layer Climates, Fig. 1.10; common practice).
    q = eb.net_radiation(800.0, 293.15, 0.0, eb.ALBEDO["grass"])
    assert 450.0 < q < 600.0
    h = eb.sensible_heat_flux(q, 293.15, 101325.0, 1.0)
    assert 0.1 * q < h < 0.4 * q  # Bowen ratio below 1 for watered grass


def test_kasten_czeplak_inversion_round_trip():
    sin_el = np.array([0.3, 0.6, 0.9])
    n = np.array([0.2, 0.5, 0.8])
    k = (eb.KC_A1 * sin_el + eb.KC_A2) * (1 - eb.KC_B1 * n ** eb.KC_B2)
    np.testing.assert_allclose(eb.cloud_cover_from_radiation(k, sin_el), n, atol=1e-9)
    assert np.isnan(eb.cloud_cover_from_radiation(0.0, -0.2))


def test_unstable_solver_satisfies_profile():
    u = np.array([0.5, 2.0, 5.0, 10.0])
    us, edge = eb.ustar_unstable(u, 10.0, 0.03, 250.0, 295.0, 1.18)
    inv_l = eb.inverse_obukhov(us, 250.0, 295.0, 1.18)
    np.testing.assert_allclose(us * wind_profile_factor(10.0, 0.03, inv_l) / VON_KARMAN, u,
                               rtol=1e-7)
    assert not edge.any()
    assert np.all(us > VON_KARMAN * u / np.log(10 / 0.03)) and np.all(inv_l < 0)


def test_stable_closed_form_satisfies_log_linear_profile():
    u, z, z0, t = np.array([3.0, 6.0]), 10.0, 0.03, 283.0
    us, theta, limited = eb.ustar_stable(u, z, z0, 0.09, t)
    assert not limited.any()
    inv_l = VON_KARMAN * GRAVITY * theta / (t * us ** 2)
    u_back = us / VON_KARMAN * (np.log(z / z0) + BUSINGER_DYER_BETA * z * inv_l)
    np.testing.assert_allclose(u_back, u, rtol=1e-10)


def test_stable_light_wind_limits_theta_star():
    us, theta, limited = eb.ustar_stable(0.5, 10.0, 0.03, 0.09, 283.0)
    assert limited and theta < 0.09
    assert us == pytest.approx(0.5 * VON_KARMAN / np.log(10 / 0.03) / 2)


def test_theta_star_cloud_dependence():
    assert eb.theta_star_night(0.0) == pytest.approx(0.09)
    assert eb.theta_star_night(1.0) == pytest.approx(0.045)
