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


def failing(status, passes) -> np.ndarray:
    """Where a sum fails completeness: its ``passes`` is known and false (``False``,
    ``"False"``, ``0``) and its status is not ``missing`` (no data is no failure).

    Parameters
    ----------
    status, passes : array-like
        Per row: the status word (docs/budget.md, "Status") and budget.csv's or
        summary.csv's ``passes`` (bool, its text, or empty where unknown).

    Returns
    -------
    ndarray of bool
    """
    status = np.asarray(status, dtype=object)
    p = pd.Series(np.broadcast_to(np.asarray(passes, dtype=object), status.shape))
    known = p.notna().to_numpy()
    true = p.astype(str).str.lower().isin(("true", "1")).to_numpy()
    return known & ~true & (status != "missing")


def status_marks(status, passes, missing_components) -> np.ndarray:
    """report.html's mark of each sum, after its number: `` x`` fails completeness,
    else `` f`` flagged (passing), `` p`` partial, `` ~`` filled, nothing for complete
    or missing (``?`` for a status not known); then `` p`` where a part has no data
    and the mark does not say so yet.  One rule for the totals per period
    (:func:`_pivot_html`) and the derived sums (:func:`workbench.report_derived.mark`).

    A total that fails and lacks a component reads ``x p`` whatever its status word
    (``partial`` too): the missing part is named beside every status (docs/budget.md,
    "Status"); before, the totals' table wrote a failing partial total ``x``.

    Parameters
    ----------
    status, passes, missing_components : array-like
        Per row: the status word, ``passes`` (:func:`failing`) and the names of the
        parts without data (blank or empty where none).

    Returns
    -------
    ndarray of str
    """
    st = pd.Series(np.asarray(status, dtype=object)).fillna("missing").astype(str)
    miss = pd.Series(np.broadcast_to(np.asarray(missing_components, dtype=object),
                                     st.shape)).fillna("").astype(str)
    base = np.where(failing(st.to_numpy(object), passes), _FAILS_MARK,
                    st.map(lambda s: _MARK.get(s, " ?")).to_numpy(object))
    lacks = ((miss.str.strip() != "") | (st == "partial")).to_numpy() & (st != "missing").to_numpy()
    return np.where(lacks & (base != " p"), base + " p", base).astype(object)


def _pivot_html(per: pd.DataFrame) -> str:
    """Rows site/receptor/element, one column per period, value with a status mark; a
    total that fails completeness is marked ``x`` (not ``f``, which is left to a
    passing total flagged to be read with care)."""
    if per.empty:
        return "<p>No periods.</p>"
    marks = status_marks(per["status"], per["passes"] if "passes" in per else None,
                         per["missing_components"] if "missing_components" in per else "")
    values = per["flux_kg_ha_yr"].to_numpy(float)
    cell = pd.Series([f"{plain(v)}{m}" if np.isfinite(v) else "–"
                      for v, m in zip(values, marks)], index=per.index)
    wide = per.assign(cell=cell).pivot_table(index=["site", "receptor", "element"],
                                             columns="period", values="cell", aggfunc="first")
    wide.columns.name = None
    wide = wide.reset_index()
    return _headed(wide.to_html(index=False, border=0, classes="tab", na_rep="–"), wide.columns)
