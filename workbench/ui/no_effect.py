"""Why a control of an app left every total as it was, where the inputs tell.

The site explorer adds this text after its change line when a control moved nothing
(:meth:`workbench.ui.apps.SiteExplorer._on_control`); the critical-loads explorer shows
:func:`cut_no_effect_text` when a cut slider changes nothing shown
(:meth:`workbench.ui.apps_analysis.CriticalLoadsExplorer._on_control`).
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


#: Starts of the budget's component notes (``note`` of budget.nc) that say why a
#: component has no bar: the species is not measured at the site, or its dry
#: deposition is counted in a bulk collector's wet ion (docs/budget.md).
NOT_MEASURED = "not measured"
IN_BULK_WET = "caught by the bulk collector"
#: The start of the note of a species measured at the site whose every value the air
#: reader masked (:data:`workbench.budgetstatus.ALL_MASKED_NOTE`; the flag follows).
ALL_MASKED = "measured, every value masked"
#: The start of the note of a period whose air samples of the species were all masked
#: (:data:`workbench.budgetstatus.PERIOD_MASKED_NOTE`; the reason follows).
PERIOD_MASKED = "every value of the period masked"


def component_reason(note) -> str:
    """Short reason of a component without its own bar: ``"not measured"``, ``"every
    value masked"`` (measured, but the air reader masked each value: a sampler in ng/m3
    under a ug/m3 header, say), ``"period masked"`` (samples in the period, each value
    masked; other periods of the site may have values), ``"in the bulk wet"`` or ``""``
    (none of these), from the budget's component `note`."""
    note = str(note or "")
    if note.startswith(NOT_MEASURED):
        return "not measured"
    if note.startswith(ALL_MASKED):
        return "every value masked"
    if note.startswith(PERIOD_MASKED):
        return "period masked"
    if note.startswith(IN_BULK_WET):
        return "in the bulk wet"
    return ""


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
        notes = dry.loc[dry["species"] == species, "note"] if "note" in dry else ()
        masked = len(notes) and all(component_reason(n) in ("every value masked",
                                                             "period masked") for n in notes)
        reasons.append(f"every {species} value masked here (input_rows.csv says why)"
                       if masked else f"no {species} concentrations here")
    if key == "wet.seasalt_tracer" and sulfate_basis == "total":
        reasons.append("the sulfate basis is total: the tracer only enters non-sea-salt "
                       "sulfate")
    if key.startswith("particles.") or species in PARTICLES:     # last: it ends with docs
        if collector == "bulk" and bulk_correction == "exclude_particles":
            reasons.append("a bulk collector: its wet deposition holds the particle dry "
                           "deposition, counted 0 in the dry pathway; docs/budget.md")
    return head + (f" ({'; '.join(reasons)})" if reasons else ".")


def _group_species(group: str) -> tuple:
    from ..budget import OXIDIZED_N, REDUCED_N
    return {"S": ("SO2", "pSO4", "SO4"), "NOx": OXIDIZED_N, "NHx": REDUCED_N}[group]


def missing_species(components: pd.DataFrame, group: str) -> list:
    """Species of a cut group (S, NOx, NHx) with no data in `components`
    (:func:`component_rates` of one site and period): every row of it ``missing``."""
    rows = components[components["species"].isin(_group_species(group))
                      & ((components["element"] == "S") == (group == "S"))]
    return sorted(str(sp) for sp, st in rows.groupby("species")["status"]
                  if (st == "missing").all())


def cut_no_effect_text(group, parts, loads, cuts, mode="air_and_wet", missing=()) -> str:
    """Why a cut of the critical-loads explorer changes nothing shown, or ``""``.

    Parameters
    ----------
    group : {"S", "NOx", "NHx"}
        The group whose cut slider moved.
    parts : mapping
        ``<group>_<pathway>`` deposition of the site and year shown [eq ha-1 yr-1]
        (:func:`workbench.analysis.whatif.group_deposition`).
    loads : mapping
        ``cl_max_s``, ``cl_min_n``, ``cl_max_n`` and (optional) ``cl_nut_n``
        [eq ha-1 yr-1].
    cuts : mapping
        group -> fraction cut [1], the slider's new value included.
    mode : {"air_and_wet", "air_only"}
    missing : list of str
        The group's species without data here (:func:`missing_species`).

    Returns
    -------
    str
        ``"cut <group>: no effect on the deposition or the exceedances (<why>)"`` when
        the cut moves no deposition (nothing of the group here, missing species
        counted 0, or only air cut and the group all wet);
        ``"cut <group>: the deposition moves, the exceedances stay as they were
        (<why>)"`` when the acidity and nutrient-N exceedances and the fractions that end
        them are those without this cut (no exceedance to end, none computable, or
        other groups end it); ``""`` when the cut changes what is shown or is 0.
    """
    import numpy as np

    from ..analysis.exceedance import acidity_exceedance, nutrient_n_exceedance
    from ..analysis.whatif import GROUP_TEXT, scaled, smallest_fraction
    if not float(cuts.get(group, 0.0)) > 0:
        return ""
    name = GROUP_TEXT[group]
    loads = {**dict.fromkeys(("cl_max_s", "cl_min_n", "cl_max_n", "cl_nut_n"), np.nan),
             **loads}                   # a receptor may have one kind of load only
    without = {**cuts, group: 0.0}
    dep, dep0 = scaled(parts, cuts, mode), scaled(parts, without, mode)
    if np.allclose(dep, dep0, equal_nan=True):
        wet, dry = float(parts[f"{group}_wet"]), float(parts[f"{group}_dry"])
        if missing and not (wet > 0 or dry > 0):
            why = f"no {', '.join(missing)} data here, counted 0"
        elif mode == "air_only" and wet > 0:
            why = (f"only the air concentrations are cut, and the {name} deposition here "
                   "is all wet")
        else:
            why = f"no {name} deposition here"
        return f"cut {name}: no effect on the deposition or the exceedances ({why})"

    def shown(c):
        s, n = scaled(parts, c, mode)
        s, n = max(float(s), 0.0), max(float(n), 0.0)
        acid = acidity_exceedance(s, n, loads["cl_max_s"], loads["cl_min_n"], loads["cl_max_n"])
        return np.array([float(acid.exceedance), float(nutrient_n_exceedance(n, loads["cl_nut_n"])),
                         *(float(v) for v in smallest_fraction(parts, c, loads, mode))])
    if not np.allclose(shown(cuts), shown(without), equal_nan=True):
        return ""
    acid0, nut0 = shown({})[:2]
    if np.isnan([acid0, nut0]).all():
        why = "no critical load here: no exceedance can be computed"
    elif acid0 == 0 and nut0 == 0:
        why = "no acidity or nutrient-N exceedance here to end"
    else:
        reasons = []
        for what, ex in (("acidity", acid0), ("nutrient-N", nut0)):
            if np.isnan(ex):
                reasons.append(f"no {what} critical load")
            elif ex == 0:
                reasons.append(f"no {what} exceedance here")
            elif what == "nutrient-N" and group == "S":
                reasons.append("sulfur does not count in the nutrient-N exceedance")
            else:
                reasons.append(f"the {what} exceedance here does not follow this cut")
        why = "; ".join(reasons)
    return f"cut {name}: the deposition moves, the exceedances stay as they were ({why})"


#: Prefix of the sensitivity factors that scale one species' deposition velocity
#: (``[sensitivity] factors``: ``vd_SO2``, ``vd_pSO4`` ...).
VD_FACTOR = "vd_"
#: Reason of a component without its own deposition, in a note's words.
REASON_TEXT = {"not measured": "not measured at the site",
               "every value masked": "measured at the site, every value masked "
                                     "(input_rows.csv says why)",
               "period masked": "measured in these years, every value masked "
                                "(input_rows.csv says why)",
               "in the bulk wet": "caught by the bulk collector, counted in its wet deposition"}


def idle_factors_text(tornado: pd.DataFrame, components: pd.DataFrame) -> str:
    """The factors of a Sobol analysis that moved no total of the site at either end of
    their range, and why where the budget's notes say (a species not measured at the
    site, a particle caught by a bulk collector); "" when every factor moved something.

    Parameters
    ----------
    tornado : pandas.DataFrame
        :func:`workbench.analysis.sensitivity.tornado` of one site, receptor and years
        (``factor, output_low, output_high, output_base`` [kg/ha]).
    components : pandas.DataFrame
        :func:`workbench.ui.summaries.component_rates` of the same site and years.
    """
    import numpy as np

    if tornado is None or not len(tornado):
        return ""
    moved = (~np.isclose(tornado["output_low"], tornado["output_base"], rtol=1e-9, atol=0)
             | ~np.isclose(tornado["output_high"], tornado["output_base"], rtol=1e-9, atol=0))
    moving = set(tornado.loc[moved, "factor"])
    idle = [f for f in pd.unique(tornado["factor"]) if f not in moving]
    if not idle:
        return ""
    dry = components[components["pathway"] == "dry"]
    reasons = {str(sp): {component_reason(n) for n in g["note"]}
               for sp, g in dry.groupby("species")} if "note" in dry else {}
    by_reason = {}
    for f in idle:
        why = reasons.get(f[len(VD_FACTOR):], set()) if f.startswith(VD_FACTOR) else set()
        key = REASON_TEXT.get(next(iter(why)), "") if len(why) == 1 else ""
        by_reason.setdefault(key, []).append(f)
    parts = [", ".join(fs) + (f" ({why})" if why else "") for why, fs in by_reason.items()]
    return ("No effect on any total of this site and these years (index 0, no bar): "
            + "; ".join(parts) + ".")


#: The two wetness rules that agree where the met file gives no ``surface_wet``
#: (:func:`workbench.drydep.wetness.wetness`: "met" then infers it).
SAME_WITHOUT_MET_WETNESS = {"met", "inferred"}


def wetness_rule_reason(velocities, site, receptor, old, new) -> str:
    """Why moving the surface wetness rule between "met" and "inferred" changed nothing:
    no hour of the site's met gives ``surface_wet`` (``wetness_source`` never 0, "met
    file"), so "met" infers the wetness as "inferred" does.  Empty otherwise.

    Parameters
    ----------
    velocities : xarray.Dataset or None
        The velocities of the run under the "met" rule, with ``wetness_source`` (codes of
        :data:`workbench.drydep.wetness.SOURCE`) on (site, receptor, time).
    site, receptor : str
    old, new : str
        The rules before and after the change.
    """
    if {old, new} != SAME_WITHOUT_MET_WETNESS or velocities is None \
            or "wetness_source" not in velocities:
        return ""
    src = velocities["wetness_source"]
    sel = {d: v for d, v in (("site", site), ("receptor", receptor)) if d in src.dims}
    src = src.sel(sel).values
    if (src == 0).any():
        return ""
    return ("the met file gives no surface wetness (surface_wet) at this site, so the "
            "met rule infers it as the inferred rule does")
