"""Options of the wet-deposition chain, each with its default and the source of it.

Every default is documented in ``docs/methods_wet.md``; the short source is repeated
beside each field.  Concentrations are in the package's unit, amount of the ion
[mol m-3] (1 mol m-3 = 1000 umol/L).
"""
from __future__ import annotations

import json
import math
from dataclasses import asdict, dataclass, fields

from ..errors import suggest
from ..periods import DEFAULT_HYDRO_START_MONTH

INF = math.inf

#: Acceptance of the ion difference, WMO GAW Report No. 160 (2004), Section 8 (from
#: memory): (upper bound of CE + AN [ueq/L], allowed |ID| [%]).
GAW_ION_BALANCE_TIERS = ((50.0, 60.0), (100.0, 30.0), (500.0, 15.0), (INF, 10.0))
#: Acceptance of the conductivity difference, WMO GAW Report No. 160 (2004),
#: Section 8 (from memory): (upper bound of measured conductivity [uS cm-1], |CD| [%]).
GAW_CONDUCTIVITY_TIERS = ((5.0, 50.0), (30.0, 30.0), (INF, 20.0))

_CHOICES = {
    "detection_limit": ("half", "limit", "zero"),
    "on_ion_balance_fail": ("flag", "exclude"),
    "on_conductivity_fail": ("flag", "exclude"),
    "conductivity_difference_basis": ("measured", "sum"),
    "on_contamination": ("flag", "exclude"),
    "on_dust": ("flag", "exclude"),
    "on_capture_fail": ("flag", "exclude"),
    "on_gross_error": ("flag", "exclude"),
    "period_fill": ("none", "seasonal"),
    "seasalt_tracer": ("Na", "Mg", "Cl"),
    "straddle": ("hours", "met"),
}
_FILL_METHODS = ("collector", "met")


@dataclass(frozen=True)
class WetOptions:
    """All options of precipitation QA, PWMs and wet fluxes.

    Attributes are listed with their unit and the source of the default; see
    ``docs/methods_wet.md`` for the rules they drive.
    """

    # --- detection limits ---------------------------------------------------------
    #: value given to a censored result: half the limit, the limit, or zero
    #: (common practice: half the limit).
    detection_limit: str = "half"

    # --- what a failed check does ---------------------------------------------------
    #: "flag" keeps the sample with its reason (default: dilute samples with
    #: unmeasured organic anions fail honestly), "exclude" drops its chemistry.
    on_ion_balance_fail: str = "flag"
    on_conductivity_fail: str = "flag"
    #: our contamination screens for material that did not fall with the
    #: precipitation (biological, field blank): excluded by default (common
    #: practice: such samples are marked contaminated and kept out of the means).
    on_contamination: str = "exclude"
    #: soil-dust screen: flagged and kept by default (dust deposited with the
    #: precipitation is part of the wet flux; funnel dirt would not be).
    on_dust: str = "flag"
    #: capture ratio outside its range.
    on_capture_fail: str = "flag"
    #: gross errors: an ion difference beyond `gross_ion_difference` or a
    #: concentration above its plausible maximum.  Excluded by default (our rule:
    #: such a value is a unit slip, a sentinel or a typing error, and one such
    #: sample can dominate a period's PWM).
    on_gross_error: str = "exclude"
    #: absolute ion difference [%] beyond which the balance is a gross error: 80 %, the
    #: cations nine times the anions or the reverse, beyond every tier of the
    #: acceptance (60 % at most) with room for an incomplete set of measured ions
    #: (our default).
    gross_ion_difference: float = 80.0
    #: plausible maximum of any ion but Na and Cl [mol m-3] (2000 umol/L; our default:
    #: far above the PWMs of polluted or dusty rain, which stay in the hundreds of
    #: umol/L; common practice to treat such values as gross errors).
    max_concentration: float = 2.0
    #: plausible maximum of Na and Cl [mol m-3] (10 000 umol/L; our default: coastal
    #: spray-laden samples reach a few thousand umol/L).
    max_seasalt_concentration: float = 10.0

    # --- ion balance and conductivity (WMO GAW Report No. 160, 2004; from memory) ---
    ion_balance_tiers: tuple = GAW_ION_BALANCE_TIERS
    conductivity_tiers: tuple = GAW_CONDUCTIVITY_TIERS
    #: denominator of the conductivity difference: "measured" (the measured
    #: conductivity, the form the GAW tiers above are set for; from memory) or "sum"
    #: (calculated + measured, the form used until 2026-12, about twice as lenient).
    conductivity_difference_basis: str = "measured"
    #: add HCO3- in equilibrium with CO2 to the anions (common practice).
    bicarbonate: bool = True
    #: CO2 dry mixing ratio [mol mol-1]; ~420 ppm, the global mean of the early
    #: 2020s (NOAA global monitoring, from memory).
    co2_mixing_ratio: float = 420e-6
    #: temperature at which pH and conductivity are measured [K] (25 degC, the
    #: reference of the conductances).
    lab_temperature: float = 298.15

    # --- capture efficiency (collector depth / gauge depth) -------------------------
    #: acceptable ranges [1] by precipitation type; our defaults (common practice:
    #: wet-only collectors catch most rain but much less snow than a gauge).
    capture_rain: tuple = (0.7, 1.2)
    capture_snow: tuple = (0.3, 1.2)
    capture_mixed: tuple = (0.5, 1.2)
    #: range used when the type is unknown (no meteorology).
    capture_unknown: tuple = (0.5, 1.2)
    #: capture is judged only from this gauge depth up [mm] (common practice).
    capture_min_depth: float = 1.0

    # --- precipitation type from hourly temperature ---------------------------------
    #: hours at or below this air temperature count as snow [K] (1 degC; common
    #: practice, rain-snow thresholds of 0-2 degC).
    snow_temperature: float = 274.15
    #: share of the sample's precipitation in snow hours above which it is snow and
    #: below which (1 - this) it is rain; mixed in between [1] (our default).
    snow_share: float = 0.8

    # --- contamination screens (our own design; thresholds are our defaults) ----------
    #: biological: K, NH4 and PO4 all at or above these [mol m-3] (10, 100, 1 umol/L).
    #: Without a PO4 value, K and NH4 alone only flag the sample (farm rain carries
    #: much NH4 and some K); see docs/methods_wet.md.
    bio_potassium: float = 0.010
    bio_ammonium: float = 0.100
    bio_phosphate: float = 0.001
    #: soil dust: pH at or above this [1] with Ca at or above this [mol m-3] (50 umol/L).
    dust_pH: float = 6.0
    dust_calcium: float = 0.050
    #: field blank: a blank value above this share of the sample's value [1].
    blank_share: float = 0.10

    # --- gauge fill ------------------------------------------------------------------
    #: order of fills for a missing gauge depth: "collector" (collector depth / the
    #: site's median capture ratio), then "met" (hourly precipitation scaled to the gauge).
    gauge_fill: tuple = ("collector", "met")
    #: fewest samples behind a site's median capture ratio or met scale factor [-].
    fill_min_samples: int = 5

    # --- periods and completeness ------------------------------------------------------
    #: first month of the hydrological year (October; US water-year habit).
    hydro_start_month: int = DEFAULT_HYDRO_START_MONTH
    #: how a sample that straddles a period boundary is shared: "hours" (share of its
    #: hours) or "met" (share of its hourly precipitation, falling back to hours).
    straddle: str = "hours"
    #: fraction of the period with a valid gauge record [1]; 90 % (WMO GAW Report
    #: No. 160 "%PCL", the share of the period with a known precipitation depth, as we
    #: recall it; from memory).
    min_gauge_fraction: float = 0.90
    #: fraction of the period covered by valid or dry samples [1]; 90 % (our choice,
    #: stricter than the 75 % of networks' annual criteria, from memory).
    min_coverage_fraction: float = 0.90
    #: fraction of the gauge precipitation with valid chemistry [1]; 70 % (WMO GAW
    #: Report No. 160 "%TP", from memory).
    min_valid_precip_fraction: float = 0.70
    #: fewest valid samples in a period with precipitation [-] (common practice).
    min_valid_samples: int = 1
    #: fill of failed periods: "none", or "seasonal" = the multi-year PWM of the same
    #: season at the site (the whole-record PWM for years and custom ranges).
    period_fill: str = "none"

    # --- sea salt -------------------------------------------------------------------
    #: tracer of sea salt (Keene et al. 1986; Na unless Na has another source).
    seasalt_tracer: str = "Na"

    def __post_init__(self):
        for name, choices in _CHOICES.items():
            value = getattr(self, name)
            if value not in choices:
                raise ValueError(f"WetOptions.{name} = {value!r} is not one of "
                                 f"{', '.join(map(repr, choices))}{suggest(value, choices)}")
        for name in ("ion_balance_tiers", "conductivity_tiers"):
            tiers = tuple(tuple(float(x) for x in t) for t in getattr(self, name))
            bounds = [b for b, _ in tiers]
            if not tiers or bounds != sorted(bounds) or bounds[-1] != INF:
                raise ValueError(f"WetOptions.{name} must be increasing (bound, limit) "
                                 "pairs ending with an infinite bound")
            object.__setattr__(self, name, tiers)
        for name in ("capture_rain", "capture_snow", "capture_mixed", "capture_unknown"):
            lo, hi = (float(x) for x in getattr(self, name))
            if not 0 <= lo < hi:
                raise ValueError(f"WetOptions.{name} must be (low, high) with 0 <= low < high")
            object.__setattr__(self, name, (lo, hi))
        fills = tuple(getattr(self, "gauge_fill"))
        bad = [f for f in fills if f not in _FILL_METHODS]
        if bad:
            raise ValueError(f"WetOptions.gauge_fill: unknown method {bad[0]!r}; expected "
                             f"a sequence of {', '.join(map(repr, _FILL_METHODS))}")
        object.__setattr__(self, "gauge_fill", fills)
        for name in ("min_gauge_fraction", "min_coverage_fraction",
                     "min_valid_precip_fraction", "snow_share"):
            if not 0 <= getattr(self, name) <= 1:
                raise ValueError(f"WetOptions.{name} must lie in [0, 1]")
        if not 1 <= int(self.hydro_start_month) <= 12:
            raise ValueError("WetOptions.hydro_start_month must be 1..12")

    def to_dict(self) -> dict:
        """The options as plain JSON-able values (infinite bounds written "inf")."""
        def clean(v):
            if isinstance(v, float) and math.isinf(v):
                return "inf"
            if isinstance(v, (tuple, list)):
                return [clean(x) for x in v]
            return v
        return {k: clean(v) for k, v in asdict(self).items()}

    def to_json(self) -> str:
        """The options as a JSON text (for provenance attributes)."""
        return json.dumps(self.to_dict(), sort_keys=True)

    @classmethod
    def from_dict(cls, values: dict) -> "WetOptions":
        """Build options from a mapping (a scenario section); unknown keys are errors.

        >>> WetOptions.from_dict({"detection_limit": "zero"}).detection_limit
        'zero'
        """
        names = {f.name for f in fields(cls)}
        unknown = [k for k in values if k not in names]
        if unknown:
            raise ValueError(f"unknown wet option {unknown[0]!r}{suggest(unknown[0], names)}")
        conv = {}
        for k, v in values.items():
            if isinstance(v, list):
                v = tuple(tuple(INF if x == "inf" else x for x in t) if isinstance(t, list)
                          else t for t in v)
            conv[k] = v
        return cls(**conv)
