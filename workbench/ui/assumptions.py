"""The assumptions an analyst may move, and the settings they act on.

:class:`Settings` holds everything a run depends on besides the inputs: the wet, dry
and budget options, the fixed-velocity what-ifs and the site overrides.  Each
:class:`Assumption` knows how to read its value from a :class:`Settings` and how to
return new settings with another value; the apps build one control per assumption
and the sensitivity explorer sweeps one.  Settings are never changed in place.
"""
from __future__ import annotations

import copy
import dataclasses
from dataclasses import dataclass, field
from typing import Callable

from ..budget import BudgetOptions
from ..constants import MAX_FIXED_VD_CM_S
from ..drydep import DryOptions
from ..drydep.options import WETNESS_RULES
from ..wet import WetOptions

#: Micrometres per metre (particle sizes are shown in um).
UM_PER_M = 1e6
#: Decimals of a particle size shown in um (hides float noise of the m -> um step).
SIZE_DIGITS = 6
#: Dry species that may be given a fixed deposition velocity in the apps.
FIXED_SPECIES = ("SO2", "HNO3", "NH3", "NO2", "pSO4", "pNO3", "pNH4")
#: Particulate budget species whose size distribution the apps expose.
PARTICLE_SPECIES = ("pSO4", "pNO3", "pNH4")
#: Wesely (1989, Atmos. Environ. 23, 1293-1304) seasonal categories, as in
#: :mod:`workbench.drydep.seasons`.
#: Short enough to show whole in the control's closed box (the full names in
#: docs/methods_dry.md; "automatic (surface state, month, latitude)" showed cut).
SEASONAL_CATEGORIES = (("automatic", "automatic"),
                       ("1 midsummer, lush", 1),
                       ("2 autumn, unharvested", 2),
                       ("3 late autumn, no snow", 3),
                       ("4 winter, snow, frozen", 4),
                       ("5 transitional spring", 5))
_FLAG_EXCLUDE = (("flag and keep", "flag"), ("exclude", "exclude"))
_LIMIT = (("half the limit", "half"), ("the limit", "limit"), ("zero", "zero"))
#: ``[dry] nh3_treatment``: deposition only, or the net exchange of the canopy
#: compensation point model (docs/budget.md, "NH3").
NH3_TREATMENTS = (("deposition only", "deposition_only"),
                  ("net: deposition - emission", "bidirectional"))


@dataclass
class Settings:
    """Everything a run depends on besides the inputs.

    Attributes
    ----------
    wet : WetOptions
    dry : DryOptions
    budget : BudgetOptions
    fixed_velocity : dict
        species -> Vd [cm s-1] replacing the model.
    overrides : dict
        site -> {catalogue key: value} (the scenario's ``[sites.<id>]`` tables plus
        the app's changes; a site's table replaces the scenario's as a whole).
    """

    wet: WetOptions = field(default_factory=WetOptions)
    dry: DryOptions = field(default_factory=DryOptions)
    budget: BudgetOptions = field(default_factory=BudgetOptions)
    fixed_velocity: dict = field(default_factory=dict)
    overrides: dict = field(default_factory=dict)

    @classmethod
    def from_scenario(cls, scenario) -> "Settings":
        return cls(scenario.options["wet"], scenario.options["dry"], scenario.options["budget"],
                   dict(scenario.fixed_velocity), copy.deepcopy(scenario.data.get("sites", {})))

    def replace(self, **changes) -> "Settings":
        return dataclasses.replace(self, **changes)

    def key(self) -> str:
        """A text that differs whenever a run would differ, derived from every field by
        the graph's own token (what a tab's figures were drawn for; it indexes no
        cache: runs are cached by the session's graph)."""
        from ..graph import content_digest, token      # derived from every field
        return content_digest([], repr(token(self)))

    def for_site(self, site) -> "Settings":
        """These settings with the site overrides of `site` only: what a run of that
        site's own study takes (a study of one site refuses another site's override,
        so a roughness set at one site stopped every run of the next site chosen)."""
        table = self.overrides.get(site)
        return self.replace(overrides={site: copy.deepcopy(table)} if table else {})

    def run_args(self) -> dict:
        """Keyword arguments of :meth:`workbench.pipeline.Study.run`."""
        return {"wet_options": self.wet, "dry_options": self.dry,
                "budget_options": self.budget, "fixed_velocity": dict(self.fixed_velocity),
                "overrides": copy.deepcopy(self.overrides)}


@dataclass(frozen=True)
class Assumption:
    """One assumption: how to show it, read it and change it.

    Attributes
    ----------
    key : str
        Unique name, e.g. ``"wet.detection_limit"``.
    label : str
        Text beside the control (with the unit in brackets where there is one).
    group : str
        Section of the app's controls.
    kind : {"choice", "float", "optional_float", "bool"}
        ``optional_float`` may be None (the model or the catalogue decides).
    stage : {"wet", "dry", "budget"}
        The first computation stage the assumption touches: "dry" means the
        deposition velocities are recomputed (slow), "budget" only the dry-flux
        integration and assembly, "wet" the precipitation chain.
    choices : tuple of (label, value)
    bounds : tuple
        (min, max, step) of a number.
    sweep : tuple
        Default (low, high) of the sensitivity explorer, numbers only.
    get, set : callable
        ``get(settings, site) -> value``; ``set(settings, site, value) -> Settings``.
    """

    key: str
    label: str
    group: str
    kind: str
    stage: str
    get: Callable
    set: Callable
    choices: tuple = ()
    bounds: tuple = ()
    sweep: tuple = ()

    @property
    def values(self) -> list:
        return [v for _, v in self.choices]


def _option(section, name, label, group, kind, choices=(), bounds=(), sweep=(), stage=None):
    def get(s, site):
        return getattr(getattr(s, section), name)

    def set_(s, site, value):
        return s.replace(**{section: dataclasses.replace(getattr(s, section), **{name: value})})

    stage = stage or section
    return Assumption(f"{section}.{name}", label, group, kind, stage, get, set_, choices, bounds,
                      sweep)


def _fixed(sp):
    def get(s, site):
        return s.fixed_velocity.get(sp)

    def set_(s, site, value):
        fv = dict(s.fixed_velocity)
        if value is None:
            fv.pop(sp, None)
        else:
            fv[sp] = float(value)
        return s.replace(fixed_velocity=fv)

    return Assumption(f"fixed_velocity.{sp}", f"fixed Vd of {sp} [cm/s]", "fixed-velocity what-ifs",
                      "optional_float", "budget", get, set_, bounds=(0.0, MAX_FIXED_VD_CM_S, 0.01),
                      sweep=(0.05, 2.0))


def _site_override(key, label, bounds, sweep):
    def get(s, site):
        return s.overrides.get(site, {}).get(key)

    def set_(s, site, value):
        over = copy.deepcopy(s.overrides)
        table = dict(over.get(site, {}))
        if value is None:
            table.pop(key, None)
        else:
            table[key] = float(value)
        over[site] = table
        return s.replace(overrides=over)

    return Assumption(f"site.{key}", label, "surface", "optional_float", "dry", get, set_,
                      bounds=bounds, sweep=sweep)


def _fine_fraction(sp):
    def get(s, site):
        return s.dry.mode_of(sp).fine_fraction

    def set_(s, site, value):
        modes = dict(s.dry.particle_modes)
        modes[sp] = dataclasses.replace(s.dry.mode_of(sp), fine_fraction=float(value))
        return s.replace(dry=dataclasses.replace(s.dry, particle_modes=modes))

    return Assumption(f"particles.{sp}.fine_fraction", f"{sp} fine-mode mass fraction [1]",
                      "particles", "float", "dry", get, set_, bounds=(0.0, 1.0, 0.05),
                      sweep=(0.0, 1.0))


def _mode_size(which, label, bounds, sweep):
    def get(s, site):
        return round(getattr(s.dry.mode_of(PARTICLE_SPECIES[0]), which).mmd * UM_PER_M, SIZE_DIGITS)

    def set_(s, site, value):
        modes = dict(s.dry.particle_modes)
        for sp in PARTICLE_SPECIES:
            spec = s.dry.mode_of(sp)
            mode = dataclasses.replace(getattr(spec, which), mmd=float(value) / UM_PER_M)
            modes[sp] = dataclasses.replace(spec, **{which: mode})
        return s.replace(dry=dataclasses.replace(s.dry, particle_modes=modes))

    return Assumption(f"particles.{which}_mmd", label, "particles", "float", "dry", get, set_,
                      bounds=bounds, sweep=sweep)


def _seasonal_category():
    """The seasonal category; "automatic" stands for None (a drop-down shows no None)."""
    def get(s, site):
        sc = s.dry.seasonal_category
        return "automatic" if sc is None else sc

    def set_(s, site, value):
        value = None if value == "automatic" else value
        return s.replace(dry=dataclasses.replace(s.dry, seasonal_category=value))

    return Assumption("dry.seasonal_category", "seasonal category", "surface", "choice", "dry",
                      get, set_, SEASONAL_CATEGORIES)


def _build() -> dict:
    qa = "QA actions"
    comp = "completeness"
    items = [
        _option("wet", "on_ion_balance_fail", "ion balance fails", qa, "choice", _FLAG_EXCLUDE),
        _option("wet", "on_conductivity_fail", "conductivity fails", qa, "choice", _FLAG_EXCLUDE),
        _option("wet", "on_contamination", "contamination", qa, "choice", _FLAG_EXCLUDE),
        _option("wet", "on_dust", "soil dust", qa, "choice", _FLAG_EXCLUDE),
        _option("wet", "on_capture_fail", "capture out of range", qa, "choice", _FLAG_EXCLUDE),
        _option("wet", "detection_limit", "precipitation below detection", "detection limits",
                "choice", _LIMIT),
        _option("budget", "air_censored", "air below detection", "detection limits", "choice",
                _LIMIT),
        _option("wet", "min_gauge_fraction", "gauge record [share]", comp, "float",
                bounds=(0.0, 1.0, 0.05), sweep=(0.5, 1.0)),
        _option("wet", "min_coverage_fraction", "sample coverage [share]", comp, "float",
                bounds=(0.0, 1.0, 0.05), sweep=(0.5, 1.0)),
        _option("wet", "min_valid_precip_fraction", "precipitation with valid chemistry [share]",
                comp, "float", bounds=(0.0, 1.0, 0.05), sweep=(0.3, 1.0)),
        _option("budget", "min_air_coverage", "air concentration coverage [share]", comp, "float",
                bounds=(0.0, 1.0, 0.05), sweep=(0.5, 1.0)),
        _option("budget", "require_all_seasons", "every season has air data", comp, "bool",
                choices=(("yes", True), ("no", False))),
        _option("wet", "period_fill", "fill of failing wet periods", comp, "choice",
                (("none", "none"), ("seasonal mean", "seasonal"))),
        _option("budget", "sulfate_basis", "sulfate basis", "sea salt", "choice",
                (("non-sea-salt", "nss"), ("total", "total"))),
        _option("wet", "seasalt_tracer", "sea-salt tracer", "sea salt", "choice",
                (("Na", "Na"), ("Mg", "Mg"), ("Cl", "Cl"))),
        _option("dry", "wetness_rule", "surface wetness rule", "surface", "choice",
                tuple((r.replace("_", " "), r) for r in WETNESS_RULES)),
        _seasonal_category(),
        _site_override("roughness_length_m", "roughness length z0 of the site [m]",
                       (0.0001, 5.0, 0.01), (0.01, 2.0)),
        _mode_size("fine", "fine-mode MMD [um]", (0.05, 2.5, 0.05), (0.1, 1.0)),
        _mode_size("coarse", "coarse-mode MMD [um]", (1.0, 20.0, 0.5), (2.0, 10.0)),
        *[_fine_fraction(sp) for sp in PARTICLE_SPECIES],
        _option("dry", "particle_settling", "particle settling", "particles", "choice",
                (("Stokes' law (Zhang 2001)", "stokes"),
                 ("Clift & Gauvin drag (1970)", "clift_gauvin"))),
        _option("budget", "pair_split", "gas/particle split of the nitrate and ammonium pairs",
                "gas/particle pairs", "choice",
                (("as measured", "measured"), ("all as gas", "all_gas"),
                 ("all as particle", "all_particle"))),
        _option("dry", "nh3_treatment", "NH3 exchange", "ammonia", "choice", NH3_TREATMENTS),
        *[_fixed(sp) for sp in FIXED_SPECIES],
    ]
    return {a.key: a for a in items}


#: Every assumption by key, in the order of the app's controls.
ASSUMPTIONS = _build()


def apply(settings: Settings, site: str, changes: dict) -> Settings:
    """Settings with several assumptions changed (``{key: value}``)."""
    for key, value in changes.items():
        settings = ASSUMPTIONS[key].set(settings, site, value)
    return settings


#: Names of the roughness rules of :data:`workbench.surface.roughness.RULE`, in words,
#: with their published sources (the module's docstring).
_RULE_WORDS = {"forest": "forest rule, Raupach 1994", "canopy": "canopy rule, Brutsaert 1982",
               "urban": "urban rule, Grimmond and Oke 1999",
               "smooth": "smooth surface, Davenport-Wieringa class"}


def roughness_in_force(record, table: dict, dry: DryOptions) -> tuple:
    """The roughness length of a site's own surface when the app sets none, and its
    source in words.

    The order is the engine's (:func:`workbench.surface.roughness.land_use_roughness`):
    the site's ``roughness_length_m`` of sites.toml, else the scenario's ``[dry]
    roughness`` for the class, else the class rule on the canopy height (the
    scenario's ``[sites.<id>] canopy_height_m`` where it gives one).

    Parameters
    ----------
    record : workbench.io.sites.Site
        The site as sites.toml has it.
    table : dict
        The site's override table of the settings (``[sites.<id>]`` and the app's
        changes); its ``roughness_length_m`` is ignored (that is the value set).
    dry : DryOptions

    Returns
    -------
    (float or None, str)
        z0 [m], None over open water (z0 follows u*, Charnock 1955), and e.g.
        ``"forest rule, Raupach 1994: 0.073 x canopy height 12 m"``.
    """
    from ..surface.roughness import RULE, land_use_roughness
    lu = record.land_use
    if record.roughness_length_m is not None:
        return float(record.roughness_length_m), f"roughness_length_m of {record.id} in sites.toml"
    tab = (dry.roughness.get(lu) or (None, None))[0]
    if tab is not None:
        return float(tab), f"the scenario's [dry] roughness for {lu}"
    rule = RULE[lu]
    if rule == "charnock":
        return None, "open water: z0 follows u* (Charnock 1955), no fixed value"
    h = float(table.get("canopy_height_m", record.canopy_height_m))
    z0 = float(land_use_roughness(lu, h)[0])
    where = (f"canopy height of [sites.{record.id}] in the scenario" if "canopy_height_m" in table
             else "canopy height")
    if rule == "smooth":
        return z0, f"{lu}: {_RULE_WORDS[rule]}"
    f = _rule_fraction(rule)
    if not h > 0 or abs(z0 - f * h) > 1e-9 * max(z0, 1.0):     # the smooth floor
        return z0, f"{lu}: {_RULE_WORDS[rule]}, its floor for a {where} of {h:g} m"
    return z0, f"{lu}: {_RULE_WORDS[rule]}, {f:.3g} x {where} {h:g} m"


def _rule_fraction(rule) -> float:
    from ..surface.roughness import CANOPY_RULE, FOREST_RULE, URBAN_RULE
    return {"forest": FOREST_RULE, "canopy": CANOPY_RULE, "urban": URBAN_RULE}[rule][0]
