"""Options of the budget assembly and the dry-flux integration (:class:`BudgetOptions`,
the scenario's ``[budget]``) and the error of a refused combination
(:class:`BudgetError`); re-exported by :mod:`workbench.budget`.
"""
from __future__ import annotations

from dataclasses import asdict, dataclass, field

from .budget_components import BULK_IONS
from .dryflux import DryFluxOptions
from .errors import WorkbenchError, suggest


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

    def flux_options(self) -> DryFluxOptions:
        return DryFluxOptions(censored=self.air_censored, min_slot_hours=self.min_slot_hours,
                              diurnal_profile=dict(self.diurnal_profile),
                              preferred_method=dict(self.preferred_method))
