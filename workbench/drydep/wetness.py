"""Is the receptor surface wet? From the met file, or by a documented rule.

The wetness is a large lever on dry sulfur: Wesely's upper-canopy resistance for
SO2 falls from thousands of s/m to about 100 s/m when leaves are wet.

Inferred rule (three-valued: 1 wet, 0 dry, NaN unknown):

* rain: precipitation > 0 mm in this hour or the previous one (common practice);
  where the previous hour's rain is unknown (the record's first hour, or an hour
  after a missing one) this hour's rain alone decides, and a dry outcome is marked
  (``wetness_source`` 5), so the hour keeps a modelled Vd instead of being lost;
  an hour whose own rain is missing stays unknown (NaN);
* dew: the saturation deficit in specific humidity below 0.3 g/kg per m/s of
  friction velocity, q_s - q < 0.3e-3 u* (Zhang, Brook and Vet 2003, Atmos. Chem.
  Phys. 3, 2067-2082, section 2; from memory, with q in g/kg);
* wet if either is true, dry if both are known false.

The saturation humidity q_s is taken (``DryOptions.dew_rule``):

* ``"surface_temperature"`` (default, both schemes): at the surface temperature, as
  Zhang, Brook and Vet (2003) publish the rule, and for Wesely (1989), who publishes
  none, as the physically based rule; the surface temperature is found from the sensible heat
  flux over the receptor by the bulk transfer relation
  H = rho c_p (T_s - T_a)/(R_a + R_b,h) (e.g. Garratt 1992, The Atmospheric Boundary
  Layer, ch. 3, from memory), so that a surface cooling at night below the air
  temperature gathers dew although the air is not saturated;
* ``"air_temperature"``: at the air temperature, i.e. a threshold on relative
  humidity alone (dew only above about 97-99.8 % RH); the rule of this workbench
  before the surface rule, kept as an option;
* ``"scheme"``: the rule the gas scheme module names (its ``DEW_RULE``): Zhang et
  al. (2003) the surface rule; Wesely (1989), which publishes none, the air rule (the
  default before the surface rule became the default for both).

Kinds, as Wesely (1989) treats them: 0 dry, 1 dew, 2 rain.
"""
from __future__ import annotations

import numpy as np

from ..constants import CP_DRY_AIR, MOLAR_MASS_DRY_AIR, MOLAR_MASS_WATER, VON_KARMAN
from ..surface._array import where
from ..surface.air import saturation_vapour_pressure

#: Rain in the hour above this depth makes the surface wet [mm] (common practice).
RAIN_THRESHOLD = 0.0
#: Dew when (q_s - q) < DEW_COEFFICIENT * u* [kg kg-1 per m s-1]; Zhang et al. (2003)
#: (from memory).
DEW_COEFFICIENT = 0.3e-3
#: Dew rules of ``DryOptions.dew_rule``.
DEW_RULES = ("scheme", "surface_temperature", "air_temperature")
#: Prefactor of the quasi-laminar resistance for heat R_b,h = 2/(kappa u*) (Sc = Pr;
#: Hicks et al. 1987, as for gases in :mod:`workbench.drydep.gas`) [-].
RB_HEAT_PREFACTOR = 2.0
#: Codes of ``wetness_source``, one row each: (code, CF ``flag_meanings`` word, words
#: in a sentence).  The CF words follow CF 1.8 section 3.5 (blank-separated, no blanks
#: inside a word); -1 is an hour whose wetness is unknown (an input missing), as
#: ``Study.velocities`` holds it in memory (int8, :func:`source_codes`) and velocities.nc
#: writes it.
SOURCE_TABLE = (
    (-1, "unknown", None),
    (0, "met_file_surface_wet", "met file (surface_wet)"),
    (1, "inferred_rain", "inferred: rain"),
    (2, "inferred_dew", "inferred: dew"),
    (3, "inferred_dry", "inferred: dry"),
    (4, "set_by_wetness_rule_option", "set by the wetness_rule option"),
    (5, "inferred_dry_previous_hour_rain_unknown",
     "inferred: dry, from this hour's rain alone (previous hour's rain unknown)"),
)
#: Codes of ``wetness_source`` in words (from :data:`SOURCE_TABLE`; no -1).
SOURCE = {code: words for code, _, words in SOURCE_TABLE if words is not None}
#: The codes of ``wetness_source`` as CF ``flag_meanings`` words, -1 for an hour whose
#: wetness is unknown, as velocities.nc writes them (:func:`source_flags`; from
#: :data:`SOURCE_TABLE`).
SOURCE_FLAGS = {code: flag for code, flag, _ in SOURCE_TABLE}

def source_codes(source):
    """``wetness_source`` as int8 codes, -1 where the wetness is unknown.

    Parameters
    ----------
    source : array_like
        Codes of :data:`SOURCE` as :func:`wetness` gives them (float, NaN where the
        wetness is unknown), or int8 codes already (returned as they are). [1]

    Returns
    -------
    codes : array_like of int8
        The input's type (numpy, dask or xarray). [1]

    >>> source_codes(np.array([5.0, np.nan, 1.0])).tolist()
    [5, -1, 1]
    """
    if np.dtype(source.dtype).kind in "iu":
        return source.astype(np.int8)
    return where(np.isnan(source), -1, source).astype(np.int8)


def source_attrs() -> dict:
    """The CF flag attributes of ``wetness_source`` (CF 1.8 section 3.5): ``flag_values``
    (-1 unknown; a tuple of ints, which attributes of blocks compare as one value) and
    ``flag_meanings``; the in-memory variable has them too, so that a pair not computed
    is filled with -1 (:func:`workbench.pairfill.fill_value`)."""
    return {"flag_values": tuple(sorted(SOURCE_FLAGS)),
            "flag_meanings": " ".join(SOURCE_FLAGS[k] for k in sorted(SOURCE_FLAGS))}


def source_flags(source):
    """``wetness_source`` as a CF flag variable: int8 codes (-1 where unknown) and
    their attributes.

    Parameters
    ----------
    source : array_like
        int8 codes (-1 unknown), or codes of :data:`SOURCE` as floats with NaN where the
        wetness is unknown. [1]

    Returns
    -------
    codes : ndarray of int8
    attrs : dict
        ``long_name``, ``flag_values`` and ``flag_meanings`` (CF 1.8 section 3.5).

    >>> codes, attrs = source_flags(np.array([5.0, np.nan, 1.0]))
    >>> codes.tolist(), attrs["flag_meanings"].split()[codes[0] + 1]
    ([5, -1, 1], 'inferred_dry_previous_hour_rain_unknown')
    """
    return (np.asarray(source_codes(np.asarray(source))),
            {"long_name": "source of the surface wetness used", **source_attrs(),
             "flag_values": np.array(sorted(SOURCE_FLAGS), np.int8)})


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

    Where the previous hour's rain is unknown (NaN: the record's first hour, which has
    none, or an hour after a missing one) this hour's rain alone decides: no rain now
    counts as dry.  An hour whose own rain is unknown stays NaN.  The rule does not
    look past the previous hour, so a record cut anywhere along time gives the same
    value as long as each piece is handed its true previous hour
    (:func:`previous_unknown` marks the hours the assumption touches).

    Parameters
    ----------
    precipitation, previous_precipitation : array_like
        Depth in the hour. [mm]

    Notes
    -----
    Why "dry" and not "unknown": an unknown previous hour can only turn a dry hour
    wet through rain that stopped within the hour before; losing the hour's Vd
    altogether (and filling it from a diurnal mean) is a larger error than taking
    the surface as dry, and a rain that is still falling is seen in the hour itself
    (common practice; the choice is documented in docs/methods_dry.md section 8).
    """
    now = as_tri(precipitation > RAIN_THRESHOLD, precipitation)
    before = as_tri(previous_precipitation > RAIN_THRESHOLD, previous_precipitation)
    before = where(np.isnan(before), 0.0, before)
    return tri_or(now, before)


#: One hour [ns], the step from an hour to the next.
HOUR = np.timedelta64(3600, "s")


def previous_precipitation(precipitation, times):
    """The rain of the hour before each hour along the last axis: NaN at the first hour
    and where the row before is not the hour before (a gap in the time axis) [mm].

    Parameters
    ----------
    precipitation : ndarray
        (..., time) depth in the hour. [mm]
    times : ndarray of datetime64
        (time,) end of each hour.

    >>> t = np.array(["2021-01-01T01", "2021-01-01T02", "2021-01-01T04"], "datetime64[ns]")
    >>> previous_precipitation(np.array([0.5, 0.0, 0.0]), t).tolist()
    [nan, 0.5, nan]
    """
    p = np.asarray(precipitation, float)
    prev = np.concatenate([np.full(p.shape[:-1] + (1,), np.nan), p[..., :-1]], axis=-1)
    times = np.asarray(times).astype("datetime64[ns]")
    follows = np.r_[False, np.diff(times) == HOUR]
    return np.where(follows, prev, np.nan)


def previous_unknown(precipitation, previous_precipitation):
    """True where this hour's rain is known and the previous hour's is not: the hours
    :func:`rain_wet` decides on this hour's rain alone.

    Parameters
    ----------
    precipitation, previous_precipitation : array_like
        Depth in the hour. [mm]
    """
    return ~np.isnan(precipitation) & np.isnan(previous_precipitation)


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


def wetness(rule, rain, dew, given=None, assumed=None):
    """Surface wetness, its kind and its source.

    Parameters
    ----------
    rule : {"met", "inferred", "always_dry", "always_wet"}
    rain, dew : array_like
        Outputs of :func:`rain_wet` and :func:`dew_wet` (1/0/NaN).
    given : array_like, optional
        ``surface_wet`` of the met file (1/0/NaN).
    assumed : array_like of bool, optional
        Hours whose rain was judged without the previous hour
        (:func:`previous_unknown`): an inferred dry outcome there has source 5.

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
    if assumed is not None:
        src_inf = where(assumed & (src_inf == 3.0), 5.0, src_inf)
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


def resolve_dew_rule(rule: str, scheme) -> str:
    """The dew rule in force: `rule`, or the scheme's ``DEW_RULE`` when it is ``"scheme"``.

    Parameters
    ----------
    rule : {"scheme", "surface_temperature", "air_temperature"}
    scheme : module
        A gas scheme (see :mod:`workbench.drydep.gas`).
    """
    if rule not in DEW_RULES:
        raise ValueError(f"unknown dew_rule {rule!r}; use one of {DEW_RULES}")
    return getattr(scheme, "DEW_RULE", "air_temperature") if rule == "scheme" else rule


def surface_temperature(temperature, sensible_heat_flux, ra, ustar, density):
    """Surface temperature from the sensible heat flux, T_s = T_a + H (R_a + R_b,h)/(rho c_p) [K].

    Parameters
    ----------
    temperature : array_like
        Air temperature. [K]
    sensible_heat_flux : array_like
        H over the surface, positive upward. [W m-2]
    ra : array_like
        Aerodynamic resistance. [s m-1]
    ustar : array_like
        [m s-1]
    density : array_like
        Air density. [kg m-3]

    Returns
    -------
    ts : array_like
        [K]

    Notes
    -----
    Bulk transfer of heat through R_a and the quasi-laminar R_b,h = 2/(kappa u*)
    (e.g. Garratt 1992, ch. 3; Hicks et al. 1987; from memory).

    By hand: R_b,h = 2/(0.41 * 0.41) = 11.897 s/m; 280 - 24 (51.897)/(1.2 * 1004.67):

    >>> round(float(surface_temperature(280.0, -24.0, 40.0, 0.41, 1.2)), 3)
    278.967
    """
    rbh = RB_HEAT_PREFACTOR / (VON_KARMAN * ustar)
    return temperature + sensible_heat_flux * (ra + rbh) / (density * CP_DRY_AIR)


def surface_humidity_deficit(surface_temp, temperature, relative_humidity, pressure):
    """q_s(T_s) - q: saturation at the surface minus the air's humidity [kg kg-1].

    Parameters
    ----------
    surface_temp, temperature : array_like
        Surface and air temperature. [K]
    relative_humidity : array_like
        Of the air, fraction. [1]
    pressure : array_like
        [Pa]

    Notes
    -----
    :math:`q \\approx \\varepsilon e / p`, e = RH e_s(T_a); negative when the surface is
    below the dew point.
    """
    eps = MOLAR_MASS_WATER / MOLAR_MASS_DRY_AIR
    return eps * (saturation_vapour_pressure(surface_temp)
                  - relative_humidity * saturation_vapour_pressure(temperature)) / pressure
