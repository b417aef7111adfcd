"""The dry components of a budget: Vd per species, deposition per sampling period, and
its aggregation over reporting periods.

:func:`prepare_velocities` turns the model's hourly Vd (or fixed what-if values) into
gap-filled series; :func:`dry_rows` computes the deposition over every air-sampling
period of every species (independent of the reporting periods, so it is computed once
per option set); :func:`dry_components` shares it among reporting periods with the
coverage and Vd completeness.  The numpy cores are in :mod:`workbench.dryflux`.
Units: Vd [m s-1], concentrations [mol m-3] or [mol mol-1], deposition [mol m-2].
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .budget import COMPONENTS, PAIRS, BudgetError, BudgetOptions
from .dryflux import (_cumulative, _hour_bounds, _inputs_for, deposition_rows, fill_diurnal,
                      period_axes, period_mean, share_to_periods)
from .memo import digest, trim

#: Shares of rows among periods kept by :func:`dry_components` (small arrays each).
AGG_ENTRIES = 512


def prepare_velocities(vd_ds, species_list, fixed_velocity=None, min_slot_hours=7,
                       template=None):
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
        filled, was = fill_diurnal(vd_ds[f"vd_{sp}"].load(), min_slot_hours)
        out[sp] = (filled, was, vd_ds.attrs.get("gas_scheme", "model"))
    return out


#: Entries of the velocity sets that carry the bidirectional NH3 exchange (not species):
#: the compensation point model's Vd [m s-1] and its emission term [mol m-2 s-1].
NH3_EXCHANGE = {"NH3_bidirectional": "vd_NH3_bidirectional", "NH3_emission": "nh3_emission_flux"}


def nh3_exchange_velocities(vd_ds, min_slot_hours=7):
    """Gap-filled hourly Vd and emission term of the bidirectional NH3 model.

    Parameters
    ----------
    vd_ds : xarray.Dataset or None
        Output of :func:`workbench.drydep.velocities` run with ``nh3_treatment =
        "bidirectional"`` (``vd_NH3_bidirectional`` [m s-1], ``nh3_emission_flux``
        [mol m-2 s-1]).
    min_slot_hours : int

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
        filled, was = fill_diurnal(vd_ds[var].load(), min_slot_hours)
        out[name] = (filled, was, "nh3 compensation point")
    return out


def _nss_particles(air: xr.Dataset, basis: str) -> xr.Dataset:
    """Replace pSO4 by its non-sea-salt part where pNa is measured (Keene et al. 1986)."""
    if basis != "nss" or "pSO4" not in air or "pNa" not in air:
        return air
    from .wet.seasalt import non_seasalt
    air = air.copy()
    na = air["pNa"].values
    nss = non_seasalt(air["pSO4"].values, np.where(np.isfinite(na), na, 0.0), "SO4", "Na")
    air["pSO4"] = air["pSO4"].copy(data=np.where(np.isfinite(air["pSO4"].values), nss, np.nan))
    air["pSO4"].attrs["long_name"] = "particulate non-sea-salt sulfate (Keene et al. 1986)"
    return air


def _pair_air(air: xr.Dataset, pair: str, into: str) -> xr.Dataset:
    """Air dataset with both members of a pair moved into one species (`into`)."""
    gas, part = PAIRS[pair]
    n = air.sizes["period"]
    g = air[gas].values if gas in air else np.full(n, np.nan)
    p = air[part].values if part in air else np.full(n, np.nan)
    total = np.where(np.isfinite(g) & np.isfinite(p), g + p, np.nan)
    other = part if into == gas else gas
    new = {into: xr.Variable(("period",), total,
                             dict(air[into].attrs if into in air else air[other].attrs)),
           f"{into}_censored": xr.Variable(("period",), np.zeros(n, bool)),
           f"{into}_detection_limit": xr.Variable(("period",), np.full(n, np.nan))}
    if f"{other}_method" in air and f"{into}_method" not in air:
        new[f"{into}_method"] = air[f"{other}_method"].variable
    if other in air:
        new[other] = (air[other] * 0.0).variable
    return air.assign(new)                       # one merge (each item set costs ~1 ms)


def _fingerprint(air: xr.Dataset, species: str) -> str:
    """Digest of what the rows of a species read from the air dataset (its values,
    censoring, detection limits, methods, sites and times), for content-keyed caches."""
    names = (species, f"{species}_censored", f"{species}_detection_limit",
             f"{species}_method", "site", "start", "end")
    return digest([(n, air.variables[n]) for n in names if n in air.variables],
                  str(air[species].attrs.get("quantity", "")))


def dry_rows(air, vel, met, sites, options: BudgetOptions, memo=None, shared=None):
    """Deposition over every air-sampling period of every species (period-independent).

    Parameters
    ----------
    air : xarray.Dataset
    vel : dict
        Output of :func:`prepare_velocities`.
    met : xarray.Dataset or None
    sites : list of str
    options : BudgetOptions
    memo : dict, optional
        Reused between calls with the same air preparation (sulfate basis, pair split,
        censoring, profile, method): keyed by species and the identity of its Vd, so a
        change of one species' velocity recomputes that species only.
    shared : dict, optional
        Reused between calls with any air preparation: the per-species rows keyed by
        the content of the air columns they read (:func:`_fingerprint`), the flux
        options and the identity of the Vd, and the cumulative Vd counts; so a change
        of the pair split recomputes the pair members only.

    Returns
    -------
    dict
        ``"species"``: species -> numpy results of
        :func:`workbench.dryflux.deposition_rows` plus ``site_index``; ``"vd_cum"``:
        species -> cumulative counts of modelled and filled Vd hours; ``"bracket"``:
        (pair, how) -> the rows with the pair moved into one member;
        ``"nh3_exchange"`` (when `vel` holds :data:`NH3_EXCHANGE`): the deposition and
        emission parts of the net NH3 flux per NH3 sampling period; ``"notes"``,
        ``"measured"`` (site x species bool), ``"receptors"``, ``"times"``, ``"sites"``.
    """
    memo = {} if memo is None else memo
    fopt = options.flux_options()
    species_list = [c[2] for c in COMPONENTS if c[1] == "dry"]
    any_vd = next(iter(vel.values()))[0]
    times = any_vd["time"].values
    sites = list(sites)
    shared = memo if shared is None else shared
    fkey = repr(fopt)
    # the air as the budget options prepare it (the same for any Vd): kept with the
    # shared entries, keyed by the options and the identity of the air Dataset
    akey = ("air", id(air), options.sulfate_basis, options.pair_split)
    if akey not in shared:
        prepared = _nss_particles(air, options.sulfate_basis)
        if options.pair_split != "measured":
            for pair, (gas, part) in PAIRS.items():
                if gas in prepared and part in prepared:
                    prepared = _pair_air(prepared, pair,
                                         gas if options.pair_split == "all_gas" else part)
        shared[akey] = (prepared, air)                  # the input held: its id stays unique
    raw_air, air = air, shared[akey][0]

    def arrays(sp):
        key = ("arrays", sp, id(vel[sp]), tuple(sites))
        if key not in shared:
            vd, was, _ = vel[sp]
            if list(vd["site"].values) != sites:
                vd, was = vd.reindex(site=sites), was.reindex(site=sites, fill_value=False)
            vd = vd.transpose("site", "receptor", "time")
            was_np = was.transpose("site", "receptor", "time").values
            valid_raw = np.isfinite(vd.values) & ~was_np
            shared[key] = (vd, vd.values, _cumulative(valid_raw.astype(float)),
                           _cumulative(was_np.astype(float)), vel[sp])
        return shared[key]

    def fingerprint(air_in, sp):
        key = ("fingerprint", id(air_in), sp)
        if key not in shared:
            shared[key] = (_fingerprint(air_in, sp), air_in)   # held: the id stays unique
        return shared[key][0]

    def inputs(air_in, sp, vd):
        """The air side of a species' rows (independent of Vd), keyed by content."""
        key = ("inputs", sp, tuple(sites), len(times), fkey, fingerprint(air_in, sp))
        if key not in shared:
            rows, site_of, conc, cens, quantity, weight, n_air, notes = _inputs_for(
                air_in, sp, vd, met, fopt)
            shared[key] = (rows, pd.Index(sites).get_indexer(site_of), conc[rows], quantity,
                           weight, n_air, notes, air_in["start"].values[rows],
                           air_in["end"].values[rows], np.asarray(cens)[rows])
        return shared[key]

    def one(air_in, sp, vd_sp, key):
        key = ("rows", sp, id(vel[vd_sp]), tuple(sites), fkey, fingerprint(air_in, sp))
        if key not in shared:
            vd, v_np = arrays(vd_sp)[:2]
            _, si, conc, quantity, weight, n_air, notes, t0, t1, cens = inputs(air_in, sp, vd)
            r = deposition_rows(conc, quantity, si, t0, t1, times, v_np, n_air, weight)
            r["site_index"] = si
            r["conc"] = conc
            r["quantity"] = quantity
            r["censored"] = cens                 # below detection (value substituted)
            shared[key] = (r, notes, vel[vd_sp])     # the Vd held: its id stays unique
        return shared[key][:2]

    out = {"species": {}, "bracket": {}, "notes": [], "times": times,
           "receptors": any_vd["receptor"].values, "sites": sites, "vd_cum": {}}
    for sp in species_list:
        if sp not in air or sp not in vel:
            continue
        r, notes = one(air, sp, sp, ("rows", sp))
        out["species"][sp] = r
        out["vd_cum"][sp] = arrays(sp)[2:4]
        out["notes"].extend(notes)
    if "NH3" in out["species"] and all(k in vel for k in NH3_EXCHANGE):
        out["nh3_exchange"] = _nh3_exchange_rows(air, one, arrays, inputs, shared, vel, sites,
                                                 times, fkey, fingerprint)
    for pair, (gas, part) in PAIRS.items():
        if gas in air and part in air and gas in vel and part in vel:
            for how, into in (("all_gas", gas), ("all_particle", part)):
                bkey = ("bracket", pair, how, id(vel[gas]), id(vel[part]))
                if bkey not in memo:
                    pkey = ("pair_air", id(raw_air), options.sulfate_basis, options.pair_split,
                            pair, into)
                    if pkey not in shared:
                        shared[pkey] = (_pair_air(air, pair, into), raw_air)
                    memo[bkey] = one(shared[pkey][0], into, into, bkey)[0]
                out["bracket"][(pair, how)] = memo[bkey]
    out["measured"] = np.stack(
        [np.isin(sites, np.unique(air["site"].values[np.isfinite(air[sp].values)]))
         if sp in air else np.zeros(len(sites), bool) for sp in species_list], -1)
    return out


def _nh3_exchange_rows(air, one, arrays, inputs, shared, vel, sites, times, fkey,
                       fingerprint):
    """The two parts of the net NH3 flux over each NH3 sampling period.

    ``deposition``: C mean(Vd_bd) dt with the compensation point model's Vd, and
    ``emission``: mean(E) dt [mol m-2] over the same hours (independent of C, so the
    same for a concentration and a mixing ratio), NaN where the deposition part is
    unknown; each with its own cumulative hourly sums (``cs``) so that a sampling
    period straddling a reporting boundary shares each part by its own hours.
    The net flux over a period is ``deposition - emission`` (positive down).
    """
    dep = one(air, "NH3", "NH3_bidirectional", None)[0]
    key = ("nh3 emission rows", id(vel["NH3_emission"]), tuple(sites), fkey,
           fingerprint(air, "NH3"))
    if key not in shared:
        vd = arrays("NH3_bidirectional")[0]
        _, si, conc, _, _, _, _, t0, t1, _ = inputs(air, "NH3", vd)
        e_np = vel["NH3_emission"][0].reindex(site=sites).transpose(
            "site", "receptor", "time").values
        e = deposition_rows(np.ones(len(conc)), "amount_density", si, t0, t1, times, e_np)
        e["deposition"] = np.where(np.isfinite(dep["deposition"]), e["deposition"], np.nan)
        e["site_index"] = si
        shared[key] = (e, vel["NH3_emission"])        # the input held: its id stays unique
    return {"deposition": dep, "emission": shared[key][0]}


def dry_components(rows: dict, periods: pd.DataFrame, memo: dict | None = None):
    """Dry deposition of every measured species over the reporting periods.

    Parameters
    ----------
    rows : dict
        Output of :func:`dry_rows`.
    periods : pandas.DataFrame
    memo : dict, optional
        Kept between calls: the share of each species' rows among the periods, keyed
        by the identity of its rows (which :func:`dry_rows` reuses while their inputs
        stay the same) and the periods, so that an option touching one species
        shares that species only.

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, period, species): ``deposition`` [mol m-2] scaled to the
        whole period, ``coverage`` [1] (site, period, species), ``vd_coverage`` and
        ``vd_filled_share`` [1], ``flux_coverage`` [1] (hours with a concentration
        and a deposition velocity: 0 where Vd or the air density is missing for every
        hour, and the deposition is then NaN, never 0), ``measured`` (site, species),
        ``mixing_ratio`` (species: given as a mixing ratio), the pair brackets and,
        when the rows hold the bidirectional NH3 exchange, ``nh3_net`` (deposition -
        emission, positive down) and ``nh3_emission`` [mol m-2] (site, receptor, period).
    """
    species_list = [c[2] for c in COMPONENTS if c[1] == "dry"]
    sites, receptors, times = rows["sites"], rows["receptors"], rows["times"]
    n_s, n_r, n_p, n_k = len(sites), len(receptors), len(periods), len(species_list)
    dep = np.full((n_s, n_r, n_p, n_k), np.nan)
    cov = np.zeros((n_s, n_p, n_k))
    vd_cov = np.full((n_s, n_r, n_p, n_k), np.nan)
    flux_cov = np.zeros((n_s, n_r, n_p, n_k))
    ratio = np.zeros(n_k, bool)
    filled_share = np.full((n_s, n_r, n_p, n_k), np.nan)
    conc = np.full((n_s, n_p, n_k), np.nan)
    axes = period_axes(periods)                 # the columns read once
    pa, pb = _hour_bounds(times, axes.start, axes.end)
    hours_p = axes.hours

    labels = tuple(periods["label"])

    def agg(r):
        key = (id(r), n_s, labels)
        if memo is not None and key in memo:
            return memo[key][0]
        out = share_to_periods(r["site_index"], r["a"], r["b"], r["deposition"], r["cs"],
                               n_s, axes, times, r["start"], r["end"])
        if memo is not None:
            memo[key] = (out, r)                      # the rows held: their id stays unique
            trim(memo, AGG_ENTRIES)
        return out

    for k, sp in enumerate(species_list):
        if sp not in rows["species"]:
            continue
        r = rows["species"][sp]
        d, c, _, fh = agg(r)
        dep[..., k], cov[..., k] = d, c
        flux_cov[..., k] = np.clip(fh / np.maximum(hours_p, 1), 0, 1)
        ratio[k] = r.get("quantity") == "mixing_ratio"
        if r.get("quantity") == "amount_density":
            conc[..., k] = period_mean(r["site_index"], r["start"], r["end"], r["conc"], n_s, axes)
        c_valid, c_fill = rows["vd_cum"][sp]
        vd_cov[..., k] = (c_valid[:, :, pb] - c_valid[:, :, pa]) / hours_p
        filled_share[..., k] = (c_fill[:, :, pb] - c_fill[:, :, pa]) / np.maximum(pb - pa, 1)
    nh3 = {}
    if "nh3_exchange" in rows:        # net = deposition part - emission part, per period
        ex = rows["nh3_exchange"]
        d_bd, e = agg(ex["deposition"])[0], agg(ex["emission"])[0]
        dims3 = ("site", "receptor", "period")
        nh3 = {"nh3_net": (dims3, d_bd - e, {
                   "units": "mol m-2", "long_name": "net NH3 exchange of the compensation "
                   "point model, deposition - emission (positive down)"}),
               "nh3_emission": (dims3, e, {"units": "mol m-2",
                                           "long_name": "NH3 emission term over the period"})}
    ds = xr.Dataset(
        {"deposition": (("site", "receptor", "period", "species"), dep, {"units": "mol m-2"}),
         "coverage": (("site", "period", "species"), cov, {"units": "1"}),
         "vd_coverage": (("site", "receptor", "period", "species"), vd_cov, {"units": "1"}),
         "vd_filled_share": (("site", "receptor", "period", "species"), filled_share, {"units": "1"}),
         "flux_coverage": (("site", "receptor", "period", "species"), flux_cov,
                           {"units": "1", "long_name": "share of the period's hours in sampling "
                            "periods with a known flux (concentration and Vd)"}),
         "mixing_ratio": (("species",), ratio),
         "measured": (("site", "species"), rows["measured"]),
         "concentration": (("site", "period", "species"), conc,
                           {"units": "mol m-3", "long_name": "time-weighted mean concentration "
                            "over the covered hours (amount of species; ambient)"}),
         **{f"bracket_{pair}_{how}": (("site", "receptor", "period"), agg(r)[0],
                                      {"units": "mol m-2"})
            for (pair, how), r in rows["bracket"].items()}, **nh3},
        coords={"site": sites, "receptor": receptors, "period": periods["label"].values,
                "species": species_list})
    return ds


