"""The dry-deposition velocity calculation for every site, receptor and hour.

:func:`velocities` strings the pure functions of :mod:`workbench.surface` and of the
scheme modules together, vectorized over (site, receptor, time) with xarray, so
that a dask-chunked met Dataset stays lazy.  Steps (docs/methods_dry_particles.md
sections 1-6 and 10, docs/methods_dry.md sections 7-9):

The hourly work runs on plain numpy arrays shaped (site, receptor, time) with
broadcasting; on a dask-backed met Dataset the same block function runs on each
chunk through ``xarray.map_blocks``.  The two steps that look across hours (the
previous hour's rain; the first autumn frost) are then done beforehand on the
whole record, lazily; in memory the block is the whole record and the block
function does them itself.  Steps:

1. pressure (filled from elevation where missing), air density and viscosity;
2. solar elevation and cloud cover (measured, else inferred from radiation, else
   the option's night value; each hour's source is returned);
3. u* and the heat flux over the wind mast's surface (measured, or energy balance
   by day and theta* by night);
4. u* over each receptor through the blending height, its floor, its heat flux and
   Obukhov length; Ra at the sampler (or reference) height, with its cap;
5. seasonal category and surface wetness;
6. Rb, Rc (and its paths) and Vd of each gas; mass-weighted Vd of each particle,
   checked against the aerodynamic limit v_s <= Vd <= v_s + 1/Ra
   (:mod:`workbench.drydep.particle_limit`; a ModelDefectError otherwise).

Where the parts are: the codes, the hours counted and the steps as stages of the graph
(:data:`METHOD`, :data:`CLOUD_SOURCE`, :data:`COUNT_FLAGS`, :func:`_summaries`,
:func:`_stage`, :func:`_mode_lookup`) in :mod:`workbench.drydep.core_steps`; the hourly
block (:func:`_hourly`) in :mod:`workbench.drydep.core_hourly`.  This module re-exports
them, so that ``workbench.drydep.core.<name>`` keeps working; :func:`velocities` and
:func:`_template` look :func:`_hourly` up here (a patch of ``core._hourly`` holds).
"""
from __future__ import annotations

import functools

import numpy as np
import xarray as xr

from .. import landuse
from ..optional import require
from ..threads import threads_here
from .. import graph as _graph
from . import canopy as _canopy
from . import gas as _gas
from . import nh3_bidirectional as _nh3
from . import particle_limit as _limit  # noqa: F401  (patched as core._limit by benchmarks)
from . import seasons as _seasons
from . import siteblocks as _blocks
from . import wetness as _wetness
from .options import DryOptions
# the hourly block (defined here before; looked up here by velocities and _template)
from .core_hourly import _hourly  # noqa: F401
# the codes, the hours counted and the steps of the graph (defined here before)
# (AIR_DERIVED: the hourly inputs made from the air, read when present)
from .core_steps import (AIR_DERIVED, CLOUD_SOURCE, COUNT_FLAGS, METHOD,  # noqa: F401
                         NH3_BIDIRECTIONAL_NOTE, NH3_NOTE, _FROST, _MICROMET_OPTIONS, _GAS_OPTIONS,
                         _PARTICLE_OPTIONS, _PREV, _STATE_OPTIONS, _STATE_OUT, _asked,
                         _made, _mode_lookup, _stage, _summaries)

#: Met variables read (those present), besides the derived ones.
MET_VARIABLES = ("wind_speed", "temperature", "relative_humidity", "solar_radiation",
                 "precipitation", "pressure", "cloud_cover", "friction_velocity",
                 "sensible_heat_flux", "surface_wet", "snow_cover")
#: Hourly inputs derived from the site's declared history (site, time), read when
#: present: the class under the wind mast where it follows the land use
#: (:func:`workbench.surfacehistory.mast_in_force`; -1 the surface of the catalogue).
HISTORY_DERIVED = ("met_land_use_in_force",)


def _template(aug, surf, opt, receptors, met_surf=None, outputs=None):
    """An empty lazy Dataset shaped like the output of :func:`_hourly` on `aug`."""
    probe = _hourly(aug.isel(time=slice(0, 1)).compute(), surf, opt, receptors,
                    met_surf=met_surf, outputs=outputs)
    dsa = require("dask.array")  # only here: `aug` is already dask-backed
    chunks = dict(aug.chunks)
    data = {}
    for name, v in probe.data_vars.items():
        shape = [aug.sizes[d] if d in ("site", "time") else v.sizes[d] for d in v.dims]
        ch = [chunks.get(d, (n,)) for d, n in zip(v.dims, shape)]
        data[name] = (v.dims, dsa.empty(shape, chunks=ch, dtype=v.dtype), v.attrs)
    return xr.Dataset(data, coords={"site": aug["site"].values, "receptor": receptors,
                                    "time": aug["time"].values})


def velocities(met: xr.Dataset, surfaces: xr.Dataset, options: DryOptions | None = None,
               cache=None, receptors=None, outputs=None) -> xr.Dataset:
    """Dry deposition velocities and every resistance, per site, receptor and hour.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly meteorology, dims (site, time), as in docs/data_model.md: wind_speed
        [m s-1], temperature [K], relative_humidity [1], solar_radiation [W m-2],
        precipitation [mm], pressure [Pa], optional cloud_cover [1],
        friction_velocity [m s-1], sensible_heat_flux [W m-2], surface_wet [0/1],
        snow_cover [0/1].  May be dask-backed (chunked over time and/or site).
    surfaces : xarray.Dataset
        Receptor surfaces, dims (site, receptor), as produced by
        ``SiteCatalogue.surfaces()``.
    options : DryOptions, optional
    cache : workbench.graph.Graph or workbench.graph.Steps, optional
        A stage graph kept by the caller between calls (an app trying one option
        after another): the surface layer, the season and wetness, the gases and each
        particle mode are stages of it (``micromet``, ``canopy_state``, ``gas_vd``,
        ``particle_mode_vd``), computed again only when an option they declare or a
        step they are run on changes.  A Graph keys the inputs by a digest of `met`
        and `surfaces`; a Steps object (from :meth:`Graph.steps`) names them itself.
        The arrays of the result are then read-only, shared with the cache.  Not used
        for dask-backed `met`.
    receptors : sequence of str, optional
        Compute these receptors only (default: every receptor of `surfaces`); each
        receptor's numbers are the same as in the whole calculation (the surface
        around the wind mast is still taken from all of `surfaces`).
    outputs : collection of str, optional
        Make these output variables only (default: every one, as listed in
        docs/methods_dry.md), e.g. ``{"vd_SO2", "vd_pSO4"}``: the others (resistances,
        paths of Rc, the surface layer's and the canopy's diagnostics, the counts) are
        neither copied into the result nor computed where only they need it.  The
        variables made are the same bits as in the full result (a gridded run asks for
        the Vd of its species only, :func:`workbench.grid.dry_for_sites`).  Names
        that this call does not make are left out.

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, time); every variable has ``units`` and
        ``long_name``; NaN where an input is missing.  Variables are listed in
        docs/methods_dry.md.  Dask-backed (lazy) when `met` is.
    """
    opt = options or DryOptions()
    _gas.get_scheme(opt.gas_scheme)
    if "site" not in met.dims:   # e.g. a gridded (time, y, x) field: workbench.grid
        raise ValueError("met has dims (" + ", ".join(map(str, met.dims)) + "), not (site, "
                         "time): a gridded field runs cell by cell through workbench.grid "
                         "(`workbench grid SCENARIO`)")
    met_surf = (surfaces if np.array_equal(surfaces["site"].values, met["site"].values)
                else surfaces.sel(site=met["site"].values))
    every = [str(r) for r in met_surf["receptor"].values]
    for r in every:
        landuse.check(r)
    if receptors is None:
        surf, receptors = met_surf, every
    else:
        receptors = [str(r) for r in receptors]
        unknown = [r for r in receptors if r not in every]
        if unknown:
            raise ValueError(f"receptors {unknown} are not among the surfaces {every}")
        surf = met_surf.sel(receptor=receptors)
    for name in ("wind_speed", "temperature", "relative_humidity", "solar_radiation",
                 "precipitation"):
        if name not in met:
            raise ValueError(f"met has no {name!r}; see docs/data_model.md")
    aug = met[[v for v in MET_VARIABLES + AIR_DERIVED + HISTORY_DERIVED if v in met]]
    lazy = any(v.chunks is not None for v in aug.data_vars.values())
    if lazy:
        # the steps that look across hours, on the whole record (lazily); in memory
        # _hourly sees the whole record and does them itself
        # (NaN where the row before is not the hour before: wetness.previous_precipitation)
        follows = (met["time"] - met["time"].shift(time=1)) == _wetness.HOUR
        aug = aug.assign({_PREV: met["precipitation"].astype(float).shift(time=1)
                          .where(follows)})
        if opt.seasonal_category is None:
            base = None
            if opt.season_rule == "surface_state":   # per receptor (site, receptor, time)
                base = xr.DataArray(_canopy.lai_season(surf, receptors, met["time"].values)[0],
                                    dims=("site", "receptor", "time"),
                                    coords={"site": met["site"].values, "time": met["time"]})
            seen = _seasons.autumn_frost_seen(met["time"], surf["latitude"].astype(float),
                                              met["temperature"].astype(float), base=base)
            if base is None:
                aug = aug.assign({_FROST: seen.astype(float)})
            else:
                aug = aug.assign({f"{_FROST}|{j}": seen.isel(receptor=j).astype(float)
                                  for j in range(len(receptors))})
    aug = aug.reset_coords(drop=True).transpose("site", "time")
    if lazy:
        first = next(v for v in aug.data_vars.values() if v.chunks is not None)
        aug = aug.chunk(dict(zip(first.dims, first.chunks)))
        hourly = xr.map_blocks(_hourly, aug, kwargs={"surf": surf, "opt": opt,
                                                     "receptors": receptors,
                                                     "met_surf": met_surf, "outputs": outputs},
                               template=_template(aug, surf, opt, receptors, met_surf,
                                                  outputs))
    else:
        if isinstance(cache, _graph.Graph):
            cache = cache.steps(_graph.variables_digest(
                [*aug.variables.items(), *met_surf.variables.items()]))
        n_threads = threads_here()
        if (cache is None and n_threads > 1 and aug.sizes["site"] > 1
                and aug.sizes["site"] * len(receptors) * aug.sizes["time"]
                >= _blocks.SITE_BLOCK_MIN_ELEMENTS):
            hourly = _blocks.hourly_site_blocks(
                functools.partial(_hourly, outputs=outputs), aug, surf, opt, receptors,
                met_surf, n_threads)
        else:
            hourly = _hourly(aug, surf, opt, receptors, cache, met_surf, summaries=True,
                             outputs=outputs)
    if lazy:  # the summaries over the whole record, then one constructor call
        ds = _asked(xr.Dataset({**hourly.data_vars.variables,
                                **_summaries(hourly.variables, surf, receptors, opt, outputs)},
                               coords=hourly.coords), outputs)
    else:
        ds = hourly
    ds.attrs = {"gas_scheme": _gas.get_scheme(opt.gas_scheme).REFERENCE,
                "particle_scheme": "Zhang et al. (2001), Atmos. Environ. 35, 549-560",
                "nh3": NH3_NOTE, "wetness_rule": opt.wetness_rule,
                "nh3_cuticle": _nh3.resolve_cuticle(opt.nh3_cuticle,
                                                    _gas.get_scheme(opt.gas_scheme)),
                "so2_cuticle": opt.so2_cuticle,
                "particle_settling": opt.particle_settling,
                "ustar_floor_m_s": opt.ustar_floor, "ra_cap_s_m": opt.ra_cap,
                "blending_height_m": opt.blending_height,
                "time_convention": "end of each hour, UTC"}
    return ds
