"""Surface resistance Rc of gases: Wesely (1989) with Walmsley and Wesely (1996).

.. math:: R_c = \\left[\\frac{1}{r_{s,x} + r_{m,x}} + \\frac{1}{r_{lu,x}}
          + \\frac{1}{r_{dc} + r_{cl,x}} + \\frac{1}{r_{ac} + r_{gs,x}}\\right]^{-1}

Paths: stomatal (r_s, scaled by D_H2O/D_x) plus mesophyll (r_m); upper-canopy
cuticle (r_lu); buoyant convection in the canopy (r_dc, with the terrain slope)
plus lower-canopy surfaces (r_cl); in-canopy aerodynamic transfer (r_ac) plus
ground (r_gs).  Effective Henry constants H* and reactivity factors f0 come from
:mod:`workbench.species`.

References
----------
Wesely, M. L. (1989), Parameterization of surface resistances to gaseous dry
deposition in regional-scale numerical models, Atmos. Environ. 23, 1293-1304,
Eqs. (2)-(9) and Table 1 (land use x seasonal category).
Walmsley, J. L. and Wesely, M. L. (1996), Modification of coded parametrizations of
surface resistances to gaseous dry deposition, Atmos. Environ. 30, 1181-1188.

Where the parts are: Table 1, its look-up (:func:`table_values`) and the constants
of the equations in :mod:`workbench.drydep.wesely1989_table` (every table value from
memory of Wesely's Table 1); the resistance of each path (:func:`stomatal_resistance`
... :func:`cold_increment`) and the reciprocals and NaN masks they are summed with in
:mod:`workbench.drydep.wesely1989_paths`.  This module, the scheme's interface
(:func:`surface_resistance`, :func:`surface_resistances`), re-exports them all, so that
``workbench.drydep.wesely1989.<name>`` keeps working.
"""
from __future__ import annotations

from ..species import get as _species
from ..surface._array import where
from . import codeposition
from . import erisman1994
from .gas import HNO3_RC_COLD_SLOPE, HNO3_RC_FLOOR, nitric_acid_floor  # noqa: F401
# the resistance of each path (defined here before)
from .wesely1989_paths import (_exposed, _exposed_conductances, _keep_nan,  # noqa: F401
                               _nan_where, _recip, _recip_array, _wet_cuticle,
                               _wet_upper_canopy, cold_increment, convection_resistance,
                               diffusivity_ratio, exposed_surface_resistance,
                               mesophyll_resistance, stomatal_resistance,
                               upper_canopy_resistance, wet_upper_canopy_resistance)
# Table 1, its look-up and the constants of the equations (defined here before)
from .wesely1989_table import (COLD_OFFSET, COLD_SCALE, HENRY_SCALE,  # noqa: F401
                               HENRY_SCALE_WET, N_CATEGORIES, PARAMETERS, RDC_LIGHT,
                               RDC_LIGHT_OFFSET, RDC_SCALE, RDC_SLOPE, RLU_O3_DEW,
                               RLU_O3_RAIN, RLU_SO2_DEW, RLU_SO2_RAIN, RM_F0, RM_HENRY,
                               RS_LIGHT, RS_LIGHT_OFFSET, RS_T_FACTOR, RS_T_MAX, TABLE,
                               WESELY_CLASS, WET_CUTICLE_FACTOR, ZERO_TABLE_RESISTANCE,
                               _FLAT_TABLE, _R_TINY, _SNOW_ICE, _TABLE1, _X, _rows,
                               table_values)

NAME = "wesely1989"
REFERENCE = ("Wesely (1989), Atmos. Environ. 23, 1293-1304, with Walmsley and Wesely "
             "(1996), Atmos. Environ. 30, 1181-1188")
PATHS = ("stomatal", "mesophyll", "upper_canopy", "convection", "lower_canopy",
         "canopy_transfer", "ground")
#: Paths that do not depend on the gas (written once, not per gas).
SHARED_PATHS = ("convection", "canopy_transfer")
#: Long names of the paths (for the output's attributes).
PATH_NAMES = {"convection": "in-canopy buoyant convection resistance r_dc",
              "canopy_transfer": "in-canopy aerodynamic transfer resistance r_ac"}
#: Wesely (1989) publishes no dew rule: dew by the humidity at air temperature.
DEW_RULE = "air_temperature"
#: NH3 has no path of its own in Wesely (1989): ``nh3_cuticle = "auto"`` gives it the
#: humidity-dependent cuticle (:func:`workbench.drydep.nh3_bidirectional.resolve_cuticle`).
NH3_CUTICLE = "humidity"
#: The same equations arranged for numpy input (see :mod:`workbench.drydep.gas`).
NUMPY_PATH = "workbench.drydep.wesely1989_numpy"
#: Optional fields of the canopy state read (no LAI, no solar zenith angle).
READS = ("terrain_slope", "hno3_rc_floor", "nh3_so2_ratio", "relative_humidity",
         "so2_cuticle")


def surface_resistance(gas: str, state) -> dict:
    """Rc of a gas and its component paths (the scheme interface) [s m-1].

    Parameters
    ----------
    gas : str
        One of SO2, HNO3, NH3, NO2, O3 (any gas with H* and f0 in the species table).
    state : workbench.drydep.gas.CanopyState

    Returns
    -------
    dict
        ``rc`` and each of :data:`PATHS` [s m-1], and ``floor_used`` (bool; the
        HNO3 floor, False for other gases).

    Notes
    -----
    Equation in the module docstring; the low-temperature increment is added to
    the species' r_lu, r_cl and r_gs.
    """
    return surface_resistances((gas,), state)[gas]


def _erisman_cuticle(state) -> bool:
    """True when `state` asks for the SO2 cuticle of Erisman et al. (1994)
    (:mod:`workbench.drydep.erisman1994`)."""
    rule = erisman1994.check_rule(getattr(state, "so2_cuticle", "scheme"))
    if rule == "erisman1994" and state.relative_humidity is None:
        raise ValueError("so2_cuticle = 'erisman1994' needs relative_humidity in the "
                         "CanopyState")
    return rule == "erisman1994"


def henry_and_reactivity(gases) -> dict:
    """H* [M atm-1] and f0 [-] of each gas from the species table (an error if missing)."""
    species = {}
    for gas in gases:
        sp = _species(gas)
        if sp.henry_eff is None or sp.reactivity is None:
            raise ValueError(f"{gas}: no effective Henry constant or reactivity in the species "
                             "table")
        species[gas] = (sp.henry_eff, sp.reactivity)
    return species


def surface_resistances(gases, state) -> dict:
    """:func:`surface_resistance` of several gases over the same canopy [s m-1].

    The parts that do not depend on the gas (table values, the stomatal response,
    r_dc, the low-temperature increment, the wet cuticle, the exposed surfaces'
    SO2 and O3 conductances, the NaN masks) are computed once.

    Parameters
    ----------
    gases : sequence of str
    state : workbench.drydep.gas.CanopyState

    Returns
    -------
    dict
        gas -> the dict of :func:`surface_resistance` (resistances [s m-1]).
    """
    species = henry_and_reactivity(gases)
    t = state.temperature
    kind = state.wet_kind
    tab = table_values(state.land_use, state.seasonal_category, state.receptor_dim)
    cold = cold_increment(t)
    rs_water = stomatal_resistance(tab["ri"], state.solar_radiation, t)
    cuticle = _wet_cuticle(tab["rlu"], kind)
    wet = kind > 0
    nan_kind = _nan_where(kind)
    rdc = convection_resistance(state.solar_radiation, state.terrain_slope)
    g_cl = _exposed_conductances(tab["rclS"], tab["rclO"])
    g_gs = _exposed_conductances(tab["rgsS"], tab["rgsO"])
    rac = tab["rac"]
    nan_rc = _nan_where(t, state.solar_radiation, kind, state.seasonal_category)
    out = {}
    for gas, (h, f0) in species.items():
        rs = rs_water * diffusivity_ratio(gas)
        rm = mesophyll_resistance(h, f0)
        rlu_dry = upper_canopy_resistance(tab["rlu"], h, f0)
        rlu_wet = _wet_upper_canopy(gas, h, f0, cuticle)
        rlu = where(wet, rlu_wet, rlu_dry) + cold
        rlu = rlu + nan_kind
        if gas == "SO2" and _erisman_cuticle(state):   # [dry] so2_cuticle option
            rlu = erisman1994.dry_cuticle(rlu, state.relative_humidity, t, kind,
                                          erisman1994.vegetated(state.land_use, t,
                                                                state.receptor_dim))
        rcl = _exposed(h, f0, g_cl) + cold
        rgs = _exposed(h, f0, g_gs) + cold
        g = _recip(rs + rm) + _recip(rlu) + _recip(rdc + rcl) + _recip(rac + rgs)
        rc = _recip(g)
        floor_used = rc < 0.0  # all False, same shape
        if gas == "HNO3" and getattr(state, "hno3_rc_floor", True):
            floor = nitric_acid_floor(t)
            floor_used = rc < floor
            rc = where(floor_used, floor, rc)
        rc = rc + nan_rc
        if gas == "SO2" and state.nh3_so2_ratio is not None:  # co-deposition option
            rc, codep = codeposition.surface_resistance(_recip(rs + rm), rc, state)
        out[gas] = {"rc": rc, "stomatal": rs, "mesophyll": rm + 0.0 * t, "upper_canopy": rlu,
                    "convection": rdc, "lower_canopy": rcl, "canopy_transfer": rac + 0.0 * t,
                    "ground": rgs, "floor_used": floor_used}
        if gas == "SO2" and state.nh3_so2_ratio is not None:
            out[gas]["codeposition_used"] = codep
    return out
