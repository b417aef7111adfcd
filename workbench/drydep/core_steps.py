"""The names, steps and summaries of the dry-deposition velocity calculation.

Part of :mod:`workbench.drydep.core` (which re-exports every name here): the codes of
the hourly outputs and their notes, the hours counted (:data:`COUNT_FLAGS`,
:func:`_summaries`), and the steps of :func:`workbench.drydep.core.velocities` as
stages of the graph (:mod:`workbench.graph`) with the options each reads
(:func:`_stage`, :func:`_mode_lookup`).
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from .. import graph as _graph
from . import receptors as _receptors

#: Codes of ``surface_layer_method``.
METHOD = {0: "measured u* and H", 1: "measured u*, H from energy balance or theta*",
          2: "measured H > 0, u* solved", 3: "energy balance by day (Holtslag-van Ulden)",
          4: "theta* by night (van Ulden-Holtslag, Venkatram)"}
#: Codes of ``cloud_cover_source``.
CLOUD_SOURCE = {0: "met file", 1: "inferred from global radiation (Kasten-Czeplak)",
                2: "night_cloud_cover option"}
NH3_NOTE = ("NH3: deposition only (no compensation point, no emission); vd_NH3 is the "
            "deposition velocity of a unidirectional flux")


NH3_BIDIRECTIONAL_NOTE = (
    "canopy compensation point (Sutton et al. 1998; Nemitz et al. 2000; Massad et al. "
    "2010): net NH3 flux = C vd_NH3_bidirectional - nh3_emission_flux (positive down); "
    "vd_NH3 stays the deposition-only velocity used by the budget")

#: The hours counted of :func:`velocities` (site, receptor or site) and the hourly flag
#: each counts.
COUNT_FLAGS = {"n_ustar_floor": "ustar_floor_used", "n_ra_cap": "ra_cap_used",
               "n_theta_star_limited": "theta_star_limited",
               "n_pressure_estimated": "pressure_estimated",
               "n_ra_height_raised": "ra_height_raised", "n_hno3_rc_floor": "rc_floor_used_HNO3",
               "n_cloud_default": "cloud_cover_source"}


def _made(outputs):
    """The hourly variables made for `outputs` (None: every one): those asked for and
    the flags of the counts asked for (dropped once counted, :func:`_asked`)."""
    if outputs is None:
        return None
    return frozenset(outputs) | {COUNT_FLAGS[n] for n in outputs if n in COUNT_FLAGS}


def _asked(ds: xr.Dataset, outputs) -> xr.Dataset:
    """`ds` without the variables made only to be counted."""
    if outputs is None:
        return ds
    extra = [n for n in ds.data_vars if n not in outputs]
    return ds.drop_vars(extra) if extra else ds


_PREV = "_previous_precipitation"
_FROST = "_autumn_frost_seen"


#: The steps of :func:`velocities` as stages of the graph (:mod:`workbench.graph`), with
#: the options each reads: a step is computed again only when one of them, or a step
#: it is run on, changes.  Steps 1-4 (air, sun, surface layer, receptors' u*, L, Ra):
_MICROMET_OPTIONS = ("roughness", "ustar_floor", "ra_cap", "ra_min_height_z0",
                     "blending_height", "ustar_transfer", "ustar_transfer_receptor",
                     "night_cloud_cover", "unstable_iterations",
                     "charnock_iterations")
#: Step 5 (season and wetness; the dew rule as the gas scheme resolves it).
_STATE_OPTIONS = ("seasonal_category", "wetness_rule", "season_rule", "dew_rule", "gas_scheme")
#: The gases (Rb, Rc and its paths, Vd; the bidirectional NH3 model).
_GAS_OPTIONS = ("gas_scheme", "gases", "nh3_treatment", "hno3_rc_floor",
                "nh3_emission_potential", "nh3_acid_ratio", "rc_scale", "so2_codeposition",
                "nh3_cuticle", "nh3_acid_ratio_from_air", "so2_cuticle")
#: One particle mode (the mode itself is a parameter).
_PARTICLE_OPTIONS = ("size_nodes", "particle_settling")
_graph.declare("micromet", {"dry": _MICROMET_OPTIONS}, freeze=True,
               doc="steps 1-4: air, sun, surface layer, u*, L and Ra over each receptor")
_graph.declare("canopy_state", {"dry": _STATE_OPTIONS}, freeze=True,
               doc="step 5: seasonal category and surface wetness")
_graph.declare("gas_vd", {"dry": _GAS_OPTIONS}, freeze=True,
               doc="step 6: Rb, Rc (and paths) and Vd of each gas")
_graph.declare("particle_mode_vd", {"dry": _PARTICLE_OPTIONS}, freeze=True,
               doc="step 6: mass-weighted Vd of one log-normal particle mode")

_STATE_OUT = ("cat", "cat_src", "wet", "kind", "wet_src")

#: Hourly inputs derived from the air concentrations (site, time), read when present:
#: the NH3/SO2 molar ratio of the co-deposition option [1]
#: (:func:`workbench.drydep.codeposition.hourly_ratio`), the acid ratio of
#: ``nh3_acid_ratio_from_air`` [1] and the coarse fraction of a particle species from
#: the sampler of each hour [1]
#: (:func:`workbench.drydep.particle_fractions.hourly_sampler_fractions`).
AIR_DERIVED = ("nh3_so2_ratio", "nh3_acid_ratio") + tuple(f"coarse_fraction_{sp}" for sp in
                                         ("pSO4", "pNO3", "pNH4", "pNa", "pCl", "pCa"))
#: The steps that read the hourly inputs of :data:`AIR_DERIVED` (the gases: the NH3/SO2
#: and acid ratios): keyed on the air too where a calculation is given another air than
#: its study's (:class:`workbench.graph.Steps`).  The others are handed the met without
#: those inputs (:func:`workbench.drydep.core_hourly._hourly`), so that the velocity runs
#: on the Monte Carlo's grid of scaled air (:mod:`workbench.analysis.airvd`) share
#: their surface layer, canopy state and particle modes; the particles' coarse
#: fractions weigh the cached modes outside the steps.
READS_AIR = frozenset({"gas_vd"})


def _stage(cache, stage: str, compute, opt, after=(), **params):
    """``compute(opt)`` of a step, or its cached result (`cache` None: no caching).

    `cache` is a :class:`workbench.graph.Steps`: the step's key is derived from the
    options it declares, `params` and the steps named in `after`; `compute` gets a
    guarded view of the options (an undeclared read raises).  Cached results are dicts
    of frozen (read-only) numpy arrays, handed to several output Datasets without copies.
    """
    if cache is None:
        return compute(opt)
    return cache.run(stage, compute, opt, after, reads_air=stage in READS_AIR, **params)


def _mode_lookup(cache, opt, mode):
    """(key, cached {"vd": array} or MISSING, guarded view) of one particle mode's step
    (run on the surface layer and the canopy state)."""
    if cache is None:
        return None, _graph.MISSING, _graph.OptionView(
            opt, _graph.STAGES["particle_mode_vd"].reads["dry"], "particle_mode_vd", "dry")
    return cache.lookup("particle_mode_vd", opt, ("micromet", "canopy_state"), mode=mode)


def _summaries(variables, surf, receptors, opt, outputs=None) -> dict:
    """The (site, receptor) Variables of :func:`velocities`: d and the hours counted.

    Parameters
    ----------
    variables : mapping of str to xarray.Variable
        The hourly Variables of the whole record (numpy or dask-backed).
    surf : xarray.Dataset
    receptors : list of str
    opt : DryOptions
    outputs : collection of str, optional
        The summaries made (default: every one; a count whose hourly flag is not among
        `variables` is not made).

    Returns
    -------
    dict
        ``displacement_height`` [m], ``active`` [1] and the ``n_*`` counts [1].
    """
    def wanted(name):
        return outputs is None or name in outputs
    extra = {}
    if wanted("displacement_height"):
        _, d_r = _receptors.receptor_roughness(surf, receptors, opt)
        extra["displacement_height"] = xr.Variable(
            ("site", "receptor"), d_r, {"units": "m", "long_name": "displacement height"})
    if wanted("active"):
        extra["active"] = xr.Variable(("site", "receptor"), surf["active"].values,
                                      {"units": "1", "long_name": "the site wants this receptor"})
    counts = {k: v for k, v in COUNT_FLAGS.items() if k != "n_cloud_default"}
    if "rc_floor_used_HNO3" not in variables:
        del counts["n_hno3_rc_floor"]

    def hours(v, long_name):  # hours counted over time (numpy sums in memory)
        dims = tuple(d for d in v.dims if d != "time")
        attrs = {"units": "1", "long_name": f"hours counted: {long_name}"}
        if v.chunks is not None:
            return xr.Variable(dims, v.sum("time").data, attrs)
        return xr.Variable(dims, np.sum(v.values, axis=v.dims.index("time")), attrs)
    for name, flag in counts.items():
        if wanted(name) and flag in variables:
            v = variables[flag]
            extra[name] = hours(v, v.attrs["long_name"])
    if wanted("n_cloud_default") and "cloud_cover_source" in variables:
        extra["n_cloud_default"] = hours(variables["cloud_cover_source"] == 2,
                                         "cloud cover from the night_cloud_cover option")
    return extra
