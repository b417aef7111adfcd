"""Checks of precipitation chemistry, one pure function per check.

Each function takes arrays (float, numpy, xarray, dask-backed xarray) and returns the
same kind; :func:`workbench.wet.screen` applies them to a sample Dataset and records
every decision.

Concentrations are amounts of the ion [mol m-3] (1 mol m-3 = 1000 umol/L); the
ion balance and the conductivity work in the trade unit ueq/L.

References
----------
* WMO (2004), Manual for the GAW Precipitation Chemistry Programme: Guidelines,
  Data Quality Objectives and Standard Operating Procedures, M. A. Allan (ed.),
  GAW Report No. 160, WMO TD No. 1251, Section 8 (ion balance and conductivity
  acceptance; tiers recalled from memory).
* CRC Handbook of Chemistry and Physics, "Ionic conductivity and diffusion at
  infinite dilution" (limiting equivalent conductances at 25 degC, from
  :mod:`workbench.species`, recalled from memory).
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from .. import species as _species
from ..units import ureg

#: Cations and anions of the ion balance (PO4 is left out: its charge in rain
#: depends on pH and it is normally near the detection limit; common practice).
BALANCE_CATIONS = ("H", "NH4", "Na", "K", "Ca", "Mg")
BALANCE_ANIONS = ("SO4", "NO3", "Cl", "HCO3")

#: umol/L per mol m-3 (= 1000), from the unit registry.
UMOL_L_PER_MOL_M3 = ureg.Quantity(1.0, "mol/m**3").to("umol/L").magnitude
#: mol m-3 per mol/L (= 1000), from the unit registry.
MOL_M3_PER_MOLAR = ureg.Quantity(1.0, "mol/L").to("mol/m**3").magnitude
#: uS/cm per (S cm2 eq-1 x ueq/L) (= 1e-3), from the unit registry.
CONDUCTIVITY_FACTOR = (ureg.Quantity(1.0, "S*cm**2/mol") *
                       ureg.Quantity(1.0, "umol/L")).to("uS/cm").magnitude

#: Values given to a censored result, as a multiple of its detection limit (by
#: definition of the choices of `detection_limit`).
CENSORED_FACTOR = {"half": 0.5, "limit": 1.0, "zero": 0.0}

#: Relative tolerance of every comparison with a threshold [1] (our choice): a value
#: equal to its threshold in the decimals typed (5.4 mm / 4.5 mm = 1.2; 2.4 of 3.2 mm
#: = 75 %) is on the side the rule names, although binary floating point may compute it
#: a few units in the last place beyond (1.2000000000000002, 0.7499999999999999).
#: 1e-9 is far below any measured difference and far above the rounding of the sums.
THRESHOLD_RTOL = 1e-9


def _slack(threshold):
    """Rounding allowance of a threshold [unit of `threshold`]."""
    return THRESHOLD_RTOL * np.abs(threshold)


def exceeds(value, limit):
    """True where `value` is above `limit` by more than rounding [bool].

    ``value > limit (1 + THRESHOLD_RTOL)`` for a positive limit; NaN gives False.

    >>> bool(exceeds(5.4 / 4.5, 1.2)), bool(exceeds(1.21, 1.2))
    (False, True)
    """
    with np.errstate(invalid="ignore"):
        return value > limit + _slack(limit)


def falls_short(value, minimum):
    """True where `value` is below `minimum` by more than rounding [bool]; NaN gives False.

    >>> bool(falls_short(2.4 / (2.4 + 0.8), 0.75))
    False
    """
    with np.errstate(invalid="ignore"):
        return value < minimum - _slack(minimum)


def at_least(value, threshold):
    """True where `value` >= `threshold`, equality to rounding included [bool].

    >>> bool(at_least(0.009999999999999998, 0.010))
    True
    """
    with np.errstate(invalid="ignore"):
        return value >= threshold - _slack(threshold)


def at_most(value, threshold):
    """True where `value` <= `threshold`, equality to rounding included [bool].

    >>> bool(at_most(0.2, 1.0 - 0.8))
    True
    """
    with np.errstate(invalid="ignore"):
        return value <= threshold + _slack(threshold)


def outside_band(value, low, high):
    """True where `value` lies below `low` or above `high` by more than rounding [bool].

    A value on a bound in the decimals typed is inside the band (the gauge comparison's
    factor of two: met 2.0 mm of gauge 1.0 mm passes, although summed hours may give
    2.0000000000000004); NaN gives False.

    >>> outside_band(np.array([2.0000000000000004, 0.49999999999999994, 2.01, 0.49]),
    ...              0.5, 2.0).tolist()
    [False, False, True, True]
    """
    return falls_short(value, low) | exceeds(value, high)


def _is_xr(*args) -> bool:
    return any(isinstance(a, (xr.DataArray, xr.Dataset)) for a in args)


def _where(cond, a, b):
    """np.where that keeps xarray objects (and dask) as they are."""
    if _is_xr(cond, a, b):
        return xr.where(cond, a, b)
    out = np.where(cond, a, b)
    return out if np.ndim(out) else out.item()


def hydrogen_from_pH(pH):
    """Free hydrogen ion from pH [mol m-3].

    Parameters
    ----------
    pH : array_like
        pH [1] (the activity is taken as the concentration; common practice for
        dilute precipitation).

    Returns
    -------
    array_like
        Amount of H+. [mol m-3]

    Notes
    -----
    .. math:: [\\mathrm{H^+}] = 10^{-\\mathrm{pH}}\\ \\mathrm{mol\\,L^{-1}}

    >>> round(hydrogen_from_pH(4.0), 6)
    0.1
    """
    return 10.0 ** (-pH) * MOL_M3_PER_MOLAR


def pH_from_hydrogen(hydrogen):
    """pH [1] of a free hydrogen ion amount [mol m-3]; NaN where it is not positive.

    >>> round(float(pH_from_hydrogen(0.055)), 3)
    4.26
    """
    h = _where(hydrogen > 0, hydrogen, np.nan)
    return -np.log10(h / MOL_M3_PER_MOLAR)


def ueq_per_litre(amount, ion: str):
    """Equivalent concentration [ueq/L] of an ion given as amount [mol m-3].

    >>> round(float(ueq_per_litre(0.01, "SO4")), 9)
    20.0
    """
    return amount * _species.get(ion).eq_per_mol * UMOL_L_PER_MOL_M3


def ion_sums(equivalents):
    """Sums of cations and anions [ueq/L].

    Parameters
    ----------
    equivalents : mapping of str to array_like
        Equivalent concentrations of the ions of the balance that were measured
        (keys from :data:`BALANCE_CATIONS` and :data:`BALANCE_ANIONS`). [ueq/L]

    Returns
    -------
    cations, anions : array_like
        CE and AN; NaN where any measured ion is NaN. [ueq/L]
    """
    cat = [equivalents[k] for k in BALANCE_CATIONS if k in equivalents]
    an = [equivalents[k] for k in BALANCE_ANIONS if k in equivalents]
    if not cat or not an:
        raise ValueError("the ion balance needs at least one cation and one anion")
    return sum(cat[1:], cat[0]), sum(an[1:], an[0])


def ion_difference(cations, anions):
    """Ion difference ID [%].

    Parameters
    ----------
    cations, anions : array_like
        CE and AN. [ueq/L]

    Notes
    -----
    .. math:: ID = 100\\,\\frac{CE - AN}{CE + AN}

    (WMO GAW Report No. 160, 2004, Section 8, from memory).

    >>> float(ion_difference(110.0, 90.0))
    10.0
    """
    total = cations + anions
    return 100.0 * (cations - anions) / _where(total > 0, total, np.nan)


def tier_limit(value, tiers):
    """Allowed absolute difference [%] for each value from tiered acceptance ranges.

    Parameters
    ----------
    value : array_like
        The quantity the tiers are set on (CE + AN [ueq/L], or measured
        conductivity [uS cm-1]).
    tiers : sequence of (bound, limit)
        Increasing upper bounds (inclusive) with the allowed |difference| [%] up
        to each; the last bound is infinite.

    Returns
    -------
    array_like
        Allowed |difference| [%]; NaN where `value` is NaN.  A value equal to a bound
        (to :data:`THRESHOLD_RTOL`) belongs to the tier the bound closes.

    >>> tier_limit(np.array([20.0, 50.0, 50.1, 600.0]), ((50, 60), (100, 30), (500, 15), (np.inf, 10))).tolist()
    [60.0, 60.0, 30.0, 10.0]
    """
    bounds = np.array([b for b, _ in tiers], dtype=float)
    bounds = bounds + _slack(bounds)
    limits = np.array([lim for _, lim in tiers], dtype=float)

    def lookup(x):
        x = np.asarray(x, dtype=float)
        idx = np.clip(np.searchsorted(bounds, x, side="left"), 0, len(limits) - 1)
        return np.where(np.isfinite(x), limits[idx], np.nan)

    if _is_xr(value):
        return xr.apply_ufunc(lookup, value, dask="parallelized", output_dtypes=[float])
    out = lookup(value)
    return out if np.ndim(out) else out.item()


def conductivity_calculated(equivalents):
    """Conductivity calculated from the ions [uS cm-1].

    Parameters
    ----------
    equivalents : mapping of str to array_like
        Equivalent concentrations of ions with a limiting conductance in
        :mod:`workbench.species` (others are ignored). [ueq/L]

    Returns
    -------
    array_like
        [uS cm-1] at 25 degC; NaN where any given ion is NaN.

    Notes
    -----
    .. math:: \\kappa = 10^{-3} \\sum_i \\lambda_i^0 c_i

    with :math:`\\lambda_i^0` [S cm2 eq-1] the limiting equivalent conductances at
    25 degC (CRC Handbook of Chemistry and Physics, from memory) and :math:`c_i`
    [ueq/L].  Infinite-dilution values overestimate a real solution slightly
    (about 2 % at 1 mmol/L KCl).

    >>> round(float(conductivity_calculated({"H": 100.0, "SO4": 100.0})), 3)
    42.965
    """
    terms = [_species.get(k).conductance * v for k, v in equivalents.items()
             if _species.get(k).conductance is not None]
    if not terms:
        raise ValueError("no ion with a known limiting conductance")
    return sum(terms[1:], terms[0]) * CONDUCTIVITY_FACTOR


#: Denominators of the conductivity difference (:func:`conductivity_difference`).
CONDUCTIVITY_DIFFERENCE_BASES = ("measured", "sum")


def conductivity_difference(calculated, measured, basis: str = "measured"):
    """Conductivity difference CD [%].

    Parameters
    ----------
    calculated, measured : array_like
        [uS cm-1]
    basis : {"measured", "sum"}
        Denominator: the measured conductivity (default; the form to which the
        acceptance tiers of WMO GAW Report No. 160 apply, from memory) or the sum of
        the two (the form of the ion difference; used here until 2026-12).

    Notes
    -----
    .. math:: CD = 100\\,\\frac{\\kappa_{calc} - \\kappa_{meas}}{\\kappa_{meas}}

    (WMO GAW Report No. 160, 2004, Section 8, from memory), or with
    :math:`\\kappa_{calc} + \\kappa_{meas}` in the denominator for ``basis="sum"``.
    For a ratio :math:`k = \\kappa_{calc}/\\kappa_{meas}` the two read
    :math:`100 (k - 1)` and :math:`100 (k - 1)/(k + 1)`: a limit of 20 % passes k up to
    1.2 in the first form, up to 1.5 in the second.

    >>> round(float(conductivity_difference(12.0, 8.0)), 1)
    50.0
    >>> round(float(conductivity_difference(12.0, 8.0, "sum")), 1)
    20.0
    """
    if basis not in CONDUCTIVITY_DIFFERENCE_BASES:
        raise ValueError(f"unknown conductivity difference basis {basis!r}; use "
                         f"{' or '.join(CONDUCTIVITY_DIFFERENCE_BASES)}")
    den = measured if basis == "measured" else calculated + measured
    return 100.0 * (calculated - measured) / _where(den > 0, den, np.nan)


def capture_ratio(sample_depth, gauge_depth, min_depth=0.0):
    """Capture ratio of the collector against the gauge [1].

    Parameters
    ----------
    sample_depth : array_like
        Collector depth (sample volume / collector area). [mm]
    gauge_depth : array_like
        Standard gauge depth. [mm]
    min_depth : float
        Below this gauge depth the ratio is not formed (NaN). [mm]

    Notes
    -----
    .. math:: r = d_{collector} / d_{gauge}

    >>> capture_ratio(9.0, 10.0)
    0.9
    """
    ok = gauge_depth >= max(min_depth, np.finfo(float).tiny)
    return sample_depth / _where(ok, gauge_depth, np.nan)


def gauge_under_wet_collector(gauge_depth, sample_depth, min_depth, high):
    """True where a gauge reading is taken as failed beside a wet collector [bool].

    The capture ratio is judged only from a gauge of `min_depth` up
    (:func:`capture_ratio`); below it a gauge far under a collector holding water would
    pass unseen.  A measured gauge depth below `min_depth` beside a collector of at
    least `min_depth` is taken as failed when the collector holds more than `high`
    times the gauge, the upper end of the accepted capture range: the ratio the
    collector could not reach beside a working gauge.  A 0 mm gauge is the limit of
    the rule (any collector of at least `min_depth`).  docs/methods_wet.md section 3.8.

    Parameters
    ----------
    gauge_depth : array_like
        Measured gauge depth (NaN where none). [mm]
    sample_depth : array_like
        Collector depth (NaN where none). [mm]
    min_depth : float
        Smallest depth from which the capture ratio is judged. [mm]
    high : float or array_like
        Upper end of the accepted capture ratio (per precipitation type). [1]

    >>> gauge_under_wet_collector(np.array([0.0, 0.3, 0.9, 0.5, 2.0]),
    ...                           np.array([1.0, 8.0, 1.0, 0.8, 8.0]), 1.0, 1.2).tolist()
    [True, True, False, False, False]
    """
    gauge = np.asarray(gauge_depth, dtype=float)
    collector = np.nan_to_num(np.asarray(sample_depth, dtype=float), nan=0.0)
    # below min_depth by the test of capture_ratio, so that every gauge is judged by
    # exactly one of the two rules
    with np.errstate(invalid="ignore"):
        small = (gauge >= 0) & ~(gauge >= max(min_depth, np.finfo(float).tiny))
    return small & at_least(collector, min_depth) & exceeds(collector, high * gauge)


def censored_value(value, censored, limit, method: str = "half"):
    """Value used for a result below the detection limit [same unit as `value`].

    Parameters
    ----------
    value : array_like
        Reported value. [mol m-3]
    censored : array_like of bool
        True where the result is below the detection limit.
    limit : array_like
        Detection limit (NaN when not known). [mol m-3]
    method : {"half", "limit", "zero"}
        Half the limit, the limit itself, or zero.

    Returns
    -------
    array_like
        `value` where not censored; ``factor x limit`` where censored (NaN when
        the limit is unknown, except for ``"zero"``). [mol m-3]

    >>> censored_value(np.array([0.5, 0.0]), np.array([False, True]), np.array([np.nan, 0.02]), "half").tolist()
    [0.5, 0.01]
    """
    if method not in CENSORED_FACTOR:
        raise ValueError(f"unknown detection-limit treatment {method!r}; use half, limit or zero")
    factor = CENSORED_FACTOR[method]
    sub = limit * factor if method != "zero" else 0.0
    return _where(censored, sub, value)


def biological_screen(potassium, ammonium, phosphate, k_min, nh4_min, po4_min):
    """Screen for bird droppings, insects or plant debris: K, NH4 and PO4 all high.

    Our own screen (no published source): such material carries potassium,
    ammonium and phosphate together, while clean rain has PO4 near the detection
    limit.

    Parameters
    ----------
    potassium, ammonium : array_like
        [mol m-3]
    phosphate : array_like or None
        [mol m-3]; None when PO4 is not measured, and the screen uses K and NH4 only.
    k_min, nh4_min, po4_min : float
        Thresholds. [mol m-3]

    Returns
    -------
    array_like of bool
        True where the sample looks contaminated (False where a value is NaN).
    """
    hit = at_least(potassium, k_min) & at_least(ammonium, nh4_min)
    return hit & at_least(phosphate, po4_min) if phosphate is not None else hit


def dust_screen(pH, calcium, pH_min, ca_min):
    """Screen for soil dust (or collector-funnel dirt): high pH with high calcium.

    Our own screen (no published source): carbonate dust neutralises the acidity
    and brings calcium.

    Parameters
    ----------
    pH : array_like
        [1]
    calcium : array_like
        [mol m-3]
    pH_min, ca_min : float
        Thresholds. [1], [mol m-3]

    Returns
    -------
    array_like of bool
    """
    return at_least(pH, pH_min) & at_least(calcium, ca_min)


def precipitation_type(snow_share, share: float = 0.8):
    """Precipitation type from the share of it that fell as snow.

    Parameters
    ----------
    snow_share : array_like
        Share of the sample's precipitation in snow hours (NaN: unknown). [1]
    share : float
        At or above this share the sample is snow; at or below ``1 - share`` rain;
        mixed in between. [1]

    Returns
    -------
    ndarray of str
        ``"rain"``, ``"snow"``, ``"mixed"`` or ``"unknown"``.

    >>> precipitation_type(np.array([0.0, 0.5, 0.9, np.nan])).tolist()
    ['rain', 'mixed', 'snow', 'unknown']
    """
    x = np.asarray(snow_share, dtype=float)
    return np.select([~np.isfinite(x), at_least(x, share), at_most(x, 1.0 - share)],
                     ["unknown", "snow", "rain"], "mixed").astype(object)
