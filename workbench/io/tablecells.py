"""Cell texts of our CSV files: the missing-value texts, the words and marks read as no
number, and the hint of a cell that is no number (:func:`number_hint`).

Moved from :mod:`workbench.io.table`, which re-exports them.
"""
from __future__ import annotations

import re

from ..errors import NUMBER_TEXT


#: What to write where a '<limit' cell is not read (a depth, a volume, a met value): the
#: limit form is kept only in the chemistry columns.
CENSORED_ELSEWHERE = ("a number ('<limit' is read only in the chemistry columns: write "
                      "the value itself, 0 for a trace, or leave the cell empty if unknown)")

#: Cell texts read as a missing number by the met reader (kept as they were).
MISSING_TEXTS = ("", "NA", "NaN", "nan")
#: Cell texts read as a missing number in the sample and air files, compared after
#: stripping and lower-casing ("NA", "N/A", "NaN", "-" as spreadsheets and lab systems
#: write them; common practice; ``#N/A`` is a spreadsheet's own "not available").  Each
#: non-empty one is counted in the ledger notes
#: (:meth:`RawTable.missing_note`), so none is lost silently.
SAMPLE_MISSING_TEXTS = ("", "na", "n/a", "nan", "-", "--", "#n/a")
#: Texts that mean "below detection" written as words: an error with the ``<limit`` hint
#: (turning them into a missing value would drop a measured absence; common practice).
_NOT_DETECTED = ("nd", "n.d.", "bdl", "<dl", "<lod", "lod", "dl", "not detected", "trace", "tr")
#: Texts that mean either "not detected" or "no data" (``n/d``; labs and loggers write it
#: for both): an error whose hint names both readings (common practice).
_ND_OR_NO_DATA = ("n/d", "n.d", "n d")
#: Words and marks of "no value" that the readers do not take as missing (a database's
#: ``NULL``, a typed word, a dash that is no hyphen-minus): an error whose hint says to
#: leave the cell empty (or write NA) rather than read an unknown word as a gap
#: (common practice).
_NO_VALUE_WORDS = ("null", "none", "nil", "missing", "no data", "nodata", "no value",
                   "n.a.", "n.a", "not available", "?", "??", "\u2014", "\u2013", "\u2212",
                   "x", "xx", "xxx", "*", "***")
#: Any blank but the line break (what ``str.strip`` removes, as ``str.isspace``): the
#: cells are stripped only when the data rows hold one, or a quote (a quoted cell may
#: end in a line break); a pass over every cell of a large file costs a good part of
#: reading it, one search of the text a fraction of that.
_BLANK = re.compile(r"[^\S\n]")
#: Error values of a spreadsheet formula (a cell the sheet failed to compute): an error
#: with the hint to fix the formula, not a missing value (``#N/A`` is missing, above).
FORMULA_ERRORS = ("#div/0!", "#value!", "#ref!", "#num!", "#name?", "#null!", "#calc!",
                  "#spill!", "#getting_data", "#error!", "err:502", "err:503", "err:504")
#: A number followed by a unit in one cell (``12 mm``, ``3.1ug/m3``, ``5 %``).
_NUMBER_UNIT = re.compile(rf"[-+<]?{NUMBER_TEXT}\s*"
                          r"[A-Za-z%\u00b5\u00b0][\w/%\u00b5\u00b0.\-]*")
#: Numbers with grouped thousands: ``1,234.5``, ``1 234.5``, ``1.234,5``, ``1'234``.
_THOUSANDS = re.compile(r"[-+]?\d{1,3}(?:(?:,\d{3})+(?:\.\d+)?|(?:[ '\u00a0\u202f]\d{3})+"
                        r"(?:[.,]\d+)?|(?:\.\d{3})+,\d+)")


def number_hint(cell: str, censoring: bool = False) -> str:
    """The hint of a cell that is no number (" (...)"), or "" (common slips of sheets).

    >>> number_hint("1,234.5")
    " (a thousands separator? write the number without it, e.g. '1234.5')"
    >>> number_hint("12 mm")[:30]
    ' (a unit in the cell? the unit'
    """
    low = cell.lower()
    if low in _NOT_DETECTED:
        return (" (a 'not detected' code? write '<limit', e.g. '<0.02')" if censoring
                else " (a 'not detected' code? this column takes numbers only: leave the "
                "cell empty)")
    if low in _ND_OR_NO_DATA:
        return (f" ('{cell}': not detected, or no data? below detection write '<limit', "
                "e.g. '<0.02'; no value: leave the cell empty" if censoring
                else f" ('{cell}': no data? this column takes numbers only: leave the cell "
                "empty") + ")"
    if low in _NO_VALUE_WORDS:
        return (" (a 'no value' mark? leave the cell empty, or write NA; a value below "
                "detection is '<limit', e.g. '<0.02')" if censoring
                else " (a 'no value' mark? leave the cell empty, or write NA)")
    if re.fullmatch(rf"[\u2212\u2013\u2014]{NUMBER_TEXT}", cell):
        return (f" (a minus sign typed as '{cell[0]}'? write '-', e.g. '-{cell[1:]}')")
    if low in FORMULA_ERRORS:
        return (" (a spreadsheet formula error: correct the formula in the sheet, or leave "
                "the cell empty if there is no value)")
    if re.fullmatch(r"[-+<]?\d{1,3},\d{3}", cell):
        return (" (a decimal comma or a thousands separator? write a decimal point and no "
                "separator, e.g. '1.234' or '1234')")
    if re.fullmatch(r"[-+<]?\d+,\d+", cell):
        return " (a decimal comma? write a decimal point, e.g. '1.5')"
    if _THOUSANDS.fullmatch(cell):
        k = max(cell.rfind(","), cell.rfind("."))       # the decimal mark, if any
        decimal = k > 0 and ("," in cell and "." in cell or len(cell) - k - 1 != 3)
        whole, frac = (cell[:k], cell[k + 1:]) if decimal else (cell, "")
        plain = re.sub(r"[ ',.\u00a0\u202f]", "", whole) + ("." + frac if frac else "")
        return f" (a thousands separator? write the number without it, e.g. '{plain}')"
    if _NUMBER_UNIT.fullmatch(cell):
        return (" (a unit in the cell? the unit goes in the column header, 'name [unit]': "
                "write the number only)")
    return ""
