"""Is the receptor surface wet? From the met file, or by a documented rule.

The wetness is a large lever on dry sulfur: Wesely's upper-canopy resistance for
SO2 falls from thousands of s/m to about 100 s/m when leaves are wet.

Inferred rule (three-valued: 1 wet, 0 dry, NaN unknown):

* rain: precipitation > 0 mm in this hour or the previous one (common practice);
* dew: the saturation deficit in specific humidity below 0.3 g/kg per m/s of
  friction velocity, q_s - q < 0.3e-3 u* (Zhang, Brook and Vet 2003, Atmos. Chem.
  Phys. 3, 2067-2082, section 2; from memory, with q in g/kg);
* wet if either is true, dry if both are known false.

Kinds, as Wesely (1989) treats them: 0 dry, 1 dew, 2 rain.
"""
from __future__ import annotations

import numpy as np

from ..surface._array import where

#: Rain in the hour above this depth makes the surface wet [mm] (common practice).
RAIN_THRESHOLD = 0.0
#: Dew when (q_s - q) < DEW_COEFFICIENT * u* [kg kg-1 per m s-1]; Zhang et al. (2003)
#: (from memory).
DEW_COEFFICIENT = 0.3e-3
#: Codes of ``wetness_source``.
SOURCE = {0: "met file (surface_wet)", 1: "inferred: rain", 2: "inferred: dew",
          3: "inferred: dry", 4: "set by the wetness_rule option"}


def tri_or(a, b):
    """Three-valued OR of 0/1/NaN arrays: 1 if either is 1, 0 if both 0, else NaN."""
    return where((a == 1) | (b == 1), 1.0, where((a == 0) & (b == 0), 0.0, np.nan))


def as_tri(condition, *inputs):
    """A boolean condition as 1/0, NaN where any input is NaN."""
    out = where(condition, 1.0, 0.0)
    for x in inputs:
        out = where(np.isnan(x), np.nan, out)
    return out


def rain_wet(precipitation, previous_precipitation):
    """1 where it rained this or the previous hour, 0 if neither, NaN if unknown.

    Parameters
    ----------
    precipitation, previous_precipitation : array_like
        Depth in the hour. [mm]
    """
    now = as_tri(precipitation > RAIN_THRESHOLD, precipitation)
    before = as_tri(previous_precipitation > RAIN_THRESHOLD, previous_precipitation)
    return tri_or(now, before)


def dew_wet(humidity_deficit, ustar):
    """1 where dew is inferred, 0 where not, NaN if unknown.

    Parameters
    ----------
    humidity_deficit : array_like
        q_s - q. [kg kg-1]
    ustar : array_like
        [m s-1]

    Notes
    -----
    .. math:: q_s - q < 0.3\\times10^{-3}\\,u_*

    Zhang, Brook and Vet (2003), Atmos. Chem. Phys. 3, 2067 (from memory).
    """
    return as_tri(humidity_deficit < DEW_COEFFICIENT * ustar, humidity_deficit, ustar)


def wetness(rule, rain, dew, given=None):
    """Surface wetness, its kind and its source.

    Parameters
    ----------
    rule : {"met", "inferred", "always_dry", "always_wet"}
    rain, dew : array_like
        Outputs of :func:`rain_wet` and :func:`dew_wet` (1/0/NaN).
    given : array_like, optional
        ``surface_wet`` of the met file (1/0/NaN).

    Returns
    -------
    wet : array_like
        1/0/NaN.
    kind : array_like
        0 dry, 1 dew, 2 rain, NaN unknown (a given wet surface counts as rain
        when it rained this or the previous hour, else as dew).
    source : array_like
        Codes of :data:`SOURCE`.
    """
    inferred = tri_or(rain, dew)
    src_inf = where(rain == 1, 1.0, where(dew == 1, 2.0, where(inferred == 0, 3.0, np.nan)))
    shape = where(np.isnan(inferred), 0.0, 0.0)  # zeros of the broadcast shape
    if rule in ("always_dry", "always_wet"):
        wet = shape + (1.0 if rule == "always_wet" else 0.0)
        src = shape + 4.0
    elif rule == "met" and given is not None:
        has = ~np.isnan(given)
        wet = where(has, np.minimum(given, 1.0), inferred)
        src = where(has, 0.0, src_inf)
    else:
        wet, src = inferred, src_inf
    kind = where(wet == 1, where(rain == 1, 2.0, 1.0), where(wet == 0, 0.0, np.nan))
    return wet, kind, src
