"""Surface resistance Rc of gases: Zhang, Brook and Vet (2003).

.. math:: \\frac{1}{R_c} = \\frac{1 - W_{st}}{R_{st} + R_m} + \\frac{1}{R_{ns}},\\qquad
          \\frac{1}{R_{ns}} = \\frac{1}{R_{ac} + R_g} + \\frac{1}{R_{cut}}

Paths: stomatal (R_st, from a sunlit/shaded big leaf with light, temperature,
vapour-pressure-deficit and water-stress factors, scaled by D_H2O/D_x), mesophyll
(R_m), in-canopy aerodynamic transfer (R_ac, growing with LAI and falling with u*),
ground (R_g) and cuticle (R_cut, dry: falling with humidity, LAI and u*; wet: its own
rule for dew and rain).  Snow covers part of the ground and of the leaves.  SO2 and
O3 carry their own R_cut and R_g; every other gas is scaled from them:
1/R_x = alpha_x/R_SO2 + beta_x/R_O3.

References
----------
Zhang, L., Brook, J. R. and Vet, R. (2003), A revised parameterization for gaseous
dry deposition in air-quality models, Atmos. Chem. Phys. 3, 2067-2082 (Eqs. and
Tables cited beside each function; the equation numbers are from memory).
Zhang, L., Moran, M. D., Makar, P. A., Brook, J. R. and Gong, S. (2002), Atmos.
Environ. 36, 537-560 (the sunlit/shaded stomatal conductance, from memory).

Every parameter of :data:`TABLE` is recalled from memory of Zhang et al. (2003),
Table 3 (and Table 1 for alpha, beta): see docs/methods_dry.md for the mapping of our
land-use classes onto its classes and the caveats.
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..constants import ZERO_CELSIUS
from ..species import get as _species
from ..surface._array import is_xarray, where
from ..surface.air import saturation_vapour_pressure
from . import codeposition
from . import erisman1994
from .gas import nitric_acid_floor

NAME = "zhang2003"
REFERENCE = "Zhang, Brook and Vet (2003), Atmos. Chem. Phys. 3, 2067-2082"
#: Paths returned per gas besides ``rc`` (all [s m-1]; ``stomatal_blocking`` [1]).
PATHS = ("stomatal", "mesophyll", "cuticle", "canopy_transfer", "ground",
         "stomatal_blocking")
#: Paths that do not depend on the gas (written once, not per gas).
SHARED_PATHS = ("canopy_transfer", "stomatal_blocking")
#: Long names of the paths (for the output's attributes).
PATH_NAMES = {"stomatal": "stomatal resistance", "mesophyll": "mesophyll resistance",
              "cuticle": "cuticular resistance", "ground": "ground resistance",
              "canopy_transfer": "in-canopy aerodynamic resistance R_ac",
              "stomatal_blocking": "fraction of stomata blocked by water W_st"}
#: The dew rule this scheme publishes: saturation at the surface temperature.
DEW_RULE = "surface_temperature"

_X = np.inf
#: Zhang et al. (2003) class for each of ours (Table 3 numbering, from memory):
#: 1 water, 2 ice, 4 evergreen needleleaf, 7 deciduous broadleaf, 10 evergreen
#: broadleaf shrub (heather is an evergreen shrub), 13 short grass and forbs,
#: 15 crops, 21 urban, 23 swamp, 24 desert, 25 mixed wood forest.
ZHANG_CLASS = {"water": 1, "snow_ice": 2, "conifer_forest": 4, "deciduous_forest": 7,
               "moorland": 10, "grass": 13, "crops": 15, "urban": 21, "wetland": 23,
               "barren": 24, "mixed_forest": 25}
#: Table 3 columns used here.
PARAMETERS = ("rac0_min", "rac0_max", "lai_min", "lai_max", "rcutd_o3", "rcutd_so2",
              "rgd_o3", "rgd_so2", "rst_min", "brs", "t_min", "t_max", "t_opt", "bvpd",
              "psi_c1", "psi_c2")
#: Zhang et al. (2003) Table 3 by class, recalled from memory (approximate; not
#: checked against the paper): Rac0 min/max [s m-1], LAI min/max [m2 m-2] (used only
#: to place the current LAI between Rac0 min and max), dry cuticle RcutdO/RcutdS and
#: dry ground RgdO/RgdS [s m-1], rst_min [s m-1], brs [W m-2], Tmin/Tmax/Topt [degC],
#: bvpd [kPa-1], psi_c1/psi_c2 [MPa].  inf: no such path.
TABLE = {
    1: (0, 0, 0, 0, _X, _X, 2000, 20, _X, 0, 0, 45, 25, 0, -1.5, -2.5),
    2: (0, 0, 0, 0, _X, _X, 2000, 70, _X, 0, 0, 45, 25, 0, -1.5, -2.5),
    4: (100, 100, 5.0, 5.0, 4000, 2000, 200, 200, 250, 44, -5, 40, 15, 0.31, -2.0, -2.5),
    7: (100, 250, 0.1, 5.0, 6000, 2500, 200, 200, 150, 43, 0, 45, 27, 0.36, -1.9, -2.5),
    10: (60, 60, 1.0, 2.0, 5000, 2000, 200, 200, 250, 40, 0, 45, 25, 0.27, -2.0, -3.5),
    13: (20, 20, 1.0, 1.0, 4000, 1000, 200, 200, 150, 50, 5, 45, 30, 0.0, -1.5, -2.5),
    15: (10, 40, 0.1, 3.5, 4000, 1500, 200, 200, 120, 40, 5, 45, 27, 0.0, -1.5, -2.5),
    21: (40, 40, 0.1, 1.0, 6000, 4000, 500, 400, 200, 42, 0, 45, 22, 0.31, -1.5, -2.5),
    23: (20, 40, 0.5, 3.0, 5000, 1500, 500, 20, 150, 50, 0, 45, 20, 0.0, -1.5, -2.5),
    24: (0, 0, 0, 0, _X, _X, 500, 700, _X, 0, 0, 45, 25, 0, -1.5, -2.5),
    25: (100, 250, 2.0, 5.0, 6000, 2500, 200, 200, 150, 44, -3, 42, 21, 0.34, -2.0, -2.5),
}
#: alpha, beta of Zhang et al. (2003) Table 1 (from memory): 1/R_x = alpha/R_SO2 +
#: beta/R_O3 for the cuticle and the ground.
SCALING = {"SO2": (1.0, 0.0), "O3": (0.0, 1.0), "NO2": (0.0, 0.8), "HNO3": (10.0, 10.0),
           "NH3": (1.0, 0.0)}
#: Mesophyll resistance R_m [s m-1]: 0 for these gases (Table 1, from memory; NO2's
#: value is the least certain).
MESOPHYLL = {"SO2": 0.0, "O3": 0.0, "NO2": 0.0, "HNO3": 0.0, "NH3": 0.0}

# --- constants of the equations (all from memory of Zhang et al. 2003 / 2002) -------------
#: Dry cuticle: R_cutd = R_cutd0 / (exp(0.03 RH[%]) LAI^(1/4) u*) [%-1], [-].
RCUT_RH_COEFF = 0.03
RCUT_LAI_EXP = 0.25
#: Wet cuticle: R_cutw = R_cutw0 / (LAI^(1/2) u*) [-].
RCUTW_LAI_EXP = 0.5
#: R_cutw0 of SO2 on dew and in rain, and of O3 (both) [s m-1] (from memory).
RCUTW0_SO2_DEW = 100.0
RCUTW0_SO2_RAIN = 50.0
RCUTW0_O3 = 1500.0
#: Wet ground of SO2 (dew, rain) [s m-1] (from memory; as the wet cuticle).
RG_SO2_WET_DEW = 100.0
RG_SO2_WET_RAIN = 50.0
#: Rac = Rac0 LAI^(1/4) / u*^2 [-].
RAC_LAI_EXP = 0.25
#: Low temperature: R_cut and R_g times min(2, exp(0.2 (-1 - T[degC]))) below -1 degC.
COLD_T = -1.0
COLD_RATE = 0.2
COLD_MAX_FACTOR = 2.0
#: Snow: R_snow(SO2) = 70 (2 - T[degC]) [s m-1 K-1], [degC], bounded to
#: [SNOW_SO2_MIN, SNOW_SO2_MAX] (bounds ours); R_snow(O3) = 2000 s m-1.
SNOW_SO2_SCALE = 70.0
SNOW_SO2_T0 = 2.0
SNOW_SO2_MIN = 70.0
SNOW_SO2_MAX = 2000.0
SNOW_O3 = 2000.0
#: Leaves carry twice the ground's snow fraction, at most 1 (from memory).
SNOW_LEAF_FACTOR = 2.0
#: Wet stomatal blocking W_st = (SR - 200)/800 for 200 < SR <= 600 W m-2, 0.5 above.
WST_SR0 = 200.0
WST_SPAN = 800.0
WST_MAX = 0.5
#: Sunlit/shaded leaves: extinction 0.5, leaf angle 60 degrees, scattering 0.07
#: (Zhang et al. 2002 after Norman 1982; from memory).
EXTINCTION = 0.5
LEAF_ANGLE = np.deg2rad(60.0)
SCATTER = 0.07
SHADE_LAI_EXP = 0.7
#: PAR as a fraction of global radiation (common practice, e.g. Monteith and
#: Unsworth 2008, from memory) [1].
PAR_FRACTION = 0.45
#: Solar constant [W m-2]; Kopp and Lean (2011), Geophys. Res. Lett. 38, L01706.
SOLAR_CONSTANT = 1361.0
#: Leaf water potential psi = -0.72 - 0.0013 SR [MPa], [MPa per W m-2].
PSI_0 = -0.72
PSI_SLOPE = -0.0013
#: Least resistance in reciprocals [s m-1] and least u* [m s-1] (numerical devices).
_R_TINY = 1e-9
_US_TINY = 1e-3
PA_PER_KPA = 1000.0


def _recip(r):
    """1/r with 1/inf = 0 and 1/0 = inf (r >= 0 or NaN) [m s-1 from s m-1]."""
    return where(r == 0, np.inf, 1.0 / np.maximum(r, _R_TINY))


def _clip01(x):
    return np.minimum(np.maximum(x, 0.0), 1.0)


def table_values(land_use, like=None, receptor_dim="receptor") -> dict:
    """The Table 3 parameters of our classes (see :data:`TABLE`).

    Parameters
    ----------
    land_use : str, array_like of str, or sequence of str
        Our classes; a numpy array of names broadcasts against the hourly arrays; with
        DataArray hourly input (`like`) a sequence is the ``receptor_dim``.
    like : array_like, optional
        An hourly input: when it is a DataArray the values come along ``receptor_dim``.
    receptor_dim : str

    Returns
    -------
    dict
        Parameter (:data:`PARAMETERS`) -> float, ndarray or DataArray (units in
        :data:`TABLE`).
    """
    cols = {p: i for i, p in enumerate(PARAMETERS)}
    if isinstance(land_use, str):
        row = TABLE[ZHANG_CLASS[land_use]]
        return {p: float(row[i]) for p, i in cols.items()}
    if is_xarray(like):
        names = [str(n) for n in land_use]
        return {p: xr.DataArray(np.array([TABLE[ZHANG_CLASS[n]][i] for n in names], float),
                                dims=receptor_dim) for p, i in cols.items()}
    names = np.asarray(land_use, dtype=object)
    rows = np.array([TABLE[ZHANG_CLASS[str(n)]] for n in names.ravel()], float)
    return {p: rows[:, i].reshape(names.shape) for p, i in cols.items()}


def sunlit_leaf_area(lai, cos_zenith):
    """Sunlit leaf-area index F_sun = 2 cos(theta) (1 - exp(-0.5 LAI / cos(theta))) [m2 m-2].

    Parameters
    ----------
    lai : array_like
        [m2 m-2]
    cos_zenith : array_like
        Cosine of the solar zenith angle (> 0 by day). [-]

    References
    ----------
    Zhang et al. (2002), Atmos. Environ. 36, 537 (from memory); Zhang et al. (2003).
    """
    mu = np.maximum(cos_zenith, 1e-3)
    return where(cos_zenith > 0, 2.0 * mu * (1.0 - np.exp(-EXTINCTION * lai / mu)), 0.0)


def diffuse_fraction(solar_radiation, cos_zenith):
    """Diffuse fraction of global radiation by Erbs, Klein and Duffie (1982) [1].

    Parameters
    ----------
    solar_radiation : array_like
        Global radiation. [W m-2]
    cos_zenith : array_like
        [-]

    Notes
    -----
    With the clearness index k_t = SR / (S0 cos theta): 1 - 0.09 k_t (k_t <= 0.22);
    0.9511 - 0.1604 k_t + 4.388 k_t^2 - 16.638 k_t^3 + 12.336 k_t^4 (<= 0.80); 0.165
    above.  Erbs, D. G., Klein, S. A. and Duffie, J. A. (1982), Solar Energy 28,
    293-302 (from memory).
    """
    kt = _clip01(solar_radiation / (SOLAR_CONSTANT * np.maximum(cos_zenith, 1e-3)))
    mid = 0.9511 - 0.1604 * kt + 4.388 * kt ** 2 - 16.638 * kt ** 3 + 12.336 * kt ** 4
    return where(kt <= 0.22, 1.0 - 0.09 * kt, where(kt <= 0.80, mid, 0.165))


def stomatal_light_conductance(solar_radiation, cos_zenith, lai, rst_min, brs):
    """Unstressed canopy stomatal conductance for water vapour G(PAR) [m s-1].

    Parameters
    ----------
    solar_radiation : array_like
        Global radiation. [W m-2]
    cos_zenith : array_like
        [-]
    lai : array_like
        [m2 m-2]
    rst_min : array_like
        Least leaf stomatal resistance. [s m-1]
    brs : array_like
        Light-response coefficient. [W m-2]

    Notes
    -----
    .. math:: G = \\frac{F_{sun}}{r(PAR_{sun})} + \\frac{F_{shade}}{r(PAR_{shade})},
              \\quad r(PAR) = r_{st,min}(1 + b_{rs}/PAR)

    with PAR_shade = R_diff exp(-0.5 LAI^0.7) + 0.07 R_dir (1.1 - 0.1 LAI) exp(-cos theta),
    PAR_sun = R_dir cos(60 deg)/cos(theta) + PAR_shade, F_shade = LAI - F_sun; the
    direct and diffuse visible radiation from :data:`PAR_FRACTION` and
    :func:`diffuse_fraction`.  Zhang et al. (2003) Eqs. for G_st (from memory), after
    Zhang et al. (2002).
    """
    par = PAR_FRACTION * np.maximum(solar_radiation, 0.0)
    kd = diffuse_fraction(solar_radiation, cos_zenith)
    r_diff, r_dir = par * kd, par * (1.0 - kd)
    mu = np.maximum(cos_zenith, 1e-3)
    par_shade = (r_diff * np.exp(-EXTINCTION * lai ** SHADE_LAI_EXP)
                 + SCATTER * r_dir * np.maximum(1.1 - 0.1 * lai, 0.0) * np.exp(-mu))
    par_sun = r_dir * np.cos(LEAF_ANGLE) / mu + par_shade
    f_sun = sunlit_leaf_area(lai, cos_zenith)
    f_shade = np.maximum(lai - f_sun, 0.0)

    def leaf(p):
        return where(p > 0, p / (rst_min * (p + brs)), 0.0)   # 1/r(PAR) without 1/0
    g = f_sun * leaf(par_sun) + f_shade * leaf(par_shade)
    return where((cos_zenith > 0) & (solar_radiation > 0), g, 0.0)


def temperature_factor(temperature, t_min, t_max, t_opt):
    """f(T) = (T - Tmin)/(Topt - Tmin) [(Tmax - T)/(Tmax - Topt)]^b_t [1].

    b_t = (Tmax - Topt)/(Topt - Tmin); 0 outside Tmin < T < Tmax.

    Parameters
    ----------
    temperature : array_like
        [K]
    t_min, t_max, t_opt : array_like
        [degC]
    """
    t = temperature - ZERO_CELSIUS
    bt = (t_max - t_opt) / (t_opt - t_min)
    inside = (t > t_min) & (t < t_max)
    tc = np.minimum(np.maximum(t, t_min), t_max)
    f = (tc - t_min) / (t_opt - t_min) * ((t_max - tc) / (t_max - t_opt)) ** bt
    return where(inside, _clip01(f), 0.0) + 0.0 * t


def vapour_pressure_deficit(temperature, relative_humidity):
    """e_s(T) - e [Pa]; relative_humidity as a fraction [1], temperature [K]."""
    return saturation_vapour_pressure(temperature) * (1.0 - relative_humidity)


def vpd_factor(vpd, bvpd):
    """f(D) = 1 - b_vpd D, D in kPa, bounded to 0-1 [1].

    Parameters
    ----------
    vpd : array_like
        [Pa]
    bvpd : array_like
        [kPa-1]
    """
    return _clip01(1.0 - bvpd * vpd / PA_PER_KPA)


def water_stress_factor(solar_radiation, psi_c1, psi_c2):
    """f(psi) = (psi - psi_c2)/(psi_c1 - psi_c2), psi = -0.72 - 0.0013 SR, in 0-1 [1].

    Parameters
    ----------
    solar_radiation : array_like
        [W m-2]
    psi_c1, psi_c2 : array_like
        [MPa]
    """
    psi = PSI_0 + PSI_SLOPE * np.maximum(solar_radiation, 0.0)
    return _clip01((psi - psi_c2) / (psi_c1 - psi_c2))


def stomatal_resistance(state, tab):
    """Canopy stomatal resistance for water vapour R_st = 1/(G f(T) f(D) f(psi)) [s m-1].

    Parameters
    ----------
    state : workbench.drydep.gas.CanopyState
    tab : dict
        :func:`table_values`.

    Returns
    -------
    rst : array_like
        [s m-1]; inf where the stomata are closed (dark, LAI 0, too cold or hot).
    """
    g = stomatal_light_conductance(state.solar_radiation, state.cos_zenith, state.lai,
                                   tab["rst_min"], tab["brs"])
    g = g * temperature_factor(state.temperature, tab["t_min"], tab["t_max"], tab["t_opt"])
    g = g * vpd_factor(vapour_pressure_deficit(state.temperature, state.relative_humidity),
                       tab["bvpd"])
    g = g * water_stress_factor(state.solar_radiation, tab["psi_c1"], tab["psi_c2"])
    return _recip(g)


def stomatal_blocking(solar_radiation, wet_kind):
    """Fraction of stomata blocked on a wet canopy W_st [1].

    0 when dry or SR <= 200 W m-2; (SR - 200)/800 up to 600 W m-2; 0.5 above.
    Zhang et al. (2003), section 2 (from memory).

    Parameters
    ----------
    solar_radiation : array_like
        [W m-2]
    wet_kind : array_like
        0 dry, 1 dew, 2 rain. [-]
    """
    w = np.minimum(np.maximum((solar_radiation - WST_SR0) / WST_SPAN, 0.0), WST_MAX)
    return where(wet_kind > 0, w, 0.0)


def canopy_transfer_resistance(lai, ustar, tab):
    """In-canopy aerodynamic resistance R_ac = R_ac0 LAI^(1/4) / u*^2 [s m-1].

    R_ac0 lies between Table 3's min and max in proportion to LAI between the
    class's LAI min and max.  Zhang et al. (2003), Eqs. for R_ac (from memory).

    Parameters
    ----------
    lai : array_like
        [m2 m-2]
    ustar : array_like
        [m s-1]
    tab : dict
        :func:`table_values`.
    """
    span = tab["lai_max"] - tab["lai_min"]
    share = _clip01(where(span > 0, (lai - tab["lai_min"]) / where(span > 0, span, 1.0), 1.0))
    rac0 = tab["rac0_min"] + share * (tab["rac0_max"] - tab["rac0_min"])
    return rac0 * np.maximum(lai, 0.0) ** RAC_LAI_EXP / np.maximum(ustar, _US_TINY) ** 2


def dry_cuticle_resistance(rcutd0, relative_humidity, lai, ustar):
    """R_cutd = R_cutd0 / (exp(0.03 RH) LAI^(1/4) u*) with RH in % [s m-1].

    Parameters
    ----------
    rcutd0 : array_like
        Table 3 value (O3 or SO2). [s m-1]
    relative_humidity : array_like
        Fraction. [1]
    lai : array_like
        [m2 m-2]
    ustar : array_like
        [m s-1]

    Returns
    -------
    array_like
        [s m-1]; inf where LAI is 0.
    """
    den = (np.exp(RCUT_RH_COEFF * 100.0 * relative_humidity) * np.maximum(lai, 0.0) ** RCUT_LAI_EXP
           * np.maximum(ustar, _US_TINY))
    return where(den > 0, rcutd0 / where(den > 0, den, 1.0), np.inf)


def wet_cuticle_resistance(rcutw0, lai, ustar):
    """R_cutw = R_cutw0 / (LAI^(1/2) u*) [s m-1]; inf where LAI is 0.

    Parameters
    ----------
    rcutw0 : array_like
        [s m-1]
    lai : array_like
        [m2 m-2]
    ustar : array_like
        [m s-1]
    """
    den = np.maximum(lai, 0.0) ** RCUTW_LAI_EXP * np.maximum(ustar, _US_TINY)
    return where(den > 0, rcutw0 / where(den > 0, den, 1.0), np.inf)


def cold_factor(temperature):
    """min(2, exp(0.2 (-1 - T))) below -1 degC, else 1 [1]; T [K]."""
    t = temperature - ZERO_CELSIUS
    return where(t < COLD_T, np.minimum(COLD_MAX_FACTOR, np.exp(COLD_RATE * (COLD_T - t))), 1.0)


def snow_resistance_so2(temperature):
    """R_snow of SO2 = 70 (2 - T[degC]), bounded (bounds ours) [s m-1]; T [K]."""
    t = temperature - ZERO_CELSIUS
    return np.minimum(np.maximum(SNOW_SO2_SCALE * (SNOW_SO2_T0 - t), SNOW_SO2_MIN), SNOW_SO2_MAX)


def with_snow(r, r_snow, fraction):
    """1/R = (1 - f)/R + f/R_snow [s m-1], f the snow-covered fraction [1]."""
    return _recip((1.0 - fraction) * _recip(r) + fraction * _recip(r_snow))


def _reference_paths(state, tab):
    """Cuticle and ground resistances of SO2 and O3, with wetness, cold and snow [s m-1].

    Returns R_cut(SO2), R_cut(O3), R_g(SO2), R_g(O3) and the cuticle of the gas SO2
    itself: R_cut(SO2) again, or, under ``so2_cuticle = "erisman1994"``, the dry
    cuticle replaced by R_w of :mod:`workbench.drydep.erisman1994` (the first stays
    the scheme's, for the gases scaled from it).
    """
    t, kind, us, lai = state.temperature, state.wet_kind, state.ustar, state.lai
    dew, wet = kind == 1, kind > 0
    snow = 0.0 if state.snow_cover is None else where(np.isnan(state.snow_cover), 0.0,
                                                       _clip01(state.snow_cover))
    leaf_snow = np.minimum(SNOW_LEAF_FACTOR * snow, 1.0)
    cold = cold_factor(t)
    rs_snow = snow_resistance_so2(t)
    rcut_s = where(wet, wet_cuticle_resistance(where(dew, RCUTW0_SO2_DEW, RCUTW0_SO2_RAIN),
                                               lai, us),
                   dry_cuticle_resistance(tab["rcutd_so2"], state.relative_humidity, lai, us))
    rcut_o = where(wet, wet_cuticle_resistance(RCUTW0_O3, lai, us),
                   dry_cuticle_resistance(tab["rcutd_o3"], state.relative_humidity, lai, us))
    # wet ground: only where the ground is not water or swamp already (R_gd below the
    # wet value)
    rg_wet = where(dew, RG_SO2_WET_DEW, RG_SO2_WET_RAIN)
    rg_s = where(wet, np.minimum(tab["rgd_so2"], rg_wet), tab["rgd_so2"])
    rg_o = tab["rgd_o3"] + 0.0 * t
    has_leaves = lai > 0
    rcut_gas_s = None
    if erisman1994.check_rule(getattr(state, "so2_cuticle", "scheme")) == "erisman1994":
        own = erisman1994.dry_cuticle(rcut_s * cold, state.relative_humidity, t, kind,
                                      erisman1994.vegetated(state.land_use, t,
                                                            state.receptor_dim))
        rcut_gas_s = with_snow(own, rs_snow, where(has_leaves, leaf_snow, 0.0))
    rcut_s = with_snow(rcut_s * cold, rs_snow, where(has_leaves, leaf_snow, 0.0))
    rcut_o = with_snow(rcut_o * cold, SNOW_O3, where(has_leaves, leaf_snow, 0.0))
    rg_s = with_snow(rg_s * cold, rs_snow, snow)
    rg_o = with_snow(rg_o * cold, SNOW_O3, snow)
    return rcut_s, rcut_o, rg_s, rg_o, (rcut_s if rcut_gas_s is None else rcut_gas_s)


def scaled(alpha, beta, r_so2, r_o3):
    """1/R_x = alpha/R_SO2 + beta/R_O3 [s m-1]; Zhang et al. (2003), Table 1 scaling."""
    return _recip(alpha * _recip(r_so2) + beta * _recip(r_o3))


def surface_resistance(gas: str, state) -> dict:
    """Rc of a gas and its paths (the scheme interface) [s m-1].

    Parameters
    ----------
    gas : str
        One of :data:`SCALING`.
    state : workbench.drydep.gas.CanopyState
        Uses land_use, solar_radiation [W m-2], cos_zenith [-], temperature [K],
        relative_humidity [1], wet_kind, ustar [m s-1], lai [m2 m-2], snow_cover [1]
        and hno3_rc_floor.

    Returns
    -------
    dict
        ``rc`` and each of :data:`PATHS` [s m-1] (``stomatal_blocking`` [1]) and
        ``floor_used`` (bool; the HNO3 floor).
    """
    return surface_resistances((gas,), state)[gas]


def surface_resistances(gases, state) -> dict:
    """:func:`surface_resistance` of several gases, the shared parts computed once."""
    for gas in gases:
        if gas not in SCALING:
            raise ValueError(f"{gas}: no alpha/beta scaling in {NAME}; known: {', '.join(SCALING)}")
    if state.lai is None or state.cos_zenith is None or state.relative_humidity is None:
        raise ValueError(f"{NAME} needs lai, cos_zenith and relative_humidity in the CanopyState")
    tab = table_values(state.land_use, state.temperature, state.receptor_dim)
    rst_w = stomatal_resistance(state, tab)
    wst = stomatal_blocking(state.solar_radiation, state.wet_kind)
    rac = canopy_transfer_resistance(state.lai, state.ustar, tab)
    rcut_s, rcut_o, rg_s, rg_o, rcut_so2 = _reference_paths(state, tab)
    bad = (np.isnan(state.temperature) | np.isnan(state.solar_radiation)
           | np.isnan(state.wet_kind) | np.isnan(state.ustar) | np.isnan(state.lai)
           | np.isnan(state.relative_humidity))
    nan = where(bad, np.nan, 0.0)
    zero = 0.0 * (state.temperature + state.ustar + state.lai + state.solar_radiation)
    out = {}
    for gas in gases:
        alpha, beta = SCALING[gas]
        ratio = _species("H2O").diffusivity_0 / _species(gas).diffusivity_0
        rst = rst_w * ratio
        rm = MESOPHYLL[gas] + zero
        rcut = scaled(alpha, beta, rcut_so2 if gas == "SO2" else rcut_s, rcut_o)
        rg = scaled(alpha, beta, rg_s, rg_o)
        g = (1.0 - wst) * _recip(rst + rm) + _recip(rac + rg) + _recip(rcut)
        rc = _recip(g)
        floor_used = rc < 0.0
        if gas == "HNO3" and getattr(state, "hno3_rc_floor", True):
            floor = nitric_acid_floor(state.temperature)
            floor_used = rc < floor
            rc = where(floor_used, floor, rc)
        rc = rc + nan
        if gas == "SO2" and state.nh3_so2_ratio is not None:  # co-deposition option
            rc, codep = codeposition.surface_resistance((1.0 - wst) * _recip(rst + rm), rc,
                                                        state)
        out[gas] = {"rc": rc, "stomatal": rst, "mesophyll": rm, "cuticle": rcut,
                    "canopy_transfer": rac + zero, "ground": rg,
                    "stomatal_blocking": wst + zero, "floor_used": floor_used}
        if gas == "SO2" and state.nh3_so2_ratio is not None:
            out[gas]["codeposition_used"] = codep
    return out
