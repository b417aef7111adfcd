"""External-leaf (cuticular) resistance of SO2 after Erisman, van Pul and Wyers (1994).

An option of both gas schemes (``[dry] so2_cuticle = "erisman1994"``; default
``"scheme"``, the scheme's own cuticle).  In dry hours the scheme's dry cuticular path
of SO2 (Wesely 1989: r_lu with its low-temperature increment; Zhang et al. 2003: the
dry R_cut of SO2 with its cold factor) is replaced by the humidity-dependent
external-leaf resistance R_w of Erisman et al. (1994), fitted to SO2 flux
measurements over a Douglas-fir forest and a heathland (from memory):

.. math::

    R_w = 25000\\, e^{-0.0693\\, RH}\\ \\mathrm{s\\,m^{-1}}\\quad (RH < 81.3\\,\\%),\\qquad
    R_w = 0.58 \\times 10^{12}\\, e^{-0.278\\, RH}\\ \\mathrm{s\\,m^{-1}}\\quad
    (RH \\ge 81.3\\,\\%)

with RH the relative humidity of the air in percent, for surface temperatures at or
above -1 degC; below, the surfaces are frozen and R_w = 500 s/m (all constants *from
memory* of Erisman et al. 1994, not checked against the paper here; the two branches
meet at RH 81.3 %, 89.4 and 88.8 s/m, which supports the recalled constants).

RH: the met file's air relative humidity (at the measurement height), the quantity
the fit was made against (tower measurements of the air's humidity; a humidity at
the leaf surface would need the surface temperature, which the fit did not use).

Our rules (choices, not from the paper):

* only dry hours (``wet_kind`` 0): dew and rain keep the scheme's wet rules (Wesely:
  r_lu 100 s/m on dew, 50 s/m in rain; Zhang: its wet cuticle);
* only over vegetated receptors (:data:`workbench.drydep.codeposition.VEGETATED`:
  crops, grass, forests, moorland, wetland; the fit comes from a forest and a
  heathland) and only where the scheme has a cuticular path there (a finite dry
  cuticle: leaves in the scheme's view); water, bare land, urban, snow/ice and
  leafless hours keep the scheme's cuticle (Zhang's urban class has one of its own);
* R_w replaces the scheme's dry cuticle whole, its low-temperature rule included
  (Erisman's own is the frozen value below -1 degC); Zhang's snow on the leaves is
  still blended over it (a snow-covered leaf is not a cuticle);
* SO2 only: Zhang's other gases scaled from SO2's cuticle (NH3 alpha = 1, HNO3
  alpha = 10) keep the scheme's own;
* with ``so2_codeposition`` the co-deposition relation (:mod:`workbench.drydep.codeposition`)
  replaces SO2's whole non-stomatal resistance where it applies, so it wins there; in
  the other hours (no ratio, frozen, not vegetated) this cuticle stands.

Units: resistances [s m-1], relative humidity as a fraction [1] at the interface
(converted to % inside), temperature [K].

References
----------
Erisman, J. W., van Pul, A. and Wyers, P. (1994), Parametrization of surface
resistance for the quantification of atmospheric deposition of acidifying pollutants
and ozone, Atmos. Environ. 28, 2595-2607 (the R_w of SO2; from memory).
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from ..constants import ZERO_CELSIUS
from ..surface._array import is_xarray, where
from .codeposition import VEGETATED

#: Values of ``DryOptions.so2_cuticle``: the gas scheme's own dry cuticle of SO2, or
#: the humidity-dependent R_w of Erisman et al. (1994).
SO2_CUTICLES = ("scheme", "erisman1994")
#: R_w = A exp(-B RH[%]) below RH_SPLIT, A2 exp(-B2 RH[%]) at and above (Erisman et al.
#: 1994, from memory): A [s m-1], B [%-1], A2 [s m-1], B2 [%-1], RH_SPLIT [%].
RW_LOW_SCALE = 25000.0
RW_LOW_RATE = 0.0693
RW_HIGH_SCALE = 0.58e12
RW_HIGH_RATE = 0.278
RW_RH_SPLIT = 81.3
#: R_w of frozen surfaces [s m-1], below RW_FROZEN_BELOW [K] (Erisman et al. 1994, from
#: memory: 500 s/m below -1 degC).
RW_FROZEN = 500.0
RW_FROZEN_BELOW = ZERO_CELSIUS - 1.0
PERCENT = 100.0


def check_rule(rule: str) -> str:
    """`rule` when it is one of :data:`SO2_CUTICLES`, else a ValueError naming the option."""
    from ..errors import check_choice
    return check_choice("so2_cuticle", rule, SO2_CUTICLES)


def so2_external_leaf_resistance(relative_humidity, temperature):
    """External-leaf resistance of SO2 on dry surfaces, R_w [s m-1].

    Parameters
    ----------
    relative_humidity : array_like
        Relative humidity of the air, fraction (RH[%] = 100 x this). [1]
    temperature : array_like
        Air (taken as surface) temperature. [K]

    Returns
    -------
    array_like
        R_w [s m-1]; NaN where an input is NaN.

    Notes
    -----
    .. math:: R_w = 25000\\,e^{-0.0693 RH}\\ (RH < 81.3),\\quad
              0.58\\times10^{12}\\,e^{-0.278 RH}\\ (RH \\ge 81.3),\\quad
              500\\ (T < -1\\,^\\circ C)

    References
    ----------
    Erisman, van Pul and Wyers (1994), Atmos. Environ. 28, 2595-2607 (from memory).

    >>> round(float(so2_external_leaf_resistance(0.5, 283.15)), 1)
    781.8
    """
    rh = PERCENT * relative_humidity
    low = RW_LOW_SCALE * np.exp(-RW_LOW_RATE * rh)
    high = RW_HIGH_SCALE * np.exp(-RW_HIGH_RATE * rh)
    rw = where(rh < RW_RH_SPLIT, low, high)
    rw = where(temperature < RW_FROZEN_BELOW, RW_FROZEN, rw)
    return where(np.isnan(rh) | np.isnan(temperature), np.nan, rw)


def vegetated(land_use, like=None, receptor_dim="receptor"):
    """Receptors where the option may apply: our vegetated classes (bool).

    Parameters
    ----------
    land_use : str or array_like of str
        Our classes (an array of names broadcasting against the hourly arrays; a
        sequence along `receptor_dim` when `like` is a DataArray).
    like : array_like, optional
        An hourly input; when it is an xarray object the result is a DataArray along
        `receptor_dim`.
    receptor_dim : str
    """
    names = np.asarray(land_use, dtype=object)
    veg = np.isin(names.astype(str), VEGETATED) if names.size else np.zeros(names.shape, bool)
    if is_xarray(like) and names.ndim == 1:
        return xr.DataArray(veg, dims=receptor_dim)
    return veg


def dry_cuticle(scheme_dry, relative_humidity, temperature, wet_kind, vegetated=True):
    """The dry cuticle of SO2 under the option: R_w where it applies, else the scheme's.

    Parameters
    ----------
    scheme_dry : array_like
        The scheme's cuticular path of SO2 as it stands (wet rules and cold rule
        included); inf where the scheme has no cuticle. [s m-1]
    relative_humidity : array_like
        Air, fraction. [1]
    temperature : array_like
        [K]
    wet_kind : array_like
        0 dry, 1 dew, 2 rain (NaN unknown). [-]
    vegetated : array_like of bool
        The receptors of our vegetated classes (:func:`vegetated`).

    Returns
    -------
    array_like
        [s m-1]: :func:`so2_external_leaf_resistance` in dry hours over vegetated
        receptors where the scheme's cuticle is finite; `scheme_dry` elsewhere (NaN
        stays NaN).
    """
    rw = so2_external_leaf_resistance(relative_humidity, temperature)
    use = (wet_kind == 0) & np.isfinite(scheme_dry) & vegetated
    return where(use, rw, scheme_dry)
