"""The gas/particle pairs of dry N (nitrate: HNO3 + pNO3; ammonium: NH3 + pNH4) built
from each member's own rows.

Deposition is linear in the concentration, so a pair deposited all with one phase's Vd
is F(gas at Vd) + F(particle at Vd), each member over its own sampling periods and scaled
to the reporting period by its own coverage.  The bracket of dry N (both phases, always
reported) and the main components under ``[budget] pair_split = "all_gas" |
"all_particle"`` are built that way, from the same rows, so the members need not share
a sampler (NH3 on monthly passive samplers, pNH4 on weekly filters).  Used by
:mod:`workbench.drycomponents` and :mod:`workbench.analysis.layer`.
Units: deposition [mol m-2], coverage [1], hours [h], concentrations [mol m-3].
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from . import species as _species
from .budget import PAIRS
from .budgetstatus import bracket_velocities


def combined_notes(air: xr.Dataset, pair: str) -> list:
    """Notes for the sites whose pair members do not share every sample (e.g. NH3 on
    monthly passive samplers, pNH4 on weekly filters): the bracket there adds the two
    members, each deposited over its own sampling periods
    (:func:`workbench.drycomponents.dry_rows`); the note
    names the samplers and their usual sample length [d].

    Parameters
    ----------
    air : xarray.Dataset
        Air concentrations (dim ``period``) with ``site``, ``start``, ``end`` and,
        when given, ``sampler_id``.
    pair : str
        A key of :data:`workbench.budget.PAIRS`.

    Returns
    -------
    list of str
        One note per site where both members are measured and some sample holds one
        member only (none where every sample holds both or neither).
    """
    gas, part = PAIRS[pair]
    n = air.sizes["period"]

    def has(sp):                                   # a value or a censored value
        cens = air[f"{sp}_censored"].values if f"{sp}_censored" in air else False
        return np.isfinite(air[sp].values) | cens
    g, p = has(gas), has(part)
    frame = pd.DataFrame({
        "site": air["site"].values.astype(str),
        "sampler": (air["sampler_id"].values.astype(str) if "sampler_id" in air
                    else np.full(n, "?", object)),
        "days": (air["end"].values - air["start"].values) / np.timedelta64(1, "D"),
        "g": g, "p": p})
    both = frame.groupby("site")[["g", "p"]].any()
    lone = frame[(frame["g"] != frame["p"])].groupby("site").size()
    sites = sorted(s for s in both.index[both["g"] & both["p"]] if s in lone.index)
    if not sites:
        return []
    # one table of (site, member, sampler) -> samples and median length, read per site
    frame = frame[frame["site"].isin(sites)]
    long = pd.concat([frame[frame[k]].assign(member=sp) for k, sp in (("g", gas), ("p", part))])
    per = long.groupby(["site", "member", "sampler"])["days"].agg(["size", "median"])
    text = (per.index.get_level_values("sampler") + " (" + per["size"].astype(str)
            + " samples of about " + per["median"].map(_length_text) + ")")
    text = text.groupby(level=["site", "member"]).agg(", ".join)
    return [f"{gas} and {part} at {s}: the {pair} bracket (dry N with the pair all as gas or "
            f"all as particle) is combined across samplers: {gas} from {text[(s, gas)]}, "
            f"{part} from {text[(s, part)]}; each member is deposited over its own sampling "
            f"periods and scaled to the reporting period by its own coverage "
            f"({int(lone[s])} samples hold one member only)" for s in sites]


def _length_text(days) -> str:
    """A sampling length [d] in words: whole days from 1 d, else hours (an hourly
    monitor's rows are ``1 h``, not ``0 d``).

    >>> _length_text(7.0), _length_text(1 / 24), _length_text(0.5)
    ('7 d', '1 h', '12 h')
    """
    return f"{int(round(days))} d" if days >= 1 else f"{max(1, int(round(days * 24)))} h"


def split_pairs(split, rows, air, nodes) -> dict:
    """The pairs that ``pair_split`` moves into one member, with a run note for each.

    Parameters
    ----------
    split : {"measured", "all_gas", "all_particle"}
    rows : dict
        The output of :func:`workbench.drycomponents.dry_rows` so far (its
        ``"bracket"`` and ``"notes"``; the notes are extended here).
    air : xarray.Dataset
        The air concentrations.
    nodes : dict
        The Vd fills by species.

    Returns
    -------
    dict
        pair -> (the species moved into, the other member, `split`) for each pair whose
        bracket rows exist (both members in the air and with a Vd); a pair without them
        keeps its measured split, and a note says why.
    """
    if split == "measured":
        return {}
    out = {}
    for pair, members in PAIRS.items():
        into = bracket_velocities(members)[split]
        other = members[1] if into == members[0] else members[0]
        if (pair, split) in rows["bracket"]:
            out[pair] = (into, other, split)
            rows["notes"].append(
                f"pair_split = {split}: the {pair} pair enters the main numbers as {into} "
                f"(both members deposited with the Vd of {into}, each over its own sampling "
                f"periods and scaled by its own coverage, as the bracket); {other} is 0")
            continue
        if not any(m in air for m in members):
            continue
        absent = [m for m in members if m not in air]
        no_vd = [m for m in members if m not in nodes]
        why = (f"{absent[0]} is not in the air concentrations" if absent else
               f"{' and '.join(no_vd)} {'has' if len(no_vd) == 1 else 'have'} no deposition "
               "velocity")
        rows["notes"].append(f"pair_split = {split} is not applied to the {pair} pair: "
                             f"{why}; the measured split stands")
    return out


def bracket_variables(pair, how, shared, period_hours) -> dict:
    """The variables of one bracket from its members' shares among reporting periods.

    Parameters
    ----------
    pair, how : str
        A key of :data:`workbench.budget.PAIRS`; ``"all_gas"`` or ``"all_particle"``.
    shared : dict
        member -> the output of :func:`share_to_periods` of its bracket rows
        (deposition [mol m-2 of the member] scaled to the whole period from its own
        sampled hours, coverage [1], covered hours [h], flux hours [h]).
    period_hours : ndarray (P,)
        Hours of each reporting period [h].

    Returns
    -------
    dict
        ``bracket_<pair>_<how>`` [mol m-2 of N], ``bracket_<pair>_<how>_air_coverage``
        (site, period) and ``..._flux_coverage`` (site, receptor, period) [1]: the
        three results of :func:`pair_totals`, for the bracket and its status.
    """
    name = f"bracket_{pair}_{how}"
    dims = ("site", "receptor", "period")
    dep, air_cov, flux_cov = pair_totals(shared, period_hours)
    gas, part = PAIRS[pair]
    return {name: (dims, dep, {
                "units": "mol m-2", "long_name": f"dry deposition of the {pair} pair "
                f"({gas} + {part}) as N, {how.replace('_', ' ')}: each member over its own "
                f"sampling periods with the Vd of {bracket_velocities((gas, part))[how]}"}),
            f"{name}_air_coverage": (("site", "period"), air_cov, {
                "units": "1", "long_name": "share of the period's hours with a "
                "concentration, the smaller of the pair members'"}),
            f"{name}_flux_coverage": (dims, flux_cov, {
                "units": "1", "long_name": "share of the period's hours with a known "
                "flux, the smaller of the pair members'"})}


def pair_totals(shared, period_hours):
    """A pair deposited with one phase's Vd, from its members' shares among periods.

    Parameters
    ----------
    shared : dict
        member -> the output of :func:`workbench.dryflux.share_to_periods` of its rows
        at that Vd (deposition [mol m-2 of the member] scaled to the whole period from
        its own sampled hours, coverage [1], covered hours [h], flux hours [h]).
    period_hours : ndarray (P,)
        Hours of each reporting period [h].

    Returns
    -------
    deposition : ndarray (site, receptor, period) [mol m-2 of N]
        The sum of the members' deposition, each as mol of N (atoms of N per formula
        unit x mol of the member); NaN where a member has no flux.
    air_coverage : ndarray (site, period) [1]
    flux_coverage : ndarray (site, receptor, period) [1]
        The smaller of the members' (the weaker member's).
    """
    dep = sum(_species.get(m).atoms * d for m, (d, *_) in shared.items())
    air_cov = np.min([c for _, c, _, _ in shared.values()], axis=0)
    flux_cov = np.min([np.clip(fh / np.maximum(period_hours, 1), 0, 1)
                       for *_, fh in shared.values()], axis=0)
    return dep, air_cov, flux_cov


def apply_split(split, shared, species_list, period_hours, dep, cov, flux_cov, ratio, conc):
    """Put the pairs that ``pair_split`` moves into the dry component arrays (in place).

    The species moved into gets the pair deposited with its Vd (:func:`pair_totals`,
    as the bracket: each member over its own sampling periods, with its own coverage),
    the weaker member's air and flux coverage, and the sum of the members' mean
    concentrations; the other member gets 0 where its own flux is known (NaN where not,
    so its status is that of its own samples).  Its Vd coverage stays that of the Vd
    used.

    Parameters
    ----------
    split : dict
        pair -> (into, other, how), ``dry_rows(...)["split"]`` (:func:`split_pairs`).
    shared : dict
        (pair, how) -> member -> shares among periods, as for :func:`pair_totals`.
    species_list : list of str
        The species axis of the arrays.
    period_hours : ndarray (P,) [h]
    dep : ndarray (site, receptor, period, species) [mol m-2]
    cov : ndarray (site, period, species) [1]
    flux_cov : ndarray (site, receptor, period, species) [1]
    ratio : ndarray (species,) of bool
        Given as a mixing ratio (the moved-into species: either member).
    conc : ndarray (site, period, species) [mol m-3]
    """
    for pair, (into, other, how) in split.items():
        k_in, k_out = species_list.index(into), species_list.index(other)
        atoms = _species.get(into).atoms
        d_n, air_cov, f_cov = pair_totals(shared[(pair, how)], period_hours)
        dep[..., k_in] = d_n / atoms
        cov[..., k_in] = air_cov
        flux_cov[..., k_in] = f_cov
        ratio[k_in] |= ratio[k_out]
        conc[..., k_in] = (conc[..., k_in] + _species.get(other).atoms * conc[..., k_out]
                           / atoms)           # NaN where a member has none (or is a ratio)
        dep[..., k_out] = np.where(np.isfinite(dep[..., k_out]), 0.0, np.nan)
        conc[..., k_out] = np.where(np.isfinite(conc[..., k_out]), 0.0, np.nan)


def component_rows(rows, sp) -> list:
    """The rows behind the dry component of a species, with their factor.

    Parameters
    ----------
    rows : dict
        Output of :func:`workbench.drycomponents.dry_rows`.
    sp : str
        A dry species.

    Returns
    -------
    list of (name, rows piece, factor)
        `name` is the piece's entry of ``rows["keys"]``; `factor` [1] turns the
        piece's mol of its member into mol of `sp` (atoms of the element).  A species
        that ``pair_split`` moves into has both members' bracket rows at its Vd, the
        other member none (its component is 0); any other species its own rows.
    """
    for pair, (into, other, how) in rows.get("split", {}).items():
        if sp == into:
            return [(("bracket", pair, how, m), r,
                     _species.get(m).atoms / _species.get(into).atoms)
                    for m, r in rows["bracket"][(pair, how)].items()]
        if sp == other:
            return []
    return [(sp, rows["species"][sp], 1.0)] if sp in rows["species"] else []
