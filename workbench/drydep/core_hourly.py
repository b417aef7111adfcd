"""The hourly block of the dry-deposition velocity calculation (:func:`_hourly`).

Part of :mod:`workbench.drydep.core`, which re-exports :func:`_hourly` and looks it up
in its own namespace (so that a patch of ``workbench.drydep.core._hourly`` is the
block that :func:`workbench.drydep.core.velocities` runs).  The steps are those of the
docstring of :mod:`workbench.drydep.core`.
"""
from __future__ import annotations

import numpy as np
import xarray as xr

from .. import graph as _graph
from ..constants import HALF_HOUR
from ..surface.air import specific_humidity_deficit
from . import canopy as _canopy
from . import gas as _gas
from . import micromet as _micromet
from . import nh3_bidirectional as _nh3
from . import particle_fractions as _fractions
from . import particle_limit as _limit
from . import particles as _particles
from . import seasons as _seasons
from . import siteblocks as _blocks
from . import wetness as _wetness
from .core_steps import (AIR_DERIVED, CLOUD_SOURCE, METHOD, NH3_BIDIRECTIONAL_NOTE,
                         NH3_NOTE, _FROST, _PREV, _STATE_OUT, _made, _mode_lookup, _stage, _summaries)
from .options import DryOptions


def _same_weights(a, b) -> bool:
    """Two particle species' (mode, mass weight) lists are equal: the same modes in the
    same order with equal weights (their Vd are then equal bit for bit)."""
    return len(a) == len(b) and all(
        ma == mb and np.shape(wa) == np.shape(wb) and np.array_equal(wa, wb)
        for (ma, wa), (mb, wb) in zip(a, b))


def _same_bits(a, b) -> bool:
    """`a` and `b` are arrays of one shape and dtype, equal bit for bit."""
    return (isinstance(a, np.ndarray) and isinstance(b, np.ndarray) and a.shape == b.shape
            and a.dtype == b.dtype and np.ascontiguousarray(a).tobytes()
            == np.ascontiguousarray(b).tobytes())


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

    def of(data):
        def st(name):  # (site, 1, time)
            if name not in data:
                return np.full((n_s, 1, n_t), np.nan)
            return np.asarray(data[name].values, dtype=float)[:, None, :]
        return st
    st = of(block)
    # steps 1-5 read the met alone, not the inputs made from the air (READS_AIR): the
    # Monte Carlo's velocity runs on scaled air share them (workbench.graph.Steps)
    met_block = block.drop_vars([v for v in AIR_DERIVED if v in block])
    st_met = of(met_block)

    def site(name):  # (site, 1, 1)
        return np.asarray(surf[name].values, dtype=float)[:, None, None]

    def rec(values):  # (1, receptor, 1)
        return np.asarray(values)[None, :, None]

    def micromet(opt):  # steps 1-4 (workbench.drydep.micromet)
        return _micromet.surface_layer(opt, met_block, surf, met_surf, receptors, st_met, site)

    rset = tuple(receptors)                  # a cache may serve several receptor sets
    m = _stage(cache, "micromet", micromet, opt, receptors=rset)
    (temp, u, rh, k_down, precip, pres, rho, snow, cloud, cloud_src, pressure_estimated, us_m,
     h_m, method, ok, theta_limited, night, us_r, floor_used, h_r, inv_l, z_ref, raised, ra,
     cap_used, valid, z0_r) = (m[k] for k in _micromet.OUT)

    def season_wetness(opt, block=met_block, st=st_met):  # the met alone (READS_AIR)
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

    # with `outputs` the gases' step keeps only the arrays of the variables made (its
    # key says which): the Monte Carlo's runs on scaled air keep their Vd, not copies
    # of the Rb and the paths of Rc that the air leaves as they were
    # (workbench.analysis.airvd.air_outputs)
    kept = None if made is None else (tuple(sorted(made)), bool(opt.components))
    exchange_out = {"vd": "vd_NH3_bidirectional", "emission": "nh3_emission_flux",
                    "chi_s": "nh3_compensation_point"}

    def needed(name):  # an entry of the gases' step read by a variable made
        part, g = name.split("|", 1)
        if part == "nh3bd":
            return keep(exchange_out.get(g, name))
        if part in ("rb", "rc", "vd"):
            return keep(f"{part}_{g}")
        if part == "codeposition_used":
            return keep("so2_codeposition_used")
        if part == "floor_used":
            return g == "HNO3" and keep("rc_floor_used_HNO3")
        if part in scheme.PATHS:
            shared = part in getattr(scheme, "SHARED_PATHS", ())
            return kept[1] and keep(f"rc_{part}" if shared else f"rc_{g}_{part}")
        return True

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
        return flat if kept is None else {k: v for k, v in flat.items() if needed(k)}


    gp = _stage(cache, "gas_vd", gas_parts, opt, ("micromet", "canopy_state"), receptors=rset,
                **({} if kept is None else {"kept": kept}))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for g in opt.gases:
            comp = {k.split("|")[0]: v for k, v in gp.items() if k.endswith(f"|{g}")}
            if keep(f"rb_{g}"):
                out[f"rb_{g}"] = srt(gp[f"rb|{g}"], "s m-1", f"quasi-laminar resistance of {g}")
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
            extra = {"note": NH3_NOTE} if g == "NH3" else {}
            if keep(f"vd_{g}"):
                out[f"vd_{g}"] = srt(comp["vd"], "m s-1", f"dry deposition velocity of {g}",
                                     **extra)
        if any(k.startswith("nh3bd|") for k in gp):
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
        # the particles only where a Vd of theirs is made (a run on scaled air makes
        # the gases' alone: its particles would be the point run's)
        if made is None or any(keep(f"vd_{sp}") for sp in opt.particles):
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
            # species of equal mode weights (one mode each, pSO4 and pNH4 by default)
            # share one Vd: computed once, its array referenced by each variable
            shared = []      # [(mode, weight) list, total, settle, Variable or None]
            for sp in opt.particles:
                weights, coarse, source = parts[sp]
                ws = [(mode, _fractions.broadcast_weight(w)) for mode, w in weights]
                same = next((e for e in shared if _same_weights(e[0], ws)), None)
                if same is None:
                    total = settle = 0.0
                    for mode, w in ws:
                        total = total + w * by_mode[mode][0]
                        settle = settle + w * by_mode[mode][1]
                    if len(ws) == 1 and _same_bits(total, by_mode[ws[0][0]][0]):
                        total = by_mode[ws[0][0]][0]       # one mode of weight 1: its Vd
                    same = [ws, total, settle, None]
                    shared.append(same)
                total, settle = same[1], same[2]
                # Zhang et al. 2001, Eq. 1 with Rs > 0: v_s <= Vd <= v_s + 1/Ra, or a defect
                _limit.check_aerodynamic_limit(
                    np.broadcast_to(total, shape3), settle, ra, sp, block["site"].values,
                    receptors, block["time"].values)
                if keep(f"vd_{sp}"):
                    attrs = {"units": "m s-1", "long_name": "mass-weighted dry deposition "
                             f"velocity of {sp} (Zhang et al. 2001)",
                             **_blocks.particle_attrs((particle_parts or parts)[sp])}
                    if same[3] is None:
                        same[3] = srt(total, **attrs)
                        out[f"vd_{sp}"] = same[3]
                    else:                      # the same array, this species' attributes
                        out[f"vd_{sp}"] = xr.Variable(same[3].dims, same[3].data, attrs)

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
