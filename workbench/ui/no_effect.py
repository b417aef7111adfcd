"""Why a control of an app left every total as it was, where the inputs tell.

The site explorer adds this text after its change line when a control moved nothing
(:meth:`workbench.ui.apps.SiteExplorer._on_control`).
"""
from __future__ import annotations

import pandas as pd

from ..budget import PAIRS

#: Particulate species of the budget (their dry deposition is 0 at a bulk collector with
#: ``bulk_correction = "exclude_particles"``, docs/budget.md).
PARTICLES = ("pSO4", "pNO3", "pNH4")
#: The species that the key of an assumption acts on alone (besides ``fixed_velocity.X``
#: and ``particles.X.fine_fraction``).
SPECIES_OF_KEY = {"dry.nh3_treatment": "NH3"}
#: Where ``pair_split`` puts each gas/particle pair: split -> member index (0 gas, 1
#: particle) of :data:`workbench.budget.PAIRS`.
SPLIT_INTO = {"all_gas": 0, "all_particle": 1}


def _species_of(key: str) -> str | None:
    """The one species an assumption acts on, or None (it acts on several or none)."""
    parts = key.split(".")
    if parts[0] == "fixed_velocity" or (parts[0] == "particles" and len(parts) == 3):
        return parts[1]
    return SPECIES_OF_KEY.get(key)


def no_effect_text(key, label, components: pd.DataFrame, collector="wet_only",
                   bulk_correction="none", pair_split="measured", sulfate_basis="nss") -> str:
    """Why moving an assumption left every total as it was, where the reason is known.

    Parameters
    ----------
    key, label : str
        The assumption's key (``fixed_velocity.NO2``, ``particles.fine_mmd``...) and label.
    components : pandas.DataFrame
        :func:`component_rates` of the site and years shown.
    collector, bulk_correction : str
        The site's collector and ``[budget] bulk_correction``.
    pair_split, sulfate_basis : str
        ``[budget] pair_split`` and ``sulfate_basis`` of the run shown.

    Returns
    -------
    str
        ``"<label>: no effect on the totals of this site and these years"`` and the
        reasons found in brackets ("; " between two), or a full stop when none is known:
        a bulk collector (particles), a gas/particle split that leaves the species
        nothing (e.g. all as particle: no HNO3 or NH3 left), a species without
        concentrations at the site, a split that moves no pair, a sea-salt tracer under
        the total sulfate basis.
    """
    head = f"{label}: no effect on the totals of this site and these years"
    dry = components[components["pathway"] == "dry"]
    missing = {str(sp) for sp, st in dry.groupby("species")["status"]
               if (st == "missing").all()}
    species = _species_of(key)
    reasons = []
    # a pair is moved when both members are measured (workbench.drypairs.split_pairs)
    moved = {pair: m for pair, m in PAIRS.items() if not missing & set(m)}
    if key == "budget.pair_split" and not moved:
        reasons.append("no gas/particle pair has both members measured here, so the "
                       "split moves nothing")
    for pair, members in moved.items() if pair_split in SPLIT_INTO else ():
        into = members[SPLIT_INTO[pair_split]]
        if species in members and species != into:
            phase = "gas" if SPLIT_INTO[pair_split] == 0 else "particle"
            reasons.append(f"the gas/particle split puts the {pair} pair all as {phase}: "
                           f"no {species} left, both members deposit with the Vd of {into}")
    if species is not None and species in missing:
        reasons.append(f"no {species} concentrations here")
    if key == "wet.seasalt_tracer" and sulfate_basis == "total":
        reasons.append("the sulfate basis is total: the tracer only enters non-sea-salt "
                       "sulfate")
    if key.startswith("particles.") or species in PARTICLES:     # last: it ends with docs
        if collector == "bulk" and bulk_correction == "exclude_particles":
            reasons.append("a bulk collector: its wet deposition holds the particle dry "
                           "deposition, counted 0 in the dry pathway; docs/budget.md")
    return head + (f" ({'; '.join(reasons)})" if reasons else ".")
