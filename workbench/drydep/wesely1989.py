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

Every table value below is recalled from memory of Wesely's Table 1 (as also
reprinted in Seinfeld and Pandis 2006, Table 19.2); 9999 there means "no such
path" and is stored as infinity.
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..constants import ZERO_CELSIUS
from ..species import get as _species
from ..surface._array import is_xarray, where
from . import codeposition
from . import erisman1994
from .gas import HNO3_RC_COLD_SLOPE, HNO3_RC_FLOOR, nitric_acid_floor  # noqa: F401

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

_X = np.inf  # Wesely's 9999: the path does not exist
#: Wesely's land-use types (Table 1 columns): 1 urban, 2 agricultural, 3 range,
#: 4 deciduous forest, 5 coniferous forest, 6 mixed forest incl. wetland, 7 water,
#: 8 barren (desert), 9 non-forested wetland, 10 mixed agricultural and range,
#: 11 rocky open areas with low shrubs; 12 is ours: snow or ice, built from
#: Wesely's category-4 ground values over snow (rgsS 100, rgsO 3500), no vegetation.
WESELY_CLASS = {
    "urban": 1, "crops": 2, "grass": 3, "deciduous_forest": 4, "conifer_forest": 5,
    "mixed_forest": 6, "water": 7, "barren": 8, "wetland": 9, "moorland": 11,
    "snow_ice": 12,
}
PARAMETERS = ("ri", "rlu", "rac", "rgsS", "rgsO", "rclS", "rclO")
#: Wesely (1989) Table 1 [s m-1], by seasonal category, one row per parameter, one
#: column per land-use type 1-11 (from memory); column 12 appended below.
_TABLE1 = {
    1: {  # midsummer with lush vegetation
        "ri": (_X, 60, 120, 70, 130, 100, _X, _X, 80, 100, 150),
        "rlu": (_X, 2000, 2000, 2000, 2000, 2000, _X, _X, 2500, 2000, 4000),
        "rac": (100, 200, 100, 2000, 2000, 2000, 0, 0, 300, 150, 200),
        "rgsS": (400, 150, 350, 500, 500, 100, 0, 1000, 0, 220, 400),
        "rgsO": (300, 150, 200, 200, 200, 300, 2000, 400, 1000, 180, 200),
        "rclS": (_X, 2000, 2000, 2000, 2000, 2000, _X, _X, 2500, 2000, 4000),
        "rclO": (_X, 1000, 1000, 1000, 1000, 1000, _X, _X, 1000, 1000, 1000),
    },
    2: {  # autumn with unharvested cropland
        "ri": (_X, _X, _X, _X, 250, 500, _X, _X, _X, _X, _X),
        "rlu": (_X, 9000, 9000, 9000, 4000, 8000, _X, _X, 9000, 9000, 9000),
        "rac": (100, 150, 100, 1500, 2000, 1700, 0, 0, 200, 120, 140),
        "rgsS": (400, 200, 350, 500, 500, 100, 0, 1000, 0, 300, 400),
        "rgsO": (300, 150, 200, 200, 200, 300, 2000, 400, 800, 180, 200),
        "rclS": (_X, 9000, 9000, 9000, 2000, 4000, _X, _X, 9000, 9000, 9000),
        "rclO": (_X, 400, 400, 400, 1000, 600, _X, _X, 400, 400, 400),
    },
    3: {  # late autumn after frost, no snow
        "ri": (_X, _X, _X, _X, 250, 500, _X, _X, _X, _X, _X),
        "rlu": (_X, _X, 9000, 9000, 4000, 8000, _X, _X, 9000, 9000, 9000),
        "rac": (100, 10, 100, 1000, 2000, 1500, 0, 0, 100, 50, 120),
        "rgsS": (400, 150, 350, 500, 500, 200, 0, 1000, 0, 200, 400),
        "rgsO": (300, 150, 200, 200, 200, 300, 2000, 400, 1000, 180, 200),
        "rclS": (_X, _X, 9000, 9000, 3000, 6000, _X, _X, 9000, 9000, 9000),
        "rclO": (_X, 1000, 400, 400, 1000, 600, _X, _X, 800, 600, 600),
    },
    4: {  # winter, snow on ground and subfreezing
        "ri": (_X, _X, _X, _X, 400, 800, _X, _X, _X, _X, _X),
        "rlu": (_X, _X, _X, _X, 6000, 9000, _X, _X, 9000, 9000, 9000),
        "rac": (100, 10, 10, 1000, 2000, 1500, 0, 0, 50, 10, 50),
        "rgsS": (100, 100, 100, 100, 100, 100, 0, 1000, 100, 100, 50),
        "rgsO": (600, 3500, 3500, 3500, 3500, 3500, 2000, 400, 3500, 3500, 3500),
        "rclS": (_X, _X, _X, 9000, 200, 400, _X, _X, 9000, _X, 9000),
        "rclO": (_X, 1000, 1000, 400, 1500, 600, _X, _X, 800, 1000, 800),
    },
    5: {  # transitional spring with partially green short annuals
        "ri": (_X, 120, 240, 140, 250, 190, _X, _X, 160, 200, 300),
        "rlu": (_X, 4000, 4000, 4000, 2000, 3000, _X, _X, 4000, 4000, 8000),
        "rac": (100, 50, 80, 1200, 2000, 1500, 0, 0, 200, 60, 120),
        "rgsS": (500, 150, 350, 500, 500, 200, 0, 1000, 0, 250, 400),
        "rgsO": (300, 150, 200, 200, 200, 300, 2000, 400, 1000, 180, 200),
        "rclS": (_X, 4000, 4000, 4000, 2000, 3000, _X, _X, 4000, 4000, 8000),
        "rclO": (_X, 1000, 500, 500, 1500, 700, _X, _X, 600, 800, 800),
    },
}
#: Our snow/ice column (type 12), the same in every category.
_SNOW_ICE = {"ri": _X, "rlu": _X, "rac": 0.0, "rgsS": 100.0, "rgsO": 3500.0,
             "rclS": _X, "rclO": _X}
#: Parameter -> array [type 1-12, category 1-5] [s m-1].
TABLE = {p: np.array([[_TABLE1[c][p][t] for c in range(1, 6)] for t in range(11)]
                     + [[_SNOW_ICE[p]] * 5], dtype=float) for p in PARAMETERS}

# --- constants of Wesely's equations ---------------------------------------------------
#: Light response of r_s: r_s = r_i [1 + (200/(G + 0.1))^2] [W m-2] (Wesely 1989, Eq. 3).
RS_LIGHT = 200.0
RS_LIGHT_OFFSET = 0.1
#: Temperature response 400 / (Ts (40 - Ts)) with Ts in degC, open for 0 < Ts < 40
#: (Wesely 1989, Eq. 3) [degC^2], [degC].
RS_T_FACTOR = 400.0
RS_T_MAX = 40.0
#: Mesophyll r_m = 1/(H*/3000 + 100 f0) [M atm-1 per (m s-1)], [m s-1] (Eq. 6).
RM_HENRY = 3000.0
RM_F0 = 100.0
#: Henry scaling 1e-5 of r_lu, r_cl, r_gs (Eqs. 7-9) and 1e-7 of the wet r_lu [-].
HENRY_SCALE = 1e-5
HENRY_SCALE_WET = 1e-7
#: Buoyant convection r_dc = 100 [1 + 1000/(G + 10)] / (1 + 1000 slope) (Eq. 5):
#: [s m-1], [W m-2], [W m-2], [rad-1].
RDC_SCALE = 100.0
RDC_LIGHT = 1000.0
RDC_LIGHT_OFFSET = 10.0
RDC_SLOPE = 1000.0
#: Low-temperature increment 1000 exp(-Ts - 4) added to r_lu, r_cl, r_gs [s m-1], [degC].
COLD_SCALE = 1000.0
COLD_OFFSET = 4.0
#: Wet upper canopy (Wesely 1989 p. 1296; Walmsley and Wesely 1996; from memory):
#: SO2 on dew 100 s/m and in rain 50 s/m; O3 [1/3000 + 1/(3 rlu)]^-1 on dew and
#: [1/1000 + 1/(3 rlu)]^-1 in rain; the wet cuticle conducts 3 times the dry one.
RLU_SO2_DEW = 100.0
RLU_SO2_RAIN = 50.0
RLU_O3_DEW = 3000.0
RLU_O3_RAIN = 1000.0
WET_CUTICLE_FACTOR = 3.0
#: HNO3 floor: see :func:`workbench.drydep.gas.nitric_acid_floor` (Erisman et al. 1994).
#: Least resistance used in reciprocals [s m-1] (numerical device).
_R_TINY = 1e-9
#: Stand-in for Wesely's table value 0 of rgsS (water, wetland) [s m-1]: negligible
#: beside Ra + Rb, yet it keeps the term 1e-5 H*/rgsS finite, so that sparingly
#: soluble gases (O3, NO2) are not absorbed by water as if infinitely soluble (our
#: choice; Wesely's 0 means "negligible" for SO2).
ZERO_TABLE_RESISTANCE = 1.0
N_CATEGORIES = 5


def _recip(r):
    """1/r with 1/0 = inf and 1/inf = 0, without warnings.

    Parameters
    ----------
    r : array_like
        Resistance, >= 0 or NaN. [s m-1]

    Returns
    -------
    g : array_like
        Conductance. [m s-1]
    """
    if isinstance(r, np.ndarray) and r.ndim:
        return _recip_array(r)
    return where(r == 0, np.inf, 1.0 / np.maximum(r, _R_TINY))


def _recip_array(r, out=None):
    """:func:`_recip` of a numpy array, into `out` when given (`out` may be `r`).

    When no value is below :data:`_R_TINY` (NaN aside), 1/max(r, tiny) is 1/r: one
    division and a minimum instead of a maximum, a division and a zero mask.

    Parameters
    ----------
    r : numpy.ndarray
        Resistance, >= 0 or NaN. [s m-1]
    out : numpy.ndarray, optional

    Returns
    -------
    numpy.ndarray
        Conductance. [m s-1]
    """
    if r.size and np.fmin.reduce(r, axis=None) >= _R_TINY:  # fmin skips NaN
        return np.divide(1.0, r, out=out)
    zero = r == 0
    out = np.divide(1.0, np.maximum(r, _R_TINY, out=out), out=out)
    out[zero] = np.inf
    return out


def _nan_where(*inputs):
    """NaN wherever one of `inputs` is NaN, else 0 (to be added) [same units as the sum].

    Parameters
    ----------
    *inputs : array_like

    Returns
    -------
    mask : array_like
        0.0 or NaN, broadcast over the inputs.
    """
    bad = np.isnan(inputs[0])
    for a in inputs[1:]:
        bad = bad | np.isnan(a)
    return where(bad, np.nan, 0.0)


def _keep_nan(x, *inputs):
    """x, but NaN wherever one of `inputs` is NaN (x + 0 elsewhere).

    Parameters
    ----------
    x : array_like
    *inputs : array_like

    Returns
    -------
    array_like
        Units of `x`.
    """
    return x + _nan_where(*inputs)


def table_values(land_use, seasonal_category, receptor_dim="receptor"):
    """Wesely's Table 1 values for receptors and hours [s m-1].

    Parameters
    ----------
    land_use : str, sequence of str or ndarray of str
        Our classes (mapped through :data:`WESELY_CLASS`). With numpy input an
        array of names broadcasts against `seasonal_category` (e.g. shape (1, R, 1)
        against (S, 1, T)); a sequence is the ``receptor_dim`` of a DataArray.
    seasonal_category : array_like
        1-5, NaN unknown; a DataArray broadcasts against ``receptor_dim``.
    receptor_dim : str
        Dimension name of `land_use` when `seasonal_category` is a DataArray.

    Returns
    -------
    dict
        Parameter name (:data:`PARAMETERS`) -> resistance array; NaN where the
        category is unknown.
    """
    cat = seasonal_category
    valid = np.isfinite(cat)
    col = where(valid, cat, 1.0) - 1.0
    out = {}
    if is_xarray(cat):
        rows_da = xr.DataArray(_rows(list(land_use)), dims=receptor_dim)
        flat_idx = (rows_da * N_CATEGORIES + col).astype(int)
        for p in PARAMETERS:
            flat = TABLE[p].ravel()
            v = xr.apply_ufunc(lambda i, f=flat: f[i], flat_idx, dask="parallelized",
                               output_dtypes=[float])
            out[p] = xr.where(valid, v, np.nan)
        return out
    r = _rows(land_use)
    c = np.asarray(col).astype(int)
    if np.any((c < -N_CATEGORIES) | (c >= N_CATEGORIES)):  # as TABLE[p][r, c] would
        raise IndexError(f"seasonal category outside 1-{N_CATEGORIES}")
    flat_idx = np.asarray(r) * N_CATEGORIES + c % N_CATEGORIES  # one gather per parameter
    all_valid = bool(np.all(valid))
    for p in PARAMETERS:
        v = _FLAT_TABLE[p].take(flat_idx)
        out[p] = v if all_valid else where(valid, v, np.nan)  # (the same values)
    return out


#: :data:`TABLE` flattened, row-major (type, category).
_FLAT_TABLE = {p: t.ravel() for p, t in TABLE.items()}


def _rows(land_use):
    """Row index of Wesely's table for each of our class names (any array shape).

    Parameters
    ----------
    land_use : str or array_like of str
        Our classes.

    Returns
    -------
    rows : int or numpy.ndarray of int
        Same shape as `land_use`. [-]
    """
    if isinstance(land_use, str):
        return WESELY_CLASS[land_use] - 1
    names = np.asarray(land_use, dtype=object)
    return np.array([WESELY_CLASS[str(n)] - 1 for n in names.ravel()],
                    dtype=int).reshape(names.shape)


def stomatal_resistance(ri, solar_radiation, temperature):
    """Bulk canopy stomatal resistance for water vapour [s m-1].

    Parameters
    ----------
    ri : array_like
        Minimum stomatal resistance r_i (Table 1); inf = no stomata. [s m-1]
    solar_radiation : array_like
        G. [W m-2]
    temperature : array_like
        Surface (here air) temperature. [K]

    Returns
    -------
    rs : array_like
        [s m-1]; inf (closed) outside 0 < Ts < 40 degC.

    Notes
    -----
    .. math:: r_s = r_i\\left[1 + \\left(\\frac{200}{G + 0.1}\\right)^2\\right]
              \\frac{400}{T_s(40 - T_s)}

    References
    ----------
    Wesely (1989), Eq. (3).
    """
    ts = temperature - ZERO_CELSIUS
    open_ = (ts > 0.0) & (ts < RS_T_MAX)
    ts_in = np.clip(ts, 1.0, RS_T_MAX - 1.0)
    rs = ri * (1.0 + (RS_LIGHT / (solar_radiation + RS_LIGHT_OFFSET)) ** 2) * (
        RS_T_FACTOR / (ts_in * (RS_T_MAX - ts_in)))
    rs = where(open_, rs, np.inf)
    return _keep_nan(rs, temperature, solar_radiation)


def diffusivity_ratio(gas: str) -> float:
    """D_H2O / D_x, the stomatal scaling of Wesely (1989), Eq. (4) [-].

    Both diffusivities scale alike with T and p (Massman 1998), so the ratio is
    taken at 273.15 K from :mod:`workbench.species`.
    """
    return _species("H2O").diffusivity_0 / _species(gas).diffusivity_0


def mesophyll_resistance(henry, reactivity):
    """Mesophyll resistance r_m = 1/(H*/3000 + 100 f0) [s m-1]; Wesely (1989), Eq. (6).

    Parameters
    ----------
    henry : float
        Effective Henry constant H*. [M atm-1]
    reactivity : float
        f0. [-]

    >>> round(mesophyll_resistance(1e5, 0.0), 3)
    0.03
    """
    return 1.0 / (henry / RM_HENRY + RM_F0 * reactivity)


def convection_resistance(solar_radiation, terrain_slope):
    """In-canopy buoyant-convection resistance r_dc [s m-1]; Wesely (1989), Eq. (5).

    Parameters
    ----------
    solar_radiation : array_like
        G. [W m-2]
    terrain_slope : array_like
        [degree]

    Returns
    -------
    rdc : array_like
        [s m-1]

    Notes
    -----
    .. math:: r_{dc} = 100\\left[1 + \\frac{1000}{G + 10}\\right](1 + 1000\\,\\theta)^{-1}

    with the slope theta in radians.
    """
    return RDC_SCALE * (1.0 + RDC_LIGHT / (solar_radiation + RDC_LIGHT_OFFSET)) / (
        1.0 + RDC_SLOPE * np.deg2rad(terrain_slope))


def upper_canopy_resistance(rlu, henry, reactivity):
    """Dry upper-canopy (cuticle) resistance r_lu/(1e-5 H* + f0) [s m-1]; Eq. (7)."""
    return rlu / (HENRY_SCALE * henry + reactivity)


def wet_upper_canopy_resistance(gas, rlu, henry, reactivity, wet_kind):
    """Upper-canopy resistance of a wet canopy (dew: 1, rain: 2) [s m-1].

    Parameters
    ----------
    gas : str
    rlu : array_like
        Table value r_lu; inf where there is no canopy (no wet rule then). [s m-1]
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    wet_kind : array_like
        1 dew, 2 rain. [-]

    Notes
    -----
    .. math:: r_{lu,O}^{wet} = [1/r_O + 1/(3 r_{lu})]^{-1},\\quad
              r_{lu,x}^{wet} = [1/(3 r_{lu}) + 10^{-7} H^* + f_0/r_{lu,O}^{wet}]^{-1}

    with r_O = 3000 s/m (dew) or 1000 s/m (rain); SO2 takes 100 s/m (dew) and
    50 s/m (rain). Wesely (1989) p. 1296 and Walmsley and Wesely (1996) (from memory).
    """
    return _wet_upper_canopy(gas, henry, reactivity, _wet_cuticle(rlu, wet_kind))


def _wet_cuticle(rlu, wet_kind):
    """The parts of :func:`wet_upper_canopy_resistance` common to all gases.

    Parameters
    ----------
    rlu : array_like
        Table value r_lu. [s m-1]
    wet_kind : array_like
        1 dew, 2 rain. [-]

    Returns
    -------
    tuple
        dew (bool), the wet cuticle's conductance 1/(3 r_lu) [m s-1], the wet
        upper-canopy resistance of O3 [s m-1], and the mask of no canopy (r_lu inf).
    """
    dew = wet_kind == 1
    g_cut = _recip(WET_CUTICLE_FACTOR * rlu)
    r_o = _recip(1.0 / where(dew, RLU_O3_DEW, RLU_O3_RAIN) + g_cut)
    return dew, g_cut, r_o, np.isinf(rlu)


def _wet_upper_canopy(gas, henry, reactivity, cuticle):
    """Wet upper-canopy resistance of `gas` from :func:`_wet_cuticle` [s m-1].

    Parameters
    ----------
    gas : str
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    cuticle : tuple
        Output of :func:`_wet_cuticle`.
    """
    dew, g_cut, r_o, no_canopy = cuticle
    if gas == "SO2":
        r = where(dew, RLU_SO2_DEW, RLU_SO2_RAIN) + 0.0 * r_o
    elif gas == "O3":
        r = r_o
    else:
        r = _recip(g_cut + HENRY_SCALE_WET * henry + reactivity * _recip(r_o))
    return where(no_canopy, np.inf, r)


def exposed_surface_resistance(r_s, r_o, henry, reactivity):
    """Lower-canopy or ground resistance [1e-5 H*/r_S + f0/r_O]^-1 [s m-1]; Eqs. (8)-(9).

    Parameters
    ----------
    r_s, r_o : array_like
        The SO2 and O3 table values (rclS, rclO or rgsS, rgsO). [s m-1]
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    """
    return _exposed(henry, reactivity, _exposed_conductances(r_s, r_o))


def _exposed_conductances(r_s, r_o):
    """The SO2 and O3 conductances of an exposed surface, 1/max(r, 1 s/m) [m s-1].

    Parameters
    ----------
    r_s, r_o : array_like
        Table values. [s m-1]
    """
    return (_recip(np.maximum(r_s, ZERO_TABLE_RESISTANCE)),
            _recip(np.maximum(r_o, ZERO_TABLE_RESISTANCE)))


def _exposed(henry, reactivity, conductances):
    """Resistance [1e-5 H* g_S + f0 g_O]^-1 of an exposed surface [s m-1].

    Parameters
    ----------
    henry, reactivity : float
        H* [M atm-1], f0 [-]
    conductances : tuple
        g_S, g_O from :func:`_exposed_conductances`. [m s-1]
    """
    g_s, g_o = conductances
    return _recip(HENRY_SCALE * henry * g_s + reactivity * g_o)


def cold_increment(temperature):
    """Low-temperature increment 1000 exp(-Ts - 4) [s m-1]; Wesely (1989) p. 1297.

    Parameters
    ----------
    temperature : array_like
        [K]
    """
    return COLD_SCALE * np.exp(-(temperature - ZERO_CELSIUS) - COLD_OFFSET)


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

