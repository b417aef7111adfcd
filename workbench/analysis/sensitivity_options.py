"""Options of the global sensitivity analysis (scenario section ``[sensitivity]``).

Kept apart from :mod:`workbench.analysis.sensitivity` so that the scenario module can
validate the section without importing the pipeline (no import cycle).
"""
from __future__ import annotations

from dataclasses import asdict, dataclass, field

from ..budget import PARTICLES
from .layer import DRY_SPECIES
from .uncertainty_options import DEFAULT_NH3_GAMMA_GSD, DEFAULT_VD_GSD

#: The outputs: (element, quantity, key of :func:`totals_of`) [mol m-2; eq ha-1 for acidity].
OUTPUTS = (("S", "wet", "S_wet"), ("S", "dry", "S_dry"), ("S", "total", "S_total"),
           ("N", "wet", "N_wet"), ("N", "dry", "N_dry"), ("N", "total", "N_total"),
           ("S+N", "potential_acidity", "potential_acidity"))
LINEAR = (("gauge_catch", "precip_conc", "air_conc") + tuple(f"vd_{sp}" for sp in DRY_SPECIES)
          + ("bulk_wet_factor",))
#: Range of the ``bulk_wet_factor`` multiplier where it is added to the default factors
#: (:func:`workbench.analysis.sensitivity.with_bulk_factor`): +-1 SD of the Monte
#: Carlo's ``bulk_factor_rel_sd`` default 0.1 (from memory: wet-only / bulk ratios of
#: rural sites spread over roughly 0.7-0.9 around 0.8), as the Vd factors span +-1 GSD.
BULK_FACTOR_RANGE = (0.9, 1.1)
WETNESS = ("met", "inferred", "always_dry", "always_wet")
#: Range of an ``rc_scale_<gas>`` factor named with an empty range: a factor of 2 either
#: way (our choice, common practice for a resistance known to within about a factor 2).
RC_SCALE_RANGE = (0.5, 2.0)


class FactorError(ValueError):
    """A bad entry of ``[sensitivity] factors``.

    ``option_key`` ("factors") and ``option_item`` (the factor's name) let the scenario's
    message point at the factor's own line and name it (``sensitivity.factors.vd_S02``);
    before, a misspelt factor was placed on the line of ``sites`` (the first key of the
    section) and a bad range on the ``[sensitivity.factors]`` header.
    """

    option_key = "factors"

    def __init__(self, message: str, factor):
        super().__init__(message)
        self.option_item = str(factor)


def factor_names() -> list:
    """Every factor name :func:`factor_kind` accepts, the patterns written out (for the
    "did you mean" of a misspelt one)."""
    from ..landuse import LAND_USE
    from ..species import AIR_GASES
    return (list(LINEAR) + ["wetness_rule"]
            + [f"{pre}{p}" for pre in ("fine_fraction_", "fine_mmd_") for p in PARTICLES]
            + [f"z0_{lu}" for lu in LAND_USE] + [f"rc_scale_{g}" for g in AIR_GASES]
            + [f"nh3_gamma_{lu}" for lu in LAND_USE])


def _powers_of_two_near(n: int) -> str:
    """``"64 or 128"``: the powers of 2 either side of `n`; ``"2"`` below 2 (the least
    base sample SALib takes)."""
    if n < 2:
        return "2"
    below = 1 << (int(n).bit_length() - 1)
    return f"{below} or {below * 2}"


#: Largest end of an ``nh3_gamma_<land use>`` range read as a multiplier (our choice):
#: ten times beyond the +-1 GSD of ``nh3_gamma_gsd`` (3), far past the scatter of
#: measured Gamma_s within one kind of surface; a larger end is an absolute Gamma_s
#: written as before the factor became a multiplier, refused with the multiplier meant.
NH3_GAMMA_MAX_MULTIPLIER = 100.0


def nh3_gamma_range(land_use: str) -> tuple:
    """Range of an ``nh3_gamma_<land use>`` factor named with an empty range [1]: a
    multiplier of the Gamma_s in force over +-1 GSD of the Monte Carlo's
    ``nh3_gamma_gsd`` default (3, our choice, from memory of Massad et al. 2010), as
    the Vd factors span +-1 GSD.  The factor multiplies the class's Gamma_s wherever it
    is in force: the class default
    (:data:`workbench.drydep.nh3_bidirectional.EMISSION_POTENTIAL`), the scenario's
    ``[dry] nh3_emission_potential`` for the class or for ``"<site>/<class>"``, or a
    site's own value in sites.toml (:func:`workbench.analysis.sensitivity.apply_engine`).
    Before, the range was the class default times/over the GSD, taken as Gamma_s
    itself, and explored values that were not the ones in force where the scenario or
    a site overrode the class; a class with different values at different sites has
    one range only as a multiplier.

    >>> nh3_gamma_range("crops")
    (0.333, 3.0)
    """
    check_gamma_acts(land_use, [])
    return (round(1.0 / DEFAULT_NH3_GAMMA_GSD, 3), float(DEFAULT_NH3_GAMMA_GSD))


def check_gamma_acts(land_use: str, given) -> None:
    """Refuse an ``nh3_gamma_<land use>`` factor of a class without a canopy
    (:class:`FactorError`, on the factor's own line): the bidirectional model leaves
    such a class deposition-only (:data:`workbench.drydep.nh3_bidirectional.VEGETATED`)
    whatever its Gamma_s, so a multiplier of it has nothing to act on.  `given` is the
    range as written (``[]`` or ``[low, high]``).  Before, an explicit range on such a
    class was taken, without a note, and its indices read as a measured nil effect.
    """
    from ..drydep.nh3_bidirectional import EMISSION_POTENTIAL, VEGETATED
    g = float(EMISSION_POTENTIAL[land_use])
    if land_use not in VEGETATED or not g > 0:
        shown = [v for v in given]
        raise FactorError(f"SensitivityOptions.factors.nh3_gamma_{land_use} = {shown}: the "
                          f"class has no stomatal emission potential by default (Gamma_s "
                          f"{g:g}; no canopy: the bidirectional model leaves it "
                          "deposition-only), so a multiplier of it has nothing to act on; "
                          "leave the factor out", f"nh3_gamma_{land_use}")


def _default_factors() -> dict:
    """Vd multipliers over +-1 GSD of the Monte Carlo defaults (Flechard et al. 2011, from
    memory), +-10 % for gauge catch and the two concentration calibrations (common
    practice, from memory)."""
    out = {f"vd_{sp}": (round(1 / g, 3), g) for sp, g in DEFAULT_VD_GSD.items()}
    out.update({"gauge_catch": (0.9, 1.1), "precip_conc": (0.9, 1.1), "air_conc": (0.9, 1.1)})
    return out


@dataclass(frozen=True)
class SensitivityOptions:
    """The global sensitivity analysis (scenario section ``[sensitivity]``).

    Attributes
    ----------
    samples : int
        Base sample N of Saltelli's scheme (a power of 2); N (k + 2) model runs for k
        factors.  64 (common practice: enough for the ranking of ~10 factors; the
        confidence intervals say when it is not).
    seed : int
        Seed of the Sobol sequence's scrambling and of the bootstrap.
    factors : dict
        factor name -> [low, high] (a uniform range) or, for ``wetness_rule``, a list
        of rules; ``rc_scale_<gas>`` named with ``[]`` takes [0.5, 2.0],
        ``nh3_gamma_<land use>`` (a multiplier of the class's Gamma_s in force at
        each site) named with ``[]`` +-1 GSD of the Monte Carlo's ``nh3_gamma_gsd``
        (:func:`nh3_gamma_range`).  Default: the Vd of every dry species over +-1 GSD of the
        ``[uncertainty]`` defaults, gauge catch and the concentrations +-10 %, and,
        where a site analysed has bulk-collector samples under ``bulk_correction =
        "scale_wet"``, ``bulk_wet_factor`` (a multiplier of every ion's factor) over
        [0.9, 1.1] (:func:`workbench.analysis.sensitivity.with_bulk_factor`).
    sites : list
        Sites to analyse (empty: every site).
    receptors : list
        Receptor surfaces (empty: every active one).
    """

    samples: int = 64
    seed: int = 12345
    factors: dict = field(default_factory=_default_factors)
    sites: tuple = ()
    receptors: tuple = ()

    def __post_init__(self):
        for name in ("samples", "seed"):
            v = getattr(self, name)
            if isinstance(v, bool) or int(v) != v or v < 0:
                raise ValueError(f"SensitivityOptions.{name} = {v!r} must be an integer >= 0")
            object.__setattr__(self, name, int(v))
        if self.samples < 2 or self.samples & (self.samples - 1):
            # Saltelli's scheme on a Sobol sequence keeps its balance at powers of 2 only
            # (SALib warns and goes on otherwise): the nearest ones, and what N costs
            raise ValueError(f"SensitivityOptions.samples = {self.samples} must be a power of 2 "
                             f"(e.g. {_powers_of_two_near(self.samples)}; the model runs "
                             "N (k + 2) times for k factors)")
        def empty(k, v):          # a factor named with [] takes its default range
            if len(v):
                return v
            if str(k).startswith("rc_scale_"):
                return RC_SCALE_RANGE
            if str(k).startswith("nh3_gamma_") and factor_kind(k) == "nh3_gamma":
                return nh3_gamma_range(str(k)[len("nh3_gamma_"):])
            return v
        object.__setattr__(self, "factors", {k: empty(k, v) for k, v in self.factors.items()})
        if len(self.factors) < 2:
            raise ValueError("SensitivityOptions.factors needs at least 2 factors")
        for name, rng in self.factors.items():
            kind = factor_kind(name)
            if kind == "wetness_rule":
                bad = [r for r in rng if r not in WETNESS]
                if bad or len(rng) < 2:
                    raise FactorError(f"SensitivityOptions.factors.wetness_rule: {list(rng)} "
                                      f"must list 2 or more of {WETNESS}", name)
                continue
            if (len(rng) != 2 or not all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                         for v in rng)
                    or not 0 <= rng[0] < rng[1] < float("inf")):
                raise FactorError(f"SensitivityOptions.factors.{name} = {list(rng)} must be "
                                  "[low, high] with 0 <= low < high, both finite (a factor "
                                  "held fixed is left out of the table, not given low = high)",
                                  name)
            if kind == "rc_scale" and not rng[0] > 0:
                raise FactorError(f"SensitivityOptions.factors.{name}: a multiplier of Rc "
                                  "must be > 0", name)
            if kind == "nh3_gamma":
                check_gamma_acts(name[len("nh3_gamma_"):], rng)
            if kind == "nh3_gamma" and rng[1] > NH3_GAMMA_MAX_MULTIPLIER:
                raise FactorError(f"SensitivityOptions.factors.{name} = {list(rng)}: a "
                                  "multiplier of the class's Gamma_s in force (the default, "
                                  "the scenario's or the site's), at most "
                                  f"{NH3_GAMMA_MAX_MULTIPLIER:g}; not Gamma_s itself (e.g. "
                                  f"{list(nh3_gamma_range('crops'))}, the Monte Carlo's "
                                  "+-1 GSD)", name)
            if kind == "fine_fraction" and rng[1] > 1:
                raise FactorError(f"SensitivityOptions.factors.{name}: a fraction is at most 1",
                                  name)

    @classmethod
    def from_dict(cls, given: dict) -> "SensitivityOptions":
        given = dict(given)
        if "factors" in given:
            given["factors"] = {k: tuple(v) for k, v in given["factors"].items()}
        for k in ("sites", "receptors"):
            if k in given:
                given[k] = tuple(given[k])
        return cls(**given)

    def to_dict(self) -> dict:
        return asdict(self)


def factor_kind(name: str) -> str:
    """``linear``, ``wetness_rule``, ``fine_fraction``, ``fine_mmd``, ``z0``,
    ``rc_scale`` or ``nh3_gamma``; an unknown name raises :class:`FactorError` with the
    nearest known one."""
    from ..errors import suggest
    if name in LINEAR:
        return "linear"
    if name == "wetness_rule":
        return name
    hint = suggest(name, factor_names())
    for prefix in ("fine_fraction_", "fine_mmd_"):
        if name.startswith(prefix):
            if name[len(prefix):] not in PARTICLES:
                raise FactorError(f"unknown particle in factor {name!r}; expected one of "
                                  f"{', '.join(PARTICLES)}{hint}", name)
            return prefix[:-1]
    if name.startswith("z0_"):
        from ..landuse import LAND_USE
        # a class not in the table was taken and never reached a receptor: indices 0
        # that read as "no effect"
        if name[len("z0_"):] not in LAND_USE:
            raise FactorError(f"unknown land-use class in factor {name!r}; expected one of "
                              f"{', '.join(LAND_USE)}{hint}", name)
        return "z0"
    if name.startswith("rc_scale_"):
        from ..species import AIR_GASES
        if name[len("rc_scale_"):] not in AIR_GASES:
            raise FactorError(f"unknown gas in factor {name!r}; expected one of "
                              f"{', '.join(AIR_GASES)}{hint}", name)
        return "rc_scale"
    if name.startswith("nh3_gamma_"):
        from ..landuse import LAND_USE
        if name[len("nh3_gamma_"):] not in LAND_USE:
            raise FactorError(f"unknown land-use class in factor {name!r}; expected one of "
                              f"{', '.join(LAND_USE)}{hint}", name)
        return "nh3_gamma"
    raise FactorError(f"unknown sensitivity factor {name!r}; expected one of "
                      f"{', '.join(LINEAR)}, wetness_rule, fine_fraction_<particle>, "
                      "fine_mmd_<particle>, z0_<land use>, rc_scale_<gas>, "
                      f"nh3_gamma_<land use>{hint}", name)


#: Amount of the tornado's outputs by element (a period's deposition, as the budget's
#: ``flux_kg_ha`` and ``flux_eq_ha``); :func:`output_unit` adds the period.
OUTPUT_AMOUNTS = {"S": "kg S ha-1", "N": "kg N ha-1", "S+N": "eq ha-1"}
#: The period of a resolution as a unit: the deposition of one whole period is that
#: amount per period (periods are whole calendar periods, :func:`workbench.periods.
#: make_periods`); custom periods have lengths of their own.
PERIOD_UNITS = {"year": "yr-1", "hydro_year": "yr-1", "month": "month-1",
                "season": "season-1"}


def output_unit(element: str, resolution: str = "year") -> str:
    """Unit of the tornado's outputs of `element` at a reporting `resolution`, e.g.
    ``kg S ha-1 yr-1`` for years (tornado.csv's ``unit`` column; it said "kg S/ha per
    period" whatever the period was).

    >>> output_unit("S"), output_unit("S+N", "month"), output_unit("N", "custom")
    ('kg S ha-1 yr-1', 'eq ha-1 month-1', 'kg N ha-1 per period')
    """
    per = PERIOD_UNITS.get(resolution)
    return f"{OUTPUT_AMOUNTS[element]} {per}" if per else f"{OUTPUT_AMOUNTS[element]} per period"
