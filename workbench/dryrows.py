"""The dry deposition over every air-sampling period of every species, independent of
the reporting periods (:func:`dry_rows`), and the stages of the graph it runs
(the prepared air, each species' air side and rows, the NH3 emission rows).

The numpy cores are in :mod:`workbench.dryflux`; :mod:`workbench.drycomponents` shares
the rows among reporting periods.  Units: Vd [m s-1], concentrations [mol m-3] or
[mol mol-1], deposition [mol m-2].
"""
from __future__ import annotations

import functools

import numpy as np
import pandas as pd
import xarray as xr

from . import graph as _graph
from .budget import COMPONENTS, PAIRS, BudgetOptions
from .budgetstatus import bracket_velocities
from .dryflux import _inputs_for, deposition_rows
from .dryflux_sums import _count_cumulative, effective_sums
from .drynss import _nss_particles
from .drypairs import combined_notes, split_pairs
from .dryvelocities import NH3_EXCHANGE, fill_arrays
from .io.metgaps import VD_INPUTS, gap_runs, without_value
from .io.samplegaps import species_gap_runs


def _fingerprint(air: xr.Dataset, species: str) -> str:
    """Digest of what the rows of a species read from the air dataset (its values,
    censoring, detection limits, methods, sites and times), for content-keyed caches."""
    names = (species, f"{species}_censored", f"{species}_detection_limit",
             f"{species}_method", "site", "start", "end")
    return _graph.variables_digest([(n, air.variables[n]) for n in names if n in air.variables],
                                   str(air[species].attrs.get("quantity", "")))


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


@_graph.stage("hour_sums", freeze=True)
def hour_sums(o, fill, side, finite=None):
    """The cumulative effective Vd of a filled Vd and the mask of its finite hours
    (:func:`workbench.dryflux_sums.effective_sums`): keyed by the fill and the air
    side's ``(quantity, diurnal weight, air density)`` by their content (`side`, see
    :func:`_member_rows`), so the species that deposit with the same Vd the same way
    share one (a bracket member with the other member's Vd).  `finite`: a callable
    giving the mask of the ``hour_counts`` stage of equal content (the sums of the
    species whose Vd have gaps in the same hours hold one mask); default: its own."""
    quantity, weight, n_air = side
    cs, mask = effective_sums(fill["v_np"], quantity, n_air, weight)
    if mask is not None and finite is not None:
        mask = finite(mask)
    return {"cs": cs, "finite": mask}


@_graph.stage("hour_counts", freeze=True)
def hour_counts(o, mask):
    """The mask of the finite hours of an effective Vd and their cumulative count,
    keyed by the mask's content: the species whose Vd have gaps in the same hours
    share one of each."""
    return {"finite": mask, "cn": _count_cumulative(mask)}


def _counts_node(run, mask):
    """The ``hour_counts`` Node of a finite-hour mask (keyed by its content)."""
    return run("hour_counts", deps={"mask": _graph.Node(
        f"hour_sums:{_graph.content_digest([mask])}:finite", mask)})


@_graph.stage("species_rows")
def species_rows(o, inputs, fill, times, sums, counts):
    """Deposition over every sampling period of one species (:func:`deposition_rows`;
    `sums` and `counts` the ``hour_sums`` and ``hour_counts`` of its Vd)."""
    si, conc, quantity, weight, n_air, notes, t0, t1, cens = inputs[1:]
    r = deposition_rows(conc, quantity, si, t0, t1, times, fill["v_np"], n_air, weight,
                        sums=(sums["cs"], None if counts is None else counts["cn"]))
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


def _axes_node(run, fill):
    """The Node of a filled Vd's site and time axes, keyed by their content."""
    return _graph.Node("vd_axes:" + run("vd_axes", deps={"fill": fill}).value,
                       fill.value["vd"])


def _member_rows(run, air_node, sp, fill, axes, met, times, sites):
    """(air side, rows) Nodes of species `sp` of `air_node` deposited with the filled Vd
    `fill` (the stages ``air_content``, ``flux_inputs`` and ``species_rows``)."""
    content = run("air_content", deps={"air": air_node}, params={"species": sp})
    air_c = _graph.Node("air_content:" + content.value, air_node.value)
    inputs = run("flux_inputs", deps={"air": air_c, "axes": axes, "met": met},
                 params={"species": sp, "sites": tuple(sites)})
    quantity, weight, n_air = inputs.value[3:6]
    side = (quantity, weight, n_air if quantity == "mixing_ratio" else None)
    side = _graph.Node(                       # what the sums read of it, by content
        "flux_inputs:" + _graph.content_digest(
            [np.asarray(a) for a in side[1:] if a is not None], quantity,
            *(a is None for a in side[1:])) + ":effective", side)
    if "content" in fill.value:       # the fills of equal Vd on the same sites, one key
        fill = _graph.Node(fill.value["content"], fill.value)
    sums = run("hour_sums", deps={"fill": fill, "side": side},
               fn=functools.partial(hour_sums, finite=lambda m: _counts_node(
                   run, m).value["finite"]))
    mask = sums.value["finite"]
    counts = (_graph.input_node("none", "", None) if mask is None
              else _counts_node(run, mask))
    return inputs, run("species_rows", deps={"inputs": inputs, "fill": fill, "times": times,
                                             "sums": sums, "counts": counts})


def exchange_member_rows(air, vel, met, sites, member, options: BudgetOptions, graph,
                         counts=None):
    """A pair member's rows deposited with the Vd of the bidirectional NH3 exchange.

    The rows that :func:`dry_rows` builds as ``rows["nh3_exchange"]["moved"]`` under
    ``pair_split = "all_gas"`` (the same stages, so the same cached results), asked
    for on their own by a drawn gas/particle split of the ammonium pair
    (:func:`workbench.analysis.pairlayer.moved_pieces`): a share of pNH4 taken as NH3
    adds C vd_NH3_bidirectional to the net exchange, as the compensation point model
    gives for that air concentration (its net flux is linear in the concentration,
    :mod:`workbench.drydep.nh3_bidirectional`).

    Parameters
    ----------
    air, met : workbench.graph.Node
        The inputs, as for :func:`dry_rows` with a graph.
    vel : dict
        species -> Node of the filled Vd (with :data:`.dryvelocities.NH3_EXCHANGE`).
    sites : list of str
    member : str
        The species whose samples are deposited (``"pNH4"``).
    options : BudgetOptions
    graph : workbench.graph.Graph

    Returns
    -------
    tuple or None
        (rows as of :func:`workbench.dryflux.deposition_rows` with ``site_index`` ...
        [mol m-2], (c_valid, c_fill) the cumulative counts of modelled and filled hours
        of the exchange's Vd); None without the exchange or the member in the air.
    """
    if not all(k in vel for k in NH3_EXCHANGE) or member not in air.value:
        return None
    run = functools.partial(graph.run, options={"budget": options}, counts=counts)
    fill, first = vel["NH3_bidirectional"], next(iter(vel.values()))  # as in dry_rows
    times_node = _graph.Node(_axes_node(run, first).key + ":times",
                             first.value["vel"][0]["time"].values)
    _, node = _member_rows(run, air, member, fill, _axes_node(run, fill), met, times_node,
                           list(sites))
    return node.value[0], (fill.value["c_valid"], fill.value["c_fill"])


def dry_rows(air, vel, met, sites, options: BudgetOptions, graph=None, counts=None):
    """Deposition over every air-sampling period of every species (period-independent).

    Parameters
    ----------
    air : xarray.Dataset or workbench.graph.Node
    vel : dict
        species -> the (vd, was, source) triples of :func:`.dryvelocities.prepare_velocities`, or
        Nodes of :func:`workbench.dryvelocities.fill_arrays` results (the fill stage's).
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
        the Vd of :func:`.budgetstatus.bracket_velocities` (the pair need not share samples);
        ``"split"``: pair -> (species moved into, other member, how) under
        ``options.pair_split`` (:func:`workbench.drypairs.split_pairs`; empty for
        "measured"), whose components :func:`.drycomponents.dry_components` builds from
        the bracket's rows (:func:`workbench.drypairs.apply_split`), the moved-into species
        ``measured`` where both members are;
        ``"nh3_exchange"`` (when `vel` holds :data:`.dryvelocities.NH3_EXCHANGE`): the
        deposition and emission parts of the net NH3 flux per NH3 sampling period (and, when
        ``pair_split`` moves pNH4 into NH3, ``"moved"``: the pNH4 rows with the
        exchange's Vd); ``"notes"``,
        ``"measured"`` (site x species bool), ``"met_without"`` (site str: the
        variables a Vd reads that the site's met has in no hour,
        :func:`workbench.io.metgaps.without_value`), ``"met_gap_runs"`` and
        ``"met_times"`` (the runs of hours without a met row or a value a Vd reads,
        :func:`workbench.io.metgaps.gap_runs`, on the met's time axis),
        ``"species_gap_runs"`` (:func:`workbench.io.samplegaps.species_gap_runs` of the
        air as read), ``"masked_note"`` (site x species str,
        :func:`masked_notes`), ``"masked_runs"`` (the masked rows, :func:`masked_runs`;
        the moved-into species of a ``pair_split`` holds the other member's too),
        ``"receptors"``, ``"times"``, ``"sites"``;
        ``"keys"``: the node key of each piece of rows (for :func:`.drycomponents.dry_components`;
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
            axes[fill.key] = _axes_node(run, fill)
        return axes[fill.key]
    times_node = _graph.Node(axes_node(next(iter(nodes.values()))).key + ":times", times)
    met_node = met
    prepared = run("air_basis", deps={"air": air})

    def one(air_node, sp, vd_sp):
        return _member_rows(run, air_node, sp, nodes[vd_sp], axes_node(nodes[vd_sp]),
                            met_node, times_node, sites)

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
    out["masked_note"] = masked_notes(air.value.attrs, sites, species_list)
    out["masked_runs"] = masked_runs(air.value.attrs, sites, species_list)
    # the stretches a sampler ran without a species' values (the input notes' "air
    # RDG-F1: NH3 without a value in 4 weeks..."), named per period by dry_components
    out["species_gap_runs"] = species_gap_runs(air.value)
    # the variables a Vd reads that a site's met has in no hour (the met note's "has a
    # value in 0 (none)"): named where the site has no Vd at all
    out["met_without"] = without_value(met.value, sites, VD_INPUTS)
    # the runs of hours without a met row or a value a Vd reads, per site: counted per
    # reporting period by dry_components (the reason of a period's filled or missing Vd)
    out["met_gap_runs"] = gap_runs(met.value, sites, VD_INPUTS)
    out["met_times"] = (met.value["time"].values if met.value is not None
                        and "time" in met.value.coords else None)
    # pair_split: the main components of a pair from the bracket's rows (_apply_split)
    out["split"] = split_pairs(options.pair_split, out, air_v, nodes)
    for pair, (into, other, _) in out["split"].items():
        k_in, k_out = species_list.index(into), species_list.index(other)
        out["measured"][:, k_in] &= out["measured"][:, k_out]    # the weaker member's
        out["masked_note"][:, k_in] = np.where(out["masked_note"][:, k_in] == "",
                                               out["masked_note"][:, k_out],
                                               out["masked_note"][:, k_in])
        mr = out["masked_runs"]                # the other member's masked rows too
        out["masked_runs"] = pd.concat([mr, mr[mr["species"] == k_out].assign(species=k_in)],
                                       ignore_index=True)
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


def _json_attr(attrs, name) -> dict:
    """The JSON object written by the air reader in the attribute `name` of an air
    Dataset's `attrs`, decoded; {} where the attribute is absent or empty (an air
    Dataset made elsewhere: a grid, a test's table)."""
    import json

    return json.loads(attrs.get(name, "{}") or "{}")


def masked_notes(attrs, sites, species) -> np.ndarray:
    """Why each species has no value at each site though it was measured there: every
    value masked by a check of the air reader (the air Dataset's attribute
    :data:`workbench.io.samplecolumns.ALL_MASKED_ATTR`).

    Parameters
    ----------
    attrs : dict
        The air Dataset's attributes.
    sites, species : sequence of str

    Returns
    -------
    ndarray of str (site, species)
        The reasons (``NH3 values look 1000x too high at this sampler: ng/m3 written
        under a ug/m3 header?``); "" where the species has values at the site or was not
        in its rows (not measured) and without the attribute (an air Dataset made
        elsewhere: a grid, a test's table).
    """
    from .io.samplecolumns import ALL_MASKED_ATTR
    out = np.full((len(sites), len(species)), "", dtype=object)
    gone = _json_attr(attrs, ALL_MASKED_ATTR)
    where = {str(s): i for i, s in enumerate(sites)}
    for k, sp in enumerate(species):
        for site, why in gone.get(sp, {}).items():     # the few sites that lost all
            if site in where:
                out[where[site], k] = why
    return out


def masked_runs(attrs, sites, species) -> pd.DataFrame:
    """The air rows masked by a check of the air reader, per species, as runs of rows
    of one site and reason (the air Dataset's attribute
    :data:`workbench.io.samplecolumns.MASKED_RUNS_ATTR`).

    Parameters
    ----------
    attrs : dict
        The air Dataset's attributes.
    sites, species : sequence of str

    Returns
    -------
    pandas.DataFrame
        Columns ``site`` (index into `sites`), ``species`` (index into `species`),
        ``start``, ``end`` (datetime64, as the Dataset's), ``why`` (the reader's reason
        without its ``(masked)``) and ``rows`` (how many rows the run holds); no rows
        without the attribute (an air Dataset made elsewhere: a grid, a test's table)
        and for sites not in `sites`.
    """
    from .io.samplecolumns import MASKED_RUNS_ATTR
    data = _json_attr(attrs, MASKED_RUNS_ATTR)
    reasons = np.asarray(data.get("reasons", []), dtype=object)
    where = pd.Index([str(s) for s in sites])
    parts = []
    for sp, r in data.get("runs", {}).items():
        if sp not in species or not r.get("site"):
            continue
        si = where.get_indexer(pd.Index(r["site"], dtype=object))
        keep = si >= 0                        # the sites of this run only
        parts.append(pd.DataFrame({
            "site": si[keep], "species": species.index(sp),
            "start": np.asarray(r["start"], np.int64)[keep].astype("datetime64[s]")
                                                        .astype("datetime64[ns]"),
            "end": np.asarray(r["end"], np.int64)[keep].astype("datetime64[s]")
                                                    .astype("datetime64[ns]"),
            "why": reasons[np.asarray(r["why"], int)[keep]].astype(str),
            "rows": np.asarray(r["rows"], int)[keep]}))
    if parts:
        return pd.concat(parts, ignore_index=True)
    return pd.DataFrame({"site": np.zeros(0, int), "species": np.zeros(0, int),
                         "start": np.zeros(0, "datetime64[ns]"),
                         "end": np.zeros(0, "datetime64[ns]"),
                         "why": np.zeros(0, object), "rows": np.zeros(0, int)})
