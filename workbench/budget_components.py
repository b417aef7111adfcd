"""What a site budget is made of: its components, the parts of its derived sums, the
completeness fractions reported beside each component and what it leaves out (used
by :mod:`workbench.budget` and its modules; re-exported there).

Components are amounts of element [mol m-2]; every S and N species holds one atom.
"""
from __future__ import annotations

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


#: The components behind the derived sums of summary.csv (docs/budget.md, "Components
#: and units"); the potential acidity takes every S and N component.
DERIVED_PARTS = {"oxidized_N": OXIDIZED_N, "reduced_N": REDUCED_N,
                 "potential_acidity": tuple(c[2] for c in COMPONENTS if c[0] == "S")
                 + OXIDIZED_N + REDUCED_N}
