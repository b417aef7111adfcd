"""Widgets shared by the apps: a control per assumption, progress, in-place figures.

Where the parts are: the controls (:func:`make_control`, :class:`OptionalFloat`,
:func:`fit_descriptions`, :func:`fit_options_width`, the widths) in
:mod:`workbench.ui.controls_widgets`; a figure shown in place (:func:`figure_widget`,
:func:`refresh`, :func:`send_changes`, :func:`keep_state`) in
:mod:`workbench.ui.controls_figure`; tables and the caution box (:func:`table_html`,
:func:`caution_box`) in :mod:`workbench.ui.controls_table`; progress, errors in one
line and the saved line of an app (:class:`Progress`, :func:`short_errors`,
:class:`SavedText`, :func:`open_with_progress`) in :mod:`workbench.ui.controls_progress`.
This module re-exports them all, so that ``workbench.ui.controls.<name>`` keeps
working.
"""
from __future__ import annotations

# a figure shown in place (defined here before)
from .controls_figure import (STATIC_LAYOUT, _as_spec, _equal, _flatten,  # noqa: F401
                              _is_object_list, _remember, figure_widget, keep_state,
                              refresh, send_changes, shown_figure)
# progress, errors in one line, the saved line of an app (defined here before)
from .controls_progress import (Progress, SavedText, open_with_progress,  # noqa: F401
                                short_errors)
# tables and the caution box (defined here before)
from .controls_table import (TABLE_CSS, TABLE_ROWS_WHOLE,  # noqa: F401
                             WIDE_COLUMN, caution_box, table_html, table_number)
# the controls (defined here before)
from .controls_widgets import (CONTROL_WIDTH, DEFAULT_LABEL_CHARS,  # noqa: F401
                               DESCRIPTION_WIDTH, DROPDOWN_DEFAULT_PX, DROPDOWN_FRAME_PX,
                               OPTION_CHAR_PX, OptionalFloat, SELECT_CHAR_PX,
                               SELECT_FRAME_PX, WRAP_LABELS_CSS, _walk, css_class,
                               cut_descriptions, fit_descriptions, fit_options_width,
                               make_control, select_room, set_quietly, wrap_labels_style)
