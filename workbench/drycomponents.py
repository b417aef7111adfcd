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

import functools

import numpy as np
import pandas as pd
import xarray as xr

from . import graph as _graph
from . import species as _species
from .budget import COMPONENTS, PAIRS, BudgetError, BudgetOptions
from .budgetstatus import NO_PNA_AT_SITE, bracket_velocities
from .dryflux import (_count_cumulative, _inputs_for, deposition_rows, fill_diurnal,
                      no_hour_inside, period_axes, period_mean, share_to_periods)
from .drypairs import apply_split, bracket_variables, combined_notes, split_pairs
from .periods import hour_bounds
from .wet.seasalt import total_in_place


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


#: Words for the substitute of a value below detection (``[budget] air_censored``).
CENSORED_WORDS = {"half": "half the detection limit", "limit": "the detection limit",
                  "zero": "0"}


def _nss_particles(air: xr.Dataset, basis: str, censored: str = "half") -> xr.Dataset:
    """Replace pSO4 by its non-sea-salt part where pNa is measured (Keene et al. 1986).

    A pSO4 row without a pNa value (the sodium sampler missing that week, or no pNa at
    all) keeps its total pSO4, sea salt included, and is marked in
    ``pSO4_total_used`` (bool per row), which the budget names in the period's note
    (docs/budget.md, "Components and units").  A pNa below detection counts as a
    value and enters with the substitute of every air value below detection
    (`censored`, ``[budget] air_censored``: half the limit by default; 0 where no limit
    is known, as :func:`workbench.dryflux._censored_values`); such rows are marked in
    ``pSO4_na_censored`` (its ``substitute`` attribute names the rule) for the note.
    Before, a pNa below detection entered as 0 (total pSO4), without a word.

    A pSO4 below its detection limit L beside a pNa (measured, or below detection and
    substituted as above) is the one place where the sea salt comes off a censored
    value: the total lies between the sea-salt sulfate S = 0.0605 pNa (Keene et al.
    1986, :func:`workbench.wet.seasalt.seawater_ratio`) and L, so the non-sea-salt
    part lies between 0 and max(0, L - S), the detection limit of the non-sea-salt
    part, which replaces L in ``pSO4_detection_limit``.  The row stays censored and
    takes the `censored` substitute of that limit (half of it by default: (L - S) / 2;
    the limit; 0), 0 where the sea salt reaches L; the rows are marked in
    ``pSO4_nss_censored`` for the note.  Before, such a row entered with the
    substitute of L itself, sea salt included (the censored total for its non-sea-salt
    part).
    """
    if basis != "nss" or "pSO4" not in air:
        return air
    from .dryflux import _censored_values
    from .wet.seasalt import non_seasalt
    air = air.copy()
    so4 = air["pSO4"].values
    has_so4 = np.isfinite(so4) | (air["pSO4_censored"].values.astype(bool)
                                  if "pSO4_censored" in air else False)
    if "pNa" not in air:
        air["pSO4_total_used"] = (air["pSO4"].dims, has_so4)
        return air
    na = air["pNa"].values
    na_cens = (air["pNa_censored"].values.astype(bool) if "pNa_censored" in air
               else np.zeros(na.shape, bool))
    na_used, _ = _censored_values(air, "pNa", censored)
    na_zero = np.where(np.isfinite(na_used), na_used, 0.0)
    nss = non_seasalt(so4, na_zero, "SO4", "Na")
    air["pSO4"] = air["pSO4"].copy(data=np.where(np.isfinite(so4), nss, np.nan))
    air["pSO4"].attrs["long_name"] = "particulate non-sea-salt sulfate (Keene et al. 1986)"
    air["pSO4_total_used"] = (air["pSO4"].dims, has_so4 & ~np.isfinite(na) & ~na_cens)
    air["pSO4_na_censored"] = (air["pSO4"].dims, has_so4 & na_cens,
                               {"substitute": CENSORED_WORDS.get(censored, str(censored))})
    # a pSO4 below detection beside a pNa: the non-sea-salt part's own limit
    so4_cens = (air["pSO4_censored"].values.astype(bool) if "pSO4_censored" in air
                else np.zeros(so4.shape, bool))
    nss_cens = so4_cens & ~np.isfinite(so4) & (np.isfinite(na) | na_cens)
    if "pSO4_detection_limit" in air:
        dl = air["pSO4_detection_limit"].values.astype(float)
        nss_dl = np.maximum(non_seasalt(dl, na_zero, "SO4", "Na"), 0.0)
        air["pSO4_detection_limit"] = air["pSO4_detection_limit"].copy(
            data=np.where(nss_cens & np.isfinite(dl), nss_dl, dl))
    air["pSO4_nss_censored"] = (air["pSO4"].dims, nss_cens,
                                {"substitute": CENSORED_WORDS.get(censored, str(censored))})
    return air


def _rows_by_cell(flag, r, periods, n_p):
    """The pSO4 rows marked in `flag` (bool per row) by (site, period) cell: a Series
    cell (site index x P + period) -> the rows' start dates, and (rows, P) whether each
    row overlaps each period."""
    t0 = np.asarray(r["start"], "datetime64[ns]")
    t1 = np.asarray(r["end"], "datetime64[ns]")
    p0 = periods["start"].values.astype("datetime64[ns]")
    p1 = periods["end"].values.astype("datetime64[ns]")
    si = np.asarray(r["site_index"])
    k = np.flatnonzero(flag)
    over = (t0[k, None] < p1[None, :]) & (t1[k, None] > p0[None, :])     # (flagged, P)
    each = (t0[:, None] < p1[None, :]) & (t1[:, None] > p0[None, :])    # (rows, P)
    kk, pp = np.nonzero(over)
    g = pd.DataFrame({"cell": si[k[kk]] * n_p + pp,
                      "name": pd.DatetimeIndex(t0[k[kk]]).strftime("%Y-%m-%d")})
    return g.groupby("cell")["name"].agg(list), each


def _pso4_cell_notes(rows: dict, periods, sites, key: str, words) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples flagged by ``rows[key]`` (bool
    per pSO4 row); "" elsewhere. ``words(n, n_all, names, sub)`` writes a cell's
    sentence from the number flagged, the number of pSO4 samples of the cell, their
    start dates and the words of the censored substitute."""
    n_s, n_p = len(sites), len(periods)
    out = np.full((n_s, n_p), "", dtype=object)
    flag = rows.get(key)
    r = rows["species"].get("pSO4")
    if flag is None or r is None or not np.any(flag):
        return out
    agg, each = _rows_by_cell(np.asarray(flag, bool), r, periods, n_p)
    si = np.asarray(r["site_index"])
    sub = rows.get("pSO4_na_substitute") or CENSORED_WORDS["half"]
    for cell, names in agg.items():          # one entry per (site, period) cell named
        s_, p_ = divmod(int(cell), n_p)
        n_all = int((each[:, p_] & (si == s_)).sum())
        out[s_, p_] = words(len(names), n_all, ", ".join(names), sub)
    return out


def censored_na_notes(rows: dict, periods, sites) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples whose sea-salt sulfate stands on
    a pNa below detection (``pSO4_na_censored`` of :func:`_nss_particles`); "" elsewhere.

    Parameters
    ----------
    rows : dict
        Output of :func:`dry_rows` (``rows["pSO4_na_censored"]``: bool per pSO4 row;
        ``rows["pSO4_na_substitute"]``: the words of the substitute).
    periods : pandas.DataFrame
    sites : sequence of str
    """
    return _pso4_cell_notes(rows, periods, sites, "pSO4_na_censored",
                            lambda n, n_all, names, sub: (
        f"pNa below detection in {n} of {n_all} pSO4 samples (from {names}): their "
        f"sea-salt sulfate from {sub} (air_censored), drawn with the spread of a value "
        "between 0 and the limit in the Monte Carlo"))


def censored_nss_notes(rows: dict, periods, sites) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples below detection whose
    non-sea-salt part was formed from the limit less their sea-salt sulfate
    (``pSO4_nss_censored`` of :func:`_nss_particles`); "" elsewhere.

    Parameters
    ----------
    rows : dict
        Output of :func:`dry_rows` (``rows["pSO4_nss_censored"]``: bool per pSO4 row;
        ``rows["pSO4_na_substitute"]``: the words of the substitute).
    periods : pandas.DataFrame
    sites : sequence of str
    """
    return _pso4_cell_notes(rows, periods, sites, "pSO4_nss_censored",
                            lambda n, n_all, names, sub: (
        f"pSO4 below detection in {n} of {n_all} pSO4 samples (from {names}): their "
        f"non-sea-salt pSO4 from {sub} (air_censored) of the limit less the sea-salt "
        "sulfate of their pNa (0 where the sea salt reaches the limit)"))


def total_used_notes(rows: dict, periods, sites) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples whose total pSO4 stands for its
    non-sea-salt part (no pNa that week: ``pSO4_total_used`` of :func:`_nss_particles`);
    "" elsewhere. A site none of whose pSO4 samples has a pNa gets one sentence
    starting with :data:`NO_PNA_AT_SITE` instead of the list of its samples.

    Parameters
    ----------
    rows : dict
        Output of :func:`dry_rows` (``rows["pSO4_total_used"]``: bool per pSO4 row).
    periods : pandas.DataFrame
    sites : sequence of str
    """
    n_s, n_p = len(sites), len(periods)
    out = np.full((n_s, n_p), "", dtype=object)
    flag = rows.get("pSO4_total_used")
    r = rows["species"].get("pSO4")
    if flag is None or r is None or not np.any(flag):
        return out
    agg, each = _rows_by_cell(np.asarray(flag, bool), r, periods, n_p)
    si = np.asarray(r["site_index"])
    if not len(agg):
        return out
    fl = np.asarray(flag, bool)
    none_at = {s_: bool(fl[si == s_].all()) for s_ in np.unique(si)}
    for cell, names in agg.items():          # one entry per flagged (site, period) cell
        s_, p_ = divmod(int(cell), n_p)
        n_all = int((each[:, p_] & (si == s_)).sum())
        if none_at.get(s_, False):
            out[s_, p_] = (f"{NO_PNA_AT_SITE}: {total_in_place('pSO4')} (sea salt "
                           "included, an upper bound; small inland)")
        else:
            out[s_, p_] = (f"pNa missing in {len(names)} of {n_all} pSO4 samples (from "
                           f"{', '.join(names)}): total pSO4 used for them (sea salt "
                           "included)")
    return out


def _fingerprint(air: xr.Dataset, species: str) -> str:
    """Digest of what the rows of a species read from the air dataset (its values,
    censoring, detection limits, methods, sites and times), for content-keyed caches."""
    names = (species, f"{species}_censored", f"{species}_detection_limit",
             f"{species}_method", "site", "start", "end")
    return _graph.variables_digest([(n, air.variables[n]) for n in names if n in air.variables],
                                   str(air[species].attrs.get("quantity", "")))


def fill_arrays(vd, was, source, sites) -> dict:
    """What the rows read of a gap-filled Vd: the (site, receptor, time) arrays of the
    sites and the cumulative counts of modelled and filled hours.

    Parameters
    ----------
    vd, was : xarray.DataArray
        Filled Vd [m s-1] and its fill mask, as :func:`prepare_velocities` gives them.
    source : str
    sites : sequence of str

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
    return {"vel": (vd, was, source), "vd": v, "v_np": v.values,
            "c_valid": _count_cumulative(valid_raw), "c_fill": _count_cumulative(was_np)}


# ------------------------------------------------------------------ stages of the rows
@_graph.stage("air_basis", reads={"budget": ("sulfate_basis", "air_censored")})
def prepared_air(o, air):
    """The air concentrations as the budget options read them (non-sea-salt sulfate).
    The pairs are never moved here: ``pair_split`` builds the moved components from
    each member's own rows (:func:`dry_rows`, :func:`workbench.drypairs.apply_split`)."""
    return _nss_particles(air, o.budget.sulfate_basis, o.budget.air_censored)


@_graph.stage("air_content")
def air_content(o, air, species):
    """Digest of what a species' rows read from an air Dataset (:func:`_fingerprint`)."""
    return _fingerprint(air, species)


@_graph.stage("flux_inputs", reads={"budget": ("air_censored", "min_slot_hours",
                                                "diurnal_profile", "preferred_method")})
def flux_inputs(o, air, axes, met, species, sites):
    """The air side of a species' rows (samplers, censoring, weights; independent of
    Vd but for its site and time axes)."""
    rows, site_of, conc, cens, quantity, weight, n_air, notes = _inputs_for(
        air, species, axes, met, o.budget.flux_options())
    return (rows, pd.Index(list(sites)).get_indexer(site_of), conc[rows], quantity, weight,
            n_air, notes, air["start"].values[rows], air["end"].values[rows],
            np.asarray(cens)[rows])


@_graph.stage("species_rows")
def species_rows(o, inputs, fill, times):
    """Deposition over every sampling period of one species (:func:`deposition_rows`)."""
    si, conc, quantity, weight, n_air, notes, t0, t1, cens = inputs[1:]
    r = deposition_rows(conc, quantity, si, t0, t1, times, fill["v_np"], n_air, weight)
    r["site_index"] = si
    r["conc"] = conc
    r["quantity"] = quantity
    r["censored"] = cens                 # below detection (value substituted)
    r["air_row"] = inputs[0]             # row of each in the air Dataset (its identity)
    return r, notes


@_graph.stage("nh3_emission_rows")
def nh3_emission_rows(o, deposition, inputs, emission, times):
    """The emission part of the net NH3 flux over each NH3 sampling period."""
    si, conc, t0, t1 = inputs[1], inputs[2], inputs[7], inputs[8]
    e = deposition_rows(np.ones(len(conc)), "amount_density", si, t0, t1, times,
                        emission["v_np"])
    dep = deposition[0]
    e["deposition"] = np.where(np.isfinite(dep["deposition"]), e["deposition"], np.nan)
    e["site_index"] = si
    return e


@_graph.stage("vd_axes")
def vd_axes(o, fill):
    """Digest of a filled Vd's site and time axes (what :func:`flux_inputs` reads of it)."""
    vd = fill["vd"]
    return _graph.content_digest([np.asarray(vd["site"].values, object), vd["time"].values])


def dry_rows(air, vel, met, sites, options: BudgetOptions, graph=None, counts=None):
    """Deposition over every air-sampling period of every species (period-independent).

    Parameters
    ----------
    air : xarray.Dataset or workbench.graph.Node
    vel : dict
        species -> the (vd, was, source) triples of :func:`prepare_velocities`, or
        Nodes of :func:`fill_arrays` results (the fill stage's).
    met : xarray.Dataset or None
    sites : list of str
    options : BudgetOptions
    graph : workbench.graph.Graph, optional
        Where the pieces are cached (a new graph when None): the prepared air
        (``air_basis``), each species' air side (``flux_inputs``, keyed by the content
        of the air columns it reads) and rows (``species_rows``; a bracket member is a
        species with the other member's Vd) and the NH3 emission rows; so a change of
        one species' Vd recomputes that species and the brackets using its Vd only.
        The pair split moves no concentration: its components are built from the
        bracket's rows (a change of it computes at most the pNH4 rows with the NH3
        exchange's Vd).
    counts : dict, optional
        As for :meth:`workbench.graph.Graph.run`.

    Returns
    -------
    dict
        ``"species"``: species -> numpy results of
        :func:`workbench.dryflux.deposition_rows` plus ``site_index``; ``"vd_cum"``:
        species -> cumulative counts of modelled and filled Vd hours; ``"bracket"``:
        (pair, how) -> member -> the member's rows over its own sampling periods with
        the Vd of :func:`bracket_velocities` (the pair need not share samples);
        ``"split"``: pair -> (species moved into, other member, how) under
        ``options.pair_split`` (:func:`workbench.drypairs.split_pairs`; empty for
        "measured"), whose components :func:`dry_components` builds from the bracket's
        rows (:func:`workbench.drypairs.apply_split`), the moved-into species
        ``measured`` where both members are;
        ``"nh3_exchange"`` (when `vel` holds :data:`NH3_EXCHANGE`): the deposition and
        emission parts of the net NH3 flux per NH3 sampling period (and, when
        ``pair_split`` moves pNH4 into NH3, ``"moved"``: the pNH4 rows with the
        exchange's Vd); ``"notes"``,
        ``"measured"`` (site x species bool), ``"receptors"``, ``"times"``, ``"sites"``;
        ``"keys"``: the node key of each piece of rows (for :func:`dry_components`;
        a bracket member's under ``("bracket", pair, how, member)``).
    """
    sites = list(sites)
    if graph is None:            # a graph of this call: the inputs need no identity
        graph = _graph.Graph()
        air, met = _graph.input_node("air", "", air), _graph.input_node("met", "", met)
        vel = {sp: _graph.input_node("vel", sp, fill_arrays(*v, sites)) for sp, v in vel.items()}
    elif not all(isinstance(x, _graph.Node) for x in (air, met, *vel.values())):
        raise TypeError("dry_rows with a graph needs Nodes for air, met and vel")
    nodes = dict(vel)
    species_list = [c[2] for c in COMPONENTS if c[1] == "dry"]
    any_vd = next(iter(nodes.values())).value["vel"][0]
    times = any_vd["time"].values
    opts = {"budget": options}
    run = functools.partial(graph.run, options=opts, counts=counts)
    axes = {}

    def axes_node(fill):       # the axes by their content (those of this call by fill)
        if fill.key not in axes:
            d = run("vd_axes", deps={"fill": fill}).value
            axes[fill.key] = _graph.Node("vd_axes:" + d, fill.value["vd"])
        return axes[fill.key]
    times_node = _graph.Node(axes_node(next(iter(nodes.values()))).key + ":times", times)
    met_node = met
    prepared = run("air_basis", deps={"air": air})

    def one(air_node, sp, vd_sp):
        content = run("air_content", deps={"air": air_node}, params={"species": sp})
        air_c = _graph.Node("air_content:" + content.value, air_node.value)
        inputs = run("flux_inputs", deps={"air": air_c, "axes": axes_node(nodes[vd_sp]),
                                          "met": met_node},
                     params={"species": sp, "sites": tuple(sites)})
        return inputs, run("species_rows", deps={"inputs": inputs, "fill": nodes[vd_sp],
                                                 "times": times_node})

    out = {"species": {}, "bracket": {}, "notes": [], "times": times,
           "receptors": any_vd["receptor"].values, "sites": sites, "vd_cum": {},
           "keys": {"times": times_node.key}}
    air_v = prepared.value
    for sp in species_list:
        if sp not in air_v or sp not in nodes:
            continue
        _, node = one(prepared, sp, sp)
        out["species"][sp], notes = node.value
        out["keys"][sp] = node.key
        out["vd_cum"][sp] = (nodes[sp].value["c_valid"], nodes[sp].value["c_fill"])
        out["notes"].extend(notes)
    # the brackets: each member over its own sampling periods with the Vd of the phase
    # (deposition is linear in C: F(gas + particle at Vd) = F(gas at Vd) + F(particle
    # at Vd)), from the air as read, so that the bracket does not depend on pair_split
    for pair, (gas, part) in PAIRS.items():
        if gas in air_v and part in air_v and gas in nodes and part in nodes:
            out["notes"].extend(combined_notes(air.value, pair))
            for how, vd_sp in bracket_velocities(PAIRS[pair]).items():
                out["bracket"][(pair, how)] = {}
                for member in (gas, part):
                    _, node = one(air, member, vd_sp)
                    out["bracket"][(pair, how)][member] = node.value[0]
                    out["keys"][("bracket", pair, how, member)] = node.key
    def has_value(sp):        # a value, or a value below detection (enters substituted)
        cens = air_v[f"{sp}_censored"].values if f"{sp}_censored" in air_v else False
        return np.isfinite(air_v[sp].values) | cens
    if "pSO4" in out["species"] and "pSO4_total_used" in air_v:
        out["pSO4_total_used"] = air_v["pSO4_total_used"].values[out["species"]["pSO4"]["air_row"]]
    if "pSO4" in out["species"] and "pSO4_nss_censored" in air_v:
        out["pSO4_nss_censored"] = air_v["pSO4_nss_censored"].values[
            out["species"]["pSO4"]["air_row"]]
    if "pSO4" in out["species"] and "pSO4_na_censored" in air_v:
        out["pSO4_na_censored"] = air_v["pSO4_na_censored"].values[
            out["species"]["pSO4"]["air_row"]]
        out["pSO4_na_substitute"] = air_v["pSO4_na_censored"].attrs.get("substitute", "")
    out["measured"] = np.stack(
        [np.isin(sites, np.unique(air_v["site"].values[has_value(sp)]))
         if sp in air_v else np.zeros(len(sites), bool) for sp in species_list], -1)
    # pair_split: the main components of a pair from the bracket's rows (_apply_split)
    out["split"] = split_pairs(options.pair_split, out, air_v, nodes)
    for pair, (into, other, _) in out["split"].items():
        k_in, k_out = species_list.index(into), species_list.index(other)
        out["measured"][:, k_in] &= out["measured"][:, k_out]    # the weaker member's
    if "NH3" in out["species"] and all(k in nodes for k in NH3_EXCHANGE):
        inputs, dep = one(prepared, "NH3", "NH3_bidirectional")
        em = run("nh3_emission_rows", deps={"deposition": dep, "inputs": inputs,
                                            "emission": nodes["NH3_emission"],
                                            "times": times_node})
        out["nh3_exchange"] = {"deposition": dep.value[0], "emission": em.value}
        out["keys"]["nh3|deposition"], out["keys"]["nh3|emission"] = dep.key, em.key
        moved = out["split"].get("ammonium")
        if moved is not None and moved[0] == "NH3":     # pNH4 moved into the NH3 exchange
            _, node = one(air, moved[1], "NH3_bidirectional")
            out["nh3_exchange"]["moved"] = node.value[0]
            out["keys"]["nh3|moved"] = node.key
    return out


def covered_filled_share(site_index, a, b, c_fill, pa, pb, cn=None, known=None):
    """Share of the hours behind each reporting period's flux whose Vd is not modelled.

    The hours behind the flux are those of the period (on the hour axis) inside a
    sampling period whose deposition is known: only they enter it.  Of these, an hour
    counts as not modelled when its Vd was filled from the diurnal cycle or, without
    any Vd (nor air density, for a mixing ratio), took the sampling period's mean Vd
    (:func:`deposition_rows`).  A fill outside them changes nothing, and a fill inside
    them weighs by their number, not by the period's (docs/budget.md, "Gaps in Vd").

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds of each sampling period (:func:`deposition_rows`).
    c_fill : ndarray (S, R, T + 1)
        Cumulative count of filled hours [1].
    pa, pb : ndarray of int (P,)
        Hour bounds of the reporting periods.
    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (``deposition_rows``'
        ``cn``; None: every hour has one).
    known : ndarray of bool (n, R), optional
        The sampling period's deposition is known (default: every one).

    Returns
    -------
    ndarray (S, R, P)
        Not-modelled hours / hours behind the flux [1]; NaN where there are none.
    """
    n_s, n_r, n_p = c_fill.shape[0], c_fill.shape[1], len(pa)
    imputed = np.zeros((n_s, n_p, n_r))
    behind = np.zeros((n_s, n_p, n_r))
    if len(a):
        part, hours = row_filled_hours(site_index, a, b, c_fill, pa, pb, cn)
        hours = hours[:, :, None]                         # (row, period, 1)
        w = (np.ones((len(a), 1, n_r)) if known is None
             else np.asarray(known, float)[:, None, :])
        np.add.at(imputed, site_index, part * w)
        np.add.at(behind, site_index, hours * w)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(behind > 0, imputed / behind, np.nan)
    return share.transpose(0, 2, 1)


def row_filled_hours(site_index, a, b, c_fill, pa, pb, cn=None):
    """Each sampling period's hours in each reporting period, and those not modelled.

    The per-row parts of :func:`covered_filled_share` (which sums them over a site's
    rows), so that the Monte Carlo's share of gap-filled Vd per sampling period
    (:mod:`workbench.analysis.layer`) is the budget's, not a second reckoning.

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds of each sampling period (:func:`deposition_rows`).
    c_fill : ndarray (S, R, T + 1)
        Cumulative count of filled hours [1].
    pa, pb : ndarray of int (P,)
        Hour bounds of the reporting periods.
    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (None: every hour).

    Returns
    -------
    imputed : ndarray (n, P, R) [h]
        Hours of the overlap whose Vd was filled or, missing, took the sampling
        period's mean Vd.
    hours : ndarray (n, P) [h]
        Hours of the overlap on the hour axis.
    """
    si = site_index[:, None]
    lo = np.maximum(a[:, None], pa[None, :])              # (row, period)
    hi = np.maximum(np.minimum(b[:, None], pb[None, :]), lo)
    hours = (hi - lo).astype(float)
    part = c_fill[si, :, hi] - c_fill[si, :, lo]          # (row, period, R)
    if cn is not None:
        part = part + hours[:, :, None] - (cn[si, :, hi] - cn[si, :, lo])
    return part, hours


def row_filled_deposition_share(site_index, a, b, cs, c_fill, pa, pb, cn=None):
    """The share of each sampling period's deposition in each reporting period that its
    hours without a modelled Vd carry [1] (for the gap-fill error of the Monte Carlo).

    A sampling period deposits C x (sum of its hourly effective Vd) (C constant over
    it), so the part its filled hours carry is the sum of their filled Vd over the sum
    of all, and an hour without any Vd carries the sampling period's mean effective Vd
    (as in :func:`workbench.dryflux.share_to_periods`).  A gap of day hours (high Vd)
    weighs more than as many night hours.  The hours and counts are those of
    :func:`row_filled_hours` (the budget's reckoning); where the overlap carries no Vd
    at all the share of hours is returned.

    Parameters
    ----------
    site_index, a, b : ndarray of int (n,)
        Site row and hour bounds of each sampling period.
    cs : ndarray (S, R, T + 1)
        Cumulative effective Vd [m s-1, or mol m-2 s-1 for a mixing ratio].
    c_fill : ndarray (S, R, T + 1)
        Cumulative count of filled hours [1].
    pa, pb : ndarray of int (P,)
        Hour bounds of the reporting periods.
    cn : ndarray (S, R, T + 1), optional
        Cumulative count of the hours with a finite effective Vd (None: every hour).

    Returns
    -------
    ndarray (n, P, R) [1]
    """
    imputed, hours = row_filled_hours(site_index, a, b, c_fill, pa, pb, cn)
    filled_h = np.diff(c_fill, axis=-1) > 0                    # (S, R, T)
    c_vf = np.zeros(cs.shape)
    np.cumsum(np.where(filled_h, np.diff(cs, axis=-1), 0.0), axis=-1, out=c_vf[..., 1:])
    si = site_index[:, None]
    lo = np.maximum(a[:, None], pa[None, :])              # (row, period)
    hi = np.maximum(np.minimum(b[:, None], pb[None, :]), lo)
    v_fill = c_vf[si, :, hi] - c_vf[si, :, lo]            # (row, period, R)
    v_all = cs[si, :, hi] - cs[si, :, lo]
    if cn is not None:         # an hour without Vd carries the row's mean Vd
        n_miss = hours[:, :, None] - (cn[si, :, hi] - cn[si, :, lo])
        whole = (cs[site_index, :, b] - cs[site_index, :, a])[:, None, :]
        n_whole = (cn[site_index, :, b] - cn[site_index, :, a])[:, None, :]
        with np.errstate(invalid="ignore", divide="ignore"):
            mean_v = np.where(n_whole > 0, whole / n_whole, 0.0)
        v_fill = v_fill + n_miss * mean_v
        v_all = v_all + n_miss * mean_v
    with np.errstate(invalid="ignore", divide="ignore"):
        by_hours = imputed / np.maximum(hours, 1.0)[:, :, None]
        share = np.where(v_all > 0, v_fill / np.where(v_all > 0, v_all, 1.0), by_hours)
    return np.clip(share, 0.0, 1.0)


@_graph.stage("period_shares")
def period_shares(o, rows, periods, n_sites, times):
    """One piece of rows shared among reporting periods (:func:`share_to_periods`)."""
    r = rows[0] if isinstance(rows, tuple) else rows
    return share_to_periods(r["site_index"], r["a"], r["b"], r["deposition"], r["cs"],
                            n_sites, period_axes(periods), times, r["start"], r["end"],
                            cn=r.get("cn"))


def dry_components(rows: dict, periods: pd.DataFrame, share=None):
    """Dry deposition of every measured species over the reporting periods.

    Parameters
    ----------
    rows : dict
        Output of :func:`dry_rows`.
    periods : pandas.DataFrame
    share : callable, optional
        ``share(name, rows_piece)`` -> the piece shared among `periods` (the output of
        :func:`share_to_periods`); `name` is the piece's entry of ``rows["keys"]``.
        The pipeline runs it as the ``period_shares`` stage, so that an option
        touching one species shares that species only.  Default: computed here.

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, period, species): ``deposition`` [mol m-2] scaled to the
        whole period, ``coverage`` [1] (site, period, species), ``vd_coverage`` [1]
        (share of the period's hours with a modelled Vd), ``vd_filled_share`` [1] (share
        of the hours behind the flux, those in sampling periods with a known flux, whose
        Vd was filled or, missing, taken as the sampling period's mean), ``flux_coverage`` [1] (hours with a concentration
        and a deposition velocity: 0 where Vd or the air density is missing for every
        hour, and the deposition is then NaN, never 0), ``measured`` (site, species),
        ``mixing_ratio`` (species: given as a mixing ratio), ``pSO4_total_used`` (site,
        period; text naming the pSO4 samples without pNa whose total pSO4 was used on
        the nss basis, "" where none; :func:`total_used_notes`), the pair brackets
        (:func:`workbench.drypairs.bracket_variables`) and,
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
    pa, pb = hour_bounds(times, axes.start, axes.end)
    hours_p = axes.hours

    def agg(name, r):
        if share is not None:
            return share(name, r)
        return share_to_periods(r["site_index"], r["a"], r["b"], r["deposition"], r["cs"],
                                n_s, axes, times, r["start"], r["end"], cn=r.get("cn"))

    for k, sp in enumerate(species_list):
        if sp not in rows["species"]:
            continue
        r = rows["species"][sp]
        d, c, _, fh = agg(sp, r)
        dep[..., k], cov[..., k] = d, c
        flux_cov[..., k] = np.clip(fh / np.maximum(hours_p, 1), 0, 1)
        ratio[k] = r.get("quantity") == "mixing_ratio"
        if r.get("quantity") == "amount_density":
            c_rows = np.where(no_hour_inside(r["start"], r["end"], r["a"], r["b"]), np.nan,
                              r["conc"])               # no covered hours: not in the mean
            conc[..., k] = period_mean(r["site_index"], r["start"], r["end"], c_rows, n_s, axes)
        c_valid, c_fill = rows["vd_cum"][sp]
        vd_cov[..., k] = (c_valid[:, :, pb] - c_valid[:, :, pa]) / hours_p
        filled_share[..., k] = covered_filled_share(r["site_index"], r["a"], r["b"], c_fill,
                                                    pa, pb, r.get("cn"),
                                                    np.isfinite(r["deposition"]))
    shared = {(pair, how): {m: agg(("bracket", pair, how, m), r) for m, r in members.items()}
              for (pair, how), members in rows["bracket"].items()}
    split = rows.get("split", {})
    apply_split(split, shared, species_list, hours_p, dep, cov, flux_cov, ratio, conc)
    nh3 = {}
    if "nh3_exchange" in rows:        # net = deposition part - emission part, per period
        ex = rows["nh3_exchange"]
        d_bd = agg("nh3|deposition", ex["deposition"])[0]
        if "moved" in ex:             # pair_split all_gas: pNH4 with the exchange's Vd too
            moved = split["ammonium"][1]
            d_bd = d_bd + (_species.get(moved).atoms / _species.get("NH3").atoms
                           * agg("nh3|moved", ex["moved"])[0])
        elif split.get("ammonium", ("NH3",))[0] != "NH3":    # all_particle: C(NH3) = 0
            d_bd = np.where(np.isfinite(d_bd), 0.0, np.nan)
        e = agg("nh3|emission", ex["emission"])[0]
        dims3 = ("site", "receptor", "period")
        nh3 = {"nh3_net": (dims3, d_bd - e, {
                   "units": "mol m-2", "long_name": "net NH3 exchange of the compensation "
                   "point model, deposition - emission (positive down)"}),
               "nh3_emission": (dims3, e, {"units": "mol m-2",
                                           "long_name": "NH3 emission term over the period"})}
    brackets = {}
    for (pair, how), members in shared.items():
        brackets.update(bracket_variables(pair, how, members, hours_p))
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
         "pSO4_total_used": (("site", "period"), total_used_notes(rows, periods, sites),
                             {"long_name": "pSO4 samples without pNa in the period: total "
                              "pSO4 used for them in place of non-sea-salt pSO4"}),
         "pSO4_nss_censored": (("site", "period"), censored_nss_notes(rows, periods, sites),
                               {"long_name": "pSO4 samples below detection beside a pNa: "
                                "their non-sea-salt pSO4 from the limit less the sea salt"}),
         "pSO4_na_censored": (("site", "period"), censored_na_notes(rows, periods, sites),
                              {"long_name": "pSO4 samples whose pNa was below detection: "
                               "their sea-salt sulfate from the substitute"}),
         **brackets, **nh3},
        coords={"site": sites, "receptor": receptors, "period": periods["label"].values,
                "species": species_list})
    return ds


