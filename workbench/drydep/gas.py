"""Gas dry deposition: quasi-laminar resistance Rb, Vd, and the scheme interface.

Vd = 1 / (Ra + Rb + Rc).  Ra comes from :mod:`workbench.surface.aerodynamic`; Rb
from the Schmidt number (below); Rc from a surface-resistance scheme.

The scheme interface
--------------------
A scheme is a module with

* ``NAME`` (str), ``REFERENCE`` (str);
* ``PATHS``: tuple of the component names it returns besides ``"rc"``;
* ``surface_resistance(gas, state) -> dict`` of arrays: ``"rc"`` [s m-1] and each
  name of ``PATHS``, where ``state`` is a :class:`CanopyState`;
* optionally ``surface_resistances(gases, state) -> {gas: dict}``, the same for
  several gases at once (sharing the work that does not depend on the gas);
  :func:`surface_resistances` falls back to one call per gas.

* optionally ``SHARED_PATHS`` (the paths that do not depend on the gas, written once),
  ``PATH_NAMES`` (path -> long name) and ``DEW_RULE`` (the dew rule the scheme
  publishes, see :mod:`workbench.drydep.wetness`).
* optionally ``READS``: the optional :class:`CanopyState` fields the scheme reads
  (default: all); :func:`workbench.drydep.velocities` computes the hourly ``lai`` and
  ``cos_zenith`` only for a scheme that reads them (None otherwise).
* optionally ``NUMPY_PATH``: the module path of the same equations arranged for
  plain numpy input (a ``surface_resistances(gases, state)`` of its own, equal to the
  scheme's to rounding); :func:`surface_resistances` uses it when no array of the
  state is an xarray or dask object.

Schemes are registered in :data:`SCHEMES`; each is a module plus one line here.  NH3 is deposition only: no scheme
returns a compensation point yet, and :func:`deposition_velocity` has room for one
(``compensation`` below) without changing its callers.
"""
from __future__ import annotations

from dataclasses import dataclass, fields
import importlib

import numpy as np
import xarray as xr

from ..constants import PRANDTL_AIR, VON_KARMAN, ZERO_CELSIUS
from ..species import diffusivity
from ..surface.air import kinematic_viscosity

#: Scheme name -> module path (imported on first use).
SCHEMES = {"wesely1989": "workbench.drydep.wesely1989",
           "zhang2003": "workbench.drydep.zhang2003"}
#: The Rb prefactor 2 of Wesely and Hicks (1977) / Hicks et al. (1987) [-].
RB_PREFACTOR = 2.0
#: Exponent of (Sc/Pr) in Rb [-] (Hicks et al. 1987).
RB_EXPONENT = 2.0 / 3.0


@dataclass(frozen=True)
class CanopyState:
    """What a surface-resistance scheme needs to know about the surface and the hour.

    All arrays broadcast against each other (e.g. site x receptor x time).

    Attributes
    ----------
    land_use : sequence of str
        Our class of each receptor (along ``receptor_dim`` when arrays are DataArrays).
    seasonal_category : array_like
        Wesely's seasonal category 1-5 (NaN unknown). [-]
    solar_radiation : array_like
        Global radiation. [W m-2]
    temperature : array_like
        Air (taken as surface) temperature. [K]
    wet_kind : array_like
        0 dry, 1 dew, 2 rain (NaN unknown). [-]
    terrain_slope : array_like
        [degree]
    ustar : array_like
        Friction velocity over the receptor (for schemes that need it). [m s-1]
    lai : array_like or None
        Leaf-area index (for schemes that need it). [m2 m-2]
    receptor_dim : str
        Name of the receptor dimension when the arrays are DataArrays.
    relative_humidity : array_like or None
        Relative humidity of the air, fraction. [1]
    cos_zenith : array_like or None
        Cosine of the solar zenith angle (sine of the elevation; <= 0 at night). [-]
    snow_cover : array_like or None
        Snow-covered fraction of the ground, 0-1 (NaN or None: no snow known). [1]
    hno3_rc_floor : bool
        Apply the HNO3 surface-resistance floor (:func:`nitric_acid_floor`).
    nh3_so2_ratio : array_like or None
        Molar ratio NH3/SO2 of the air in each hour (NaN unknown) for the SO2-NH3
        co-deposition option; None: off (:mod:`workbench.drydep.codeposition`). [1]
    so2_cuticle : str
        Dry cuticle of SO2: ``"scheme"`` (the scheme's own) or ``"erisman1994"`` (the
        humidity-dependent R_w of :mod:`workbench.drydep.erisman1994` in dry hours).
    """

    land_use: tuple
    seasonal_category: object
    solar_radiation: object
    temperature: object
    wet_kind: object
    terrain_slope: object = 0.0
    ustar: object = None
    lai: object = None
    receptor_dim: str = "receptor"
    relative_humidity: object = None
    cos_zenith: object = None
    snow_cover: object = None
    hno3_rc_floor: bool = True
    nh3_so2_ratio: object = None
    so2_cuticle: str = "scheme"


#: Least Rc of HNO3, max(10, -2 T[degC]) [s m-1], [s m-1 K-1]: Erisman, van Pul and
#: Wyers (1994), Atmos. Environ. 28, 2595-2607 (from memory).  The other position in
#: the literature takes Rc(HNO3) = 0, uptake limited by Ra + Rb only (Wesely 1989,
#: p. 1296; Huebert and Robert 1985, J. Geophys. Res. 90, 2085; from memory).
HNO3_RC_FLOOR = 10.0
HNO3_RC_COLD_SLOPE = 2.0


def nitric_acid_floor(temperature):
    """Least Rc of HNO3, max(10, -2 Ts[degC]) [s m-1]; Erisman et al. (1994) (from memory).

    Parameters
    ----------
    temperature : array_like
        [K]

    >>> float(nitric_acid_floor(263.15))
    20.0
    """
    return np.maximum(HNO3_RC_FLOOR, HNO3_RC_COLD_SLOPE * (ZERO_CELSIUS - temperature))


def get_scheme(name: str):
    """The surface-resistance scheme module called `name`."""
    try:
        return importlib.import_module(SCHEMES[name])
    except KeyError:
        raise ValueError(f"unknown gas scheme {name!r}; known: {', '.join(SCHEMES)}") from None


def surface_resistances(scheme, gases, state) -> dict:
    """Rc and its paths of several gases from a scheme module [s m-1].

    Parameters
    ----------
    scheme : module
        A surface-resistance scheme (see the module docstring).
    gases : sequence of str
    state : CanopyState

    Returns
    -------
    dict
        gas -> the dict of ``scheme.surface_resistance(gas, state)``.
    """
    fast = getattr(scheme, "NUMPY_PATH", None)
    if fast and _plain_numpy(state):
        return importlib.import_module(fast).surface_resistances(tuple(gases), state)
    if hasattr(scheme, "surface_resistances"):
        return scheme.surface_resistances(tuple(gases), state)
    return {g: scheme.surface_resistance(g, state) for g in gases}


def _plain_numpy(state) -> bool:
    """True when no array of `state` is an xarray object or a dask (chunked) array."""
    arrays = [getattr(state, f.name) for f in fields(state) if f.name not in (
        "land_use", "receptor_dim", "hno3_rc_floor", "so2_cuticle")]
    return not any(isinstance(a, (xr.DataArray, xr.Dataset)) or hasattr(a, "chunks")
                   for a in arrays)


def schmidt_number(gas: str, temperature, pressure, viscosity=None):
    """Schmidt number Sc = nu / D of a gas in air [-].

    Parameters
    ----------
    gas : str
        Species name.
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]
    viscosity : array_like, optional
        Kinematic viscosity of air nu, when already known. [m2 s-1]

    Returns
    -------
    sc : array_like
        [-]
    """
    nu = kinematic_viscosity(temperature, pressure) if viscosity is None else viscosity
    return nu / diffusivity(gas, temperature, pressure)


def quasi_laminar_resistance(gas: str, ustar, temperature, pressure):
    """Quasi-laminar (sublayer) resistance Rb of a gas [s m-1].

    Parameters
    ----------
    gas : str
        Species name (its molecular diffusivity comes from :mod:`workbench.species`).
    ustar : array_like
        [m s-1]
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]

    Returns
    -------
    rb : array_like
        [s m-1]

    Notes
    -----
    .. math:: R_b = \\frac{2}{\\kappa u_*}\\left(\\frac{Sc}{Pr}\\right)^{2/3}

    References
    ----------
    Hicks, B. B., Baldocchi, D. D., Meyers, T. P., Hosker, R. P. and Matt, D. R. (1987),
    Water Air Soil Pollut. 36, 311-330; Wesely (1989), Atmos. Environ. 23, 1293,
    Eq. (1) and text.
    """
    return quasi_laminar_resistances((gas,), ustar, temperature, pressure)[gas]


def quasi_laminar_resistances(gases, ustar, temperature, pressure) -> dict:
    """:func:`quasi_laminar_resistance` of several gases [s m-1].

    The kinematic viscosity of air and 2/(kappa u*) are computed once for all gases;
    the formula is that of :func:`quasi_laminar_resistance`, with Sc of
    :func:`schmidt_number`.

    Parameters
    ----------
    gases : sequence of str
    ustar : array_like
        [m s-1]
    temperature : array_like
        [K]
    pressure : array_like
        [Pa]

    Returns
    -------
    dict
        gas -> Rb [s m-1].
    """
    nu = kinematic_viscosity(temperature, pressure)
    scale = RB_PREFACTOR / (VON_KARMAN * ustar)
    return {g: scale * (schmidt_number(g, temperature, pressure, viscosity=nu) / PRANDTL_AIR)
            ** RB_EXPONENT for g in gases}


def deposition_velocity(ra, rb, rc, compensation=None):
    """Dry deposition velocity of a gas Vd = 1 / (Ra + Rb + Rc) [m s-1].

    Parameters
    ----------
    ra, rb, rc : array_like
        Resistances. [s m-1]
    compensation : None
        Reserved for a bidirectional (compensation-point) treatment of NH3; only
        None (deposition only) is implemented.

    Returns
    -------
    vd : array_like
        [m s-1]

    References
    ----------
    Wesely, M. L. and Hicks, B. B. (1977), J. Air Pollut. Control Assoc. 27, 1110.

    >>> deposition_velocity(50.0, 20.0, 30.0)
    0.01
    """
    if compensation is not None:
        raise NotImplementedError("a compensation-point treatment is not implemented")
    return 1.0 / (ra + rb + rc)
