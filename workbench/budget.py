"""Site budgets of total sulfur and nitrogen: wet + dry, per site, receptor and period.

Components (mol m-2 of the element; every S and N species holds one atom):

* sulfur: wet SO4 (non-sea-salt by default, or total), dry SO2, dry pSO4 (non-sea-salt
  where pNa is measured and the basis is nss);
* nitrogen: wet NO3, wet NH4, dry HNO3, dry pNO3, dry pNH4, dry NH3, dry NO2.  Dry
  NH3 is deposition only, or with ``[dry] nh3_treatment = "bidirectional"`` the net
  exchange of the compensation point model (deposition - emission, may be negative),
  with the deposition-only figure kept beside it (``nh3_deposition_only``) and the
  figure the totals use in the attribute ``nh3_figure``.

Each component carries its completeness and a status (``complete``, ``flagged``,
``filled``, ``partial``, ``missing``); a total built on a partial set of components
says so.  Derived quantities: dry and wet shares, oxidized and reduced N, and the
potential acidity 2 nss-S + oxidized N + reduced N [eq ha-1] (kept apart from the wet
chain's free acidity H+).
"""
from __future__ import annotations

import json
from dataclasses import asdict, dataclass, field

import numpy as np
import pandas as pd
import xarray as xr

from .budgetstatus import (NO_PNA_AT_SITE, as_flag, bracket_outputs, bulk_caught_brackets,
                           dry_status, join_notes, nh3_net_component, sampling_gap_note,
                           wet_component, wet_outputs, wet_sulfate_total)
from .dryflux import DryFluxOptions
from .errors import WorkbenchError, suggest
from .surfacehistory import collector_shares, describe, period_notes
from .species import element_molar_mass
from .units import UG_PER_KG, deposition_in, element_deposition_in

#: (element, pathway, species, source variable) of every budget component, in order.
COMPONENTS = (
    ("S", "wet", "SO4"), ("S", "dry", "SO2"), ("S", "dry", "pSO4"),
    ("N", "wet", "NO3"), ("N", "wet", "NH4"), ("N", "dry", "HNO3"), ("N", "dry", "pNO3"),
    ("N", "dry", "pNH4"), ("N", "dry", "NH3"), ("N", "dry", "NO2"),
)
OXIDIZED_N = ("NO3", "HNO3", "pNO3", "NO2")
REDUCED_N = ("NH4", "NH3", "pNH4")
PARTICLES = ("pSO4", "pNO3", "pNH4")
#: The wet ions a bulk collector's factor may be given for (``bulk_wet_factor_ion``).
BULK_IONS = ("SO4", "NO3", "NH4")
#: The wet ion of a bulk collector that holds each particle species' dry deposition
#: (``bulk_correction = "exclude_particles"``).
BULK_CAUGHT_IN = {"pSO4": "SO4", "pNO3": "NO3", "pNH4": "NH4"}
#: gas/particle pairs whose split a filter pack may bias (ammonium nitrate volatility).
PAIRS = {"nitrate": ("HNO3", "pNO3"), "ammonium": ("NH3", "pNH4")}
STATUS_ORDER = ("complete", "filled", "flagged")
#: The completeness fractions reported beside each component [1].
FRACTIONS = {
    "wet_gauge_fraction": "fraction of the period with a valid gauge record",
    "wet_coverage_fraction": "fraction of the period covered by valid or dry samples",
    "wet_valid_precip_fraction": "fraction of the precipitation with valid chemistry",
    "wet_flagged_precip_fraction": "fraction of the precipitation carried by kept samples "
                                   "that failed a check (flagged)",
    "air_coverage": "fraction of the period's hours with a concentration",
    "vd_coverage": "fraction of the period's hours with a modelled (not filled) Vd",
    "flux_coverage": "fraction of the period's hours with a concentration and a Vd "
                     "(and the air density for a mixing ratio)",
}

#: What the budget leaves out, with an order of magnitude where the literature gives one
#: (ranges recalled from memory of review papers; see docs/budget.md).
OMISSIONS = (
    ("organic nitrogen in precipitation", "often 10-30 % of wet N (Cornell 2011, "
     "Environ. Pollut. 159, 2214; from memory)"),
    ("cloud and fog deposition", "small in lowlands; at hill and ridge sites in cloud it can "
     "equal or exceed wet deposition (Fowler et al. 1988; from memory)"),
    ("coarse particles not sampled by the inlet", "a few % to tens of % of particle dry "
     "deposition near coasts and dusty fields (common practice)"),
    ("unmeasured species (e.g. PAN, HONO, organic nitrates, NO2 where not measured)",
     "PAN and organic nitrates a few % of dry oxidized N (from memory)"),
    ("bidirectional ammonia exchange (unless [dry] nh3_treatment is bidirectional)",
     "NH3 treated as deposition only; emission from fertilized fields can reverse the "
     "flux (Sutton et al. 1998; from memory)"),
    ("within-period covariance of concentration and Vd", "period-mean C times mean Vd "
     "misses 10-30 % for some species (see docs/budget.md)"),
)


class BudgetError(WorkbenchError):
    """The budget refuses a combination of inputs and options (e.g. bulk + particles)."""


@dataclass(frozen=True)
class BudgetOptions:
    """Options of the budget assembly and the dry-flux integration.

    Attributes
    ----------
    sulfate_basis : {"nss", "total"}
        Wet SO4 and dry pSO4 as non-sea-salt (default; critical-load work) or total.
    pair_split : {"measured", "all_gas", "all_particle"}
        How the nitrate (HNO3 + pNO3) and ammonium (NH3 + pNH4) pairs enter the main
        numbers: as measured, or each pair all in its gas (particle) species, both
        members deposited with that species' Vd, each over its own sampling periods
        (members on different samplers combine), the other member 0; the main dry N
        then equals the bracket of the two extremes, which is always reported.
    air_censored : {"half", "limit", "zero"}
        Concentrations below detection (common practice: half the limit).
    bulk_correction : {"none", "exclude_particles", "scale_wet"}
        A bulk collector's "wet" deposition holds some dry deposition.  "none" refuses
        to add particle dry deposition at a bulk site; "exclude_particles" takes
        particle dry deposition as caught by the collector: 0 in the dry pathway (it is in
        the bulk wet ion), with that wet component's status, so the totals stay whole;
        "scale_wet" multiplies the bulk deposition by `bulk_wet_factor` and adds it.
    bulk_wet_factor : float
        Wet-only / bulk deposition ratio for "scale_wet" [1]; 0.8 is a typical value
        for sulfate and nitrate in rural areas (common practice, from memory).
    bulk_wet_factor_ion : dict
        ion (``SO4``, ``NO3``, ``NH4``) -> its own wet-only / bulk ratio for "scale_wet"
        [1], in [0, 2] (above 1 for an ion the bulk sample loses, e.g. NH4 taken up in a
        sample left a week in the field); an ion not named takes `bulk_wet_factor`.
        Empty by default (one factor for every ion, as before).  Our choice to offer
        it: the funnel's gain differs by ion (from memory, docs/budget.md, "Bulk
        collectors").
    min_air_coverage : float
        Share of a period's hours covered by concentrations for completeness [1];
        0.75 (common practice).
    require_all_seasons : bool
        A year passes only when every season has concentrations (common practice).
    min_vd_coverage : float
        Share of covered hours with a modelled (not filled) Vd below which a component
        is "filled" rather than "complete" [1] (our default 0.9).
    min_slot_hours : int
        Fewest valid hours of a (year, month, hour-of-day) slot for its own mean Vd to
        fill a gap, else the all-years slot is used; 7, about a week of the month
        (common practice).
    diurnal_profile : dict
        species -> 24 relative concentrations per UTC hour (sensitivity).
    preferred_method : dict
        species -> method to use where several samplers measure one species.
    """

    sulfate_basis: str = "nss"
    pair_split: str = "measured"
    air_censored: str = "half"
    bulk_correction: str = "none"
    bulk_wet_factor: float = 0.8
    bulk_wet_factor_ion: dict = field(default_factory=dict)
    min_air_coverage: float = 0.75
    require_all_seasons: bool = True
    min_vd_coverage: float = 0.9
    min_slot_hours: int = 7
    diurnal_profile: dict = field(default_factory=dict)
    preferred_method: dict = field(default_factory=dict)

    _CHOICES = {"sulfate_basis": ("nss", "total"),
                "pair_split": ("measured", "all_gas", "all_particle"),
                "air_censored": ("half", "limit", "zero"),
                "bulk_correction": ("none", "exclude_particles", "scale_wet")}

    def __post_init__(self):
        for name, choices in self._CHOICES.items():
            v = getattr(self, name)
            if v not in choices:
                raise ValueError(f"BudgetOptions.{name} = {v!r} is not one of "
                                 f"{', '.join(map(repr, choices))}{suggest(v, choices)}")
        for name in ("min_air_coverage", "min_vd_coverage", "bulk_wet_factor"):
            if not 0 <= getattr(self, name) <= 1:
                raise ValueError(f"BudgetOptions.{name} must lie in [0, 1]")
        for ion, f in self.bulk_wet_factor_ion.items():
            if ion not in BULK_IONS:
                raise ValueError(f"BudgetOptions.bulk_wet_factor_ion: unknown ion {ion!r}; "
                                 f"expected one of {', '.join(BULK_IONS)}{suggest(ion, BULK_IONS)}")
            if isinstance(f, bool) or not isinstance(f, (int, float)) or not 0 <= f <= 2:
                raise ValueError(f"BudgetOptions.bulk_wet_factor_ion[{ion!r}] = {f!r} must be "
                                 "a number in [0, 2]")
        for sp, prof in self.diurnal_profile.items():
            if len(prof) != 24 or min(prof) < 0 or sum(prof) <= 0:
                raise ValueError(f"BudgetOptions.diurnal_profile[{sp!r}] needs 24 values >= 0")

    def to_dict(self) -> dict:
        return asdict(self)

    def bulk_factor(self, ion: str) -> float:
        """The wet-only / bulk ratio of a wet ion under "scale_wet" [1]: its own in
        `bulk_wet_factor_ion`, else `bulk_wet_factor`."""
        return float(self.bulk_wet_factor_ion.get(ion, self.bulk_wet_factor))

    def flux_key(self) -> str:
        """The options that change fluxes (not only their status), as a cache key."""
        return repr((self.sulfate_basis, self.pair_split, self.air_censored, self.min_slot_hours,
                     sorted((k, tuple(v)) for k, v in self.diurnal_profile.items()),
                     sorted(self.preferred_method.items())))

    def flux_options(self) -> DryFluxOptions:
        return DryFluxOptions(censored=self.air_censored, min_slot_hours=self.min_slot_hours,
                              diurnal_profile=dict(self.diurnal_profile),
                              preferred_method=dict(self.preferred_method))


def annual_factor(periods: pd.DataFrame) -> np.ndarray:
    """Factor turning a period's deposition into a yearly rate [1].

    Hours in the year of the period's label (8784 in leap years) over the period's
    hours; 1 for any period of exactly one year (a calendar or hydrological year, a
    custom range from a date to the same date a year later): a whole year is its own
    yearly rate, whether it holds 29 February or not (a hydrological year's label names
    the year it ends in, which need not be the year of that February).  A custom range
    of exactly k whole years (from a date to the same date k years later) has 1/k: its
    deposition per year, whatever leap days it holds (the hours of its first year over
    its hours gave 8760 / 17544 = 0.4993 for 2023-2024; 2026-12 audit).

    >>> import pandas as pd
    >>> p = pd.DataFrame({"start": pd.to_datetime(["2023-01-01", "2024-02-01"]),
    ...                   "end": pd.to_datetime(["2025-01-01", "2024-03-01"]),
    ...                   "hours": [17544.0, 696.0], "year": [-1, -1]})
    >>> [round(float(f), 4) for f in annual_factor(p)]
    [0.5, 12.6207]
    """
    year = np.where(periods["year"].to_numpy() > 0, periods["year"].to_numpy(),
                    pd.DatetimeIndex(periods["start"]).year.to_numpy())
    leap = ((year % 4 == 0) & (year % 100 != 0)) | (year % 400 == 0)
    factor = np.where(leap, 8784.0, 8760.0) / periods["hours"].to_numpy(dtype=float)
    start = pd.DatetimeIndex(periods["start"])
    end = periods["end"].to_numpy().astype("datetime64[ns]")
    n_years = np.maximum(pd.DatetimeIndex(end).year.to_numpy() - start.year.to_numpy(), 1)
    for k in np.unique(n_years):           # over the distinct numbers of years (few)
        whole = ((n_years == k) & ((start + pd.DateOffset(years=int(k)))
                                   .to_numpy("datetime64[ns]") == end))   # not clipped
        factor = np.where(whole, 1.0 / k, factor)
    return factor


# ------------------------------------------------------------------------------ assembly

def _season_ok(dry: xr.Dataset, season_cov, periods, options):
    """(site, period, species): every season has concentrations, for year periods."""
    ok = np.ones(dry["coverage"].shape, bool)
    if options.require_all_seasons and season_cov is not None:
        is_year = periods["kind"].isin(["year", "hydro_year"]).to_numpy()
        ok[:, is_year, :] = season_cov[:, is_year, :]
    return ok


def combine_status(statuses):
    """Status of a sum of components along the last axis.

    Precedence: ``missing`` (every component missing) > ``flagged`` (a present
    component fails completeness) > ``partial`` (some component missing) > ``filled``
    > ``complete``.

    Returns
    -------
    status : ndarray of str
    passes : ndarray of bool
        The present components pass completeness (status not flagged or missing).
    """
    s = np.asarray(statuses, dtype=object)
    missing = s == "missing"
    out = np.where((s == "filled").any(-1), "filled", "complete").astype(object)
    out = np.where(missing.any(-1), "partial", out)
    out = np.where((s == "flagged").any(-1), "flagged", out)
    out = np.where(missing.all(-1), "missing", out)
    return out, ~np.isin(out, ("flagged", "missing"))


def _dry_on_receptors(dry: xr.Dataset, receptors) -> xr.Dataset:
    """`dry` on the receptor axis `receptors`, a receptor it lacks being one on which no
    velocity was computed (a pair no site of a block asks for, ``Study.run(layout=)``):
    what the dry chain gives for a pair with no Vd in any hour, so that such a pair
    reads as in a whole run (tests/test_blocks_layout.py).  Its fractions of hours with
    a Vd (``vd_coverage``, ``flux_coverage``, ``*_flux_coverage``) are 0; every other
    value NaN (dtypes of flags kept false)."""
    fill = {}
    for name, v in dry.data_vars.items():
        if "receptor" not in v.dims:
            continue
        if name in ("vd_coverage", "flux_coverage") or name.endswith("_flux_coverage"):
            fill[name] = 0.0
        elif v.dtype.kind == "b":
            fill[name] = False
    out = dry.reindex(receptor=list(receptors), fill_value={**{n: np.nan for n in dry.data_vars
                                                                 if "receptor" in dry[n].dims},
                                                              **fill})
    for name in fill:
        if dry[name].dtype.kind == "b":
            out[name] = out[name].astype(bool)
    return out


def assemble(wet: xr.Dataset | None, dry: xr.Dataset | None, catalogue, periods: pd.DataFrame,
             options: BudgetOptions, receptors, season_cov=None, collector=None):
    """Wet + dry components per site, receptor and period, with totals and status.

    Parameters
    ----------
    wet : xarray.Dataset or None
        Output of :func:`workbench.wet.wet_deposition` on the same periods.
    dry : xarray.Dataset or None
        Output of :func:`dry_components`.
    catalogue : SiteCatalogue
    periods : pandas.DataFrame
    options : BudgetOptions
    receptors : sequence of str
        Receptor surfaces (coordinate of the result).
    season_cov : ndarray, optional
        (site, period, species) bool: every season covered (for years).
    collector : dict, optional
        :func:`workbench.surfacehistory.collector_split` of the samples on the same
        periods, at sites whose collector changed: each sample's part of the wet
        deposition is taken under its own collector's rules (without it: the share of
        the period's hours under each collector by the change's date).

    Returns
    -------
    xarray.Dataset
        Dims (site, receptor, period, component); ``deposition`` [mol m-2 of element],
        ``completeness`` [1], ``status`` (str), the wet and dry completeness fractions,
        and per-element totals with their status; ``nh3_deposition_only`` and
        ``nh3_net`` [mol m-2] (site, receptor, period) and the attribute ``nh3_figure``
        (the NH3 figure of the component and the totals: ``net`` when `dry` holds
        ``nh3_net``, else ``deposition_only``).
    """
    sites = catalogue.ids
    n_s, n_r, n_p = len(sites), len(receptors), len(periods)
    comps = list(COMPONENTS)
    n_c = len(comps)
    dep = np.full((n_s, n_r, n_p, n_c), np.nan)
    status = np.full((n_s, n_r, n_p, n_c), "missing", dtype=object)
    compl = np.full((n_s, n_r, n_p, n_c), np.nan)
    #: the fractions behind `completeness`, per component (NaN where not applicable)
    fractions = {name: np.full((n_s, n_r, n_p, n_c), np.nan) for name in FRACTIONS}
    comp_note = np.full((n_s, n_r, n_p, n_c), "", dtype=object)
    #: a present component fails completeness (flagged for coverage, not for a flag)
    fails = np.zeros((n_s, n_r, n_p, n_c), bool)
    active = np.array([[r in catalogue[s].surfaces for r in receptors] for s in sites])
    # the collector in force over each period (docs/budget.md, "Bulk collectors": a
    # declared collector change is followed): share of the period's hours under bulk
    bulk_share, coll_words = collector_shares(catalogue, sites, periods)
    # sample by sample where the samples are known (workbench/surfacehistory.py,
    # collector_split): the hours sampled under bulk; `estimated` where a sample that
    # holds a change's day was split between the collectors
    split = _collector_split_on(collector, sites, n_p)
    if split is not None:
        bulk_share = np.where(np.isfinite(split["hour_share"]), split["hour_share"], bulk_share)
        mixed = (bulk_share > 0) & (bulk_share < 1)
        # a period whose samples hold both collectors names both (even if its dates do not)
        dated = np.char.find(coll_words.astype(str), " until ") >= 0
        coll_words = np.where(mixed & ~dated, split["both_words"], coll_words).astype(object)
        estimated = split["estimated"] & mixed
    else:
        estimated = (bulk_share > 0) & (bulk_share < 1)
    bulk_p = bulk_share >= 1.0                       # (site, period) wholly bulk
    straddle = (bulk_share > 0) & ~bulk_p            # a collector change inside
    bulk = bulk_share.max(axis=1) > 0                # (site,) bulk in some period
    notes = []
    labels = periods["label"].values
    hours_p = periods["hours"].to_numpy(dtype=float)        # [h]
    if wet is not None:
        w = wet if _same_axis(wet, "site", sites) and _same_axis(wet, "period", labels) else \
            wet.reindex(site=sites, period=labels)
        w_status = w.variables["status"].values.astype(object)
        w_status = np.where(pd.isna(w_status), "missing", w_status)
        w_fail = (as_flag(w.variables["completeness_failed"].values)
                  if "completeness_failed" in w.variables else w_status == "flagged")
        w_frac = np.fmin(np.fmin(w.variables["gauge_fraction"].values, w.variables["coverage_fraction"].values),
                         w.variables["valid_precip_fraction"].values)
    if dry is not None:
        dr = dry if _same_axis(dry, "receptor", receptors) else _dry_on_receptors(dry, receptors)
        d_species = list(dr.variables["species"].values)
        d_dep, d_cov = dr.variables["deposition"].values, dr.variables["coverage"].values
        d_vdc, d_fs, d_meas = dr.variables["vd_coverage"].values, dr.variables["vd_filled_share"].values, dr.variables["measured"].values
        d_fc = (dr.variables["flux_coverage"].values if "flux_coverage" in dr.variables
                else np.where(np.isfinite(d_dep), d_cov[:, None], 0.0))
        d_ratio = (dr.variables["mixing_ratio"].values if "mixing_ratio" in dr.variables
                   else np.zeros(len(d_species), bool))
        d_sok = _season_ok(dry, season_cov, periods, options)
    for j, (el, path, sp) in enumerate(comps):
        if path == "wet":
            if wet is None:
                comp_note[..., j] = "no precipitation chemistry input"
                continue
            st, note, d, fl, ion_share = wet_component(w, sp, options, w_status, w_fail,
                                                       with_share=True)
            if d is None:
                comp_note[..., j] = f"no {sp} column in the precipitation chemistry"
                continue
            if "coverage_fraction" in w.variables:        # a gap within the thresholds
                note = sampling_gap_note(note, st, w.variables["coverage_fraction"].values,
                                         hours_p[None, :], "precipitation")
            if options.bulk_correction == "scale_wet":
                f = options.bulk_factor(sp)
                d = np.where(bulk_p, d * f, d)
                note = np.where(bulk_p, join_notes(note, f"bulk deposition x {f:g} "
                                                         "(bulk_correction scale_wet)"), note)
                # a period holding both collectors: the factor on the bulk samples' part of
                # its deposition (their share of the hours without the samples)
                dep_share, how = (_wet_bulk_share(split, w, sp, options) if split is not None
                                  else (bulk_share, "bulk share of the period's hours"))
                d = np.where(straddle, d * (1.0 - dep_share * (1.0 - f)), d)
                note = np.where(straddle, join_notes(note, np.char.add(
                    coll_words.astype(str), f": bulk deposition x {f:g} on the {how} "
                    "(bulk_correction scale_wet)")), note)
                st = np.where(estimated & (st == "complete"), "flagged", st)
            if (coll_words != "").any():
                # (a period holding both collectors under scale_wet says it above)
                said = straddle if options.bulk_correction == "scale_wet" else False
                note = np.where((coll_words != "") & ~said, join_notes(note, coll_words), note)
            dep[:, :, :, j] = d[:, None, :]
            status[:, :, :, j] = st[:, None, :]
            fails[:, :, :, j] = fl[:, None, :]
            comp_note[:, :, :, j] = note[:, None, :]
            # the smallest of the period's fractions and the share of its rain with a
            # value of this ion (and tracer), the criterion the row is judged by
            compl[:, :, :, j] = np.fmin(w_frac, ion_share)[:, None, :]
            for name, var in (("wet_gauge_fraction", "gauge_fraction"),
                              ("wet_coverage_fraction", "coverage_fraction"),
                              ("wet_valid_precip_fraction", "valid_precip_fraction"),
                              ("wet_flagged_precip_fraction", "flagged_precip_fraction")):
                if var in w.variables:
                    fractions[name][:, :, :, j] = w.variables[var].values[:, None, :]
        else:
            if dry is None or sp not in d_species:
                comp_note[..., j] = f"no air concentrations of {sp}"
                continue
            k = d_species.index(sp)
            if sp in PARTICLES and bulk.any():
                if options.bulk_correction == "none" and bool(d_meas[bulk, k].any()):
                    bad = [s for s, b in zip(sites, bulk) if b]
                    raise BudgetError(
                        f"site {bad[0]!r} has a bulk collector: its 'wet' deposition already "
                        f"holds some dry deposition, so particle dry deposition ({sp}) is not "
                        "added; name a correction in [budget] bulk_correction "
                        "('exclude_particles' or 'scale_wet', see docs/budget.md)")
            d = d_dep[..., k]
            cov = d_cov[:, None, :, k] * np.ones((1, n_r, 1))
            vdc = d_vdc[..., k]
            fs = d_fs[..., k]
            meas = d_meas[:, None, None, k] * np.ones((1, n_r, n_p), bool)
            sok = d_sok[:, :, k][:, None, :]
            fc = d_fc[..., k]
            st, fl, why = dry_status(cov, vdc, fs, fc, meas, sok, bool(d_ratio[k]), options)
            why = sampling_gap_note(why, st, cov, hours_p[None, None, :], "air")
            fails[..., j] = fl
            comp_note[..., j] = why
            c = np.fmin(np.fmin(cov, fc), vdc)
            if sp in PARTICLES and options.bulk_correction == "exclude_particles":
                # taken as caught: the bulk "wet" ion holds it, so it adds 0 here and
                # shares that wet component's status (docs/budget.md, bulk collectors)
                excl = bulk_p[:, None, :] & np.ones((1, n_r, n_p), bool)
                ion = BULK_CAUGHT_IN[sp]
                jw = [x[2] for x in comps].index(ion)
                # a period holding both collectors: the particle dry deposition of its
                # wet-only share of hours is added, the bulk share is taken as caught
                part = straddle[:, None, :] & np.ones((1, n_r, n_p), bool)
                d = np.where(part, d * (1.0 - bulk_share[:, None, :]), d)
                st = np.where(estimated[:, None, :] & part & (st == "complete"), "flagged", st)
                hours = ("hours sampled by the bulk collector" if split is not None
                         else "bulk share of the period's hours")
                comp_note[..., j] = np.where(part, join_notes(comp_note[..., j], np.char.add(
                    (coll_words[:, None, :] * np.ones((1, n_r, 1), object)).astype(str),
                    f": the {hours} taken as caught (in its wet {ion}),"
                    " the rest added")), comp_note[..., j])
                d = np.where(excl, np.where(status[..., jw] == "missing", np.nan, 0.0), d)
                st = np.where(excl, status[..., jw], st)
                c = np.where(excl, compl[..., jw], c)
                fails[..., j] = np.where(excl, False, fails[..., j])
                comp_note[..., j] = np.where(excl, f"caught by the bulk collector: counted in "
                                             f"its wet {ion} deposition, 0 here (bulk_correction "
                                             "exclude_particles)", comp_note[..., j])
                if excl.any():
                    notes.append(f"{sp}: particle dry deposition at bulk-collector sites taken "
                                 f"as caught by the collector (in its wet {ion}; 0 in the dry "
                                 "pathway)")
            dep[:, :, :, j] = d
            status[:, :, :, j] = st
            compl[:, :, :, j] = c
            fractions["air_coverage"][:, :, :, j] = cov
            fractions["flux_coverage"][:, :, :, j] = fc
            fractions["vd_coverage"][:, :, :, j] = vdc
    # non-sea-salt pSO4 below 0 over a period (more sea-salt sulfate from pNa than pSO4
    # itself): clipped at 0 and flagged, as the wet chain's nss SO4 (docs/budget.md,
    # "Components and units"); the samples stay linear, the period's sum is clipped
    if options.sulfate_basis == "nss" and dry is not None and "pSO4" in d_species:
        j = [c[2] for c in comps].index("pSO4")
        neg = (status[..., j] != "missing") & np.isfinite(dep[..., j]) & (dep[..., j] < 0)
        if neg.any():
            dep[..., j] = np.where(neg, 0.0, dep[..., j])
            status[..., j] = np.where(neg & np.isin(status[..., j], ("complete", "filled")),
                                      "flagged", status[..., j])
            comp_note[..., j] = np.where(neg, join_notes(
                comp_note[..., j], "sea-salt sulfate from pNa exceeds the measured pSO4: "
                "non-sea-salt pSO4 clipped at 0"), comp_note[..., j])
        # weeks of pSO4 without pNa among weeks with it: their total pSO4 stands in
        # (sea salt included), flagged with the weeks named (the period still passes);
        # a site with no pNa at all: said, not flagged, one basis over its whole record
        # (docs/budget.md, "Components and units")
        if "pSO4_total_used" in dr.variables:
            words = np.asarray(dr.variables["pSO4_total_used"].values, object)
            said = np.array([isinstance(x, str) and x != "" for x in words.ravel()],
                            bool).reshape(words.shape)[:, None, :] & np.ones((1, n_r, 1), bool)
            said &= (status[..., j] != "missing") & ~np.char.startswith(
                comp_note[..., j].astype(str), "caught by the bulk collector")
            whole = np.array([isinstance(x, str) and x.startswith(NO_PNA_AT_SITE)
                              for x in words.ravel()], bool).reshape(words.shape)[:, None, :]
            status[..., j] = np.where(said & ~whole
                                      & np.isin(status[..., j], ("complete", "filled")),
                                      "flagged", status[..., j])
            comp_note[..., j] = np.where(said, join_notes(
                comp_note[..., j], (words[:, None, :] * np.ones((1, n_r, 1), object)).astype(str)),
                comp_note[..., j])
        # weeks whose pNa was below detection: their sea salt from the substitute, said
        # (not flagged: a value below detection is a measurement, as for every species)
        for var in ("pSO4_nss_censored", "pSO4_na_censored"):
            if var not in dr.variables:
                continue
            words = np.asarray(dr.variables[var].values, object)
            said = np.array([isinstance(x, str) and x != "" for x in words.ravel()],
                            bool).reshape(words.shape)[:, None, :] & np.ones((1, n_r, 1), bool)
            said &= (status[..., j] != "missing") & ~np.char.startswith(
                comp_note[..., j].astype(str), "caught by the bulk collector")
            comp_note[..., j] = np.where(said, join_notes(
                comp_note[..., j], (words[:, None, :] * np.ones((1, n_r, 1), object)).astype(str)),
                comp_note[..., j])
    # a site's own surface under a land-use class other than its land_use in the period
    # (workbench/surfacehistory.py): its dry rows say which
    lu = period_notes(catalogue, sites, list(receptors), periods)
    if (lu != "").any():
        for j, (_, path, _) in enumerate(comps):
            if path == "dry":
                said = (lu != "") & (status[..., j] != "missing")
                comp_note[..., j] = np.where(said, join_notes(comp_note[..., j], lu),
                                             comp_note[..., j])
    # NH3: the net exchange replaces the deposition-only figure when the dry model gave it
    j = [c[2] for c in comps].index("NH3")
    nh3_only = np.where(status[..., j] == "missing", np.nan, dep[..., j])
    nh3_net = np.full(nh3_only.shape, np.nan)
    figure = "deposition_only"
    if dry is not None and "nh3_net" in dr.variables and "NH3" in d_species:
        nh3_net = dr.variables["nh3_net"].values
        dep[..., j], status[..., j], comp_note[..., j] = nh3_net_component(
            nh3_only, nh3_net, status[..., j], comp_note[..., j])
        nh3_net = np.where(status[..., j] == "missing", np.nan, nh3_net)
        figure = "net"
        notes.append("NH3: the component and the N totals use the net exchange of the "
                     "compensation point model (deposition - emission); the deposition-only "
                     "figure is nh3_deposition_only")
    dep = np.where(status == "missing", np.nan, dep)
    compl = np.where(status == "missing", np.nan, compl)
    dims = ("site", "receptor", "period", "component")
    elements = np.array([c[0] for c in comps])
    pathways = np.array([c[1] for c in comps])
    species = np.array([c[2] for c in comps])
    data = {"deposition": xr.Variable(dims, dep, {"units": "mol m-2",
                                                  "long_name": "deposition as amount of element"}),
            "completeness": xr.Variable(dims, compl, {"units": "1", "long_name":
                                                      "smallest of the component's fractions"}),
            **{name: xr.Variable(dims, np.where(status == "missing", np.nan, v),
                                 {"units": "1", "long_name": FRACTIONS[name]})
               for name, v in fractions.items()},
            "note": xr.Variable(dims, comp_note),
            "fails_completeness": xr.Variable(dims, fails & (status != "missing"), {
                "long_name": "the component fails a completeness criterion"}),
            "status": xr.Variable(dims, status),
            "active": xr.Variable(("site", "receptor"), active),
            "nh3_deposition_only": xr.Variable(dims[:3], nh3_only, {
                "units": "mol m-2", "long_name": "dry NH3 deposition, deposition only (the "
                "gas scheme's Vd, no compensation point)"}),
            "nh3_net": xr.Variable(dims[:3], nh3_net, {
                "units": "mol m-2", "long_name": "net dry NH3 exchange, deposition - emission "
                "(positive down; NaN unless nh3_treatment = bidirectional)"})}
    names, totals = _totals(dep, status, compl, elements, pathways, species, fails)
    data.update(totals)
    if (lu != "").any() or (coll_words != "").any():
        # the sums of a period under another surface or collector say so too
        t_note = np.full(dep.shape[:3] + (len(names),), "", dtype=object)
        for t, name in enumerate(names):
            path = name.split("_")[1]
            if path in ("wet", "total"):
                t_note[..., t] = join_notes(t_note[..., t], coll_words[:, None, :]
                                            * np.ones((1, n_r, 1), object))
            if path in ("dry", "total"):
                t_note[..., t] = join_notes(t_note[..., t], lu)
        data["total_note"] = xr.Variable(dims[:3] + ("total",), t_note.astype(object))
    coords = {"site": sites, "receptor": list(receptors), "period": labels,
              "component": [f"{e}/{p}/{s}" for e, p, s in comps],
              "element": ("component", elements), "pathway": ("component", pathways),
              "species": ("component", species),
              "period_start": ("period", periods["start"].values),
              "period_end": ("period", periods["end"].values),
              "period_hours": ("period", periods["hours"].to_numpy(dtype=float)),
              "annual_factor": ("period", annual_factor(periods)), "total": names}
    if dry is not None:
        sp_index = [c[2] for c in comps].index
        data.update(bulk_caught_brackets(
            bracket_outputs(dr, PAIRS, d_species, d_vdc, d_fs, d_meas, d_sok, d_ratio, options),
            PAIRS, bulk_p, lambda p: (dep[..., sp_index(p)], status[..., sp_index(p)],
                                    compl[..., sp_index(p)]), options))
        conc = dr.variables["concentration"]
        data["air_concentration"] = xr.Variable(
            tuple("air_species" if d == "species" else d for d in conc.dims), conc.values,
            conc.attrs)
        coords["air_species"] = dr.variables["species"].values
    if wet is not None:
        wet_vars, wet_ions = wet_outputs(w)
        data.update(wet_vars)
        data["wet_sulfate_total"] = xr.Variable(("site", "period"), wet_sulfate_total(
            w, options), {"long_name": "the wet S component (SO4) holds total SO4, sea salt "
                          "included: sulfate_basis total, or the non-sea-salt mean fell back "
                          "for want of the sea-salt tracer"})
        coords["wet_ion"] = wet_ions
    ds = xr.Dataset(data, coords=coords)               # built once (each assign aligns)
    ds.attrs.update({"options": json.dumps(options.to_dict(), sort_keys=True),
                     "notes": json.dumps(notes), "nh3_figure": figure,
                     "omissions": json.dumps([list(o) for o in OMISSIONS])})
    return ds


def _collector_split_on(split, sites, n_p):
    """:func:`workbench.surfacehistory.collector_split` on the budget's sites (a site
    without samples: NaN shares, not estimated), with the words of a period holding
    both collectors; None without it."""
    if split is None:
        return None
    have = {s: k for k, s in enumerate(split["sites"])}
    idx = np.array([have.get(str(s), -1) for s in sites], int)
    ok = (idx >= 0)[:, None]

    def on(a, fill):
        a = np.asarray(a)
        return np.where(ok, a[np.maximum(idx, 0)], fill)
    out = {"hour_share": on(split["hour_share"], np.nan),
           "precip_share": on(split["precip_share"], np.nan),
           "estimated": on(split["estimated"], False).astype(bool),
           "share": {sp: on(v, np.nan) for sp, v in split["share"].items()}}
    words = np.full((len(sites), n_p), "", dtype=object)
    for sid, _, changes in split.get("history", ()):
        if sid in list(sites):
            words[list(sites).index(sid)] = "collector " + describe(changes)
    out["both_words"] = words
    return out


def _wet_bulk_share(split, w, sp, options):
    """(site, period) share [1] of the wet component's deposition carried by the bulk
    samples, and its words: the samples' contributions (a period whose mean was filled
    from the climatology: their share of the precipitation; no sample: the hours)."""
    nss = sp == "SO4" and options.sulfate_basis == "nss" and "dep_nssSO4" in w.variables
    share = split["share"].get(f"nss{sp}" if nss else sp)
    if share is None:
        share = np.full(split["precip_share"].shape, np.nan)
    filled = (w.variables["filled"].values.astype(bool) if "filled" in w.variables
              else np.zeros(share.shape, bool))
    share = np.where(filled, split["precip_share"], share)
    share = np.where(np.isfinite(share), share, split["precip_share"])
    share = np.where(np.isfinite(share), share, split["hour_share"])
    return np.nan_to_num(share), "bulk samples' part of the deposition"


def _same_axis(ds: xr.Dataset, dim: str, values) -> bool:
    """The Dataset's coordinate `dim` is `values`, in order (no reindex needed)."""
    have = ds.indexes[dim]
    return len(have) == len(values) and bool((np.asarray(have, dtype=object)
                                               == np.asarray(values, dtype=object)).all())


def _totals(dep, status, compl, element, pathway, species, fails=None):
    """Per-element sums by pathway and their status, from the component arrays.

    Parameters
    ----------
    dep, status, compl : ndarray
        (..., component) deposition [mol m-2], status (str) and completeness [1].
    element, pathway, species : ndarray of str
        Per component.
    fails : ndarray of bool, optional
        (..., component): a present component fails completeness.  A component
        ``flagged`` for another reason (kept flagged samples, a sulfate basis that
        fell back) is named in ``total_flagged_components`` but does not make the
        sum fail.  Default: every ``flagged`` component fails.

    Returns
    -------
    names : list of str
        ``S_wet`` ... ``N_total``.
    variables : dict
        ``total_deposition`` [mol m-2], ``total_status``, ``total_passes``,
        ``total_missing_components``, ``total_flagged_components``,
        ``total_completeness`` [1] as xarray Variables with dims (site, receptor,
        period, total).
    """
    if fails is None:
        fails = np.asarray(status, dtype=object) == "flagged"
    out = {}
    for e in ("S", "N"):
        for p in ("wet", "dry", "total"):
            sel = (element == e) & ((pathway == p) if p != "total" else True)
            d = dep[..., sel]
            st = status[..., sel]
            total = np.where(np.isfinite(d).any(-1), np.nansum(d, -1), np.nan)
            combined, _ = combine_status(st)
            passes = ~(fails[..., sel] & (st != "missing")).any(-1) & (combined != "missing")
            absent = np.full(total.shape, "", dtype=object)
            flagged = np.full(total.shape, "", dtype=object)
            for k, spn in enumerate(species[sel]):
                absent = np.where(st[..., k] == "missing",
                                  np.where(absent == "", spn, absent + " " + spn), absent)
                flagged = np.where(st[..., k] == "flagged",
                                   np.where(flagged == "", spn, flagged + " " + spn), flagged)
            # np.fmin.reduce is what np.nanmin computes on a float array, without the
            # all-NaN warning: no catch_warnings (process-wide filters, not safe when
            # blocks of sites run on threads)
            with np.errstate(all="ignore"):
                worst = (np.fmin.reduce(np.where(st == "missing", np.nan, compl[..., sel]),
                                        axis=-1)
                         if (st != "missing").any() else np.full(total.shape, np.nan))
            out[f"{e}_{p}"] = (total, combined, passes, absent, worst, flagged)
    names = list(out)
    dims = ("site", "receptor", "period", "total")

    def stack(i):
        return np.stack([out[n][i] for n in names], -1)
    return names, {
        "total_deposition": xr.Variable(dims, stack(0), {"units": "mol m-2",
                                                         "long_name": "sum of components (element)"}),
        "total_status": xr.Variable(dims, stack(1)),
        "total_passes": xr.Variable(dims, stack(2), {
            "long_name": "present components pass completeness (a component flagged only "
                         "for kept flagged samples or a sulfate fallback passes)"}),
        "total_missing_components": xr.Variable(dims, stack(3),
                                                {"long_name": "components without data"}),
        "total_flagged_components": xr.Variable(dims, stack(5),
                                                {"long_name": "components with status flagged"}),
        "total_completeness": xr.Variable(dims, stack(4), {"units": "1"})}


def add_totals(ds: xr.Dataset) -> xr.Dataset:
    """Per-element sums by pathway (wet, dry, total), their status and completeness.

    Parameters
    ----------
    ds : xarray.Dataset
        Components (dims site, receptor, period, component): ``deposition`` [mol m-2],
        ``status``, ``completeness`` [1], coordinates ``element``, ``pathway``,
        ``species``.

    Returns
    -------
    xarray.Dataset
        `ds` with the variables of :func:`_totals` and the coordinate ``total``.
    """
    order = ("site", "receptor", "period", "component")
    names, totals = _totals(ds["deposition"].transpose(*order).values,
                            ds["status"].transpose(*order).values,
                            ds["completeness"].transpose(*order).values,
                            ds["element"].values, ds["pathway"].values, ds["species"].values)
    return ds.assign_coords(total=names).assign(totals)


#: The components behind the derived sums of summary.csv (docs/budget.md, "Components
#: and units"); the potential acidity takes every S and N component.
DERIVED_PARTS = {"oxidized_N": OXIDIZED_N, "reduced_N": REDUCED_N,
                 "potential_acidity": tuple(c[2] for c in COMPONENTS if c[0] == "S")
                 + OXIDIZED_N + REDUCED_N}


def derived_status(table: pd.DataFrame) -> pd.DataFrame:
    """Status and missing components of the derived sums (oxidized N, reduced N,
    potential acidity) per (site, receptor, period), by the rule of every sum
    (:func:`workbench.budget.combine_status`): without them an oxidized N that lacks an
    unmeasured NO2 read as complete in summary.csv.

    Returns
    -------
    DataFrame
        Columns site, receptor, period, ``<sum>_status`` and ``<sum>_missing_components``.
    """
    comp = table[(table["species"] != "all") & (table["period"] != "span")]
    key = ["site", "receptor", "period"]
    st = comp.pivot_table(index=key, columns="species", values="status", aggfunc="first",
                          observed=True)
    out = pd.DataFrame(index=st.index)
    for name, parts in DERIVED_PARTS.items():
        sub = st.reindex(columns=list(parts)).fillna("missing").to_numpy(object)
        out[f"{name}_status"], _ = combine_status(sub)
        out[f"{name}_missing_components"] = [
            " ".join(p for p, v in zip(parts, row) if v == "missing") for row in sub]
    return out.reset_index()


def derived(ds: xr.Dataset) -> xr.Dataset:
    """Dry and wet shares, oxidized and reduced N, potential acidity [eq ha-1].

    Potential acidity = 2 nss-S + oxidized N + reduced N in eq ha-1 (common practice);
    the S term uses the budget's sulfate basis.
    """
    sp = ds["species"].values
    el = ds["element"].values
    d = ds["deposition"].values
    totals = list(ds["total"].values)
    tot = ds["total_deposition"].values

    def part(mask):
        v = d[..., mask]
        return np.where(np.isfinite(v).any(-1), np.nansum(v, -1), np.nan)

    def t(name):
        return tot[..., totals.index(name)]

    ox = part(np.isin(sp, OXIDIZED_N) & (el == "N"))
    red = part(np.isin(sp, REDUCED_N) & (el == "N"))
    dims = ("site", "receptor", "period")
    kg, eq = "kg N ha-1", "eq ha-1"
    out = {"oxidized_N_kg_ha": (dims, element_deposition_in(ox, "N", "kg_ha"),
                                {"units": kg, "long_name": "oxidized N deposition (NO3, HNO3, pNO3, NO2)"}),
           "oxidized_N_eq_ha": (dims, element_deposition_in(ox, "N", "eq_ha"), {"units": eq}),
           "reduced_N_kg_ha": (dims, element_deposition_in(red, "N", "kg_ha"),
                               {"units": kg, "long_name": "reduced N deposition (NH4, NH3, pNH4)"}),
           "reduced_N_eq_ha": (dims, element_deposition_in(red, "N", "eq_ha"), {"units": eq}),
           "potential_acidity_eq_ha": (dims, element_deposition_in(t("S_total"), "S", "eq_ha")
                                       + element_deposition_in(ox, "N", "eq_ha")
                                       + element_deposition_in(red, "N", "eq_ha"),
                                       {"units": eq,
                                        "long_name": "potential acidity 2 S + oxidized N + reduced N"})}
    if "wet_H_deposition" in ds:
        h = ds["wet_H_deposition"].transpose("site", "period").values
        out["wet_H_eq_ha"] = (dims, np.broadcast_to(
            deposition_in(h, "H", "eq_ha")[:, None, :], d.shape[:3]).copy(),
            {"units": eq, "long_name": "wet deposition of free acidity H+"})
    with np.errstate(invalid="ignore", divide="ignore"):
        for e in ("S", "N"):
            out[f"{e}_dry_share"] = (dims, t(f"{e}_dry") / t(f"{e}_total"), {"units": "1"})
            out[f"{e}_wet_share"] = (dims, t(f"{e}_wet") / t(f"{e}_total"), {"units": "1"})
        # the bracket of dry N: each gas/particle pair all as gas, and all as particle;
        # its status by the rule of every sum, with each bracket for its pair
        dry_n = t("N_dry")
        n_dry = (el == "N") & (ds["pathway"].values == "dry")
        others = ds["status"].values[..., n_dry & ~np.isin(sp, sum(PAIRS.values(), ()))]
        for how in ("all_gas", "all_particle"):
            alt, st = dry_n.copy(), [others]
            for pair, members in PAIRS.items():
                v = f"bracket_{pair}_{how}"
                measured = part(np.isin(sp, members) & (ds["pathway"].values == "dry"))
                alt = alt - measured + (ds[v].values if v in ds else np.nan)
                st.append(ds[f"{v}_status"].values[..., None] if f"{v}_status" in ds
                          else np.full(alt.shape + (1,), "missing", object))
            out[f"dry_N_{how}_kg_ha"] = (dims, element_deposition_in(alt, "N", "kg_ha"),
                                         {"units": kg, "long_name": f"dry N with the nitrate and "
                                          f"ammonium pairs {how.replace('_', ' ')}"})
            out[f"dry_N_{how}_status"] = (dims, np.where(
                np.isfinite(alt), combine_status(np.concatenate(st, -1))[0], "missing"
            ).astype(object), {"long_name": f"status of dry_N_{how}_kg_ha (docs/budget.md)"})
        if "air_concentration" in ds:
            c = ds["air_concentration"]
            n_mass = element_molar_mass("N") * UG_PER_KG   # mol N -> ug N [ug mol-1]
            for name, (gas, prt) in (("total_nitrate", PAIRS["nitrate"]),
                                     ("total_ammonia_ammonium", PAIRS["ammonium"])):
                if gas in c["air_species"].values and prt in c["air_species"].values:
                    v = (c.sel(air_species=gas) + c.sel(air_species=prt)).values * n_mass
                    out[f"{name}_ug_N_m3"] = (("site", "period"), v, {
                        "units": "ug N m-3", "long_name": f"{gas} + {prt}, time-weighted mean"})
    return xr.Dataset(out, coords={k: ds[k] for k in dims})
