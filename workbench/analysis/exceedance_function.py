"""The exceedance of the critical load function of acidity and of the critical load of
nutrient nitrogen: the regions, the checks of a function and of a deposition, and the
nearest point of the function (:func:`acidity_exceedance`,
:func:`nutrient_n_exceedance`).

Part of :mod:`workbench.analysis.exceedance` (which re-exports every name here and
describes the function and its regions).  References: ICP Modelling and Mapping
Manual, chapter on the exceedance of critical loads; Posch, Hettelingh and De Smet
(2001).  All loads and depositions in one unit, by convention [eq ha-1 yr-1].
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np
import xarray as xr

from ..errors import WorkbenchError


#: Region codes and what each says, for tables and figures.
REGIONS = {
    -1: "not determined (deposition or critical load missing, a net emission, or a "
        "partial deposition on or below the function)",
    0: "not exceeded",
    1: "reduce S only (above the flat part of the function)",
    2: "nearest the corner (CLminN, CLmaxS): reduce S and N",
    3: "nearest the sloping part: reduce S and N",
    4: "nearest the corner (CLmaxN, 0): reduce S and N",
}
#: Points within this fraction of CLmaxN + CLmaxS of the function count as on it,
#: so that a point computed on the function in floating point gives 0 (common practice).
ON_FUNCTION_RTOL = 1e-12


class ExceedanceError(WorkbenchError, ValueError):
    """An impossible critical load function or a negative deposition."""


class AcidityExceedance(NamedTuple):
    """Result of :func:`acidity_exceedance` (each of the input's shape and type)."""

    exceedance: object   #: sum of the S and N reductions [eq ha-1 yr-1]
    region: object       #: region code, see :data:`REGIONS` [1]
    s_reduction: object  #: S reduction to the nearest point [eq ha-1 yr-1]
    n_reduction: object  #: N reduction to the nearest point [eq ha-1 yr-1]


def check_function(cl_max_s, cl_min_n, cl_max_n):
    """Raise :class:`ExceedanceError` for a negative or infinite load or CLmaxN below
    CLminN.

    NaN entries (no critical load) pass; they give NaN exceedances.
    """
    s, n0, n1 = (np.asarray(v, dtype=float) for v in (cl_max_s, cl_min_n, cl_max_n))
    for name, v in (("cl_max_s", s), ("cl_min_n", n0), ("cl_max_n", n1)):
        bad = v < 0
        if np.any(bad):
            raise ExceedanceError(f"negative critical load {name} = {v[bad].flat[0]:g} "
                                  f"(at position {int(np.flatnonzero(bad)[0])}); expected >= 0 eq/ha/yr")
        bad = np.isinf(v)
        if np.any(bad):
            raise ExceedanceError(f"critical load {name} = {v[bad].flat[0]:g} is not finite "
                                  f"(at position {int(np.flatnonzero(bad)[0])}); expected a "
                                  "finite number >= 0 eq/ha/yr, or NaN for none")
    bad = np.broadcast_to(n1 < n0, np.broadcast(n0, n1).shape)
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise ExceedanceError(
            f"impossible critical load function: cl_max_n = {np.broadcast_to(n1, bad.shape).flat[i]:g}"
            f" below cl_min_n = {np.broadcast_to(n0, bad.shape).flat[i]:g} eq/ha/yr "
            f"(at position {i}); expected cl_max_n >= cl_min_n")


def _check_deposition(s_dep, n_dep):
    for name, v in (("S", s_dep), ("N", n_dep)):
        bad = np.asarray(v) < 0
        if np.any(bad):
            raise ExceedanceError(f"negative {name} deposition {np.asarray(v)[bad].flat[0]:g} "
                                  f"(at position {int(np.flatnonzero(bad)[0])}); expected >= 0 eq/ha/yr")


def _project(n, s, n_a, s_a, n_b, s_b):
    """Nearest point of the segment a-b to (n, s): (t in [0, 1], squared distance)."""
    dn, ds = n_b - n_a, s_b - s_a
    length2 = dn * dn + ds * ds
    with np.errstate(invalid="ignore", divide="ignore"):
        t = np.where(length2 > 0, ((n - n_a) * dn + (s - s_a) * ds) / length2, 0.0)
    t = np.clip(t, 0.0, 1.0)
    en, es = n - (n_a + t * dn), s - (s_a + t * ds)
    return t, en * en + es * es


def _acidity_numpy(s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n):
    s, n, cs, c0, c1 = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (
        s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n)))
    slope = c1 - c0
    tol = ON_FUNCTION_RTOL * (cs + c1)
    inside = (s <= cs + tol) & (n <= c1 + tol) & (slope * s + cs * (n - c1) <= tol * (slope + cs))
    # flat part (0, CLmaxS)-(CLminN, CLmaxS) and sloping part (CLminN, CLmaxS)-(CLmaxN, 0)
    t_a, d_a = _project(n, s, 0.0, cs, c0, cs)
    t_b, d_b = _project(n, s, c0, cs, c1, 0.0)
    on_a = d_a <= d_b
    n_near = np.where(on_a, t_a * c0, c0 + t_b * slope)
    s_near = np.where(on_a, cs, cs * (1.0 - t_b))
    # on a boundary between two regions: N <= CLminN is region 1 (the manual's rule,
    # inclusive), else a point whose nearest point is a corner takes the corner's
    # region (2 or 4)
    region = np.select([n <= c0, on_a | (t_b == 0.0), t_b < 1.0], [1, 2, 3], 4)
    missing = np.isnan(s) | np.isnan(n) | np.isnan(cs) | np.isnan(c0) | np.isnan(c1)
    dn = np.where(inside, 0.0, np.maximum(n - n_near, 0.0))
    ds = np.where(inside, 0.0, np.maximum(s - s_near, 0.0))
    dn, ds = np.where(missing, np.nan, dn), np.where(missing, np.nan, ds)
    region = np.where(missing, -1, np.where(inside, 0, region)).astype(np.int8)
    return dn + ds, region, ds, dn


def acidity_exceedance(s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n) -> AcidityExceedance:
    """Exceedance of the critical load function of acidity and its region.

    Parameters
    ----------
    s_dep : float, ndarray or DataArray
        Sulfur deposition (non-sea-salt) [eq ha-1 yr-1].
    n_dep : float, ndarray or DataArray
        Total (oxidized + reduced) nitrogen deposition [eq ha-1 yr-1].
    cl_max_s, cl_min_n, cl_max_n : float, ndarray or DataArray
        The critical load function [eq ha-1 yr-1]; all arguments broadcast together.

    Returns
    -------
    AcidityExceedance
        ``exceedance`` [eq ha-1 yr-1], ``region`` (code of :data:`REGIONS`),
        ``s_reduction`` and ``n_reduction`` [eq ha-1 yr-1]; NaN (region -1) where an
        input is NaN.  DataArrays in give DataArrays out.

    Raises
    ------
    ExceedanceError
        For a negative load or deposition, or CLmaxN below CLminN.

    Notes
    -----
    The nearest point :math:`(N_0, S_0)` of the function to the deposition
    :math:`(N_{dep}, S_{dep})` (Euclidean) gives

    .. math:: Ex = (S_{dep} - S_0) + (N_{dep} - N_0)

    and :math:`Ex = 0` on or below the function.  The nearest point is found by projecting
    on the flat part and on the sloping part and keeping the closer, so that the four
    regions of the manual's case distinction follow from where the projection lands.

    References
    ----------
    ICP Modelling and Mapping Manual (UBA, Dessau), chapter "Dynamic modelling" /
    "Exceedance of critical loads" (Posch et al.): the exceedance of the critical load
    function as the sum of N and S reductions to its nearest point.
    Posch, M., Hettelingh, J.-P., De Smet, P.A.M. (2001) Characterization of critical
    load exceedances in Europe. Water Air Soil Pollut. 130, 1139-1144.

    Examples
    --------
    Above the flat part only S has to go (a hand-worked case):

    >>> r = acidity_exceedance(1200.0, 200.0, 950.0, 357.0, 1420.0)
    >>> float(r.exceedance), int(r.region)
    (250.0, 1)
    """
    check_function(cl_max_s, cl_min_n, cl_max_n)
    _check_deposition(s_dep, n_dep)
    args = (s_dep, n_dep, cl_max_s, cl_min_n, cl_max_n)
    if any(isinstance(a, xr.DataArray) for a in args):
        out = xr.apply_ufunc(_acidity_numpy, *args, output_core_dims=[[]] * 4,
                             dask="parallelized", output_dtypes=[float, np.int8, float, float])
        for o, unit in zip(out, ("eq ha-1 yr-1", "1", "eq ha-1 yr-1", "eq ha-1 yr-1")):
            o.attrs["units"] = unit
        return AcidityExceedance(*out)
    out = _acidity_numpy(*args)
    if all(np.ndim(a) == 0 for a in args):
        out = tuple(o[()] for o in out)
    return AcidityExceedance(*out)


def nutrient_n_exceedance(n_dep, cl_nut_n):
    """Exceedance of the critical load of nutrient nitrogen.

    Parameters
    ----------
    n_dep : float, ndarray or DataArray
        Total nitrogen deposition [eq ha-1 yr-1].
    cl_nut_n : float, ndarray or DataArray
        Critical load of nutrient N [eq ha-1 yr-1].

    Returns
    -------
    Same type as the input
        :math:`\\max(N_{dep} - CL_{nut}N, 0)` [eq ha-1 yr-1] (NaN where an input is NaN).

    References
    ----------
    ICP Modelling and Mapping Manual (UBA, Dessau), exceedance of the critical load of
    nutrient nitrogen.

    Raises
    ------
    ExceedanceError
        For a negative or infinite load (an infinite CLnutN gave an exceedance of 0,
        "not exceeded", where :func:`acidity_exceedance` refuses an infinite load;
        2026-12 audit) or a negative deposition.  NaN (no load) passes and gives NaN.

    >>> float(nutrient_n_exceedance(1713.0, 714.0))
    999.0
    """
    v = np.asarray(cl_nut_n, dtype=float)
    for bad, what in ((v < 0, "negative critical load cl_nut_n = {:g}"),
                      (np.isinf(v), "critical load cl_nut_n = {:g} is not finite")):
        if np.any(bad):
            raise ExceedanceError(
                f"{what.format(v[bad].flat[0])} (at position {int(np.flatnonzero(bad)[0])}); "
                "expected a finite number >= 0 eq/ha/yr, or NaN for none")
    _check_deposition(0.0, n_dep)
    return np.maximum(n_dep - cl_nut_n, 0.0)
