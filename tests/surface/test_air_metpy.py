"""Humid-air formulas of the workbench against MetPy over the meteorological range.

Reference: MetPy 1.7 (May, R. M. et al. 2022, Bull. Amer. Meteor. Soc. 103, E2273-E2284),
``metpy.calc``.  Its saturation vapour pressure over liquid water is the
Rankine-Kirchhoff form of Ambaum, M. H. P. (2020), Q. J. R. Meteorol. Soc. 146,
4252-4258, Eq. 13 (``phase="liquid"``; MetPy before 1.6 used the Magnus form of
Bolton 1980, from memory); its ``dewpoint`` inverts Bolton, D. (1980), Mon. Weather
Rev. 108, 1046-1053, Eq. 10.  The workbench's is the Magnus form of Alduchov, O. A. and
Eskridge, R. E. (1996), J. Appl. Meteorol. 35, 601-609, Eq. 21 (workbench/constants.py).

Range: -30 to 45 degC, 1 to 100 % relative humidity, 800 to 1050 hPa.  Each bound
below is the measured difference (2026-12-03, MetPy 1.7.1) rounded up, and names what
causes it.  Relative humidity is e / e_s over liquid water (WMO-No. 8 definition,
common practice).
"""
from __future__ import annotations

import numpy as np
import pytest

mpcalc = pytest.importorskip("metpy.calc")
from metpy import constants as mpconst                          # noqa: E402
from metpy.units import units                                   # noqa: E402

from workbench.constants import ZERO_CELSIUS                    # noqa: E402
from workbench.drydep.wetness import (DEW_COEFFICIENT, dew_wet,   # noqa: E402
                                      surface_humidity_deficit)
from workbench.drydep.zhang2003 import vapour_pressure_deficit  # noqa: E402
from workbench.surface import air                               # noqa: E402

T_C = np.linspace(-30.0, 45.0, 301)
T = T_C + ZERO_CELSIUS
RH = np.linspace(0.01, 1.0, 100)
P = np.linspace(80000.0, 105000.0, 6)
TT, RR, PP = np.meshgrid(T, RH, P, indexing="ij")

#: Magnus (Alduchov and Eskridge 1996) against Ambaum (2020) via MetPy: largest
#: relative difference of e_s, measured 0.24 % at -30..35 degC (0.24 % at -30 degC) and
#: 0.44 % at 45 degC; the Magnus fit was made for -40..50 degC and departs most at the
#: ends (Alduchov and Eskridge 1996 quote errors of a few tenths of a per cent;
#: from memory).
ES_TOL_TO_35C = 0.0025
ES_TOL_TO_45C = 0.005
#: The slope de_s/dT: measured 0.34 % below 0 degC, 0.56 % to 35 degC, 1.17 % at 45 degC.
SLOPE_TOL_TO_35C = 0.006
SLOPE_TOL_TO_45C = 0.0125
#: Specific-humidity deficit q_s - q up to 25 degC (q = eps e / p against MetPy's
#: q = w / (1 + w)): measured 2.97 %.
Q_DEFICIT_TOL_TO_25C = 0.035


def es_metpy(t_k):
    """MetPy's saturation vapour pressure over liquid water [Pa] at `t_k` [K]."""
    return mpcalc.saturation_vapor_pressure(np.asarray(t_k) * units.K,
                                            phase="liquid").to("Pa").magnitude


def q_metpy(e, p):
    """MetPy's specific humidity [kg kg-1] of vapour pressure `e` [Pa] at pressure `p` [Pa]:
    w = eps e / (p - e), q = w / (1 + w)."""
    w = mpcalc.mixing_ratio(e * units.Pa, p * units.Pa)
    return mpcalc.specific_humidity_from_mixing_ratio(w).to("kg/kg").magnitude


def test_saturation_vapour_pressure():
    rel = air.saturation_vapour_pressure(T) / es_metpy(T) - 1.0
    assert np.abs(rel[T_C <= 35.0]).max() < ES_TOL_TO_35C
    assert np.abs(rel).max() < ES_TOL_TO_45C
    # both at the triple point: 611.2 Pa (Ambaum's e_s0) and 610.94 Pa (Magnus A)
    assert air.saturation_vapour_pressure(ZERO_CELSIUS) == pytest.approx(
        float(es_metpy(ZERO_CELSIUS)), rel=5e-4)


def test_saturation_slope_against_metpy_derivative():
    # centred difference of MetPy's e_s (step 0.01 K: truncation below 1e-7)
    h = 0.01
    ref = (es_metpy(T + h) - es_metpy(T - h)) / (2.0 * h)
    rel = air.saturation_slope(T) / ref - 1.0
    assert np.abs(rel[T_C <= 35.0]).max() < SLOPE_TOL_TO_35C
    assert np.abs(rel).max() < SLOPE_TOL_TO_45C


def test_vapour_pressure_deficit_from_dew_point():
    # a (temperature, dew point) pair: MetPy gives the RH (e_s(Td) / e_s(T)) and the
    # deficit e_s(T) - e_s(Td); ours from that RH differs only by e_s (bound as above)
    td = np.minimum(TT - 25.0 * (1.0 - RR), TT)            # dew points 0-25 K below T
    rh = mpcalc.relative_humidity_from_dewpoint(TT * units.K, td * units.K).to("").magnitude
    ours = vapour_pressure_deficit(TT, rh)
    ref = es_metpy(TT) - es_metpy(td)
    assert np.abs(ours - ref).max() <= ES_TOL_TO_45C * es_metpy(TT).max()
    assert (np.abs(ours - ref) <= ES_TOL_TO_45C * es_metpy(TT) + 1e-9).all()
    assert (ours[rh >= 1.0 - 1e-12] == 0.0).all()


def test_specific_humidity_deficit():
    # ours: q = eps e / p (docstring); MetPy: q = w / (1 + w), w = eps e / (p - e).
    # Dropping (1 - eps) e in the denominator costs up to (1 - eps) e_s / p relative
    # in q, twice that in a small difference of q near saturation: measured 8.4 % at
    # 45 degC, 800 hPa; 3.0 % up to 25 degC (where dew forms)
    ours = air.specific_humidity_deficit(TT, RR, PP)
    ref = q_metpy(es_metpy(TT), PP) - q_metpy(RR * es_metpy(TT), PP)
    sat = RR < 1.0
    rel = np.abs(ours[sat] / ref[sat] - 1.0)
    assert rel.max() < 0.09
    assert rel[(TT[sat] - ZERO_CELSIUS) <= 25.0].max() < Q_DEFICIT_TOL_TO_25C
    assert (ours[~sat] == 0.0).all() and (np.abs(ref[~sat]) < 1e-12).all()


def test_dew_rule_against_metpy_dew_point():
    # the surface dew rule (workbench.drydep.wetness): the surface humidity deficit
    # q_s(T_s) - q is negative when the surface is below the air's dew point.  MetPy's
    # dew point (Bolton's inverse of MetPy's e) puts that crossing within 0.2 K of
    # ours (measured: the Magnus dew point differs from MetPy's by up to 0.145 K, from
    # the 0.44 % between Magnus and Ambaum and Bolton's inverse of the latter)
    e = RR * es_metpy(TT)
    td = mpcalc.dewpoint(e * units.Pa).to("K").magnitude
    for dt in (-2.0, -0.5, -0.2):
        assert (surface_humidity_deficit(td + dt, TT, RR, PP) < 0.0).all(), dt
    for dt in (0.2, 0.5, 2.0):
        assert (surface_humidity_deficit(td + dt, TT, RR, PP) > 0.0).all(), dt


def test_dew_decision_agrees_with_metpy_humidities():
    # dew_wet: q_s - q < 0.3e-3 u*.  With MetPy's q the same decision, except where
    # MetPy's deficit lies within the deficit's error (above) of the threshold
    cool = TT - ZERO_CELSIUS <= 25.0
    t, r, p = TT[cool], RR[cool], PP[cool]
    ustar = np.linspace(0.02, 1.0, t.size)
    ours = dew_wet(air.specific_humidity_deficit(t, r, p), ustar)
    ref_def = q_metpy(es_metpy(t), p) - q_metpy(r * es_metpy(t), p)
    ref = ref_def < DEW_COEFFICIENT * ustar
    differ = (ours == 1.0) != ref
    near = (np.abs(ref_def - DEW_COEFFICIENT * ustar)
            <= Q_DEFICIT_TOL_TO_25C * np.abs(ref_def) + 1e-12)
    assert (near[differ]).all()
    assert ref.any() and (~ref).any()


def test_air_density():
    # ideal-gas dry air against MetPy's density at zero mixing ratio: the molar masses
    # differ (ours 28.9644 g/mol, U.S. Standard Atmosphere 1976; MetPy 28.96546 g/mol)
    ours = air.air_density(TT, PP)
    dry = mpcalc.density(PP * units.Pa, TT * units.K, 0.0 * units("kg/kg")).to("kg/m3").magnitude
    assert np.abs(ours / dry - 1.0).max() < 1e-4
    # with the air's water vapour, MetPy's (virtual-temperature) density is lower: the
    # dry-air form overstates it by at most 4.8 % (45 degC, saturated, 800 hPa) and by
    # 1.52 % up to 25 degC (measured); in dry cold air the molar masses' 4e-5 remain
    w = mpcalc.mixing_ratio(RR * es_metpy(TT) * units.Pa, PP * units.Pa)
    moist = mpcalc.density(PP * units.Pa, TT * units.K, w).to("kg/m3").magnitude
    over = ours / moist - 1.0
    assert over.min() > -1e-4 and over.max() < 0.048
    assert over[TT - ZERO_CELSIUS <= 25.0].max() < 0.016


def test_standard_pressure():
    # ISO 2533 troposphere against MetPy's height_to_pressure_std (U.S. Standard
    # Atmosphere, T0 = 288 K against ISO's 288.15 K): 1.4e-4 relative at 2000 m (measured)
    z = np.linspace(0.0, 3000.0, 61)
    ref = mpcalc.height_to_pressure_std(z * units.m).to("Pa").magnitude
    assert np.abs(air.standard_pressure_at(z) / ref - 1.0).max() < 3e-4


def test_psychrometric_constant_with_metpy_constants():
    # gamma = c_p p / (eps L_v) with MetPy's dry-air c_p, eps and its L_v at 20 degC
    # (water_latent_heat_vaporization, Ambaum 2020): ours is FAO-56 Eq. 8 (c_p of moist
    # air 1013, lambda 2.45e6 at 20 degC; tests/surface/test_air_reference_libs.py),
    # above by FAO's moist-air c_p: measured 0.974 %
    lv20 = mpcalc.water_latent_heat_vaporization(293.15 * units.K)
    ref = (mpconst.Cp_d * PP * units.Pa / (mpconst.epsilon * lv20)).to("Pa/K").magnitude
    rel = air.psychrometric_constant(PP) / ref - 1.0
    assert rel.min() > 0.0 and rel.max() < 0.01
