"""The dry-N bracket of the site explorer: one sentence beside the budget bars.

Filters split ammonium nitrate between HNO3 and pNO3 and between NH3 and pNH4, and the
gas deposits many times faster than the particle, so the dry N of a site is uncertain
by where the pairs really were.  The budget computes dry N with each pair all as gas and
all as particle (``Result.derived``: ``dry_N_all_gas_kg_ha``, ``dry_N_all_particle_kg_ha``,
kg N/ha per period); this module states that range in the unit on screen, beside the
dry N of the bars, so that the range is seen without moving the "gas/particle pairs"
control.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .summaries import _fmt, to_unit, total_rates
from .summaries_change import _decimals

#: The variables of ``Result.derived`` that hold the bracket [kg N/ha per period].
BRACKET_VARS = ("dry_N_all_particle_kg_ha", "dry_N_all_gas_kg_ha")


def _kg_ha_to_mol_m2(values):
    """Deposition of N [kg N/ha] as an amount [mol N m-2] (the inverse of
    :func:`workbench.units.element_deposition_in` for ``kg_ha``)."""
    per_mol = float(to_unit(np.array([1.0]), "N", "kg/ha/yr")[0])   # kg N/ha per mol m-2
    return np.asarray(values, dtype=float) / per_mol


def _places(index: pd.Index, labels) -> np.ndarray:
    """Places of `labels` in `index` (text); a KeyError naming those it lacks."""
    at = index.get_indexer(labels)
    if (at < 0).any():
        raise KeyError(f"periods not found: {[p for p, i in zip(labels, at) if i < 0]}")
    return at


def dry_n_bracket(years: xr.Dataset, derived: xr.Dataset | None, site, receptor,
                  unit="kg/ha/yr") -> dict | None:
    """Mean yearly dry N of the bars and of the bracket, over the periods of `years`.

    Parameters
    ----------
    years : xarray.Dataset
        ``Result.years`` (yearly budget).
    derived : xarray.Dataset or None
        ``Result.derived`` with :data:`BRACKET_VARS` [kg N/ha per period]; derived
        again from `years` when its periods are others (a monthly run).
    site, receptor : str
    unit : str
        A key of :data:`workbench.ui.summaries.UNITS`.

    Returns
    -------
    dict or None
        ``shown``, ``all_particle``, ``all_gas`` [unit, mean yearly rate; NaN where not
        computed], ``computed`` (bool: the bracket has a value in every period) and
        ``nh3_net_gap`` (NH3 deposition only minus net [unit, mean yearly rate]: NaN
        where the bars count NH3 as deposition only, as the bracket does); None when the
        run carries no bracket.
    """
    # the periods as text, read once: the years' and the derived quantities' periods
    # are picked by place below (relabelling the axes to text on every redraw was
    # about 10 % of a change in the site explorer, docs/performance.md)
    year_periods = pd.Index(years["period"].values.astype(str))
    if derived is not None:
        derived_periods = pd.Index(derived["period"].values.astype(str))
        if not set(year_periods) <= set(derived_periods):
            from ..budget import derived as derive  # a monthly run: the bracket of the years
            derived = derive(years)
            derived_periods = pd.Index(derived["period"].values.astype(str))
    if derived is None or any(v not in derived.variables for v in BRACKET_VARS):
        return None
    t = total_rates(years, site, receptor, None, unit)
    dry = t[t["total"] == "N_dry"]
    out = {"shown": float(np.nanmean(dry["value"])) if np.isfinite(dry["value"]).any()
           else float("nan")}
    periods = [str(p) for p in dry["period"]]
    fac = np.asarray(years["annual_factor"].values)[_places(year_periods, periods)]
    at = _places(derived_periods, periods)
    computed = True
    for name, var in zip(("all_particle", "all_gas"), BRACKET_VARS):
        da = derived[var].sel(site=site, receptor=receptor).isel(period=at)
        rate = to_unit(_kg_ha_to_mol_m2(da.values), "N", unit) * fac
        computed &= bool(np.isfinite(rate).all())
        out[name] = float(np.nanmean(rate)) if np.isfinite(rate).any() else float("nan")
    out["computed"] = computed
    out["nh3_net_gap"] = _nh3_net_gap(years, site, receptor, periods, unit)
    return out


def _nh3_net_gap(years: xr.Dataset, site, receptor, periods, unit) -> float:
    """Mean yearly NH3 deposition-only figure minus the net exchange over `periods`
    [unit]: what the dry N of the bars lacks against the bracket's basis (the brackets
    deposit NH3 with the deposition-only Vd and no emission term, docs/budget.md "NH3:
    net exchange beside deposition only"); NaN where the bars use no net NH3."""
    if (years.attrs.get("nh3_figure") != "net" or not periods
            or any(v not in years.variables for v in ("nh3_net", "nh3_deposition_only"))):
        return float("nan")
    from .summaries_budget import _picker
    pick = _picker(years, site, receptor)
    keep = np.isin(pick("period").astype(str), [str(p) for p in periods])
    gap = ((to_unit(pick("nh3_deposition_only"), "N", unit)
            - to_unit(pick("nh3_net"), "N", unit)) * pick("annual_factor"))[keep]
    return float(np.nanmean(gap)) if np.isfinite(gap).any() else float("nan")


def bracket_line(years: xr.Dataset, derived, site, receptor, unit="kg/ha/yr",
                 split="measured") -> str:
    """One sentence: the dry N of the bars and the range of the gas/particle bracket.

    `split` is the "gas/particle pairs" setting (``measured``, ``all_gas``,
    ``all_particle``): the sentence says which end the bars show.  Empty text when the
    run has no bracket.
    """
    b = dry_n_bracket(years, derived, site, receptor, unit)
    if b is None:
        return ""
    shown = {"measured": "as measured", "all_gas": "pairs all as gas",
             "all_particle": "pairs all as particle"}.get(split, split)
    net = np.isfinite(b["nh3_net_gap"])
    # the bars' dry N under the net NH3 exchange and the bracket's NH3 deposition only
    # are two bases: each number says its own (555.0 all as gas beside 554.6 read as if
    # the measured split lay outside the bracket)
    k = None
    if net:         # decimals enough to tell the two apart (a 0.3 % emission read 7.4, 7.4)
        only = b["shown"] + b["nh3_net_gap"]
        k = _decimals(b["shown"], only)
        head = (f"Dry N {_fmt(b['shown'], k)} {unit} ({shown}, NH3 net of its emission; "
                f"{_fmt(only, k)} with NH3 deposition only)")
    else:
        head = f"Dry N {_fmt(b['shown'])} {unit} ({shown})"
    basis = ", with NH3 as deposition only (the bracket has no emission term)" if net else ""
    if not np.isfinite(b["all_gas"]) or not np.isfinite(b["all_particle"]):
        gone = _unmeasured_members(years, site, receptor)
        lost = _unmeasured_members(years, site, receptor, "every value masked")
        lost_p = _unmeasured_members(years, site, receptor, "period masked")
        said = ([f"{' and '.join(gone)} not measured at the site"] if gone else []) + (
            [f"{' and '.join(lost)} measured, every value masked"] if lost else []) + (
            [f"every {' and '.join(lost_p)} value of these years masked"] if lost_p else [])
        why = (", ".join(said) if said else
               "a member of a pair has no data in them: budget.nc's bracket_*_note says "
               "which")
        return (f"{head}; gas/particle bracket not computed for these years ({why}); "
                "the dry N shown stands.")
    part = "" if b["computed"] else " (over the years where it could be computed)"
    caught = _bulk_caught(years, site, receptor)
    why0 = {"all": "; caught by the bulk collector: particles are counted in the wet "
                   "deposition, so 0 here",
            "some": "; in the years of the bulk collector caught by it: particles are "
                    "counted in the wet deposition there"}.get(caught, "")
    ends = {e: _fmt(b[e]) if k is None else _fmt(b[e], k) for e in ("all_particle", "all_gas")}
    if b["all_gas"] >= b["all_particle"]:
        return (f"{head}; gas/particle bracket {ends['all_particle']} (each HNO3/pNO3 and "
                f"NH3/pNH4 pair all as particle{why0}) to {ends['all_gas']} (all as gas)"
                f"{part}{basis}: filters split ammonium nitrate between the phases, and the "
                "gas deposits faster.")
    # a fixed gas velocity below the particle's (the what-ifs) turns the bracket round:
    # low end first, and no "the gas deposits faster" beside numbers that say otherwise
    return (f"{head}; gas/particle bracket {ends['all_gas']} (each HNO3/pNO3 and NH3/pNH4 "
            f"pair all as gas) to {ends['all_particle']} (all as particle{why0}){part}"
            f"{basis}: filters split ammonium nitrate between the phases, and with the "
            "deposition velocities in force here (the fixed-velocity what-ifs) the gas "
            "deposits slower than the particle.")


#: How the budget's note of an all-particle bracket begins where the bulk collector
#: caught it (:func:`workbench.budgetstatus.bulk_caught_brackets`).
BULK_CAUGHT = "caught by the bulk collector"


def _bulk_caught(years: xr.Dataset, site, receptor) -> str:
    """``"all"`` where every all-particle bracket of every period of `years` is noted as
    caught by the bulk collector (docs/budget.md, bulk collectors), ``"some"`` where
    some periods are, ``""`` otherwise."""
    names = [v for v in years.variables
             if v.startswith("bracket_") and v.endswith("_all_particle_note")]
    if not names:
        return ""
    hit = np.stack([np.char.startswith(
        years[v].sel(site=site, receptor=receptor).values.astype(str), BULK_CAUGHT)
        for v in names])
    return "all" if hit.all() else "some" if hit.any() else ""


def _unmeasured_members(years: xr.Dataset, site, receptor, reason="not measured") -> list:
    """Members of the gas/particle pairs (:data:`workbench.budget.PAIRS`) whose dry
    component the budget notes as not measured at the site in every period (`reason`
    "every value masked": measured, each value masked by the air reader; "period
    masked": each value of each period masked;
    :func:`workbench.ui.summaries.component_reason`)."""
    from ..budget import PAIRS
    from .summaries import component_rates, component_reason
    comp = component_rates(years, site, receptor)
    dry = comp[comp["pathway"] == "dry"]
    members = [m for pair in PAIRS.values() for m in pair]
    return [m for m in members
            if len(g := dry[dry["species"] == m])
            and all(component_reason(n) == reason for n in g["note"])]
