"""Wesely's numbers: Table 1 (land use x seasonal category) and the constants of his
equations, with the look-up of the table for receptors and hours.

Part of :mod:`workbench.drydep.wesely1989` (which re-exports every name here); the
resistances of each path are in :mod:`workbench.drydep.wesely1989_paths`.

References: those of :mod:`workbench.drydep.wesely1989` (Wesely 1989, Atmos. Environ.
23, Table 1 and Eqs. (2)-(9); Walmsley and Wesely 1996, Atmos. Environ. 30).

Every table value below is recalled from memory of Wesely's Table 1 (as also
reprinted in Seinfeld and Pandis 2006, Table 19.2); 9999 there means "no such
path" and is stored as infinity.
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..surface._array import is_xarray, where


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
