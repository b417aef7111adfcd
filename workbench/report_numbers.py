"""How report.html writes a number: the one helper of its tables and of its sentences.

A quantity (a flux, an eq/ha value, a count of rows, samples, hours, sites or draws)
has its thousands separated by commas (1,713; 280,344); a number that names something
(a year, a period, a site id, a code such as the region of a critical load function, a
seed, a line of a file) is written as it is (2021, not 2,021).  :func:`number` writes a
quantity, :func:`table_formatters` picks the writing of each column of a table by its
name.  Used by :mod:`workbench.report`, :mod:`workbench.report_network`,
:mod:`workbench.report_coverage` and the report sections of :mod:`workbench.analysis`.
"""
from __future__ import annotations

import numbers
import re

import numpy as np
import pandas as pd

#: Significant digits of the report's numbers.
DIGITS = 3
#: Below this magnitude a table value is rounding residue, shown as 0: far below any
#: meaningful amount in the report's units (kg/ha, eq/ha, mmol/m2; the smallest exact
#: Mann-Kendall p of 10 values is about 5.5e-7).
ROUNDING_FLOOR = 1e-12

#: Columns whose numbers name something (a year, a period, a site, a code, a seed, a
#: line of a file): written without thousands separators.
NOT_QUANTITIES = frozenset({"year", "period", "site", "site_id", "id", "code", "region",
                            "seed", "line", "first_year", "last_year", "start_year",
                            "end_year", "period_start", "period_end"})
#: A column named like a year ("2021", "year of change", "first_year") also names one;
#: ``n_years`` and "Years" (a count of years) are quantities, as "lines" and "rows".
_YEAR_NAME = re.compile(r"^\d{4}$|(^|[ _])(first|last|start|end)?_?year($|[ _])", re.I)


def plain(v, digits=DIGITS) -> str:
    """A number in plain notation with about `digits` significant digits: no exponent,
    thousands separated by commas (1,713; 24.6; 0.0123).

    A magnitude below :data:`ROUNDING_FLOOR` is the residue of a sum that cancels (a
    bracket of 0 written -4.86e-16 kg/ha) and is shown as 0.

    >>> plain(1713.4), plain(24.56), plain(0.012345), plain(0.0), plain(float("nan"))
    ('1,713', '24.6', '0.0123', '0', '–')
    >>> plain(-4.86e-16), plain(3e-7)
    ('0', '0.000000300')
    """
    if v is None or not np.isfinite(v):
        return "–"
    if abs(v) < ROUNDING_FLOOR:
        return "0"
    decimals = max(0, digits - 1 - int(np.floor(np.log10(abs(v)))))
    text = f"{v:,.{decimals}f}"
    return text


def number(v, digits=DIGITS) -> str:
    """A quantity as report.html writes it: a whole count in full with its thousands
    separated (280,344 rows), any other value by :func:`plain` (about `digits`
    significant digits, separated too); ``–`` for none.

    >>> number(280344), number(np.int64(1638)), number(2257.2), number(None)
    ('280,344', '1,638', '2,257', '–')
    >>> number(True)
    'True'
    """
    if isinstance(v, (bool, np.bool_)):
        return str(v)
    if v is None or (isinstance(v, float) and np.isnan(v)) or v is pd.NA:
        return "–"
    if isinstance(v, numbers.Integral):
        return f"{int(v):,}"
    if isinstance(v, numbers.Real):
        return plain(float(v), digits)
    return str(v)


def name_text(v) -> str:
    """A number that names something (a year, a code, a line), as it is: ``2021``,
    ``3``; a whole float without its ``.0``; ``–`` for none.

    >>> name_text(2021), name_text(2021.0), name_text(float("nan"))
    ('2021', '2021', '–')
    """
    if v is None or v is pd.NA or (isinstance(v, float) and np.isnan(v)):
        return "–"
    if isinstance(v, numbers.Real) and not isinstance(v, numbers.Integral) \
            and float(v).is_integer():
        return str(int(v))
    return str(v)


def is_quantity(column) -> bool:
    """Whether a column of a report table holds quantities (separated thousands), not
    names (years, periods, sites, codes, seeds, lines: :data:`NOT_QUANTITIES`).

    >>> is_quantity("flux_eq_ha_yr"), is_quantity("Rows read"), is_quantity("n_years")
    (True, True, True)
    >>> is_quantity("region"), is_quantity("2021"), is_quantity("first_year")
    (False, False, False)
    """
    name = str(column)
    return name.lower() not in NOT_QUANTITIES and not _YEAR_NAME.search(name)


def table_formatters(frame: pd.DataFrame, float_format=None) -> dict:
    """The writing of each numeric column of `frame` for ``DataFrame.to_html``'s
    ``formatters``: :func:`number` for a quantity, :func:`name_text` for a column that
    names (:func:`is_quantity`); `float_format` (a format string) for a quantity column
    of floats where given."""
    out = {}
    for col in frame.columns:
        kind = frame[col].dtype
        if not (pd.api.types.is_numeric_dtype(kind) and not pd.api.types.is_bool_dtype(kind)):
            continue
        if not is_quantity(col):
            out[col] = name_text
        elif float_format is not None and pd.api.types.is_float_dtype(kind):
            out[col] = (lambda v, f=float_format: "–" if pd.isna(v) else f.format(v))
        else:
            out[col] = number
    return out
