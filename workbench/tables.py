"""Tidy tables of a budget for export and display (``budget.csv``, ``summary.csv``,
the span mean).

Where the parts are: the rows of budget.csv (:data:`BUDGET_COLUMNS`,
:func:`budget_table` and its wet, NH3 and sulfate-basis columns) in
:mod:`workbench.tables_budget`; the span mean (:func:`span_table`,
:func:`fullest_years`, :data:`SPAN_STATUS_WORDS`) in :mod:`workbench.tables_span`;
summary.csv (:func:`summary_table`) in :mod:`workbench.tables_summary`.  This module
re-exports them all, so that ``workbench.tables.<name>`` keeps working.
"""
from __future__ import annotations

# the rows of budget.csv (defined here before)
from .tables_budget import (BUDGET_COLUMNS, SULFATE_BASIS_WORDS, _SUM_KEYS,  # noqa: F401
                            _labels, _nh3_columns, _rows, _sorted, _sulfate_basis,
                            _sum_notes, _wet_columns, budget_table)
# the span mean (defined here before)
from .tables_span import (FEWER_PARTS_NOTE, SPAN_STATUS_WORDS, _notes_by_year,  # noqa: F401
                          _union_of_parts, fullest_years, span_table)
# summary.csv (defined here before)
from .tables_summary import _values_beside_quantiles, summary_table  # noqa: F401
