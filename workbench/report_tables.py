"""The report's numbers and tables: numbers in plain notation, tables headed in words
with units, the pivot of periods with each total's status mark; re-exported by
:mod:`workbench.report`."""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .column_labels import header_cell
from .report_numbers import (DIGITS, ROUNDING_FLOOR, number,  # noqa: F401
                             plain, table_formatters)


def _table_html(frame: pd.DataFrame, float_format=None, labels=None) -> str:
    """A table of the report: its CSV columns headed in words with units and their CSV
    name (:mod:`workbench.column_labels`; `labels` maps a column to this table's own
    words), the numbers by :func:`workbench.report_numbers.number` (a quantity, its
    thousands separated: counts of rows and samples too, which printed 280344) or as they
    are where the column names something (a year, a code: ``table_formatters``)."""
    fmt = plain if float_format is None else (lambda v: float_format.format(v))
    # a named column axis (a pivot's "status") is written as an empty column of its own
    frame = frame.rename_axis(columns=None)
    text = frame.to_html(index=False, border=0, classes="tab", na_rep="–", float_format=fmt,
                         formatters=table_formatters(frame, float_format))
    return _headed(text, frame.columns, labels)


def _headed(text: str, columns, labels=None) -> str:
    """`text` (one table of pandas' ``to_html``) with its header row made by
    :func:`workbench.column_labels.header_cell`."""
    labels = labels or {}
    row = "".join(header_cell(c, labels.get(c)) for c in columns)
    return re.sub(r"<thead>.*?</thead>", lambda m: f"<thead><tr>{row}</tr></thead>", text,
                  count=1, flags=re.S)


_MARK = {"complete": "", "flagged": " f", "partial": " p", "filled": " ~", "missing": ""}


#: The mark of a total that fails completeness (``passes`` false).
_FAILS_MARK = " x"


def _lacks(row) -> bool:
    """The row's sum lacks a component (a flagged total may: flagged wins over partial)."""
    m = row.get("missing_components")
    return isinstance(m, str) and m.strip() != ""


def _fails(row) -> bool:
    """The row's total fails completeness (budget.csv's ``passes`` false, not missing):
    a flagged total that is no complete figure for its period, apart from one flagged
    only to be read with care."""
    p = row.get("passes")
    return (p is not None and not pd.isna(p) and str(p).lower() not in ("true", "1")
            and row.get("status") != "missing")


def _pivot_html(per: pd.DataFrame) -> str:
    """Rows site/receptor/element, one column per period, value with a status mark; a
    total that fails completeness is marked ``x`` (not ``f``, which is left to a
    passing total flagged to be read with care)."""
    if per.empty:
        return "<p>No periods.</p>"
    cell = per.apply(lambda r: "–" if not np.isfinite(r["flux_kg_ha_yr"]) else
                     f"{plain(r['flux_kg_ha_yr'])}"
                     + (_FAILS_MARK if _fails(r) else _MARK.get(r['status'], '?'))
                     + (" p" if r["status"] != "partial" and _lacks(r) else ""), axis=1)
    wide = per.assign(cell=cell).pivot_table(index=["site", "receptor", "element"],
                                             columns="period", values="cell", aggfunc="first")
    wide.columns.name = None
    wide = wide.reset_index()
    return _headed(wide.to_html(index=False, border=0, classes="tab", na_rep="–"), wide.columns)
