"""Wesely (1989) surface resistances for plain numpy input, arranged for speed.

:func:`surface_resistances` here computes what
:func:`workbench.drydep.wesely1989.surface_resistances` computes, with the same
equations (the functions of that module), arranged so that

* what depends only on the land-use type, the seasonal category and the wetness (the
  Table 1 values, r_lu wet or dry, r_cl and r_gs without the low-temperature
  increment) is computed once on the 12 x 6 table (five categories and an unknown
  one) and gathered;
* the stomatal light and temperature factor, r_dc and the low-temperature increment
  are computed on the shape of the air (no receptor axis);
* the reciprocal sums run in place (:func:`workbench.drydep.wesely1989._recip_array`).

The scheme registry (:mod:`workbench.drydep.gas`) uses it for numpy input
(``NUMPY_PATH`` of the scheme module); xarray and dask input take the general path.
The two agree to rounding (tests/drydep/test_drydep_wesely.py).  Units: resistances
[s m-1], temperature [K], radiation [W m-2].

References
----------
Wesely (1989), Atmos. Environ. 23, 1293-1304, Eqs. (2)-(9) and Table 1; Walmsley and
Wesely (1996), Atmos. Environ. 30, 1181-1188 (as in :mod:`workbench.drydep.wesely1989`).
"""
from __future__ import annotations

import numpy as np

from ..surface._array import blockwise, where
from .gas import nitric_acid_floor
from .wesely1989 import surface_resistances as _general
from . import codeposition
from . import erisman1994
from . import wesely1989 as _w
from .wesely1989 import (N_CATEGORIES, TABLE, _exposed, _exposed_conductances, _recip_array,
                         _rows, _wet_cuticle, _wet_upper_canopy, cold_increment,
                         convection_resistance, diffusivity_ratio, henry_and_reactivity,
                         mesophyll_resistance, stomatal_resistance, upper_canopy_resistance)
#: :data:`TABLE` with a sixth, NaN column for an unknown seasonal category [s m-1].
_TABLE_NAN = {p: np.concatenate([t, np.full((len(t), 1), np.nan)], axis=1)
              for p, t in TABLE.items()}


def _gas_tables(gas, henry, reactivity):
    """The gas's r_lu (dry, dew, rain, NaN), r_cl and r_gs on the (type, category) table.

    The functions that :func:`workbench.drydep.wesely1989.surface_resistances` applies
    hour by hour, applied once to :data:`_TABLE_NAN` [s m-1], flattened: r_lu (4 x 12 x 6), r_cl and r_gs (12 x 6),
    the low-temperature increment not included.
    """
    rlu = _TABLE_NAN["rlu"]
    by_kind = [upper_canopy_resistance(rlu, henry, reactivity)]
    for kind in (1.0, 2.0):  # dew, rain
        by_kind.append(_wet_upper_canopy(gas, henry, reactivity, _wet_cuticle(rlu, kind)))
    by_kind.append(np.full(rlu.shape, np.nan))  # wetness unknown
    rcl = _exposed(henry, reactivity, _exposed_conductances(_TABLE_NAN["rclS"], _TABLE_NAN["rclO"]))
    rgs = _exposed(henry, reactivity, _exposed_conductances(_TABLE_NAN["rgsS"], _TABLE_NAN["rgsO"]))
    return np.stack(by_kind).ravel(), rcl.ravel(), rgs.ravel()


def surface_resistances(gases, state) -> dict:
    """Rc of several gases and their paths for numpy input [s m-1].

    Parameters
    ----------
    gases : sequence of str
    state : workbench.drydep.gas.CanopyState
        With numpy arrays (or scalars).

    Returns
    -------
    dict
        As :func:`workbench.drydep.wesely1989.surface_resistances` [s m-1].
    """
    species = henry_and_reactivity(gases)
    arrays = [np.asarray(a) for a in (state.temperature, state.solar_radiation,
                                      state.seasonal_category, state.wet_kind)]
    if not any(a.ndim for a in arrays) and np.ndim(_rows(state.land_use)) == 0:
        return _general(gases, state)  # scalars: nothing to gain, numpy scalars are no arrays
    t = np.asarray(state.temperature, dtype=float)
    sun = np.asarray(state.solar_radiation, dtype=float)
    cat = np.asarray(state.seasonal_category, dtype=float)
    kind = np.asarray(state.wet_kind, dtype=float)
    valid = np.isfinite(cat)
    col = (np.where(valid, cat, 1.0) - 1.0).astype(int)
    if np.any((col < -N_CATEGORIES) | (col >= N_CATEGORIES)):  # as table_values
        raise IndexError(f"seasonal category outside 1-{N_CATEGORIES}")
    col = np.where(valid, col % N_CATEGORIES, N_CATEGORIES)
    rows = np.asarray(_rows(state.land_use))
    floor_on = getattr(state, "hno3_rc_floor", True)
    # the SO2 cuticle of Erisman et al. (1994) in dry hours ([dry] so2_cuticle)
    humid = (np.asarray(state.relative_humidity, dtype=float),
             erisman1994.vegetated(state.land_use)) if _w._erisman_cuticle(state) else ()
    per_gas = [(gas, h, f0, _gas_tables(gas, h, f0)) for gas, (h, f0) in species.items()]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        cold = cold_increment(t)
        light_temp = stomatal_resistance(1.0, sun, t)  # r_s / r_i (inf: closed; NaN)
        rdc = convection_resistance(sun, state.terrain_slope)

        def cells(rows, col, kind, t, sun, cat, cold, light_temp, rdc, *humid):
            # every hourly path of every gas for one block (element-wise)
            cell = rows * (N_CATEGORIES + 1) + col  # (type, category)
            shape = np.broadcast_shapes(cell.shape, kind.shape, t.shape, sun.shape, cat.shape)
            cell = np.broadcast_to(cell, shape)
            # wetness 0 dry (kind <= 0), 1 dew, 2 rain (other kind > 0), 3 unknown
            wet_cell = np.where(kind > 0, np.where(kind == 1, 1, 2), np.where(np.isnan(kind), 3, 0))
            wet_cell = wet_cell * _TABLE_NAN["rlu"].size + cell
            bad = np.isnan(t) | np.isnan(sun) | np.isnan(kind) | np.isnan(cat)
            ri = _TABLE_NAN["ri"].ravel().take(cell)
            rac = _TABLE_NAN["rac"].ravel().take(cell)
            closed = None if col.max(initial=0) < N_CATEGORIES else np.isinf(light_temp)
            work = np.empty(shape)
            out = [rac + 0.0 * t]
            for gas, h, f0, (rlu_t, rcl_t, rgs_t) in per_gas:
                rs = np.multiply(ri, light_temp * diffusivity_ratio(gas))
                if closed is not None:  # closed stomata: inf whatever the table value
                    np.copyto(rs, np.inf, where=closed)
                g = np.add(rs, mesophyll_resistance(h, f0))
                g = _recip_array(g, out=g)
                rlu = rlu_t.take(wet_cell)
                rlu += cold
                if gas == "SO2" and humid:
                    rlu = erisman1994.dry_cuticle(rlu, humid[0], t, kind, humid[1])
                g += _recip_array(rlu, out=work)
                rcl = rcl_t.take(cell)
                rcl += cold
                g += _recip_array(np.add(rdc, rcl, out=work), out=work)
                rgs = rgs_t.take(cell)
                rgs += cold
                g += _recip_array(np.add(rac, rgs, out=work), out=work)
                rc = _recip_array(g, out=g)
                floor_used = np.zeros(shape, dtype=bool)
                if gas == "HNO3" and floor_on:
                    floor = nitric_acid_floor(t)
                    floor_used = rc < floor
                    rc = where(floor_used, floor, rc)
                np.copyto(rc, np.nan, where=bad)
                out += [rc, rs, rlu, rcl, rgs, floor_used]
            return tuple(out)

        parts = blockwise(cells, rows, col, kind, t, sun, cat, cold, light_temp, rdc, *humid)
    out = {}
    for k, (gas, h, f0, _) in enumerate(per_gas):
        rc, rs, rlu, rcl, rgs, floor_used = parts[1 + 6 * k: 7 + 6 * k]
        out[gas] = {"rc": rc, "stomatal": rs, "mesophyll": mesophyll_resistance(h, f0) + 0.0 * t,
                    "upper_canopy": rlu, "convection": rdc, "lower_canopy": rcl,
                    "canopy_transfer": parts[0], "ground": rgs, "floor_used": floor_used}
        if gas == "SO2" and getattr(state, "nh3_so2_ratio", None) is not None:
            # the co-deposition option, as in the general path
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                g_stom = _w._recip(rs + mesophyll_resistance(h, f0))
            out[gas]["rc"], out[gas]["codeposition_used"] = codeposition.surface_resistance(
                g_stom, rc, state)
    return out
