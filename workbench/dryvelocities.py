"""Gap-filled hourly Vd for the dry components (:mod:`workbench.drycomponents`).

:func:`prepare_velocities` turns the model's hourly Vd (or fixed what-if values) into
gap-filled series with their fill mask; :func:`nh3_exchange_velocities` does the same
for the bidirectional NH3 model's Vd and emission term (:data:`NH3_EXCHANGE`);
:func:`fill_arrays` holds what the rows (:mod:`workbench.dryrows`) read of a filled Vd.
Units: Vd [m s-1], the NH3 emission term [mol m-2 s-1], hour counts [1].
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from .budget import BudgetError
from .dryflux import _count_cumulative, fill_diurnal


def prepare_velocities(vd_ds, species_list, fixed_velocity=None, min_slot_hours=7,
                       template=None, slots=None, classes=None):
    """Gap-filled hourly Vd per species, with the fill mask and its source.

    Parameters
    ----------
    vd_ds : xarray.Dataset or None
        Output of :func:`workbench.drydep.velocities` (``vd_<species>`` [m s-1]).
    species_list : iterable of str
    fixed_velocity : dict, optional
        species -> Vd [cm s-1] replacing the model (what-if and arithmetic checks).
    min_slot_hours : int
    template : xarray.DataArray, optional
        (site, receptor, time) array giving the axes for fixed velocities when the
        model was not run.
    slots : tuple, optional
        :func:`workbench.dryflux.hour_slots` of the time axis (default: computed).
    classes : xarray.DataArray, optional
        The land-use class in force over each hour (``land_use_in_force``): each hour is
        filled from the hours of its class (:func:`workbench.dryflux.fill_diurnal`).

    Returns
    -------
    dict
        species -> (filled Vd DataArray [m s-1], was_filled DataArray, source str).
    """
    fixed_velocity = fixed_velocity or {}
    out = {}
    for sp in species_list:
        if sp in fixed_velocity:
            base = vd_ds[f"vd_{sp}"] if vd_ds is not None and f"vd_{sp}" in vd_ds else template
            if base is None:
                raise BudgetError(f"fixed velocity for {sp} needs the hourly time axis of the met file")
            vd = xr.full_like(base, fixed_velocity[sp] / 100.0, dtype=float)
            vd.attrs = {"units": "m s-1", "long_name": f"fixed deposition velocity of {sp}"}
            out[sp] = (vd, xr.zeros_like(vd, dtype=bool), f"fixed {fixed_velocity[sp]} cm/s")
            continue
        if vd_ds is None or f"vd_{sp}" not in vd_ds:
            continue
        filled, was = fill_diurnal(vd_ds[f"vd_{sp}"].load(), min_slot_hours, slots, classes)
        out[sp] = (filled, was, vd_ds.attrs.get("gas_scheme", "model"))
    return out


#: Entries of the velocity sets that carry the bidirectional NH3 exchange (not species):
#: the compensation point model's Vd [m s-1] and its emission term [mol m-2 s-1].
NH3_EXCHANGE = {"NH3_bidirectional": "vd_NH3_bidirectional", "NH3_emission": "nh3_emission_flux"}


def nh3_exchange_velocities(vd_ds, min_slot_hours=7, slots=None):
    """Gap-filled hourly Vd and emission term of the bidirectional NH3 model.

    Parameters
    ----------
    vd_ds : xarray.Dataset or None
        Output of :func:`workbench.drydep.velocities` run with ``nh3_treatment =
        "bidirectional"`` (``vd_NH3_bidirectional`` [m s-1], ``nh3_emission_flux``
        [mol m-2 s-1]).
    min_slot_hours : int
    slots : tuple, optional
        :func:`workbench.dryflux.hour_slots` of the time axis (default: computed).

    Returns
    -------
    dict
        ``"NH3_bidirectional"`` and ``"NH3_emission"`` -> (filled DataArray, was_filled,
        source) as :func:`prepare_velocities`; empty when the Dataset has no exchange.
        Gaps of the emission term are filled from its mean diurnal cycle like Vd.
    """
    if vd_ds is None or any(v not in vd_ds for v in NH3_EXCHANGE.values()):
        return {}
    out = {}
    for name, var in NH3_EXCHANGE.items():
        filled, was = fill_diurnal(vd_ds[var].load(), min_slot_hours, slots)
        out[name] = (filled, was, "nh3 compensation point")
    return out


def fill_arrays(vd, was, source, sites, counts=None) -> dict:
    """What the rows read of a gap-filled Vd: the (site, receptor, time) arrays of the
    sites and the cumulative counts of modelled and filled hours.

    Parameters
    ----------
    vd, was : xarray.DataArray
        Filled Vd [m s-1] and its fill mask, as :func:`prepare_velocities` gives them.
    source : str
    sites : sequence of str
    counts : callable, optional
        ``counts(modelled, filled)`` of the two (site, receptor, time) masks -> their
        cumulative counts (c_valid, c_fill), where a stage graph keeps them by the
        masks' content (the ``fill_counts`` stage, :class:`workbench.pipeline.Study`);
        default: counted here.

    Returns
    -------
    dict
        ``vel`` (the (vd, was, source) triple), ``vd`` (DataArray on `sites`),
        ``v_np`` [m s-1], ``c_valid`` and ``c_fill`` (cumulative hour counts).
    """
    sites = list(sites)
    v, w = vd, was
    if list(v["site"].values) != sites:
        v, w = v.reindex(site=sites), w.reindex(site=sites, fill_value=False)
    v = v.transpose("site", "receptor", "time")
    was_np = w.transpose("site", "receptor", "time").values
    valid_raw = np.isfinite(v.values) & ~was_np
    c_valid, c_fill = ((_count_cumulative(valid_raw), _count_cumulative(was_np))
                       if counts is None else counts(valid_raw, was_np))
    return {"vel": (vd, was, source), "vd": v, "v_np": v.values,
            "c_valid": c_valid, "c_fill": c_fill}
