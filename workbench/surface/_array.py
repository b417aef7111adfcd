"""Small array-agnostic helpers shared by the surface and dry-deposition modules.

Plain numpy ufuncs (``np.log``, ``np.minimum``) already keep the input's type
(float, ndarray, DataArray, dask array); only ``where`` needs help, because
``np.where`` turns a DataArray into a bare array.
"""
from __future__ import annotations

import numpy as np
import xarray as xr


def is_xarray(*args) -> bool:
    """True when any argument is an xarray object."""
    return any(isinstance(a, (xr.DataArray, xr.Dataset)) for a in args)


def where(cond, x, y):
    """Element-wise ``x if cond else y`` that keeps the input's type.

    A DataArray in any argument gives a DataArray (``xr.where``); numpy and dask
    arrays go through ``np.where`` (dask dispatches it lazily); all-scalar input
    gives a numpy scalar.

    >>> float(where(1.0 > 0.0, 2.0, 3.0))
    2.0
    """
    if is_xarray(cond, x, y):
        return xr.where(cond, x, y)
    out = np.where(cond, x, y)
    return out[()] if getattr(out, "ndim", 1) == 0 else out


def asfloat(x):
    """``x`` as floats (DataArray and dask arrays pass through unchanged)."""
    if is_xarray(x) or hasattr(x, "dask"):
        return x
    out = np.asarray(x, dtype=float)
    return out[()] if out.ndim == 0 else out
