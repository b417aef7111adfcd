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
"""
from __future__ import annotations

import functools

import numpy as np
import xarray as xr

from .. import landuse
from ..constants import HALF_HOUR
from ..optional import require
from ..threads import threads_here
from .. import graph as _graph
from ..surface.air import specific_humidity_deficit
from . import canopy as _canopy
from . import gas as _gas
from . import micromet as _micromet
from . import nh3_bidirectional as _nh3
from . import particle_fractions as _fractions
from . import particle_limit as _limit
from . import particles as _particles
from . import receptors as _receptors
from . import seasons as _seasons
from . import siteblocks as _blocks
from . import wetness as _wetness
from .options import DryOptions

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

#: Met variables read (those present), besides the derived ones.
MET_VARIABLES = ("wind_speed", "temperature", "relative_humidity", "solar_radiation",
                 "precipitation", "pressure", "cloud_cover", "friction_velocity",
                 "sensible_heat_flux", "surface_wet", "snow_cover")
#: Hourly inputs derived from the air concentrations (site, time), read when present:
#: the NH3/SO2 molar ratio of the co-deposition option [1]
#: (:func:`workbench.drydep.codeposition.hourly_ratio`) and the coarse fraction of a
#: particle species from the sampler of each hour [1]
#: (:func:`workbench.drydep.particle_fractions.hourly_sampler_fractions`).
AIR_DERIVED = ("nh3_so2_ratio", "nh3_acid_ratio") + tuple(f"coarse_fraction_{sp}" for sp in
                                         ("pSO4", "pNO3", "pNH4", "pNa", "pCl", "pCa"))
#: Hourly inputs derived from the site's declared history (site, time), read when
#: present: the class under the wind mast where it follows the land use
#: (:func:`workbench.surfacehistory.mast_in_force`; -1 the surface of the catalogue).
HISTORY_DERIVED = ("met_land_use_in_force",)
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


def _stage(cache, stage: str, compute, opt, after=(), **params):
    """``compute(opt)`` of a step, or its cached result (`cache` None: no caching).

    `cache` is a :class:`workbench.graph.Steps`: the step's key is derived from the
    options it declares, `params` and the steps named in `after`; `compute` gets a
    guarded view of the options (an undeclared read raises).  Cached results are dicts
    of frozen (read-only) numpy arrays, handed to several output Datasets without copies.
    """
    if cache is None:
        return compute(opt)
    return cache.run(stage, compute, opt, after, **params)


def _mode_lookup(cache, opt, mode):
    """(key, cached {"vd": array} or MISSING, guarded view) of one particle mode's step
    (run on the surface layer and the canopy state)."""
    if cache is None:
        return None, _graph.MISSING, _graph.OptionView(
            opt, _graph.STAGES["particle_mode_vd"].reads["dry"], "particle_mode_vd", "dry")
    return cache.lookup("particle_mode_vd", opt, ("micromet", "canopy_state"), mode=mode)


def _hourly(block: xr.Dataset, surf: xr.Dataset, opt: DryOptions, receptors: list,
            cache=None, met_surf: xr.Dataset | None = None,
            summaries: bool = False, particle_parts: dict | None = None,
            rows: slice | None = None, outputs=None) -> xr.Dataset:
    """All hourly quantities for one in-memory block of the met Dataset.

    Parameters
    ----------
    block : xarray.Dataset
        Met variables (units as in :func:`velocities`), dims (site, time); with
        ``_previous_precipitation`` [mm] and ``_autumn_frost_seen`` [0/1] when it
        is a chunk of a longer record (else they are found here).
    surf : xarray.Dataset
        Receptor surfaces (site, receptor).
    opt : DryOptions
    receptors : list of str
    cache : workbench.graph.Steps, optional
        The steps of this calculation in a stage graph: each step's result is kept
        there, keyed by the options it declares (see :func:`velocities`).
    met_surf : xarray.Dataset, optional
        Every receptor surface of the sites (default `surf`), for the surface around
        the wind mast when `surf` holds only some receptors.
    summaries : bool
        Add the (site, receptor) summaries of :func:`_summaries` (when `block` is the
        whole record).
    particle_parts : dict, optional
        :func:`workbench.drydep.siteblocks.particle_parts` of every site of the call,
        when `block` holds the sites `rows` of it
        (:func:`workbench.drydep.siteblocks.hourly_site_blocks`): the weights are taken
        from those rows, the attributes from every site.
    rows : slice, optional
        The sites of `block` among those of `particle_parts`.
    outputs : collection of str, optional
        The output variables made (default: every one): the others are neither copied
        into the result nor, where only an output needs them, computed
        (:func:`velocities`).

    Returns
    -------
    xarray.Dataset
        The hourly variables of :func:`velocities`, dims (site, receptor, time).
    """
    scheme = _gas.get_scheme(opt.gas_scheme)
    if not np.array_equal(surf["site"].values, block["site"].values):
        surf = surf.sel(site=block["site"].values)
    met_surf = surf if met_surf is None else met_surf
    if not np.array_equal(met_surf["site"].values, block["site"].values):
        met_surf = met_surf.sel(site=block["site"].values)
    n_s, n_t, n_r = block.sizes["site"], block.sizes["time"], len(receptors)

    def st(name):  # (site, 1, time)
        if name not in block:
            return np.full((n_s, 1, n_t), np.nan)
        return np.asarray(block[name].values, dtype=float)[:, None, :]

    def site(name):  # (site, 1, 1)
        return np.asarray(surf[name].values, dtype=float)[:, None, None]

    def rec(values):  # (1, receptor, 1)
        return np.asarray(values)[None, :, None]

    def micromet(opt):  # steps 1-4 (workbench.drydep.micromet)
        return _micromet.surface_layer(opt, block, surf, met_surf, receptors, st, site)

    rset = tuple(receptors)                  # a cache may serve several receptor sets
    m = _stage(cache, "micromet", micromet, opt, receptors=rset)
    (temp, u, rh, k_down, precip, pres, rho, snow, cloud, cloud_src, pressure_estimated, us_m,
     h_m, method, ok, theta_limited, night, us_r, floor_used, h_r, inv_l, z_ref, raised, ra,
     cap_used, valid, z0_r) = (m[k] for k in _micromet.OUT)

    def season_wetness(opt):
        dew_rule = _wetness.resolve_dew_rule(opt.dew_rule, _gas.get_scheme(opt.gas_scheme))
        # --- 5. season and wetness -------------------------------------------------------------
        times = block["time"].values
        mid = times - HALF_HOUR            # the month and year of the hour's middle
        month = _seasons.calendar_month(mid)[None, None, :]
        if opt.seasonal_category is not None:
            cat = _seasons.category_override(month, opt.seasonal_category) + 0.0 * temp
            cat_src = 3.0 + 0.0 * cat
        else:
            by_month = _seasons.category_from_month(month, site("latitude"))
            if opt.season_rule == "surface_state":
                by_month, lai_src = _canopy.lai_season(surf, receptors, times)
            base = by_month + 0.0 * temp
            if _FROST in block:  # found beforehand on the whole record (dask blocks)
                seen = st(_FROST) > 0.5
            elif f"{_FROST}|0" in block:  # the same, one variable per receptor
                seen = np.concatenate([st(f"{_FROST}|{j}") for j in range(len(receptors))],
                                      axis=1) > 0.5
            else:  # the whole record is here
                seen = _seasons.autumn_frost_seen_array(
                    by_month, temp, mid.astype("datetime64[Y]").astype(np.int64)[None, None, :])
            cat, cat_src = _seasons.category_from_state(base, seen, temp,
                                                        snow if "snow_cover" in block else None)
            if opt.season_rule == "surface_state":
                cat_src = np.where(cat_src == 0.0, lai_src, cat_src)
        if _PREV in block:  # found beforehand on the whole record (dask blocks)
            prev = st(_PREV)
        else:  # the whole record is here: the previous hour's, NaN for the first and
            # after a gap in the time axis (wetness.rain_wet then takes this hour's alone)
            prev = _wetness.previous_precipitation(precip, times)
        rain = _wetness.rain_wet(precip, prev)
        assumed = _wetness.previous_unknown(precip, prev)
        if dew_rule == "surface_temperature":
            with np.errstate(invalid="ignore", divide="ignore"):
                t_s = _wetness.surface_temperature(temp, h_r, ra, us_r, rho)
            deficit = _wetness.surface_humidity_deficit(t_s, temp, rh, pres)
        else:
            deficit = specific_humidity_deficit(temp, rh, pres)
        dew = _wetness.dew_wet(deficit, us_r)
        given = st("surface_wet") if "surface_wet" in block else None
        wet, kind, wet_src = _wetness.wetness(opt.wetness_rule, rain, dew, given, assumed)
        wet_src = _wetness.source_codes(wet_src)      # int8, -1 unknown: 1 byte an hour

        here = locals()
        return {k: here[k] for k in _STATE_OUT}

    sw = _stage(cache, "canopy_state", season_wetness, opt, ("micromet",), receptors=rset)
    (cat, cat_src, wet, kind, wet_src) = (sw[k] for k in _STATE_OUT)

    # --- 6. gases and particles ---------------------------------------------------------------
    coords = _blocks.coordinates(block, receptors)
    shape3 = (n_s, n_r, n_t)

    # plain Variables here, coordinates once at the end (a DataArray each cost ~2 ms)
    handed_out = {}  # id -> array given to the output as it is (held, so ids stay unique)

    def own(x, shape):
        """`x` broadcast to `shape`, as a new array; `x` itself when it is one already.

        An array made in this block (not a view) of the full shape is not copied,
        unless it was handed to another output variable before; nor is a frozen
        (read-only, contiguous) array of the cache, which nobody can change.
        """
        if not isinstance(x, np.ndarray) or x.shape != shape or not x.flags.c_contiguous:
            return np.array(np.broadcast_to(x, shape))
        if not x.flags.writeable and cache is not None:
            return x
        if x.base is None and x.flags.writeable and id(x) not in handed_out:
            handed_out[id(x)] = x
            return x
        return np.array(x)

    def srt(x, units, long_name, **extra):
        return xr.Variable(("site", "receptor", "time"), own(x, shape3),
                           {"units": units, "long_name": long_name, **extra})

    def sto(x, units, long_name, **extra):
        arr = own(x, (n_s, 1, n_t)).reshape(n_s, n_t)
        return xr.Variable(("site", "time"), arr, {"units": units, "long_name": long_name, **extra})

    out = {}
    land = rec(np.array(receptors, dtype=object))

    made = _made(outputs)

    def keep(name):  # an output variable asked for or counted (outputs None: every one)
        return made is None or name in made
    def gas_parts(opt):
        scheme = _gas.get_scheme(opt.gas_scheme)
        reads = getattr(scheme, "READS", ("lai", "cos_zenith"))  # LAI and sun when read
        state = _gas.CanopyState(
            land, cat, k_down, temp, kind, site("terrain_slope"), us_r,
            lai=(_canopy.hourly_lai(surf, receptors, block["time"].values)
                 if "lai" in reads else None),
            relative_humidity=rh, cos_zenith=(_canopy.cos_zenith(block["time"].values, site)
                                              if "cos_zenith" in reads else None),
            snow_cover=snow, hno3_rc_floor=opt.hno3_rc_floor,
            nh3_so2_ratio=st("nh3_so2_ratio") if opt.so2_codeposition else None,
            so2_cuticle=opt.so2_cuticle)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            comps = _gas.surface_resistances(scheme, opt.gases, state)
            acid = opt.nh3_acid_ratio
            if opt.nh3_acid_ratio_from_air and "nh3_acid_ratio" in block:
                acid = np.where(np.isfinite(st("nh3_acid_ratio")), st("nh3_acid_ratio"), acid)
            if "NH3" in comps and _nh3.resolve_cuticle(opt.nh3_cuticle, scheme) == "humidity":
                comps["NH3"] = {**comps["NH3"], "rc": _nh3.humidity_cuticle_rc(
                    comps["NH3"], rh, receptors, acid)}
            for g, k in opt.rc_scale.items():      # sensitivity knob: k Rc (default 1)
                if g in comps:
                    comps[g] = {**comps[g], "rc": float(k) * comps[g]["rc"]}
            rbs = _gas.quasi_laminar_resistances(opt.gases, us_r, temp, pres)
            flat = {}
            for g in opt.gases:
                flat[f"rb|{g}"] = rbs[g]
                flat.update({f"{k}|{g}": v for k, v in comps[g].items()})
                flat[f"vd|{g}"] = _gas.deposition_velocity(ra, rbs[g], comps[g]["rc"])
            if opt.nh3_treatment == "bidirectional" and "NH3" in opt.gases:
                flat.update({f"nh3bd|{k}": v for k, v in _nh3.hourly_exchange(
                    comps["NH3"], rbs["NH3"], ra, temp, rh, receptors,
                    [str(x) for x in surf["site"].values], opt, acid_ratio=acid).items()})
        return flat


    gp = _stage(cache, "gas_vd", gas_parts, opt, ("micromet", "canopy_state"), receptors=rset)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for g in opt.gases:
            rb = gp[f"rb|{g}"]
            comp = {k.split("|")[0]: v for k, v in gp.items() if k.endswith(f"|{g}")}
            if keep(f"rb_{g}"):
                out[f"rb_{g}"] = srt(rb, "s m-1", f"quasi-laminar resistance of {g}")
            if keep(f"rc_{g}"):
                out[f"rc_{g}"] = srt(comp["rc"], "s m-1", f"surface resistance of {g} ({scheme.NAME})")
            if opt.components:  # the scheme's own paths, gas-independent ones once
                shared = getattr(scheme, "SHARED_PATHS", ())
                names = getattr(scheme, "PATH_NAMES", {})
                for path in scheme.PATHS:
                    unit = "1" if path == "stomatal_blocking" else "s m-1"
                    label = names.get(path, f"{path.replace('_', ' ')} resistance")
                    if path in shared:
                        if keep(f"rc_{path}"):
                            out[f"rc_{path}"] = srt(comp[path], unit, label)
                    else:
                        if keep(f"rc_{g}_{path}"):
                            out[f"rc_{g}_{path}"] = srt(comp[path], unit, f"{label} of {g}")
            if "codeposition_used" in comp and opt.so2_codeposition:
                if keep("so2_codeposition_used"):
                    out["so2_codeposition_used"] = srt(comp["codeposition_used"] & valid, "1",
                                                       "SO2 non-stomatal resistance from the "
                                                       "NH3/SO2 ratio (co-deposition)")
            if g == "HNO3":
                if keep("rc_floor_used_HNO3"):
                    out["rc_floor_used_HNO3"] = srt(comp["floor_used"] & valid, "1",
                                                    "HNO3 surface resistance raised to its floor")
            vd = comp["vd"]
            extra = {"note": NH3_NOTE} if g == "NH3" else {}
            if keep(f"vd_{g}"):
                out[f"vd_{g}"] = srt(vd, "m s-1", f"dry deposition velocity of {g}", **extra)
        if "nh3bd|vd" in gp:
            if keep("vd_NH3_bidirectional"):
                out["vd_NH3_bidirectional"] = srt(
                    gp["nh3bd|vd"], "m s-1", "NH3 deposition velocity of the canopy compensation "
                    "point model (net flux = C vd - nh3_emission_flux)",
                    note=NH3_BIDIRECTIONAL_NOTE)
            if keep("nh3_emission_flux"):
                out["nh3_emission_flux"] = srt(gp["nh3bd|emission"], "mol m-2 s-1",
                                               "NH3 emission term of the compensation point model")
            if keep("nh3_compensation_point"):
                out["nh3_compensation_point"] = srt(gp["nh3bd|chi_s"], "mol m-3",
                                                    "NH3 stomatal compensation point chi_s")
        # each distinct mode once, all of them in one call (shared surface terms); the
        # mass weight of each mode per site (docs/methods_dry_particles.md 10.1)
        if particle_parts is None:
            parts = _blocks.particle_parts(block, surf, opt)
        else:  # found on every site of the call: this block's rows of the weights
            parts = {sp: ([(mode, w[rows]) for mode, w in pp[0]],) + tuple(pp[1:])
                     for sp, pp in particle_parts.items()}
        modes = list(dict.fromkeys(mode for pp in parts.values() for mode, _ in pp[0]))
        # read the cached modes before storing new ones: storing may evict them
        found = {mode: _mode_lookup(cache, opt, mode) for mode in modes}
        held = {mode: (f[1]["vd"], f[1]["vs"]) for mode, f in found.items()
                if f[1] is not _graph.MISSING}
        todo = [mode for mode in modes if mode not in held]
        if todo:
            view = found[todo[0]][2]          # the step's guarded view of the options
            new = dict(zip(todo, _particles.mass_weighted_velocities(
                todo, rh, us_r, ra, temp, pres, land, cat, wet, view.size_nodes,
                settling=view.particle_settling, with_settling=True)))
            for mode in todo:
                if cache is not None:
                    cache.store("particle_mode_vd", found[mode][0],
                                {"vd": new[mode][0], "vs": new[mode][1]})
                held[mode] = new[mode]
        by_mode = held
        for sp in opt.particles:
            weights, coarse, source = parts[sp]
            total = settle = 0.0
            for mode, w in weights:
                w = _fractions.broadcast_weight(w)
                total = total + w * by_mode[mode][0]
                settle = settle + w * by_mode[mode][1]
            # Zhang et al. 2001, Eq. 1 with Rs > 0: v_s <= Vd <= v_s + 1/Ra, or a defect
            _limit.check_aerodynamic_limit(
                np.broadcast_to(total, shape3), settle, ra, sp, block["site"].values,
                receptors, block["time"].values)
            if keep(f"vd_{sp}"):
                out[f"vd_{sp}"] = srt(total, "m s-1", f"mass-weighted dry deposition velocity of {sp} "
                                      "(Zhang et al. 2001)", **_blocks.particle_attrs(
                                          (particle_parts or parts)[sp]))

    # --- assemble -----------------------------------------------------------------------------
    def obukhov():
        return np.where(inv_l == 0, np.inf, 1.0 / np.where(inv_l == 0, 1.0, inv_l))

    # each made only when asked for (in this order: `own` hands arrays out in it)
    base = {
        "friction_velocity": lambda: srt(us_r, "m s-1", "friction velocity over the receptor"),
        "obukhov_length": lambda: srt(obukhov(), "m", "Obukhov length over the receptor (inf: neutral)"),
        "sensible_heat_flux": lambda: srt(np.where(valid, h_r, np.nan), "W m-2",
                                  "sensible heat flux over the receptor, positive upward"),
        "roughness_length": lambda: srt(z0_r, "m", "roughness length for momentum"),
        "ra": lambda: srt(ra, "s m-1", "aerodynamic resistance from the reference height"),
        "ra_reference_height": lambda: srt(z_ref, "m", "height at which Ra is evaluated"),
        "ra_height_raised": lambda: srt(raised, "1", "sampler below d + m z0: Ra taken higher"),
        "ustar_floor_used": lambda: srt(floor_used, "1", "friction velocity raised to its floor"),
        "ra_cap_used": lambda: srt(cap_used, "1", "aerodynamic resistance lowered to its cap"),
        "seasonal_category": lambda: srt(cat, "1", "Wesely seasonal category (1-5)"),
        "seasonal_source": lambda: srt(cat_src, "1", "why this seasonal category",
                               codes=str(_seasons.SOURCE)),
        "surface_wet": lambda: srt(wet, "1", "surface wetness used (1 wet, 0 dry)"),
        "wet_kind": lambda: srt(kind, "1", "kind of wetness: 0 dry, 1 dew, 2 rain"),
        "wetness_source": lambda: srt(wet_src, "1", "source of the wetness", codes=str(_wetness.SOURCE),
                                      **_wetness.source_attrs()),
        "met_friction_velocity": lambda: sto(us_m, "m s-1", "friction velocity over the wind mast's surface"),
        "met_sensible_heat_flux": lambda: sto(np.where(ok, h_m, np.nan), "W m-2",
                                      "sensible heat flux over the wind mast's surface"),
        "surface_layer_method": lambda: sto(np.where(ok, method, np.nan), "1", "how u* and H were found",
                                    codes=str(METHOD)),
        "theta_star_limited": lambda: sto(theta_limited, "1",
                                  "night theta* reduced so that the stable profile has a root"),
        "cloud_cover_used": lambda: sto(cloud, "1", "cloud cover used"),
        "cloud_cover_source": lambda: sto(cloud_src, "1", "source of the cloud cover",
                                  codes=str(CLOUD_SOURCE)),
        "pressure_estimated": lambda: sto(pressure_estimated, "1",
                                  "pressure missing: standard atmosphere at the site elevation"),
        "night": lambda: sto(night, "1", "stable (night) branch of the surface layer"),
    }
    base = {name: make() for name, make in base.items() if keep(name)}
    variables = {**base, **out}
    if summaries:  # the whole record is here: its counts too, in the same constructor call
        variables.update(_summaries(variables, surf, receptors, opt, outputs))
        if outputs is not None:           # the flags made only to be counted
            variables = {k: v for k, v in variables.items() if k in outputs}
    return xr.Dataset(variables, coords=coords)


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
