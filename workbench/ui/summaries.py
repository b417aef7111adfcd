"""Tables behind the figures: pure functions, a result Dataset in, a DataFrame out.

The figures draw these tables and the apps print them, so that a number on screen can
always be traced to a row here.  Rates are annual rates of the element (kg S or N per
hectare per year, ...) as in ``budget.csv``; monthly amounts are per month.

Where the parts are: the units and the budget tables of one site
(:data:`UNITS`, :func:`component_rates`, :func:`total_rates`, :func:`mean_totals`,
:func:`nh3_line`, :func:`monthly_amounts`) in :mod:`workbench.ui.summaries_budget`;
the change line and the numbers as the apps write them (:func:`change_line`,
:func:`_fmt`) in :mod:`workbench.ui.summaries_change`; the tables by hour of day and
season (:func:`diurnal_velocity`, :func:`resistance_medians`) in
:mod:`workbench.ui.summaries_hours`; the samples not used (:func:`excluded_samples`,
:func:`reason_counts`) in :mod:`workbench.ui.summaries_samples`; the network's tables
(:func:`network_table`, :func:`network_span`, :func:`network_ranking`) in
:mod:`workbench.ui.summaries_network`.  This module re-exports them all, so that
``workbench.ui.summaries.<name>`` keeps working (and a name patched here is the one
the apps import from here at call time).
"""
from __future__ import annotations

from .no_effect import PARTICLES, no_effect_text  # noqa: F401  (its home before)
from .no_effect import IN_BULK_WET, NOT_MEASURED, component_reason  # noqa: F401
# the units and the budget tables of one site (defined here before)
from .summaries_budget import (PATHWAY_WORDS, RANKABLE, UNITS, _as_list,  # noqa: F401
                               _nh3_not_measured, _picker, axis_text, axis_title,
                               component_rates,
                               mean_totals, monthly_amounts, nh3_line, to_unit,
                               total_heading, total_rates)
# the change line (defined here before)
from .summaries_change import (DECIMALS, MAX_DECIMALS, WHOLE_FROM,  # noqa: F401
                               _change_words, _decimals, _fmt, change_line)
# by hour of day and season (defined here before)
from .summaries_hours import (CM_PER_M, HALF_HOUR, _by_hour_season,  # noqa: F401
                              diurnal_velocity, hour_season_slots, hourly_series,
                              local_hour_and_season, resistance_medians, slot_statistic)
# the network's tables (defined here before)
from .summaries_network import network_ranking, network_span, network_table  # noqa: F401
# the samples not used (defined here before)
from .summaries_samples import excluded_samples, in_span, reason_counts  # noqa: F401
