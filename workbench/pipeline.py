"""A study: the inputs of a scenario and its computation stages, each cached.

Stages and what invalidates them:

======================  =====================================================
stage                   recomputed when
======================  =====================================================
``screened``            wet options change
``wet``                 wet options or the periods change
``velocities``          dry options or the site overrides change (met-derived,
                        the expensive stage)
``dry``                 budget options, fixed velocities or periods change
``budget``              anything above changes
======================  =====================================================

So a change of a wet option never recomputes Vd.
"""
from __future__ import annotations

import dataclasses
import functools
import json
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import xarray as xr

from . import periods as _periods
from .budget import COMPONENTS, BudgetOptions, assemble, derived
from .drycomponents import dry_components, dry_rows, nh3_exchange_velocities, prepare_velocities
from .io.inputs import Inputs
from .io.sites import SiteCatalogue
from .memo import digest, recent, trim
from .tables import budget_table, span_table


#: Wet options that act on periods only (completeness, fills, sea salt), so that a change
#: of one of them does not screen the samples again.
WET_PERIOD_OPTIONS = ("hydro_start_month", "straddle", "min_gauge_fraction",
                      "min_coverage_fraction", "min_valid_precip_fraction", "min_valid_samples",
                      "period_fill", "seasalt_tracer")


#: Results kept per stage where they are large (hourly arrays): older ones are
#: computed again when asked for.  Velocities of a site-year are ~15 MB.
STAGE_LIMITS = {"velocities": 8, "dry": 400, "wet": 64, "screened": 16}
#: Entries kept in the content-keyed memo of the dry rows, and option sets whose own
#: memo (brackets) is kept; the oldest go first and are computed again when asked for.
SHARED_ENTRIES = 3000
OPTION_MEMOS = 16
#: Sets of receptor surfaces (site overrides) whose velocity steps are kept.
VELOCITY_STEP_SETS = 2


def _rkey(receptors) -> str:
    """Cache-key part of a receptor subset ("" for every receptor)."""
    return "" if receptors is None else "|receptors=" + ",".join(map(str, receptors))


def _key(obj) -> str:
    if obj is None:
        return "None"
    if hasattr(obj, "to_json"):
        return obj.to_json()
    if dataclasses.is_dataclass(obj):
        return repr(obj)
    return json.dumps(obj, sort_keys=True, default=str)


@dataclass
class Result:
    """Everything one run produces.

    ``table`` (the budget.csv rows) and ``derived`` are built on first use, so that the
    apps, which draw from the Datasets, do not pay for them on every change.  Most
    arrays of ``velocities`` are shared with the study's caches and read-only; take a
    ``.copy()`` of the Dataset to change values in place.
    """

    budget: xr.Dataset            #: (site, receptor, period, component) at the resolution
    years: xr.Dataset             #: the same for calendar years
    screened: xr.Dataset | None   #: per-sample QA
    wet: xr.Dataset | None        #: wet chain at the resolution
    velocities: xr.Dataset | None  #: hourly Ra, Rb, Rc, Vd (arrays may be read-only: ``.copy()``)
    periods: pd.DataFrame
    options: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)

    @functools.cached_property
    def table(self) -> pd.DataFrame:
        """budget.csv rows: the resolution periods, then the whole span."""
        span = span_table(budget_table(self.years))
        return pd.concat([budget_table(self.budget), span], ignore_index=True)

    @functools.cached_property
    def derived(self) -> xr.Dataset:
        """Shares, oxidized / reduced N, potential acidity, brackets, total nitrate."""
        return derived(self.budget)


class Study:
    """The inputs of a study and the cached computation stages.

    Parameters
    ----------
    inputs : Inputs
        As read by :func:`workbench.io.load_inputs`.
    site_overrides : dict, optional
        site id -> {catalogue key: value} (the scenario's ``[sites.<id>]`` tables).
    """

    def __init__(self, inputs: Inputs, site_overrides=None):
        self.inputs = inputs
        self.site_overrides = dict(site_overrides or {})
        self._cache = {}
        self._memo = {}
        self.counts = {"screened": 0, "wet": 0, "velocities": 0, "dry": 0, "budget": 0}

    # ---------------------------------------------------------------- construction
    @classmethod
    def from_scenario(cls, scenario, progress=None) -> "Study":
        from .scenario import load_scenario_inputs
        return cls(load_scenario_inputs(scenario, progress=progress), scenario.data.get("sites", {}))

    def catalogue(self, overrides=None) -> SiteCatalogue:
        """The catalogue with the site overrides applied.

        `overrides` given here (the apps' what-if values) go through the same checks as
        the scenario's ``[sites.<id>]`` tables (:func:`workbench.io.sites.check_site`):
        an impossible value raises a located :class:`~workbench.errors.InputError`
        naming the override; an unknown site id is refused.
        """
        over = {**self.site_overrides, **(overrides or {})}
        if overrides:
            self._check_overrides(overrides)
        sites = []
        for s in self.inputs.catalogue:
            o = dict(over.get(s.id, {}))
            if "receptors" in o:
                o["receptors"] = tuple(o["receptors"])
            if "lai" in o:
                o["lai"] = tuple(o["lai"])
            o.pop("lai_min", None), o.pop("lai_max", None)
            sites.append(dataclasses.replace(s, **o) if o else s)
        return SiteCatalogue(sites, self.inputs.catalogue.path)

    def _check_overrides(self, overrides):
        """Site overrides given in code, checked as the scenario's are (about 0.05 ms a
        site: checked on every call, no cache)."""
        from .errors import InputError, suggest
        from .io.sites import check_site, site_dict
        ids = list(self.inputs.catalogue.ids)
        for sid, table in overrides.items():
            if sid not in ids:
                raise InputError("unknown site id in a what-if override", column=f"sites.{sid}",
                                 value=sid, expected="one of " + ", ".join(ids) + suggest(sid, ids))
            table = dict(table)
            base = site_dict(self.inputs.catalogue[sid])
            base.update(self.site_overrides.get(sid, {}))
            if "lai_min" in table or "lai_max" in table:
                base.pop("lai", None)

            def err(problem, key, value=None, expected=None, sid=sid):
                return InputError(f"what-if override: {problem}", column=f"sites.{sid}.{key}",
                                  value=value, expected=expected)
            check_site({**base, **table}, err, [], f"what-if [sites.{sid}]")

    def span(self):
        """(start, end) of the chemistry: the earliest sample or air-period start and
        the latest end (the met record when there is no chemistry)."""
        starts, ends = [], []
        for ds in (self.inputs.precipitation, self.inputs.air):
            if ds is not None:
                starts.append(ds["start"].values.min())
                ends.append(ds["end"].values.max())
        if not starts and self.inputs.met is not None:
            t = self.inputs.met["time"].values
            starts.append(t[0] - np.timedelta64(1, "h"))
            ends.append(t[-1])
        return min(starts), max(ends)

    def periods(self, resolution="year", start=None, end=None, hydro_start_month=10):
        key = (resolution, str(start), str(end), hydro_start_month)
        if ("periods", key) not in self._cache:
            s0, e0 = self.span()
            t0 = np.datetime64(start) if start else s0
            t1 = np.datetime64(end) if end else e0
            self._cache[("periods", key)] = _periods.make_periods(
                t0, t1, resolution, hydro_start_month=hydro_start_month)
        return self._cache[("periods", key)]

    # ---------------------------------------------------------------- stages
    def _cached(self, name, key, fn):
        k = (name, key)
        if k not in self._cache:
            self._cache[k] = fn()
            self.counts[name] += 1
            limit = STAGE_LIMITS.get(name)
            if limit is not None:
                mine = [c for c in self._cache if c[0] == name]
                for old in mine[:-limit]:                    # the oldest first
                    del self._cache[old]
        return self._cache[k]

    def screened(self, wet_options):
        from .wet import screen
        if self.inputs.precipitation is None:
            return None
        qa = {k: v for k, v in wet_options.to_dict().items() if k not in WET_PERIOD_OPTIONS}
        return self._cached("screened", _key(qa),
                            lambda: screen(self.inputs.precipitation, wet_options, met=self.inputs.met))

    def wet(self, wet_options, periods: pd.DataFrame):
        from .wet import wet_deposition
        scr = self.screened(wet_options)
        if scr is None:
            return None
        key = _key(wet_options) + "|" + ",".join(periods["label"])
        return self._cached("wet", key, lambda: wet_deposition(scr, periods, wet_options,
                                                               met=self.inputs.met))

    def velocities(self, dry_options, overrides=None, receptors=None):
        """Hourly Vd and resistances (all receptors, or the ones named)."""
        from .drydep import velocities
        if self.inputs.met is None:
            return None
        over = _key({**self.site_overrides, **(overrides or {})}) + _rkey(receptors)
        # the steps inside are cached too, per set of surfaces: an option change
        # recomputes only the steps that depend on it (a particle size: that mode only)
        steps = recent(self._memo.setdefault("velocity steps", {}), over, VELOCITY_STEP_SETS)
        return self._cached("velocities", repr(dry_options) + "|" + over,
                            lambda: velocities(self._met_with_air(dry_options),
                                               self.surfaces(overrides),
                                               self._site_nh3(dry_options, overrides),
                                               cache=steps, receptors=receptors))

    def _met_with_air(self, dry_options):
        """The met Dataset with the hourly inputs the dry options take from the air
        concentrations (site, time): the NH3/SO2 ratio of ``so2_codeposition``, the acid
        ratio of ``nh3_acid_ratio_from_air`` and the sampler coarse fractions of
        ``sampler_coarse_fraction`` (docs/methods_dry.md)."""
        met, air = self.inputs.met, self.inputs.air
        if air is None or not (dry_options.so2_codeposition
                               or dry_options.nh3_acid_ratio_from_air
                               or dry_options.sampler_coarse_fraction):
            return met
        from .drydep import codeposition, particle_fractions
        sites, times = [str(x) for x in met["site"].values], met["time"].values
        extra = {}
        if dry_options.so2_codeposition or dry_options.nh3_acid_ratio_from_air:
            t = met["temperature"].transpose("site", "time").values
            p = (met["pressure"].transpose("site", "time").values if "pressure" in met
                 else np.full(t.shape, np.nan))
            elev = self.surfaces()["elevation"].sel(site=sites).values.astype(float)
            from .surface.air import standard_pressure_at
            p = np.where(np.isnan(p), standard_pressure_at(elev)[:, None], p)
            if dry_options.so2_codeposition:
                extra["nh3_so2_ratio"] = codeposition.hourly_ratio(air, times, sites, t, p)
            if dry_options.nh3_acid_ratio_from_air:
                extra["nh3_acid_ratio"] = codeposition.hourly_acid_ratio(air, times, sites, t, p)
        for sp, f in particle_fractions.hourly_sampler_fractions(air, times, sites,
                                                                 dry_options).items():
            extra[f"coarse_fraction_{sp}"] = f
        return met.assign({k: (("site", "time"), v, {"units": "1"}) for k, v in extra.items()})

    def _site_nh3(self, dry_options, overrides=None):
        """The dry options with the catalogue's per-site NH3 emission potentials
        (``"<site>/<class>"`` keys; a scenario's own such key wins)."""
        if getattr(dry_options, "nh3_treatment", "") != "bidirectional":
            return dry_options
        site_g = self.catalogue(overrides).nh3_emission_potential()
        if not site_g:
            return dry_options
        return dataclasses.replace(dry_options, nh3_emission_potential={
            **site_g, **dry_options.nh3_emission_potential})

    def receptors(self, overrides=None) -> list:
        """Every receptor surface of the sites, in the order of the budget."""
        return list(dict.fromkeys(r for s in self.catalogue(overrides) for r in s.surfaces))

    def surfaces(self, overrides=None) -> xr.Dataset:
        """Receptor surfaces of the catalogue with the overrides (cached per overrides)."""
        key = ("surfaces", _key({**self.site_overrides, **(overrides or {})}))
        if key not in self._memo:
            self._memo[key] = self.catalogue(overrides).surfaces()
        return self._memo[key]

    def _needs_model(self, fixed_velocity) -> bool:
        """True when a measured dry species has no fixed velocity."""
        dry_species = [c[2] for c in COMPONENTS if c[1] == "dry"]
        measured = [sp for sp in dry_species if self.inputs.air is not None and sp in self.inputs.air]
        return self.inputs.met is not None and any(sp not in (fixed_velocity or {}) for sp in measured)

    def _velocity_sets(self, dry_options, budget_options, fixed_velocity, overrides,
                       receptors=None):
        """Gap-filled Vd per species, each cached on its own (model or fixed value)."""
        dry_species = [c[2] for c in COMPONENTS if c[1] == "dry"]
        need_model = self._needs_model(fixed_velocity)
        vd = self.velocities(dry_options, overrides, receptors) if need_model else None
        cat = self.catalogue(overrides)
        receptors = list(receptors) if receptors is not None else self.receptors(overrides)
        met = self.inputs.met
        out = {}
        for sp in dry_species:
            fixed = {sp: fixed_velocity[sp]} if sp in fixed_velocity else {}
            if not fixed and vd is None:
                continue

            def make(sp=sp, fixed=fixed):
                template = xr.DataArray(
                    np.full((len(cat.ids), len(receptors), met.sizes["time"]), np.nan),
                    dims=("site", "receptor", "time"),
                    coords={"site": cat.ids, "receptor": receptors, "time": met["time"].values})
                got = prepare_velocities(vd if not fixed else None, [sp], fixed,
                                         budget_options.min_slot_hours, template)
                return got.get(sp)

            # keyed by the content of the species' Vd: a dry option that leaves it as it
            # was (a particle size, for the gases) reuses its fill and its dry rows
            which = (self._vd_digest(vd, sp) if not fixed and f"vd_{sp}" in vd else
                     _key(overrides) + _rkey(receptors))
            entry = self._cached("dry", f"vel|{sp}|{fixed.get(sp)}|{which}|"
                                 f"{budget_options.min_slot_hours}", make)
            if entry is not None:
                out[sp] = entry
        if (getattr(dry_options, "nh3_treatment", "") == "bidirectional" and vd is not None
                and "vd_NH3_bidirectional" in vd and "NH3" in out
                and "NH3" not in fixed_velocity):                   # the net NH3 flux
            out.update(self._cached(
                "dry", f"vel|NH3 exchange|{self._vd_digest(vd, 'NH3_bidirectional')}|"
                f"{self._nh3_emission_digest(vd)}|{budget_options.min_slot_hours}",
                lambda: nh3_exchange_velocities(vd, budget_options.min_slot_hours)))
        return out

    def _nh3_emission_digest(self, vd: xr.Dataset) -> str:
        """Content digest of the NH3 emission term (it changes with Gamma_s alone)."""
        return digest([("", vd.variables["nh3_emission_flux"])]) if "nh3_emission_flux" in vd \
            else ""

    def _vd_digest(self, vd: xr.Dataset, sp: str) -> str:
        """Content digest of a species' Vd in a velocities Dataset (once per Dataset)."""
        memo = self._memo.setdefault("digest", {})
        key = (id(vd), sp)
        if key not in memo:
            axes = memo.get((id(vd), None))
            if axes is None:                             # the axes once per Dataset
                coords = vd[f"vd_{sp}"].coords.variables.items()
                axes = memo[(id(vd), None)] = (digest(coords), vd)
            # the Dataset held: its id stays unique
            memo[key] = (digest([("", vd.variables[f"vd_{sp}"])], axes[0]), vd)
            trim(memo, 16 * len(COMPONENTS))
        return memo[key][0]

    def dry_rows(self, dry_options, budget_options, fixed_velocity=None, overrides=None,
                 receptors=None):
        """Deposition over each air-sampling period (independent of reporting periods)."""
        if self.inputs.air is None or self.inputs.met is None:
            return None
        fixed_velocity = dict(fixed_velocity or {})
        vel = self._velocity_sets(dry_options, budget_options, fixed_velocity, overrides,
                                  receptors)
        if not vel:
            return None
        flux = budget_options.flux_key()
        over = _key(overrides) + _rkey(receptors)
        memo = recent(self._memo.setdefault("option memos", {}), repr(dry_options) + over + flux,
                      OPTION_MEMOS)
        shared = self._memo.setdefault("shared", {})
        key = repr(dry_options) + over + _key(fixed_velocity) + flux

        def make():
            out = dry_rows(self.inputs.air, vel, self.inputs.met, self.catalogue(overrides).ids,
                           budget_options, memo, shared)
            trim(shared, SHARED_ENTRIES)
            return out
        return self._cached("dry", "rows|" + key, make)

    def dry(self, dry_options, budget_options, periods, fixed_velocity=None, overrides=None,
            receptors=None):
        rows = self.dry_rows(dry_options, budget_options, fixed_velocity, overrides, receptors)
        if rows is None:
            return None, []
        key = (repr(dry_options) + _key(overrides) + _rkey(receptors) + _key(fixed_velocity)
               + budget_options.flux_key() + ",".join(periods["label"]))
        return self._cached("dry", key, lambda: (
            dry_components(rows, periods, self._memo.setdefault("shares", {})), rows["notes"]))

    def season_coverage(self, dry_options, budget_options, years, fixed_velocity=None,
                        overrides=None, receptors=None):
        """(site, year, species): every season has concentrations in that year."""
        months = self.periods("month", years["start"].values[0], years["end"].values[-1])
        dry_m, _ = self.dry(dry_options, budget_options, months, fixed_velocity, overrides,
                            receptors)
        if dry_m is None:
            return None
        cov = dry_m["coverage"].values > 0                      # (site, month, species)
        yr = months["year"].to_numpy()
        season = months["season"].to_numpy()
        out = np.ones((cov.shape[0], len(years), cov.shape[2]), bool)
        for i, y in enumerate(years["year"].to_numpy()):
            for s in _periods.SEASON_NAMES:
                sel = (yr == y) & (season == s)
                if sel.any():
                    out[:, i, :] &= cov[:, sel, :].any(axis=1)
        return out

    # ---------------------------------------------------------------- the budget
    def run(self, wet_options=None, dry_options=None, budget_options=None, fixed_velocity=None,
            resolution="year", start=None, end=None, overrides=None, receptors=None) -> Result:
        """Compute the budget at a resolution, the yearly budget and the span mean.

        `receptors` (a sequence of receptor surfaces) computes those only, with the
        same numbers as in the whole run: an app showing one receptor at a time
        computes what it shows (default: every receptor of the sites).
        """
        from .drydep import DryOptions
        from .wet import WetOptions
        wet_options = wet_options or WetOptions()
        dry_options = dry_options or DryOptions()
        budget_options = budget_options or BudgetOptions()
        fixed_velocity = dict(fixed_velocity or {})
        cat = self.catalogue(overrides)
        every = self.receptors(overrides)
        if receptors is not None:
            receptors = tuple(str(r) for r in receptors)
            unknown = [r for r in receptors if r not in every]
            if unknown:
                raise ValueError(f"receptors {unknown} are not surfaces of these sites {every}")
        hy = wet_options.hydro_start_month
        periods = self.periods(resolution, start, end, hy)
        years = self.periods("year", start, end, hy)

        def one(table, season_cov):
            wet = self.wet(wet_options, table)
            dry, notes = self.dry(dry_options, budget_options, table, fixed_velocity, overrides,
                                  receptors)
            ds = assemble(wet, dry, cat, table, budget_options,
                          list(receptors) if receptors is not None else every, season_cov)
            return ds, wet, notes

        season_cov = self.season_coverage(dry_options, budget_options, years, fixed_velocity,
                                          overrides, receptors)
        year_ds, wet_y, notes = one(years, season_cov)
        if resolution == "year":
            res_ds, wet_r = year_ds, wet_y
        else:
            res_ds, wet_r, _ = one(periods, None)
        self.counts["budget"] += 1
        return Result(budget=res_ds, years=year_ds,
                      screened=self.screened(wet_options), wet=wet_r,
                      velocities=self.velocities(dry_options, overrides, receptors)
                      if self._needs_model(fixed_velocity) else None, periods=periods,
                      options={"wet": wet_options, "dry": dry_options, "budget": budget_options,
                               "fixed_velocity": fixed_velocity, "resolution": resolution,
                               "receptors": receptors},
                      notes=notes)
