"""Trends over the years: Mann-Kendall with Sen's slope on annual values, and the
seasonal Kendall test on monthly values with the Hirsch and Slack (1984) correction for
serial dependence among the seasons.

The statistics are vectorized over the pairs of values (broadcast differences).  The
table of a run (:func:`trend_table`) indexes all series at once (one groupby for the
series, one for the monthly grids) and computes every series' statistics in one batch
(:mod:`.trends_batch`, the same numbers as the functions here, which stay the
reference): a network has thousands of series, and a call per series used to dominate
the writing of a run.

Where the parts are: the tests of one series (:class:`TrendResult`,
:func:`mann_kendall`, :func:`hamed_rao`, :func:`hirsch_slack_covariance`,
:func:`seasonal_kendall`, :data:`MIN_YEARS`, :data:`ALPHA`) in
:mod:`workbench.analysis.trends_stats`; the notes of the rows
(:func:`detection_limit_notes`, the words of a note) in
:mod:`workbench.analysis.trends_notes`; the table of a run (:func:`trend_table`, its
columns) in :mod:`workbench.analysis.trends_table`; the changes of method in
:mod:`workbench.analysis.trend_changes`.  This module re-exports them all, so that
``workbench.analysis.trends.<name>`` keeps working.
"""
from __future__ import annotations

from .trend_changes import CHANGE_NOTE, _change_columns, change_notes  # noqa: F401
from .trends_batch import EXACT_MAX_N, exact_min_p, exact_p  # noqa: F401  (few values)
from .trends_batch import (SEASON_SHARE, TIE_RTOL, _average_ranks,  # noqa: F401
                           _detrended, seasonal_years)
# the notes of the rows (defined here before)
from .trends_notes import (GAP, NO_PERCENT, NO_PERCENT_ZERO, NO_TEST, P_HELD,  # noqa: F401
                           _SPECIES_OF, _dl_note, _flags, _gap_notes, _left_out_notes,
                           _note, detection_limit_notes)
# the tests of one series (defined here before)
from .trends_stats import (ALPHA, MIN_YEARS, TrendResult, _hamed_rao, _p,  # noqa: F401
                           _pairs, _slope_interval, _tie_sums, _tie_variance, _z,
                           hamed_rao, hirsch_slack_covariance, mann_kendall,
                           seasonal_kendall)
# the table of a run (defined here before)
from .trends_table import (HAMED_RAO_COLUMNS, KEYS, SERIAL_CORRECTIONS,  # noqa: F401
                           TREND_COLUMNS, VARIANTS, _annual_columns,
                           _annual_rows_per_series, _monthly_columns, _row,
                           _series_index, _table_rows, trend_table)
