"""Mass fraction of each particle species in its fine and coarse modes, per site.

The size split of a measured particle species is rarely measured with it (a filter
pack collects every size), yet the coarse fraction decides its Vd: a 5 um mode
deposits one to two orders of magnitude faster than a 0.4 um one over a forest.
So the coarse fraction is input data, per site, chosen in this order:

0. the sampler's fraction, ``[dry.sampler_coarse_fraction]`` keyed
   ``"<site>/<sampler_id>"``, in the hours that sampler's rows cover (the rows the
   budget uses where samplers overlap; :func:`hourly_sampler_fractions`);
1. the site's ``coarse_fraction`` key (sites.toml, or the scenario's
   ``[sites.<id>]`` table), e.g. ``coarse_fraction = {pNO3 = 0.3}``;
2. a species set in the ``[dry.particle_modes]`` options (differing from its
   default): its fine fraction and coarse mode at every site;
3. the coastal/inland rule of the defaults: a site whose ``coast_distance_km`` is
   below :attr:`~workbench.drydep.options.DryOptions.coastal_distance` takes the
   coastal split of :data:`COASTAL` (nitrate half coarse, on sea salt with sea-salt
   growth); any other site, and a site without ``coast_distance_km``, the inland
   default of :func:`~workbench.drydep.options.default_particle_modes` (nitrate 80 %
   fine ammonium nitrate, 20 % coarse on dust).

Units: fractions [1], distances [m].
"""
from __future__ import annotations

import numpy as np

from .options import COARSE_SEA_SALT, default_particle_modes

#: Coastal split of the species the coastal rule changes: species -> (coarse mass
#: fraction [1], coarse mode).  Nitrate: half coarse, as sodium nitrate on sea salt
#: (common practice; from memory, coastal and marine sites find about half or more of
#: the nitrate above 2.5 um, formed by nitric acid on sea salt; Seinfeld and Pandis
#: 2006, ch. 10, describe the process).  Other species keep their inland split.
COASTAL = {"pNO3": (0.5, COARSE_SEA_SALT)}
#: Codes of ``coarse_fraction_source`` (per site).
SOURCE = {0: "site coarse_fraction key", 1: "[dry.particle_modes] option",
          2: "coastal default (coast_distance_km below coastal_distance)",
          3: "inland default", 4: "inland default (no coast_distance_km)",
          5: "sampler_coarse_fraction option (hours of that sampler; the site's rule "
             "elsewhere)"}


def hourly_sampler_fractions(air, times, sites, opt):
    """Coarse fraction of each particle species from the sampler of each hour.

    Parameters
    ----------
    air : xarray.Dataset or None
        Air concentrations (dim ``period``, with ``site``, ``start``, ``end``,
        ``sampler_id``).
    times : numpy.ndarray of datetime64
        Hourly axis (end of each hour).
    sites : sequence of str
    opt : workbench.drydep.options.DryOptions
        Its ``sampler_coarse_fraction`` (``"<site>/<sampler_id>"`` -> {species: f}).

    Returns
    -------
    dict
        species -> (site, time) array of the coarse fraction [1] of the sampler whose
        row covers the hour (NaN: no such row, the site's rule applies); only species
        named in the option.  Rows of a species measured by several overlapping
        samplers are those the budget uses (:func:`workbench.dryflux.select_samplers`).
    """
    from .codeposition import period_values_on_hours
    table = opt.sampler_coarse_fraction
    if air is None or not table or "sampler_id" not in air:
        return {}
    keys = np.char.add(np.char.add(air["site"].values.astype(str), "/"),
                       air["sampler_id"].values.astype(str))
    out = {}
    for sp in dict.fromkeys(sp for t in table.values() for sp in t):
        if sp not in air:
            continue
        given = {k: float(t[sp]) for k, t in table.items() if sp in t}
        per_row = np.array([given.get(k, np.nan) for k in keys], dtype=float)
        if np.isfinite(per_row).any():
            out[sp] = period_values_on_hours(air, sp, per_row, times, sites)
    return out


def broadcast_weight(w):
    """A mode weight by site (site,) or by site and hour (site, time) as (site, 1, time)."""
    w = np.asarray(w, dtype=float)
    return w[:, None, None] if w.ndim == 1 else w[:, None, :]


def mode_weights(surf, species, opt, hourly=None):
    """Mass weights of the modes of `species` at each site.

    Parameters
    ----------
    surf : xarray.Dataset
        Site variables on ``site`` (:meth:`workbench.io.sites.SiteCatalogue.surfaces`):
        optional ``coast_distance`` [m] and ``coarse_fraction_<species>`` [1] (NaN
        where a site gives none).
    species : str
        Particle species, e.g. ``"pNO3"``.
    opt : workbench.drydep.options.DryOptions
    hourly : numpy.ndarray, optional
        (site, time) coarse fraction of the sampler of each hour (NaN: none), from
        :func:`hourly_sampler_fractions`; it wins where given.

    Returns
    -------
    weights : list of (LogNormalMode, numpy.ndarray)
        Each mode with its mass fraction by site [1] ((site, time) with `hourly`); modes
        with zero weight everywhere are left out.  The fractions sum to 1.
    coarse : numpy.ndarray
        Coarse mass fraction by site. [1]
    source : numpy.ndarray of int
        Where each site's fraction comes from (a key of :data:`SOURCE`).
    """
    n = surf.sizes["site"]
    default = default_particle_modes()[species]
    given = opt.particle_modes.get(species)
    set_by_option = given is not None and given != default
    spec = given if set_by_option else default
    if "coast_distance" in surf:
        dist = np.asarray(surf["coast_distance"].values, dtype=float)
    else:
        dist = np.full(n, np.nan)
    coastal = (dist < opt.coastal_distance) & (species in COASTAL) & (not set_by_option)
    coarse = np.full(n, 1.0 - spec.fine_fraction)
    source = np.where(np.isnan(dist), 4, 3) if not set_by_option else np.full(n, 1)
    if species in COASTAL and not set_by_option:
        coarse = np.where(coastal, COASTAL[species][0], coarse)
        source = np.where(coastal, 2, source)
    name = f"coarse_fraction_{species}"
    if name in surf:
        site_value = np.asarray(surf[name].values, dtype=float)
        has = ~np.isnan(site_value)
        coarse = np.where(has, site_value, coarse)
        source = np.where(has, 0, source)
    coastal_mode = COASTAL[species][1] if species in COASTAL else spec.coarse
    frac = coarse
    if hourly is not None and np.isfinite(hourly).any():
        hourly = np.asarray(hourly, dtype=float)
        frac = np.where(np.isfinite(hourly), hourly, coarse[:, None])
        source = np.where(np.isfinite(hourly).any(axis=1), 5, source)
        coastal = np.asarray(coastal)[:, None] if np.ndim(coastal) else coastal
    parts = [(spec.fine, 1.0 - frac), (spec.coarse, np.where(coastal, 0.0, frac)),
             (coastal_mode, np.where(coastal, frac, 0.0))]
    merged = {}
    for mode, w in parts:  # the same mode twice (no coastal rule): one entry
        merged[mode] = merged.get(mode, 0.0) + w
    weights = [(mode, np.asarray(w, dtype=float)) for mode, w in merged.items() if np.any(w > 0)]
    return weights, coarse, source.astype(int)
