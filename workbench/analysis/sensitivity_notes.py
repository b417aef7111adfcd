"""What the rows of the sensitivity tables say besides the indices: what a budget
lacks (:func:`data_notes`), which components a factor reaches, the bulk factor added
where it acts (:func:`with_bulk_factor`), a site's land-use classes and the note of a
row (:func:`row_note`).  Re-exported by :mod:`workbench.analysis.sensitivity`.
"""
from __future__ import annotations

import dataclasses

import numpy as np

from .sensitivity_options import (BULK_FACTOR_RANGE, OUTPUTS, SensitivityOptions,
                                  _default_factors, factor_kind)


def data_notes(ds) -> dict:
    """What the budget `ds` lacks in each cell, for the notes of the indices.

    Returns
    -------
    dict
        ``(s, r, p)`` indices -> ``(lacking, idle)``: ``lacking`` maps each output key
        of :data:`OUTPUTS` to the components it lacks (space-separated; the potential
        acidity lacks those of S and N total); ``idle`` maps ``(pathway, species)`` of
        a component without a deposition of its own (NaN, or 0 with a note, e.g. a
        particle counted in a bulk collector's wet) to the budget's note.
    """
    from ..budget import COMPONENTS
    dep = ds["deposition"].transpose("site", "receptor", "period", "component").values
    notes = ds["note"].transpose("site", "receptor", "period", "component").values
    miss = ds["total_missing_components"].transpose("site", "receptor", "period",
                                                    "total").values
    totals = [str(t) for t in ds["total"].values]
    out = {}
    for idx in np.ndindex(*dep.shape[:3]):      # one per (site, receptor, period) cell
        lacking = {t: (m.strip() if isinstance(m, str) else "")
                   for t, m in zip(totals, miss[idx])}
        lacking["potential_acidity"] = " ".join(
            v for v in (lacking.get("S_total", ""), lacking.get("N_total", "")) if v)
        idle = {}
        for j, (_, path, sp) in enumerate(COMPONENTS):
            v, note = dep[idx + (j,)], notes[idx + (j,)]
            if (not np.isfinite(v) or v == 0) and isinstance(note, str) and note.strip():
                idle[(path, sp)] = note.strip()
        out[idx] = (lacking, idle)
    return out


def _scales(name, path, species) -> bool:
    """Whether the linear factor `name` scales the component (path, species)."""
    if name.startswith("vd_"):
        return path == "dry" and species == name[3:]
    return path == {"gauge_catch": "wet", "precip_conc": "wet", "air_conc": "dry",
                    "bulk_wet_factor": "wet"}.get(name)


#: The one dry species an engine factor of each kind acts on, from its name (the
#: particle of ``fine_fraction_``/``fine_mmd_``, the gas of ``rc_scale_``, NH3 for
#: ``nh3_gamma_``); ``z0_`` and ``wetness_rule`` act on every dry species.
SPECIES_OF = {"fine_fraction": lambda n: n[len("fine_fraction_"):],
              "fine_mmd": lambda n: n[len("fine_mmd_"):],
              "rc_scale": lambda n: n[len("rc_scale_"):],
              "nh3_gamma": lambda n: "NH3"}


def _reaches(name, kind, path, species) -> bool:
    """Whether factor `name` (of `kind`, :func:`factor_kind`) acts on the component
    (path, species): a linear factor by :func:`_scales`, an engine factor tied to one
    species (:data:`SPECIES_OF`) on that species' dry deposition only; the others
    (``z0_``, ``wetness_rule``) on no single component (no note of missing data)."""
    if kind == "linear":
        return _scales(name, path, species)
    if kind in SPECIES_OF:
        return path == "dry" and species == SPECIES_OF[kind](name)
    return False


def bulk_sites(catalogue) -> set:
    """Ids of the sites with a bulk collector now or before a declared change."""
    from ..surfacehistory import collector_history
    out = {s.id for s in catalogue if s.collector == "bulk"}
    for sid, _, changes in collector_history(catalogue):
        if any("bulk" in (a, b) for _, a, b in changes):
            out.add(sid)
    return out


def with_bulk_factor(options: SensitivityOptions, budget_options, catalogue) -> SensitivityOptions:
    """`options` with ``bulk_wet_factor`` over [0.9, 1.1] added to its factors where it
    acts: the factors are the defaults (a table given in ``[sensitivity] factors`` is
    kept as given: name ``bulk_wet_factor`` there to have it), the budget scales the
    bulk deposition (``bulk_correction = "scale_wet"``) and a site analysed
    (``options.sites``, else every site of `catalogue`) has bulk-collector samples.
    Otherwise `options` itself (a run without bulk samples keeps its indices)."""
    if (budget_options.bulk_correction != "scale_wet" or "bulk_wet_factor" in options.factors
            or dict(options.factors) != _default_factors()):
        return options
    have = bulk_sites(catalogue)
    if not (have & set(options.sites) if options.sites else have):
        return options
    return dataclasses.replace(options, factors={**options.factors,
                                                 "bulk_wet_factor": BULK_FACTOR_RANGE})


def site_classes(catalogue) -> dict:
    """site id -> the land-use classes its engine runs use: its surfaces (own land use and
    receptors), the class under its wind mast (``met_land_use``) and the classes before
    a declared land-use change."""
    from ..surfacehistory import earlier_classes, land_use_history
    earlier = earlier_classes(land_use_history(catalogue))
    return {s.id: tuple(dict.fromkeys(
        tuple(s.surfaces) + ((s.met_land_use,) if getattr(s, "met_land_use", None) else ())
        + tuple(earlier.get(s.id, ())))) for s in catalogue}


def row_note(name, element, quantity, data, has_bulk=None, classes=None,
             nh3_treatment=None) -> str:
    """The note of a row of sensitivity.csv or tornado.csv [text] ("" for none).

    An index 0 because the factor reaches only components without data at the site
    (a species not measured, a particle counted in a bulk collector's wet) says so,
    with the budget's note: it is no small effect.  This holds for the engine factors
    tied to one species as for the ``vd_`` multipliers: ``fine_fraction_<particle>``,
    ``fine_mmd_<particle>``, ``rc_scale_<gas>`` and ``nh3_gamma_<class>`` (NH3) where
    that species is not measured (before, their zeros carried no note).  A total lacking components says
    that its indices are those of its measured part.

    Parameters
    ----------
    name : str
        The factor.
    element, quantity : str
        The output (:data:`OUTPUTS`).
    data : tuple
        ``(lacking, idle)`` of the cell (:func:`data_notes`).
    has_bulk : bool, optional
        The cell's wet has a bulk-collector part (``scale_wet``); False says that
        ``bulk_wet_factor`` has no effect there.
    classes : tuple, optional
        The land-use classes of the site (:func:`site_classes`): a ``z0_<class>`` or
        ``nh3_gamma_<class>`` of another class has nothing to act on there (its zeros
        read as a measured nil effect before).
    nh3_treatment : str, optional
        The scenario's ``[dry] nh3_treatment``: under ``"deposition_only"`` an
        ``nh3_gamma_<class>`` factor has nothing to act on (Gamma_s enters the
        bidirectional exchange only) and the note says so.
    """
    from ..budget import COMPONENTS
    lacking, idle = data
    key = next(k for e, qn, k in OUTPUTS if e == element and qn == quantity)
    parts = []
    kind = factor_kind(name)
    reach = [(path, sp) for el, path, sp in COMPONENTS
             if (element == "S+N" or el == element)
             and quantity in ("total", "potential_acidity", path)
             and _reaches(name, kind, path, sp)]
    if reach and all(c in idle for c in reach):
        parts.append("no effect for want of data: " + "; ".join(
            f"{path} {sp} {idle[(path, sp)]}" for path, sp in reach))
    if kind == "nh3_gamma" and nh3_treatment not in (None, "bidirectional"):
        parts.append(f'no effect: [dry] nh3_treatment = "{nh3_treatment}" (Gamma_s acts in '
                     'the bidirectional NH3 exchange only)')
    if kind in ("z0", "nh3_gamma") and classes is not None:
        cls = name[len("z0_"):] if kind == "z0" else name[len("nh3_gamma_"):]
        if cls not in classes:
            parts.append(f"no effect: the site has no {cls} surface (its classes: "
                         f"{', '.join(classes)})")
    if (name == "bulk_wet_factor" and has_bulk is False and not parts
            and quantity in ("wet", "total", "potential_acidity")):
        parts.append("no effect: no bulk-collector samples at the site in the period")
    if lacking.get(key):
        parts.append(f"the total lacks {lacking[key]}: indices of its measured part")
    return "; ".join(parts)
