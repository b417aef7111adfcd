"""SO2-NH3 co-deposition: the SO2 non-stomatal resistance that falls with NH3/SO2.

NH3 taken up on wet leaf surfaces neutralises the acidity that dissolved SO2 creates,
so the leaf surfaces keep taking up SO2; where SO2 is in excess they acidify and the
uptake stops.  Field measurements found the non-stomatal (external) resistance of
SO2 to fall as the molar ratio NH3/SO2 of the air rises (Erisman and Wyers 1993,
Atmos. Environ. 27A, 1937; Erisman, van Pul and Wyers 1994, Atmos. Environ. 28,
2595; Fowler et al. 2001, Water Air Soil Pollut. Focus 1, 39; all *from memory*).

The relation used here is the fit in the form of Simpson et al. (2012), Atmos. Chem.
Phys. 12, 7825, section on non-stomatal resistances, after Fowler et al. (2001)
(coefficients *from memory*, not checked against the paper here):

.. math::

    R_{ns}(SO_2) = 11.84\\, e^{1.1\\, a_{SN}}\\, RH^{-1.67},\\qquad
    a_{SN} = [SO_2]/[NH_3]\\ \\text{(molar)},\\quad 10 \\le R_{ns} \\le 1000\\ \\mathrm{s\\,m^{-1}}

with RH the relative humidity as a fraction (read as a fraction the fit gives
values of tens of s/m over moist canopies at the ratios of the 2000s, inside its
bounds; read in percent it would give values far below them).  The canopy
resistance keeps the scheme's stomatal path:

.. math:: R_c(SO_2) = [g_{sto} + 1/R_{ns}]^{-1}

where ``g_sto`` is the scheme's own stomatal conductance of SO2 (Wesely 1989:
1/(r_s + r_m); Zhang et al. 2003: (1 - W_st)/(R_st + R_m)).  Our rules (choices, not
from the paper): the relation replaces the scheme's non-stomatal paths only over
vegetated receptors (:data:`VEGETATED`), only in hours with a known ratio and only at
or above :data:`FROZEN_BELOW` (frozen surfaces were not in the fit); elsewhere the
scheme's R_c stands and ``so2_codeposition_used`` is 0.

Where the ratio comes from (:func:`hourly_ratio`): the air concentrations of NH3
and SO2 are known per sampling period.  Each hour takes the concentration of the
period that covers it (the rows the budget uses, :func:`workbench.dryflux.select_samplers`;
the mean where rows of that selection overlap), a value below detection taken as
half its detection limit (common practice), and the ratio of the two in that hour.
So a weekly NH3 and a daily SO2 give a ratio that changes daily.  An hour outside
every NH3 or every SO2 period has no ratio.

Units: concentrations [mol m-3] or mixing ratios [mol mol-1], resistances [s m-1],
ratios [1].
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..constants import GAS_CONSTANT, ZERO_CELSIUS

#: Coefficients of R_ns(SO2) = A exp(B a_SN) RH^C (Simpson et al. 2012 after Fowler
#: et al. 2001; from memory): A [s m-1], B [-], C [-].
RNS_SCALE = 11.84
RNS_RATIO_EXPONENT = 1.1
RNS_RH_EXPONENT = -1.67
#: Bounds of R_ns(SO2) [s m-1] (the same source; from memory).
RNS_MIN = 10.0
RNS_MAX = 1000.0
#: Least relative humidity put into RH^-1.67 [1] (numerical device: RH = 0 would
#: give an infinite resistance; the bound RNS_MAX applies long before).
RH_FLOOR = 0.01
#: Our classes with leaf surfaces, over which the relation replaces the scheme's
#: non-stomatal paths (our choice: the fit comes from vegetated sites).
VEGETATED = ("crops", "grass", "deciduous_forest", "conifer_forest", "mixed_forest",
             "moorland", "wetland")
#: Below this air temperature the surfaces are taken as frozen and the scheme's R_c
#: stands (our choice, the threshold of Zhang et al. 2003's cold rule) [K].
FROZEN_BELOW = ZERO_CELSIUS - 1.0
#: Substitute for a concentration below detection, as a share of its limit
#: (common practice).
CENSORED_SHARE = 0.5


def nonstomatal_resistance(nh3_so2_ratio, relative_humidity):
    """Non-stomatal resistance of SO2 from the NH3/SO2 molar ratio [s m-1].

    Parameters
    ----------
    nh3_so2_ratio : array_like
        Molar ratio [NH3]/[SO2] of the air (0: no NH3). [1]
    relative_humidity : array_like
        Fraction. [1]

    Returns
    -------
    array_like
        R_ns(SO2), bounded to [RNS_MIN, RNS_MAX]; NaN where an input is NaN. [s m-1]

    Notes
    -----
    R_ns = 11.84 exp(1.1 a_SN) RH^-1.67 with a_SN = 1/ratio (module docstring).

    References
    ----------
    Simpson, D. et al. (2012), Atmos. Chem. Phys. 12, 7825-7865, after Fowler, D. et
    al. (2001), Water Air Soil Pollut. Focus 1, 39-48 (coefficients from memory).

    >>> round(float(nonstomatal_resistance(1.0, 0.8)), 2)
    51.63
    """
    r = np.asarray(nh3_so2_ratio, dtype=float)
    rh = np.maximum(np.asarray(relative_humidity, dtype=float), RH_FLOOR)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        a_sn = 1.0 / np.maximum(r, 0.0)
        # in logs, so that a vanishing ratio gives the upper bound, not an overflow
        log_r = (np.log(RNS_SCALE) + RNS_RATIO_EXPONENT * np.minimum(a_sn, 1e3)
                 + RNS_RH_EXPONENT * np.log(rh))
        out = np.clip(np.exp(np.minimum(log_r, np.log(RNS_MAX) + 1.0)), RNS_MIN, RNS_MAX)
    return np.where(np.isnan(r) | np.isnan(rh), np.nan, out)


def applies(state):
    """Hours and receptors where the co-deposition relation replaces the scheme (bool).

    Parameters
    ----------
    state : workbench.drydep.gas.CanopyState
        Uses ``nh3_so2_ratio`` [1] (None: nowhere), ``land_use``, ``temperature`` [K]
        and ``relative_humidity`` [1].
    """
    ratio = getattr(state, "nh3_so2_ratio", None)
    if ratio is None or state.relative_humidity is None:
        return np.zeros(np.shape(state.temperature), bool)
    land = np.asarray(state.land_use, dtype=object)
    veg = np.isin(land.astype(str), VEGETATED) if land.size else np.zeros(land.shape, bool)
    with np.errstate(invalid="ignore"):
        return (veg & np.isfinite(ratio) & np.isfinite(state.relative_humidity)
                & (np.asarray(state.temperature) >= FROZEN_BELOW))


def surface_resistance(stomatal_conductance, scheme_rc, state):
    """R_c(SO2) with co-deposition where it applies, else the scheme's [s m-1].

    The hook both gas schemes call for SO2 (through the scheme interface: the ratio
    travels in the :class:`~workbench.drydep.gas.CanopyState`).

    Parameters
    ----------
    stomatal_conductance : array_like
        The scheme's stomatal (+ mesophyll) conductance of SO2. [m s-1]
    scheme_rc : array_like
        The scheme's R_c of SO2. [s m-1]
    state : workbench.drydep.gas.CanopyState

    Returns
    -------
    rc : numpy.ndarray
        [s m-1]
    used : numpy.ndarray of bool
        The relation replaced the scheme's non-stomatal paths.
    """
    use = applies(state)
    if not use.any():
        return scheme_rc, np.zeros(np.broadcast_shapes(np.shape(scheme_rc), use.shape), bool)
    rns = nonstomatal_resistance(state.nh3_so2_ratio, state.relative_humidity)
    with np.errstate(divide="ignore", invalid="ignore"):
        rc = 1.0 / (stomatal_conductance + 1.0 / rns)
    use = use & ~np.isnan(scheme_rc)          # a missing input stays missing
    rc_all = np.where(use, rc, scheme_rc)
    return rc_all, np.broadcast_to(use, rc_all.shape).copy()


def period_values_on_hours(air, species, values, times, sites):
    """Per-row values of a species' sampling periods spread onto the hours (site, time).

    Each hour (time stamp = end of the hour) takes the mean of the values of the rows
    of `species` that cover it, among the rows the budget uses where several samplers
    overlap (:func:`workbench.dryflux.select_samplers`); NaN where none does.
    Vectorized: cumulative sums of the row starts and ends, no loop over hours.

    Parameters
    ----------
    air : xarray.Dataset
        Air concentrations (dim ``period``: ``site``, ``start``, ``end``, ``sampler_id``).
    species : str
    values : numpy.ndarray
        One value per row of `air` (NaN: the row gives none).
    times : numpy.ndarray of datetime64
        The hourly time axis (end of each hour).
    sites : sequence of str

    Returns
    -------
    numpy.ndarray
        (site, time).
    """
    from ..dryflux import select_samplers
    from ..periods import hour_bounds
    n_s, n_t = len(sites), len(times)
    out = np.full((n_s, n_t), np.nan)
    if species not in air or air.sizes.get("period", 0) == 0:
        return out
    used, _ = select_samplers(air, species)
    si = pd.Index(list(sites)).get_indexer(air["site"].values.astype(str))
    ok = used & np.isfinite(values) & (si >= 0)
    if not ok.any():
        return out
    a, b = hour_bounds(np.asarray(times), air["start"].values[ok], air["end"].values[ok])
    total = np.zeros((n_s, n_t + 1))
    count = np.zeros((n_s, n_t + 1))
    for arr, v in ((total, values[ok]), (count, np.ones(int(ok.sum())))):
        np.add.at(arr, (si[ok], a), v)
        np.add.at(arr, (si[ok], b), -v)
    total, count = np.cumsum(total, 1)[:, :n_t], np.cumsum(count, 1)[:, :n_t]
    has = count > 0.5
    out[has] = total[has] / np.round(count[has])
    return out


def _molar(air, species, times, sites, air_molar_density):
    """Hourly amount of a species [mol m-3] (or mixing ratio [mol mol-1] when
    `air_molar_density` is None), censored values at half their limit."""
    from ..dryflux import _censored_values
    if species not in air:
        return np.full((len(sites), len(times)), np.nan), "amount_density"
    v, _ = _censored_values(air, species, "half")
    hourly = period_values_on_hours(air, species, v, times, sites)
    quantity = air[species].attrs.get("quantity", "amount_density")
    if air_molar_density is None:
        return hourly, quantity
    if quantity == "mixing_ratio":
        hourly = hourly * air_molar_density
    return hourly, "amount_density"


def hourly_amounts(air, species, times, sites, temperature=None, pressure=None):
    """Hourly molar amounts of several species from their sampling periods (site, time).

    Parameters
    ----------
    air : xarray.Dataset
    species : sequence of str
    times : numpy.ndarray of datetime64
    sites : sequence of str
    temperature, pressure : numpy.ndarray, optional
        (site, time) [K], [Pa]: needed only when the species mix mass concentrations
        and mixing ratios (then all are returned as amounts [mol m-3]).

    Returns
    -------
    dict
        species -> (site, time) amounts [mol m-3] or, when every species is a mixing
        ratio, mixing ratios [mol mol-1]; NaN where no period covers the hour or the
        species is not in `air`.  Ratios of two of them are molar ratios either way.
    """
    present = [sp for sp in species if sp in air]
    kinds = {air[sp].attrs.get("quantity", "amount_density") for sp in present}
    density = None
    if len(kinds) > 1:
        if temperature is None or pressure is None:
            raise ValueError(f"{', '.join(present)} are given partly as mass concentrations "
                             "and partly as mixing ratios: the hourly temperature [K] and "
                             "pressure [Pa] are needed to compare them")
        density = np.asarray(pressure, float) / (GAS_CONSTANT * np.asarray(temperature, float))
    return {sp: _molar(air, sp, times, sites, density)[0] for sp in species}


def hourly_acid_ratio(air, times, sites, temperature=None, pressure=None):
    """Molar acid ratio AR = (2 SO2 + HNO3)/NH3 of the air in each hour (site, time) [1].

    The ratio of the NH3 cuticle of Massad et al. (2010)
    (:func:`workbench.drydep.nh3_bidirectional.cuticular_resistance`), from the
    sampling periods as :func:`hourly_ratio`; NaN where any of the three is unknown.
    """
    n = (len(sites), len(times))
    if air is None or any(sp not in air for sp in ("SO2", "HNO3", "NH3")):
        return np.full(n, np.nan)
    c = hourly_amounts(air, ("SO2", "HNO3", "NH3"), times, sites, temperature, pressure)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (2.0 * c["SO2"] + c["HNO3"]) / c["NH3"]


def hourly_ratio(air, times, sites, temperature=None, pressure=None):
    """Molar ratio NH3/SO2 of the air in each hour (site, time) [1].

    Parameters
    ----------
    air : xarray.Dataset or None
        Air concentrations (:func:`workbench.io.samples.read_air`).
    times : numpy.ndarray of datetime64
        Hourly time axis (end of each hour).
    sites : sequence of str
    temperature, pressure : numpy.ndarray, optional
        (site, time) air temperature [K] and pressure [Pa], needed only when one of the
        two species is a mass concentration and the other a mixing ratio.

    Returns
    -------
    numpy.ndarray
        (site, time); NaN where either species is unknown in that hour.  0 where NH3
        is 0 (the relation then gives its upper bound).
    """
    n = (len(sites), len(times))
    if air is None or "NH3" not in air or "SO2" not in air:
        return np.full(n, np.nan)
    c = hourly_amounts(air, ("NH3", "SO2"), times, sites, temperature, pressure)
    nh3, so2 = c["NH3"], c["SO2"]
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(so2 > 0, nh3 / so2, np.where(so2 == 0, np.inf, np.nan))
    return np.where(np.isnan(nh3) | np.isnan(so2), np.nan, ratio)
