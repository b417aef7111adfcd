"""Figures: pure functions, a budget Dataset (or table) in, a plotly figure out.

Every figure keeps the same traces for the same kind of input (one per component,
season, site ...), so that an app can copy a new figure's data into a displayed
``FigureWidget`` in one batched update (see :func:`workbench.ui.apps.refresh`).
Deposition-velocity figures are in :mod:`workbench.ui.figures_dry`, precipitation
chemistry QA in :mod:`workbench.ui.figures_wet`.

Where the parts are: one site's budget (:func:`budget_bars`, :func:`monthly_fluxes`)
and what every figure shares (:data:`ELEMENTS`, :data:`HEIGHT`, the legend and its
note, :func:`from_spec`, :func:`subplot_layout`, :func:`wrap_text`) in
:mod:`workbench.ui.figures_budget`; the curves of a total against one option
(:func:`sensitivity_curves`, :func:`baseline_line`, :func:`status_note`) in
:mod:`workbench.ui.figures_curves`; the network's totals and ranking
(:func:`network_totals`, :func:`year_ticks`, :func:`network_ranking_bars`,
:func:`ranking_size`) in :mod:`workbench.ui.figures_network`.  This module re-exports
them all, so that ``workbench.ui.figures.<name>`` keeps working.
"""
from __future__ import annotations

# the budget of one site and the parts every figure shares (defined here before)
from .figures_budget import (ELEMENTS, ELEMENT_NAMES, HEIGHT,  # noqa: F401
                             LEGEND_FRAME_PX, LEGEND_LINE_PX, NOTE_CHARS, PANEL_GAP,
                             TOTAL_SYMBOL, _hover_value, _missing_text, annual_rate,
                             budget_bars, budget_bars_spec, from_spec, legend_height,
                             legend_lines, legend_note, monthly_fluxes,
                             monthly_fluxes_spec, subplot_layout, wrap_text)
# the curves of a total against one option (defined here before)
from .figures_curves import (AXIS_CHARS, BASELINE_WIDTH, TITLE_CHARS,  # noqa: F401
                             WHOLE, baseline_line, sensitivity_curves, status_note,
                             title_room)
# the network's totals and ranking (defined here before)
from .figures_network import (EVERY_YEAR_MAX, MARKER_NOTE, NOTEBOOK_PX,  # noqa: F401
                              OPEN_NAME, PLOTLY_MARGIN_PX, RANKING_COLOURS, RANK_AXIS_PX,
                              RANK_BAR_PX, RANK_NOTE_LINE_PX, RANK_PLOT_MIN_PX,
                              RANK_TOP_PX, SITE_DASHES, TOTALS_GAP, TOTALS_HEIGHT,
                              YEAR_ANGLE, YEAR_LABEL_PX, YEAR_STEPS, _rank_label,
                              network_ranking_bars, network_totals, ranking_size,
                              totals_plot_px, year_ticks)
