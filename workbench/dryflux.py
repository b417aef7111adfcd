"""Dry deposition over air-sampling periods: concentration x hourly deposition velocity.

The inferential flux of a species over one air-sampling period is

.. math:: D = C \\, \\overline{V_d} \\, \\Delta t

with :math:`\\overline{V_d}` the arithmetic mean of the hourly deposition velocities
(conductances, never the inverse of a mean resistance) over the hours of the period.
A concentration given as a mixing ratio :math:`\\chi` becomes a flux hour by hour with
that hour's molar density of air, :math:`D = \\chi\\,\\overline{n_{air} V_d}\\,\\Delta t`.
Hourly concentrations are the same formula with one hour per period.

Hours without a valid Vd are filled from the site's mean diurnal cycle of Vd for the
same month (of the same year when that slot has enough hours, else of all years); each
filled hour is counted.  Everything here is vectorized over sites, receptors, periods
and hours through cumulative sums along time: no Python loop over hours or periods.

Units: concentrations [mol m-3] or [mol mol-1]; Vd [m s-1]; deposition [mol m-2].

Where the parts are: the diurnal fill of Vd in :mod:`workbench.dryflux_fill`; the
cumulative sums and :func:`deposition_rows` in :mod:`workbench.dryflux_sums`; the
reporting periods (:func:`share_to_periods`, :func:`to_periods`, :func:`period_mean`)
in :mod:`workbench.dryflux_periods`.  This module re-exports them all, so that
``workbench.dryflux.<name>`` keeps working.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import xarray as xr

from .periods import hour_bounds
from .units import molar_density_air

# the diurnal fill of Vd (defined here before)
from .dryflux_fill import MIN_SLOT_HOURS, _HALF_HOUR, fill_diurnal, hour_slots  # noqa: F401
# the reporting periods (defined here before)
from .dryflux_periods import (PeriodAxes, period_axes, period_mean,  # noqa: F401
                              share_to_periods, to_periods)
# the cumulative sums and the sampling periods' deposition (defined here before)
from .dryflux_sums import (HOUR_S, _count_cumulative, _cumulative,  # noqa: F401
                           deposition_rows, no_hour_inside)


@dataclass(frozen=True)
class DryFluxOptions:
    """Options of the dry-flux integration.

    Attributes
    ----------
    censored : {"half", "limit", "zero"}
        Value used for a concentration below detection: half the limit (default,
        common practice), the limit, or zero.
    min_slot_hours : int
        See :data:`MIN_SLOT_HOURS`.
    diurnal_profile : dict
        species -> 24 relative concentrations by hour of local day (normalized here to
        a mean of 1); a sensitivity for the covariance of C and Vd that a period-mean
        concentration leaves out.  Empty by default (constant within a period).
    preferred_method : dict
        species -> method name to use when several samplers measure one species at a
        site; by default the sampler covering the most hours is used.
    """

    censored: str = "half"
    min_slot_hours: int = MIN_SLOT_HOURS
    diurnal_profile: dict = field(default_factory=dict)
    preferred_method: dict = field(default_factory=dict)


def _censored_values(air, species, how):
    v = air[species].values.astype(float)
    c = air[f"{species}_censored"].values if f"{species}_censored" in air else np.zeros(len(v), bool)
    dl = air[f"{species}_detection_limit"].values if f"{species}_detection_limit" in air \
        else np.full(len(v), np.nan)
    factor = {"half": 0.5, "limit": 1.0, "zero": 0.0}[how]
    sub = np.where(np.isfinite(dl), dl * factor, 0.0)
    return np.where(c, sub, v), c


def select_samplers(air: xr.Dataset, species: str, preferred_method=None):
    """Rows of `air` used for a species where several samplers measure it at one site.

    Samplers that follow each other (a replaced instrument) are all used.  Where
    samplers overlap in time, the primary one (the preferred method, else the one
    covering the most hours) is used and the others' rows that overlap it are left
    out; their rows outside its periods fill its gaps, in the same order of rank (a
    row of a back-up sampler overlapping a kept row of a higher-ranked back-up is left
    out too, so no hour is counted twice).

    Returns
    -------
    used : ndarray of bool
        Per row of `air`.
    notes : list of str
        Which rows were left out.
    """
    v = air[species].values
    has = np.isfinite(v) | (air[f"{species}_censored"].values if f"{species}_censored" in air
                            else False)
    sites = air["site"].values.astype(str)
    samplers = air["sampler_id"].values.astype(str)
    method = air[f"{species}_method"].values.astype(str) if f"{species}_method" in air \
        else np.full(len(v), "", object)
    start, end = air["start"].values, air["end"].values
    used = has.copy()
    notes = []
    for site in np.unique(sites[has]):
        here = has & (sites == site)
        names = np.unique(samplers[here])
        if len(names) <= 1:
            continue
        hours = pd.Series((end - start)[here] / np.timedelta64(1, "h")).groupby(samplers[here]).sum()
        # rank: the preferred method's sampler, then by hours covered (ties by name)
        rank = sorted((str(n) for n in names), key=lambda n: (-hours[n], n))
        if preferred_method and preferred_method.get(species):
            pref = np.unique(samplers[here & (method == preferred_method[species])])
            if len(pref):
                rank.remove(str(pref[0]))
                rank.insert(0, str(pref[0]))
        choice = rank[0]
        # each sampler in rank order fills only the hours that no higher-ranked one
        # covers: a row overlapping a kept row of a higher-ranked sampler is left out,
        # so that no hour is counted twice (two back-up samplers in one gap of the
        # primary would otherwise both count, and the coverage pass on double hours)
        kept = np.flatnonzero(here & (samplers == choice))
        dropped = []
        for name in rank[1:]:
            order = kept[np.argsort(start[kept], kind="stable")]
            ks, ke = start[order], end[order]
            mine = np.flatnonzero(here & (samplers == name))
            k = np.searchsorted(ks, end[mine], side="left") - 1   # last kept row starting before end
            # kept rows do not overlap each other, so their ends rise with their starts
            overlap = (k >= 0) & (ke[np.clip(k, 0, None)] > start[mine]) if len(ks) else \
                np.zeros(len(mine), bool)
            dropped.append(mine[overlap])
            kept = np.concatenate([kept, mine[~overlap]])
        dropped = np.concatenate(dropped) if dropped else np.zeros(0, int)
        used[dropped] = False
        if len(dropped):
            notes.append(f"{species} at {site}: sampler {choice!r} is primary; {len(dropped)} "
                         f"overlapping rows of {', '.join(n for n in names if n != choice)} left out")
    return used, notes


def short_sample_notes(species, starts, ends, lines, times) -> list:
    """The note of the samples of `species` with no hour inside (:func:`no_hour_inside`),
    naming their file lines ([] for none)."""
    from .io.ledger import compact_lines
    a, b = hour_bounds(times, starts, ends)
    none = no_hour_inside(starts, ends, a, b)
    if not none.any():
        return []
    n = int(none.sum())
    return [f"{species}: {n} air sample{'s' * (n > 1)} shorter than an hour "
            f"hold{'s' * (n == 1)} no hour's middle (hh:30) ({compact_lines(lines[none])}): "
            "no deposition, and not counted in the covered hours"]


def _inputs_for(air, species, vd: xr.DataArray, met, options):
    """Rows used, their concentrations and the numpy arrays for one species."""
    used, notes = select_samplers(air, species, options.preferred_method)
    rows = np.flatnonzero(used)
    conc, cens = _censored_values(air, species, options.censored)
    sites_vd = [str(s) for s in vd["site"].values]
    site_of = air["site"].values.astype(str)[rows]
    known = np.isin(site_of, sites_vd)
    rows, site_of = rows[known], site_of[known]
    times = vd["time"].values
    weight = None
    if species in options.diurnal_profile:
        prof = np.asarray(options.diurnal_profile[species], float)
        prof = prof / prof.mean()
        weight = prof[pd.DatetimeIndex(times - _HALF_HOUR).hour.to_numpy()]  # UTC hours
    notes = notes + short_sample_notes(species, air["start"].values[rows],
                                       air["end"].values[rows], air["line"].values[rows], times)
    quantity = air[species].attrs.get("quantity", "amount_density")
    n_air = None
    if quantity == "mixing_ratio":
        if met is None:
            raise ValueError(f"{species} is a mixing ratio: hourly temperature and pressure are needed")
        m = met[["temperature", "pressure"]].reindex(site=sites_vd, time=times)
        n_air = molar_density_air(m["temperature"].values, m["pressure"].values)
    return rows, site_of, conc, cens, quantity, weight, n_air, notes


def period_deposition(air: xr.Dataset, species: str, vd: xr.DataArray, met: xr.Dataset | None,
                      options: DryFluxOptions = DryFluxOptions()):
    """Deposition of one species over each of its air-sampling periods, per receptor.

    Parameters
    ----------
    air : xarray.Dataset
        Air concentrations (dim ``period``; see docs/data_model.md).
    species : str
        Species name (a variable of `air`).
    vd : xarray.DataArray
        Hourly deposition velocity (site, receptor, time), already gap-filled. [m s-1]
    met : xarray.Dataset or None
        Hourly temperature [K] and pressure [Pa], needed for mixing ratios.
    options : DryFluxOptions

    Returns
    -------
    rows : xarray.Dataset
        Dims (``row``, ``receptor``) over the rows of `air` used for the species:
        ``deposition`` [mol m-2], ``mean_vd`` [m s-1] (NaN for mixing ratios, whose
        mean is of n_air Vd), ``vd_hours`` (hours with a valid Vd), ``hours``, and
        the row's ``site``, ``start``, ``end``, ``line``, ``censored``; where some
        hours lack a Vd, ``vd_hours_cumulative`` (vd_site, receptor, hour_edge), the
        running count of the hours with one, which :func:`to_periods` reads.
    cs : ndarray
        Cumulative effective Vd (site, receptor, time + 1), for :func:`to_periods`.
    """
    rows, site_of, conc, cens, quantity, weight, n_air, notes = _inputs_for(air, species, vd, met, options)
    sites_vd = [str(s) for s in vd["site"].values]
    v = vd.transpose("site", "receptor", "time").values
    r = deposition_rows(conc[rows], quantity, pd.Index(sites_vd).get_indexer(site_of),
                        air["start"].values[rows], air["end"].values[rows], vd["time"].values,
                        v, n_air, weight)
    ds = xr.Dataset(
        {
            "deposition": (("row", "receptor"), r["deposition"], {"units": "mol m-2",
                           "long_name": f"dry deposition of {species} over the sampling period"}),
            "mean_vd": (("row", "receptor"), r["mean_eff"] if quantity != "mixing_ratio"
                        else np.full_like(r["mean_eff"], np.nan),
                        {"units": "m s-1", "long_name": "mean deposition velocity over the period"}),
            "vd_hours": (("row", "receptor"), r["n_valid"]),
            "hours": ("row", r["hours"], {"units": "h"}),
            "site": ("row", site_of),
            "start": ("row", air["start"].values[rows]),
            "end": ("row", air["end"].values[rows]),
            "line": ("row", air["line"].values[rows]),
            "censored": ("row", cens[rows]),
            "hour_start": ("row", r["a"]),
            "hour_end": ("row", r["b"]),
        },
        coords={"receptor": vd["receptor"].values},
        attrs={"species": species, "quantity": quantity, "notes": "; ".join(notes)},
    )
    if r.get("cn") is not None:
        ds["vd_hours_cumulative"] = (("vd_site", "receptor", "hour_edge"), r["cn"],
                                     {"long_name": "running count of the hours with a Vd "
                                      "(site order of vd), for to_periods"})
    return ds, r["cs"]


