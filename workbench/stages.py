"""The stages of a budget in the stage graph (:mod:`workbench.graph`).

Each function here is a named, pure stage: it gets its options as guarded views
(``o.wet``, ``o.dry``, ``o.budget``: only the declared fields can be read), its
upstream results and inputs by name, and plain parameters.
:class:`workbench.pipeline.Study` runs them; the velocity steps are declared in
:mod:`workbench.drydep.core` and the pieces of the dry rows in
:mod:`workbench.drycomponents`.
"""
from __future__ import annotations

import dataclasses
import re

import numpy as np
import xarray as xr

from . import periods as _periods
from .budget import BudgetOptions, assemble, derived
from .budget_assembly import budget_layout as _budget_layout, wet_columns, wet_parts
from .period_notes import median_hours, one_sample_notes
from .drycomponents import NH3_EXCHANGE, fill_arrays, prepare_velocities
from .dryflux import _count_cumulative, fill_diurnal, hour_slots
from .graph import content_digest, declare, stage, variables_digest
from .wet.options import WetOptions
from .pairfill import fill_value

#: Wet options that act on periods only (completeness, fills, sea salt): the wet
#: chain's own reads.  The screening reads every other wet option, and the sea-salt
#: tracer (a SO4 below detection beside it takes the sea salt as its floor).
WET_PERIOD_OPTIONS = ("hydro_start_month", "straddle", "min_gauge_fraction",
                      "min_coverage_fraction", "min_valid_precip_fraction", "min_valid_samples",
                      "period_fill", "seasalt_tracer")
WET_QA_OPTIONS = tuple(f.name for f in dataclasses.fields(WetOptions)
                       if f.name not in WET_PERIOD_OPTIONS)
#: Dry options read by the velocities (every step's reads and the assembly's);
#: ``compare_schemes`` is read by ``workbench run`` only (it runs the graph twice).
VELOCITY_OPTIONS = ("gas_scheme", "gases", "particles", "wetness_rule", "dew_rule",
                    "season_rule", "seasonal_category", "ustar_floor", "ra_cap",
                    "ra_min_height_z0", "blending_height", "ustar_transfer",
                    "night_cloud_cover", "roughness", "particle_modes", "coastal_distance",
                    "size_nodes", "particle_settling", "unstable_iterations",
                    "charnock_iterations",
                    "nh3_treatment", "nh3_emission_potential", "nh3_acid_ratio",
                    "hno3_rc_floor", "rc_scale", "components", "so2_codeposition",
                    "nh3_cuticle", "nh3_acid_ratio_from_air", "sampler_coarse_fraction",
                    "so2_cuticle",
                    "ustar_transfer_receptor")
#: Budget options of the assembly: completeness, status, bulk collectors and basis, and
#: every other one for its provenance attribute (it runs on the dry rows that read them).
BUDGET_OPTIONS = tuple(f.name for f in dataclasses.fields(BudgetOptions))


@stage("periods", reads={"wet": ("hydro_start_month",)})
def periods(o, span, resolution, start, end):
    """The reporting periods (calendar or hydrological years, seasons, months)."""
    s0, e0 = span
    t0 = np.datetime64(start) if start else s0
    t1 = np.datetime64(end) if end else e0
    return _periods.make_periods(t0, t1, resolution, hydro_start_month=o.wet.hydro_start_month)


@stage("sample_flags", freeze=True)
def sample_flags(o, precipitation):
    """The flag codes of each precipitation sample (no option changes them)."""
    from .wet.screening import _flag_table, _values
    codes, unknown = _flag_table(_values(precipitation, "flags", "", object))
    return {"codes": codes, "unknown": unknown}


@stage("screen", reads={"wet": WET_QA_OPTIONS + ("seasalt_tracer",)}, counts_as="screened")
def screen(o, precipitation, met, flags=None):
    """Per-sample QA of the precipitation chemistry."""
    from .wet import screen as _screen
    table = None if flags is None else (flags["codes"], flags["unknown"])
    return _screen(precipitation, o.wet, met=met, flag_table=table)


@stage("wet", reads={"wet": tuple(f.name for f in dataclasses.fields(WetOptions))},
       counts_as="wet")
def wet(o, screened, periods, met):
    """Wet deposition over the periods (PWMs, completeness, fills, sea salt).

    It reads the period options; it declares every wet option because it writes them
    all to its provenance attribute (and it runs on the screening, which reads the rest).
    """
    from .wet import wet_deposition
    return wet_deposition(screened, periods, o.wet, met=met)


@stage("surfaces")
def surfaces(o, catalogue):
    """The receptor surfaces of the catalogue (with the site overrides)."""
    return catalogue.surfaces()


@stage("history_surfaces")
def history_surfaces(o, catalogue, history):
    """The receptor surfaces with the classes a site's own surface had before its
    declared land-use changes (`history`: :func:`workbench.surfacehistory.land_use_history`,
    read from the catalogue's ``[[site.change]]`` tables), each computed with its class
    defaults."""
    from .surfacehistory import history_catalogue
    return history_catalogue(catalogue, history).surfaces()


@stage("mast_in_force")
def mast_in_force(o, met, history):
    """The met with the class under the wind mast over each hour where it follows the
    site's declared land-use changes (`history`: :func:`workbench.surfacehistory.mast_history`,
    the sites without ``met_land_use``): :func:`workbench.surfacehistory.mast_in_force`."""
    from .surfacehistory import mast_in_force as _mast
    return _mast(met, history)


@stage("land_use_in_force")
def land_use_in_force(o, velocities, surfaces, history, receptors, wanted):
    """The velocities with each site's own surface under the class in force at each hour
    (:func:`workbench.surfacehistory.in_force`); `wanted`: the pairs no site asks for are
    put back to not computed."""
    from .surfacehistory import in_force
    return in_force(velocities, history, receptors,
                    surfaces["active"] if wanted else None)


@stage("velocities", reads={"dry": VELOCITY_OPTIONS}, counts_as="velocities")
def velocities(o, met, surfaces, catalogue, steps, receptors, air=None, outputs=None):
    """Hourly Ra, Rb, Rc and Vd (its steps are stages of their own).

    The hourly inputs that dry options take from the air concentrations are added to
    the met first (:func:`met_with_air`); the steps that use them declare the options
    that make them, so the steps are keyed on the met as read.  `outputs` (a tuple of
    names, a parameter: it enters the key) makes those variables only, the same bits
    as in the whole result (:func:`workbench.drydep.velocities`): the Monte Carlo's
    runs on scaled air ask for the Vd that follow the air, not for copies of every
    variable of the point run (:func:`workbench.analysis.airvd.grid_pieces`).
    """
    from .drydep import velocities as _velocities
    dry = o.dry
    met = met_with_air(met, air, surfaces, dry)
    if dry.nh3_treatment == "bidirectional":          # the catalogue's site potentials
        site_g = catalogue.nh3_emission_potential()
        if site_g:
            dry = dry.with_values(nh3_emission_potential={**site_g,
                                                          **dry.nh3_emission_potential})
    vd = _velocities(met, surfaces, dry, cache=steps,
                     receptors=None if receptors is None else list(receptors),
                     outputs=None if outputs is None else frozenset(outputs))
    if vd.chunks:
        # dask-backed met: the engine runs chunk by chunk (in parallel) once, here; every
        # stage after this one reads the same computed arrays instead of re-running the
        # task graph for each of them (21 computes of the whole engine before)
        vd = vd.compute()
    return vd


def pair_groups(surfaces, sites) -> list:
    """The sites that ask for the same receptor surfaces, and those surfaces.

    Parameters
    ----------
    surfaces : xarray.Dataset
        Receptor surfaces (site, receptor) with ``active`` (the site wants it).
    sites : sequence of str
        The sites computed (those of the met), in their order.

    Returns
    -------
    list of (tuple of str, tuple of str)
        (sites, receptors in the order of `surfaces`) per distinct set of wanted
        receptors, in the order of each set's first site.
    """
    recs = [str(r) for r in surfaces["receptor"].values]
    act = surfaces["active"].sel(site=list(sites)).transpose("site", "receptor").values
    groups = {}
    for s, row in zip(sites, act):
        groups.setdefault(tuple(r for r, a in zip(recs, row) if a), []).append(str(s))
    return [(tuple(g), r) for r, g in groups.items()]


@stage("site_subset")
def site_subset(o, data, sites):
    """Some sites of a (site, ...) Dataset, in the order given (the met of a group)."""
    return data.sel(site=list(sites))


_MODE_WEIGHT = re.compile(r"\), ([-+0-9.eE]+|nan|inf)\)")


def _site_attrs(attrs, part_sites, sites) -> dict:
    """The attributes of a variable over the groups' sites, as one dense call gives them:
    per-site lists (and the per-site texts of a ``*_source``, joined by ", ") in site
    order, the largest weight of each mode of ``modes`` (the maximum over the sites),
    equal values as they are."""
    out = {}
    where = {str(s): i for i, s in enumerate(sites)}
    for key, first in attrs[0].items():
        vals = [a.get(key) for a in attrs]
        per_site = isinstance(first, list) or (isinstance(first, str) and key.endswith("_source"))
        split = [v if isinstance(v, list) else str(v).split(", ") for v in vals]
        if per_site and all(len(v) == len(ps) for v, ps in zip(split, part_sites)):
            merged = [None] * len(sites)
            for v, ps in zip(split, part_sites):
                for x, s in zip(v, ps):
                    merged[where[str(s)]] = x
            out[key] = merged if isinstance(first, list) else ", ".join(merged)
        elif all(v == first for v in vals[1:]):
            out[key] = first
        elif key == "modes":
            weights = np.array([[float(w) for w in _MODE_WEIGHT.findall(v)] for v in vals])
            top = iter(repr(float(w)) for w in weights.max(axis=0))
            out[key] = _MODE_WEIGHT.sub(lambda m: f"), {next(top)})", first)
        else:
            out[key] = first
    return out


#: The note of a velocities Dataset that holds the wanted pairs only.
WANTED_PAIRS_NOTE = ("only the (site, receptor) pairs a site asks for (active) are computed; "
                     "the others are NaN (0 or false for counts and flags); the hourly paths "
                     "of Rc and the diagnostics of the steps are left out (Study.velocities "
                     "with receptors= gives every variable)")
#: Hourly (site, receptor, time) variables of a whole run's velocities: what the budget
#: reads (``vd_*``, the NH3 exchange) and what velocities.nc writes (Ra, Rb, Rc and Vd,
#: u*, L, z0, wetness and its source, and the flags counted).  The Rc paths and the steps' diagnostics,
#: half of the bytes, stay in the graph's group results.
WHOLE_RUN_HOURLY = ("friction_velocity", "obukhov_length", "ra", "roughness_length",
                    "displacement_height", "seasonal_category", "surface_wet", "wetness_source",
                    "ustar_floor_used", "ra_cap_used", "ra_height_raised",
                    *NH3_EXCHANGE.values())


def _kept(name, dims) -> bool:
    """A variable the wanted-pairs velocities keep (:data:`WHOLE_RUN_HOURLY`)."""
    if not {"site", "receptor", "time"} <= set(dims):
        return True
    return (name in WHOLE_RUN_HOURLY or name.startswith(("vd_", "rb_"))
            or (name.startswith("rc_") and name.count("_") == 1))


@stage("wanted_pairs")
def wanted_pairs(o, sites, receptors, **parts):
    """The velocities of the groups of sites, each computed on its own receptors, put
    on the (site, receptor, time) layout; the pairs no site asks for are not computed.

    They hold NaN (0 or false for counts and flags; ``active`` false), as
    :data:`WANTED_PAIRS_NOTE` says in the ``pairs`` attribute; only the variables of
    :func:`_kept` are put on the layout.  `parts` are the velocities of the groups
    (:func:`pair_groups`); `sites` and `receptors` the axes of the result.
    """
    parts = [parts[k] for k in sorted(parts)]
    first = parts[0]
    s_pos = {s: i for i, s in enumerate(sites)}
    r_pos = {r: i for i, r in enumerate(receptors)}
    sizes = {"site": len(sites), "receptor": len(receptors)}
    where = [{"site": np.array([s_pos[str(s)] for s in p["site"].values]),
              "receptor": np.array([r_pos[str(r)] for r in p["receptor"].values])}
             for p in parts]
    covered = np.zeros((len(sites), len(receptors)), bool)     # the pairs computed
    for w in where:
        covered[w["site"][:, None], w["receptor"][None, :]] = True
    out = {}
    laid = []          # (the parts' arrays, the layout made of them): one layout each
    for name, v in first.data_vars.items():
        v = v.variable
        if not _kept(name, v.dims):
            continue
        if "site" not in v.dims:
            out[name] = v
            continue
        sources = [p.variables[name].data for p in parts]
        done = next((a for srcs, a, dims in laid if dims == v.dims
                     and all(x is y for x, y in zip(srcs, sources))), None)
        if done is not None:     # variables of one array in every part (particle Vd of
            out[name] = xr.Variable(v.dims, done, _site_attrs(   # equal modes)
                [p.variables[name].attrs for p in parts], [p["site"].values for p in parts],
                sites))
            continue
        shape = tuple(sizes.get(d, v.shape[i]) for i, d in enumerate(v.dims))
        a = np.empty(shape, dtype=v.dtype)          # every element written once below
        axes = [v.dims.index(d) for d in ("site", "receptor") if d in v.dims]
        view = np.moveaxis(a, axes, range(len(axes)))          # (site[, receptor], ...)
        view[~(covered if len(axes) == 2 else covered.any(axis=1))] = fill_value(v.dtype, v.attrs)
        for p, w in zip(parts, where):
            pv = p.variables[name]
            got = np.moveaxis(np.asarray(pv.transpose(*v.dims).values), axes,
                              range(len(axes)))
            if len(axes) == 2:
                view[w["site"][:, None], w["receptor"][None, :]] = got
            else:
                view[w["site"]] = got
        a.flags.writeable = False                 # shared with the cache, as Vd's are
        laid.append((sources, a, v.dims))
        out[name] = xr.Variable(v.dims, a, _site_attrs([p.variables[name].attrs for p in parts],
                                                       [p["site"].values for p in parts], sites))
    coords = {"site": list(sites), "receptor": list(receptors)}
    coords.update({k: c.variable for k, c in first.coords.items()
                   if not {"site", "receptor"} & set(c.dims)})
    ds = xr.Dataset(out, coords=coords, attrs=dict(first.attrs))
    ds.attrs["pairs"] = WANTED_PAIRS_NOTE
    return ds


def met_with_air(met, air, surfaces, dry_options):
    """The met Dataset with the hourly inputs the dry options take from the air
    concentrations (site, time) [1]: the NH3/SO2 ratio of ``so2_codeposition``, the acid
    ratio of ``nh3_acid_ratio_from_air`` and the sampler coarse fractions of
    ``sampler_coarse_fraction`` (docs/methods_dry.md, docs/methods_dry_particles.md).
    `met` itself when none is asked.
    """
    if air is None or not (dry_options.so2_codeposition or dry_options.nh3_acid_ratio_from_air
                           or dry_options.sampler_coarse_fraction):
        return met
    from .drydep import codeposition, particle_fractions
    from .surface.air import station_pressure
    sites, times = [str(x) for x in met["site"].values], met["time"].values
    extra = {}
    if dry_options.so2_codeposition or dry_options.nh3_acid_ratio_from_air:
        t = met["temperature"].transpose("site", "time").values
        p = (met["pressure"].transpose("site", "time").values if "pressure" in met
             else np.full(t.shape, np.nan))
        elev = surfaces["elevation"].sel(site=sites).values.astype(float)
        p, _ = station_pressure(p, elev[:, None])
        if dry_options.so2_codeposition:
            extra["nh3_so2_ratio"] = codeposition.hourly_ratio(air, times, sites, t, p)
        if dry_options.nh3_acid_ratio_from_air:
            extra["nh3_acid_ratio"] = codeposition.hourly_acid_ratio(air, times, sites, t, p)
    for sp, f in particle_fractions.hourly_sampler_fractions(air, times, sites,
                                                             dry_options).items():
        extra[f"coarse_fraction_{sp}"] = f
    return met.assign({k: (("site", "time"), v, {"units": "1"}) for k, v in extra.items()})


@stage("vd_content")
def vd_content(o, velocities, variable):
    """Digest of one variable of the velocities (and the scheme named with it), so that
    an option that leaves a species' Vd as it was reuses everything built on it.  The
    variable's name is not in it: the species of equal Vd (pSO4 and pNH4 of one particle
    mode) share the ``vd_filled`` stage."""
    return variables_digest([("vd", velocities.variables[variable])],   # not its name:
                            velocities.attrs.get("gas_scheme", "model"))  # equal Vd, one key


@stage("hour_slots")
def met_hour_slots(o, met):
    """The (year, month, hour) and (month, hour) slots of the met's hours, shared by the
    gap fills of every species (:func:`workbench.dryflux.hour_slots`)."""
    return hour_slots(met["time"].values)


@stage("vd_filled", reads={"budget": ("min_slot_hours",)})
def vd_filled(o, vd, slots=None, classes=None, masks=None):
    """The gap-filled hourly Vd of a model's Vd and its fill mask
    (:func:`workbench.dryflux.fill_diurnal`), keyed by the content of the Vd (not its
    name: ``vd_content``), so the species of equal Vd hold one pair of arrays.  `vd`,
    `slots` and `classes` as for :func:`vd_fill`; `masks`: a callable giving the fill
    mask of equal content held already (a study: the ``filled_mask`` stage: the Vd
    with their gaps in the same hours hold one mask)."""
    filled, was = fill_diurnal(vd[0].load(), o.budget.min_slot_hours, slots,
                               None if classes is None else classes[0])
    return filled, (was if masks is None else was.copy(deep=False, data=masks(was.data)))


@stage("filled_mask", freeze=True)
def filled_mask(o, mask):
    """A filled Vd's mask of the filled hours, keyed by its content (:func:`vd_filled`)."""
    return {"was": mask}


def _as_filled(base, got):
    """`got` (filled, was) of :func:`vd_filled` on the DataArray `base` (its name, attrs
    and coordinates, as :func:`workbench.dryflux.fill_diurnal` of `base` gives them),
    their arrays not copied."""
    filled = base.copy(deep=False, data=got[0].data)
    filled.attrs = dict(base.attrs)
    return filled, base.copy(deep=False, data=got[1].data)


@stage("vd_fill", reads={"budget": ("min_slot_hours",)}, counts_as="dry")
def vd_fill(o, vd, name, fixed, sites, slots=None, classes=None, counts=None, filled=None):
    """Gap-filled hourly Vd of a species (its mean diurnal cycle), or a fixed Vd.

    `vd` is ``(DataArray, scheme)`` of the model or, for a fixed Vd, the
    ``(ids, receptors, times)`` axes; `slots` the ``hour_slots`` of its time axis;
    `classes` ``(DataArray, scheme)`` of ``land_use_in_force`` when a site's own surface
    changed class inside the record: each hour is filled from its class's hours only.
    `counts`: how the cumulative hour counts are made (:func:`fill_arrays`; a study
    takes them from the ``fill_counts`` stage).  `filled`: a callable giving the
    (filled, was) of the model's Vd (a study: the ``vd_filled`` stage, shared by the
    species of equal Vd); default: filled here.  Filled so, the result has a
    ``content`` key: the filled Vd's on `sites` (:func:`workbench.dryrows.hour_sums`).
    """
    cls = None if classes is None else classes[0]
    min_slot = o.budget.min_slot_hours
    if fixed is not None:
        ids, receptors, times = vd
        template = xr.DataArray(np.full((len(ids), len(receptors), len(times)), np.nan),
                                dims=("site", "receptor", "time"),
                                coords={"site": list(ids), "receptor": list(receptors),
                                        "time": times})
        got = prepare_velocities(None, [name], {name: fixed}, min_slot, template, slots)[name]
    elif filled is not None:
        base = vd[0] if name in NH3_EXCHANGE else vd[0].rename(f"vd_{name}")
        node = filled()
        got = (*_as_filled(base, node.value),
               "nh3 compensation point" if name in NH3_EXCHANGE else vd[1])
        out = fill_arrays(*got, sites, counts=counts)
        # what the rows' sums read of it (``v_np``), by content: the filled Vd's on
        # these sites (:func:`workbench.dryrows.hour_sums`)
        out["content"] = f"{node.key}:sites:{content_digest([np.asarray(sites, object)])}"
        return out
    elif name in NH3_EXCHANGE:
        filled, was = fill_diurnal(vd[0].load(), min_slot, slots, cls)
        got = (filled, was, "nh3 compensation point")
    else:
        ds = xr.Dataset({f"vd_{name}": vd[0]}, attrs={"gas_scheme": vd[1]})
        got = prepare_velocities(ds, [name], {}, min_slot, slots=slots, classes=cls)[name]
    return fill_arrays(*got, sites, counts=counts)


@stage("fill_counts", freeze=True)
def fill_counts(o, masks):
    """The cumulative counts of the modelled and of the filled hours of a filled Vd
    (`masks`: its (modelled, filled) masks, (site, receptor, time)), keyed by the masks'
    content: the fills whose Vd have their gaps in the same hours (the met's, for
    most species; the Monte Carlo's runs on scaled air, :mod:`workbench.analysis.airvd`)
    hold one pair of count arrays."""
    valid, was = masks
    return {"c_valid": _count_cumulative(valid), "c_fill": _count_cumulative(was)}


@stage("season_coverage")
def season_coverage(o, dry_months, months, years):
    """(site, year, species): every season has concentrations in that year."""
    cov = dry_months["coverage"].values > 0                      # (site, month, species)
    yr = months["year"].to_numpy()
    season = months["season"].to_numpy()
    out = np.ones((cov.shape[0], len(years), cov.shape[2]), bool)
    for i, y in enumerate(years["year"].to_numpy()):
        for s in _periods.SEASON_NAMES:
            sel = (yr == y) & (season == s)
            if sel.any():
                out[:, i, :] &= cov[:, sel, :].any(axis=1)
    return out


@stage("collector_split", reads={"wet": ("straddle", "seasalt_tracer")})
def collector_split(o, screened, periods, met, history, collectors):
    """The bulk part of each period's wet deposition, sample by sample, at the sites
    whose collector changed (`history`: :func:`workbench.surfacehistory.collector_history`;
    `collectors`: ``((site, collector now), ...)``), as
    :func:`workbench.surfacehistory.collector_split` gives it."""
    from .surfacehistory import collector_split as _split
    return _split(screened, periods, o.wet, met, history, dict(collectors))


@stage("wet_components", reads={"budget": ("sulfate_basis",)})
def wet_components(o, wet, periods, sites):
    """The budget's wet components on its sites and periods, before the bulk collectors
    (:func:`workbench.budget_assembly.wet_parts`): a dry option or another budget option
    changed, they are not derived again."""
    return wet_parts(wet, list(sites), periods["label"].values, o.budget)


#: Budget options the wet components after the bulk collectors read.
WET_ASSEMBLY_OPTIONS = ("sulfate_basis", "bulk_correction", "bulk_wet_factor",
                        "bulk_wet_factor_ion")


@stage("budget_layout")
def budget_layout(o, catalogue, periods, receptors, collector=None):
    """What of the budget reads no option (:func:`workbench.budget_assembly.budget_layout`:
    the sites' receptors, the collector in force over each period, the land-use notes,
    the yearly factors and the coordinates): computed once per site set, periods and
    receptors."""
    return _budget_layout(catalogue, periods, list(receptors), collector)


@stage("wet_assembled", reads={"budget": WET_ASSEMBLY_OPTIONS})
def wet_assembled(o, wet, layout, wet_parts=None):
    """The budget's wet components after the bulk collectors, and its wet variables
    (:func:`workbench.budget_assembly.wet_columns`): a dry option or a completeness
    option changed, they are not assembled again."""
    return wet_columns(wet, layout, o.budget, wet_from=wet_parts)


@stage("budget", reads={"budget": BUDGET_OPTIONS}, counts_as="budget")
def budget(o, wet, dry, catalogue, periods, season_cov, receptors, collector=None,
           wet_parts=None, layout=None, wet_cols=None):
    """Wet + dry components per site, receptor and period, totals and status
    (`collector`: the ``collector_split`` stage at sites whose collector changed;
    `wet_parts`: the ``wet_components`` stage; `layout`: the ``budget_layout`` stage;
    `wet_cols`: the ``wet_assembled`` stage)."""
    return assemble(wet, dry, catalogue, periods, o.budget, list(receptors), season_cov,
                    collector=collector, wet_from=wet_parts, layout=layout,
                    wet_cols=wet_cols)


@stage("sample_hours")
def sample_hours(o, samples):
    """The median sample length of each sampler [h] (:func:`workbench.period_notes.median_hours`;
    None without samples)."""
    if samples is None or "start" not in samples.variables or not samples["start"].size:
        return None
    return median_hours(samples)


@stage("precipitation_notes", reads={"wet": ("min_coverage_fraction",)})
def precipitation_notes(o, periods, precipitation=None, hours=None):
    """The run note where one precipitation sample is more of the shortest period than
    ``[wet] min_coverage_fraction`` lets it miss (:func:`workbench.period_notes.one_sample_notes`;
    `hours`: the ``sample_hours`` stage)."""
    return one_sample_notes(periods, precipitation,
                            min_coverage_fraction=o.wet.min_coverage_fraction,
                            medians={"precipitation": hours})


@stage("air_notes", reads={"budget": ("min_air_coverage",)})
def air_notes(o, periods, air=None, hours=None):
    """The same note of one air sample and ``[budget] min_air_coverage``."""
    return one_sample_notes(periods, None, air, min_air_coverage=o.budget.min_air_coverage,
                            medians={"air": hours})


@stage("derived")
def derived_quantities(o, budget):
    """Shares, oxidized / reduced N, potential acidity, brackets, total nitrate."""
    return derived(budget)


@stage("part_rows")
def part_rows(o, budget):
    """budget.csv's component rows of a budget (tables_budget.component_rows: status,
    passes and completeness failure of each part), what the status of the derived sums
    reads: the rows of ``budget_table`` without its sums, notes and wet columns."""
    from .tables_budget import component_rows
    return component_rows(budget)


@stage("year_rates")
def year_rates(o, years, derived=None, rows=None, receptors=None):
    """Oxidized and reduced N, the reduced share and the potential acidity of the
    years as yearly rates with their completeness (report_derived.derived_rates on
    budget.csv's rows of the years; `receptors`: those only), for the site explorer's
    N split and the network overview's columns.  `derived` (the ``derived`` stage of
    the years) and `rows` (their ``part_rows``) are the graph's, computed once per
    result and shared with the dry-N bracket; computed here when not given."""
    from .report_derived import derived_rates
    from .tables_budget import component_rows
    if rows is None:
        rows = component_rows(years)
    if receptors is not None:
        keep = [str(r) for r in receptors]
        years = years.sel(receptor=list(receptors))
        rows = rows[rows["receptor"].astype(str).isin(keep)]
        if derived is not None:
            derived = derived.sel(receptor=list(receptors))
    return derived_rates(years, rows, dv=derived)


@stage("network_rates")
def network_rates(o, picks, **years):
    """The derived sums (as ``year_rates``) of each site's own surface over several runs
    at once: each run's years cut to its sites' picked receptors, put side by side on
    the site axis and computed in one call (`years`: ``run_0``, ``run_1``... each a
    run's years; `picks`: per run, its ``(site, receptor)`` pairs)."""
    from .report_derived import rates_side_by_side
    return rates_side_by_side([years[f"run_{i}"] for i in range(len(picks))], picks)


#: Budget options read by the pieces of the dry rows (``air_basis``, ``flux_inputs``
#: and the fills); the ``dry_rows`` stage hands them on, so it declares them all.
ROW_OPTIONS = ("sulfate_basis", "pair_split", "air_censored", "min_slot_hours",
               "diurnal_profile", "preferred_method")
declare("dry_rows", {"budget": ROW_OPTIONS}, counts_as="dry",
        doc="deposition over every air-sampling period of every species "
            "(drycomponents.dry_rows; its pieces are stages)")
declare("dry_components", counts_as="dry",
        doc="dry deposition over the reporting periods (drycomponents.dry_components; "
            "each piece's share is the period_shares stage)")
declare("site_study", doc="the study of one site and some years that an app computes on "
                          "(ui.session.Session.study_for: the inputs cut, a study of its own)")
declare("app_run", doc="an app's run of one site and some years with its settings "
                       "(ui.session.Session.run: Study.run of the site's study, which runs "
                       "the stages above; the settings enter its key whole)")
