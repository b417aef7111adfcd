"""Particle settling and Brownian diffusivity against general-purpose reference libraries.

Libraries (versions measured with, 2026-12-03):

* ``fluids`` 1.3.1 (C. Bell et al., Chemical Engineering Design Library):
  ``fluids.drag.v_terminal``, the terminal velocity of a sphere; below a particle
  Reynolds number of 0.01 Stokes' law with buoyancy, v = g d^2 (rho_p - rho)/(18 mu)
  (Perry's Chemical Engineers' Handbook, 8th ed.), above it the balance of weight,
  buoyancy and a drag correlation C_D(Re) solved for v (its default correlation for
  the Reynolds number).  It has no slip correction: ours is compared as v_g / C_c.
* ``chemicals`` 1.5.2: ``chemicals.viscosity.mu_air_lemmon`` (Lemmon and Jacobsen 2004,
  Int. J. Thermophys. 25, 21) with ``chemicals.air.lemmon2000_rho`` (Lemmon et al. 2000,
  J. Phys. Chem. Ref. Data 29, 331) for the air's viscosity in the mobility.

No library of the registry computes the Cunningham slip correction, the Brownian
diffusivity or the hygroscopic growth laws: those stay checked against the handbook
tables recalled from memory in tests/drydep/test_drydep_particles.py (Seinfeld and
Pandis 2006, Tables 9.3-9.5).

Range: dry diameters 0.01-20 um, densities 1000-2200 kg m-3, -30..40 degC,
700-1050 hPa.  Every bound is the measured largest difference rounded up, cause named.
"""
from __future__ import annotations

import numpy as np
import pytest

from workbench.constants import BOLTZMANN, GRAVITY
from workbench.drydep import particles as p
from workbench.surface import air

drag = pytest.importorskip("fluids.drag")

D = np.logspace(-8.0, np.log10(20e-6), 41)
DENSITIES = (1000.0, 1600.0, 2200.0)
TEMPERATURES = np.linspace(243.15, 313.15, 5)
PRESSURES = (70000.0, 87500.0, 105000.0)
CASES = [(rho, t, pr) for rho in DENSITIES for t in TEMPERATURES for pr in PRESSURES]


def test_settling_velocity_against_fluids_terminal_velocity():
    # ours: Stokes' law with C_c and no buoyancy (Seinfeld and Pandis 2006, Eq. 9.42);
    # fluids: with buoyancy and, above Re 0.01, a drag correlation.  With our own mu and
    # rho of air, ours / C_c is above the library's by rho_air/rho_p (0.035-0.15 %) plus
    # the departure from Stokes drag of the largest particles: measured +0.035 % to
    # +0.433 % (20 um, 2200 kg/m3, -30 degC, 1050 hPa: Re about 0.04); up to 1 um
    # (buoyancy alone) at most 0.151 %.
    worst, worst_small = 0.0, 0.0
    for rho_p, t, pr in CASES:
        mu = float(air.dynamic_viscosity(t))
        rho_a = float(air.air_density(t, pr))
        ref = np.array([drag.v_terminal(d, rho_p, rho_a, mu) for d in D])
        rel = p.settling_velocity(D, rho_p, t, pr) / p.slip_correction(D, t, pr) / ref - 1.0
        assert rel.min() > 0.0, (rho_p, t, pr)  # buoyancy only lowers the library's
        np.testing.assert_allclose(rel[D <= 1e-6], rho_a / (rho_p - rho_a), rtol=1e-6)
        worst = max(worst, rel.max())
        worst_small = max(worst_small, rel[D <= 1e-6].max())
    assert worst < 0.0045 and worst_small < 0.0016


def test_brownian_diffusivity_stokes_einstein_with_library_mobility():
    # Einstein's relation D_B = k T B with the mobility B = C_c v / F from the
    # library's Stokes settling velocity v of a sphere under its net weight F (fluids,
    # Method="Stokes") and the reference viscosity of air (chemicals, Lemmon and
    # Jacobsen 2004); C_c ours (no library has it).  The difference is the viscosity's
    # alone: measured +0.260 % to +0.476 % (ours uses Sutherland's mu, 0.26-0.47 %
    # below the reference correlation; tests/surface/test_air_reference_libs.py).
    chem_air = pytest.importorskip("chemicals.air")
    chem_visc = pytest.importorskip("chemicals.viscosity")
    for rho_p, t, pr in CASES:
        rho_a = float(air.air_density(t, pr))
        mu = chem_visc.mu_air_lemmon(t, chem_air.lemmon2000_rho(t, pr))
        v = np.array([drag.v_terminal(d, rho_p, rho_a, mu, Method="Stokes") for d in D])
        net_weight = np.pi / 6.0 * D ** 3 * (rho_p - rho_a) * GRAVITY
        ref = BOLTZMANN * t * p.slip_correction(D, t, pr) * v / net_weight
        rel = p.brownian_diffusivity(D, t, pr) / ref - 1.0
        assert rel.min() > 0.0025 and rel.max() < 0.005, (rho_p, t, pr)


def test_stokes_regime_holds_over_the_size_range():
    # the scheme's settling is Stokes' law (Zhang et al. 2001, Eq. 2): over 0.01-20 um
    # and these densities the particle Reynolds number stays below 0.1 (measured 0.04
    # at most), where Stokes drag is within about 1 % of the standard drag curve
    # (Seinfeld and Pandis 2006, section 9.3, from memory); the library's drag
    # correlation agrees (the test above)
    for rho_p, t, pr in CASES:
        v = p.settling_velocity(D, rho_p, t, pr)
        re = air.air_density(t, pr) * v * D / air.dynamic_viscosity(t)
        assert re.max() < 0.1
