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

Where the parts are: the components, the parts of the derived sums, the fractions and
the omissions in :mod:`workbench.budget_components`; :class:`BudgetOptions` and
:class:`BudgetError` in :mod:`workbench.budget_options`; the inputs put on the
budget's axes and :func:`annual_factor` in :mod:`workbench.budget_axes`;
:func:`assemble` in :mod:`workbench.budget_assembly`; :func:`combine_status`, the sum
of the values present and the totals in :mod:`workbench.budget_totals`;
:func:`derived` and :func:`derived_status` in :mod:`workbench.budget_derived`.  This
module re-exports them all, so that ``workbench.budget.<name>`` keeps working.
"""
from __future__ import annotations

# the inputs on the budget's axes (defined here before)
from .budget_axes import (_collector_split_on, _dry_on_receptors, _same_axis,  # noqa: F401
                          _season_ok, _wet_bulk_share, annual_factor)
# the assembly (defined here before)
from .budget_assembly import assemble  # noqa: F401
# what a budget is made of (defined here before)
from .budget_components import (BULK_CAUGHT_IN, BULK_IONS, COMPONENTS,  # noqa: F401
                                DERIVED_PARTS, FRACTIONS, OMISSIONS, OXIDIZED_N,
                                PAIRS, PARTICLES, REDUCED_N, STATUS_ORDER)
# the derived quantities (defined here before)
from .budget_derived import (derived, derived_status, derived_status_variables,  # noqa: F401
                             nitrogen_forms, potential_acidity, with_derived_status)
# the options (defined here before)
from .budget_options import BudgetError, BudgetOptions  # noqa: F401
# the sums and their status (defined here before)
from .budget_totals import _totals, add_totals, combine_status, sum_present  # noqa: F401
