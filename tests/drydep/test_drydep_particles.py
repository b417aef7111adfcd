"""Zhang et al. (2001) particles: handbook tables and shapes."""
import numpy as np
import pytest
from scipy import integrate

from workbench.drydep import particles as p
from workbench.drydep.options import FINE_MODE, LogNormalMode

T298, P1ATM = 298.15, 101325.0

# Seinfeld and Pandis (2006), Table 9.3: slip correction factor at 298 K, 1 atm
# (from memory; their lambda = 0.0651 um, ours 0.0665 um from Sutherland's mu).
SP_SLIP_TABLE = {0.01: 22.2, 0.05: 4.95, 0.1: 2.85, 0.5: 1.326, 1.0: 1.164, 5.0: 1.032, 10.0: 1.016}
# Seinfeld and Pandis (2006), Table 9.4: settling velocity of unit-density spheres at
# 298 K, 1 atm [cm s-1] (from memory).
SP_SETTLING_TABLE = {0.01: 6.95e-6, 0.1: 8.65e-5, 1.0: 3.5e-3, 10.0: 0.306}
# Seinfeld and Pandis (2006), Table 9.5: Brownian diffusivity at 298 K [cm2 s-1] (from memory).
SP_DIFFUSIVITY_TABLE = {0.01: 5.24e-4, 0.1: 6.82e-6}


@pytest.mark.parametrize("dp_um, cc", sorted(SP_SLIP_TABLE.items()))
def test_slip_correction_table(dp_um, cc):
    assert p.slip_correction(dp_um * 1e-6, T298, P1ATM) == pytest.approx(cc, rel=0.03)


@pytest.mark.parametrize("dp_um, vs", sorted(SP_SETTLING_TABLE.items()))
def test_settling_velocity_table(dp_um, vs):
    v = p.settling_velocity(dp_um * 1e-6, 1000.0, T298, P1ATM) * 100.0
    assert v == pytest.approx(vs, rel=0.05)


@pytest.mark.parametrize("dp_um, db", sorted(SP_DIFFUSIVITY_TABLE.items()))
def test_brownian_diffusivity_table(dp_um, db):
    assert p.brownian_diffusivity(dp_um * 1e-6, T298, P1ATM) * 1e4 == pytest.approx(db, rel=0.04)


def test_hygroscopic_growth_factors():
    # Ammonium sulfate grows about 1.4-1.6 times in diameter at 80 % RH (Tang and
    # Munkelwitz 1994, J. Geophys. Res. 99, 18801; from memory); sea salt more.
    d = 0.3e-6
    gf_as = p.wet_diameter(d, 0.8, "ammonium_sulfate") / d
    gf_ss = p.wet_diameter(d, 0.8, "sea_salt") / d
    assert 1.35 < gf_as < 1.65 and gf_ss > gf_as
    assert p.wet_diameter(d, 0.8, "none") == d
    # Gerber's smooth fit has no deliquescence step; at 30 % RH it stays near dry size
    assert p.wet_diameter(d, 0.3, "ammonium_sulfate") / d < 1.15
    assert np.isfinite(p.wet_diameter(5e-6, 1.0, "sea_salt"))  # capped at RH 0.99


@pytest.mark.parametrize("land_use", ["conifer_forest", "grass", "water", "urban"])
@pytest.mark.parametrize("ustar", [0.2, 0.5])
def test_vd_curve_minimum_and_shape(land_use, ustar):
    # The V-shaped curve: Brownian diffusion for small, settling and impaction for
    # large particles, with a minimum in the accumulation range. In Zhang et al.
    # (2001) it falls near 1 um (their Fig. 2); we check 0.1-2 um.
    d = np.logspace(-8, -4.5, 300)
    vd = p.particle_deposition_velocity(d, 1500.0, 0.0, ustar, 30.0, 293.15, 101325.0, land_use, 1.0,
                                        growth="none")
    d_min = d[np.argmin(vd)]
    assert 0.1e-6 < d_min < 2.0e-6
    assert vd.min() < vd[0] / 10 and vd.min() < vd[-1] / 10


def test_vd_above_settling_and_increasing_with_ustar():
    d = np.logspace(-8, -4.5, 50)
    args = (1500.0, 0.5, 30.0, 293.15, 101325.0, "grass", 1.0)
    low = p.particle_deposition_velocity(d, args[0], args[1], 0.2, *args[2:])
    high = p.particle_deposition_velocity(d, args[0], args[1], 0.6, *args[2:])
    assert np.all(high > low)
    dw = p.wet_diameter(d, 0.5)
    assert np.all(low > p.settling_velocity(dw, p.wet_density(d, dw, 1500.0), 293.15, 101325.0))


def test_wet_surface_no_rebound():
    dry = p.particle_deposition_velocity(10e-6, 2000.0, 0.5, 0.5, 30.0, 293.15, 1e5, "grass", 1.0, wet=0.0)
    wet = p.particle_deposition_velocity(10e-6, 2000.0, 0.5, 0.5, 30.0, 293.15, 1e5, "grass", 1.0, wet=1.0)
    assert wet > dry


def test_mass_weighted_against_scipy_quad():
    # reference: adaptive quadrature (scipy.integrate.quad) of Vd over the
    # log-normal mass distribution in ln d.
    mode = LogNormalMode(0.5e-6, 2.0, 1770.0, "ammonium_sulfate")
    args = (0.7, 0.4, 30.0, 290.0, 100000.0, "conifer_forest", 1.0)
    s = np.log(mode.gsd)

    def integrand(x):
        pdf = np.exp(-0.5 * ((x - np.log(mode.mmd)) / s) ** 2) / (s * np.sqrt(2 * np.pi))
        return pdf * p.particle_deposition_velocity(np.exp(x), mode.density, *args)

    ref, _ = integrate.quad(integrand, np.log(mode.mmd) - 8 * s, np.log(mode.mmd) + 8 * s, limit=200)
    ours = p.mass_weighted_velocity(mode, *args, nodes=12)
    assert ours == pytest.approx(ref, rel=0.01)


def test_narrow_mode_equals_single_size():
    mode = LogNormalMode(1e-6, 1.0, 1500.0, "none")
    args = (0.5, 0.4, 30.0, 290.0, 1e5, "grass", 1.0)
    assert p.mass_weighted_velocity(mode, *args) == pytest.approx(
        p.particle_deposition_velocity(1e-6, 1500.0, *args, growth="none"), rel=1e-12)


def test_invalid_modes_rejected():
    with pytest.raises(ValueError):
        LogNormalMode(-1.0, 2.0, 1000.0)
    with pytest.raises(ValueError):
        LogNormalMode(1e-6, 2.0, 1000.0, "salty")
    assert FINE_MODE.mmd == 0.4e-6
