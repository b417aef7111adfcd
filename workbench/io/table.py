"""Low-level reading of our CSV files: metadata lines, headers with units, typed columns.

Every problem is raised as :class:`~workbench.errors.InputError` naming the file, the
line, the column, the value and what was expected.  Parsing is vectorized; only the
first offending row of a column is reported.
"""
from __future__ import annotations

import csv
import gzip
import io
import re
import warnings
import zlib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import NUMBER_TEXT, InputError, suggest
from ..units import Header, misplaced_unit, parse_header
from .ledger import compact_lines
from .readbytes import read_hashed

_OFFSET = re.compile(r"[T ]\d\d.*(?:Z|[+-]\d\d(?::?\d\d)?)$")

#: What to write where a '<limit' cell is not read (a depth, a volume, a met value): the
#: limit form is kept only in the chemistry columns.
CENSORED_ELSEWHERE = ("a number ('<limit' is read only in the chemistry columns: write "
                      "the value itself, 0 for a trace, or leave the cell empty if unknown)")

#: Timestamps outside [YEARS[0], YEARS[1]) are typing slips in the year (common practice).
YEARS = (np.datetime64("1900-01-01", "ns"), np.datetime64("2100-01-01", "ns"))
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
#: A ``#`` line (comment or ``# key: value`` metadata) below the header.
_HASH_LINE = re.compile(r"^[^\S\n]*#.*$", re.M)
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


def _open_text(path: Path) -> str:
    try:
        raw = read_hashed(path)         # the bytes parsed are the bytes hashed
    except FileNotFoundError:
        raise InputError("file not found", file=path, expected="an existing file") from None
    except IsADirectoryError:
        raise InputError("is a directory", file=path, expected="a file") from None
    except PermissionError:
        raise InputError("file cannot be read (permission denied)", file=path,
                         expected="a readable file") from None
    if path.suffix == ".gz" or raw[:2] == b"\x1f\x8b":
        try:
            raw = gzip.decompress(raw)
        except (OSError, EOFError, zlib.error) as exc:   # BadGzipFile is an OSError
            raise InputError(f"not a readable gzip file ({exc or type(exc).__name__})", file=path,
                             expected="a complete .gz file (gzip -t to test it), or the "
                             "uncompressed file without .gz") from None
    if raw[:4] in (b"PK\x03\x04", b"\xd0\xcf\x11\xe0"):
        raise InputError("a spreadsheet workbook, not a CSV text file", file=path,
                         expected="the sheet exported as CSV (UTF-8, comma-separated)")
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise InputError("a UTF-16 text file (a spreadsheet's 'Unicode text' export?)",
                         file=path, line=1, expected="a UTF-8 CSV file, comma-separated "
                         "(save as 'CSV UTF-8')")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        text = raw[raw.rfind(b"\n", 0, exc.start) + 1:].split(b"\n")[0].decode("latin-1").strip()
        raise InputError(f"file is not UTF-8 text (byte 0x{raw[exc.start]:02x} at byte offset "
                         f"{exc.start})", file=path, line=line, value=text,
                         expected="a UTF-8 CSV file (Latin-1 or Windows-1252? save as UTF-8)") from None


#: The end of a day written as 24:00 (ISO 8601:2004, 4.2.3; from memory), with or without
#: seconds and a zone: read as 00:00 of the next day, with a note.
_END_OF_DAY = re.compile(r"\d{4}-\d\d-\d\d[T ]24:00(?::00(?:\.0+)?)?(?:Z|[+-]\d\d(?::?\d\d)?)?")


def end_of_day(text: pd.Series) -> np.ndarray:
    """True for the texts that label a day's end as 24:00 [bool].

    >>> end_of_day(pd.Series(["2021-04-03T24:00", "2021-04-03 24:00+01:00", "24:00",
    ...                       "2021-04-03T23:00", "2021-04-03T24:30"])).tolist()
    [True, True, False, False, False]
    """
    return text.astype(str).str.fullmatch(_END_OF_DAY).to_numpy(dtype=bool)


def parse_iso(text: pd.Series, utc: bool) -> np.ndarray:
    """ISO 8601 time texts as datetime64[ns]; NaT where a text is no time.

    `utc`: the texts carry an offset (converted to UTC, the zone dropped); else they are
    naive and returned as written (local standard time, shifted by the caller).  A day's
    end written 24:00 is 00:00 of the next day (:func:`end_of_day`).
    """
    eod = end_of_day(text)
    if eod.any():
        text = text.copy()
        text[eod] = text[eod].str.replace("24:00", "00:00", n=1, regex=False)
    t = pd.to_datetime(text, format="ISO8601", utc=utc, errors="coerce")
    if utc:
        t = t.dt.tz_localize(None)
    out = t.to_numpy().astype("datetime64[ns]")
    if eod.any():
        out[eod] = out[eod] + np.timedelta64(1, "D")
    return out


#: A date in day/month or month/day order (``01/02/2021``, ``1.2.21``, ``21-01-2021``),
#: with the rest of the label (a time) after it.
_DAY_MONTH = re.compile(r"(\d{1,2})([./-])(\d{1,2})\2(\d{4}|\d{2})(?![\d./-])(.*)")


def day_month_readings(text: str) -> str:
    """The ISO 8601 readings of a date written day/month or month/day ("" if none).

    A two-digit year is read in 2000-2099 (our choice: the records we read are of
    this century; the message shows the reading, so a wrong one is seen).

    >>> day_month_readings("01/02/2021")
    '2021-02-01 if day first, 2021-01-02 if month first'
    >>> day_month_readings("21.1.21 14:00")
    '2021-01-21T14:00 (day first; no month 21)'
    >>> day_month_readings("2021/01/21")
    ''
    """
    m = _DAY_MONTH.fullmatch(text.strip())
    if not m:
        return ""
    a, b, year, rest = int(m.group(1)), int(m.group(3)), m.group(4), m.group(5).strip()
    year = int(year) + 2000 if len(year) == 2 else int(year)
    tail = "T" + rest if re.fullmatch(r"\d\d:\d\d(:\d\d)?", rest) else ""

    def iso(month, day):
        return f"{year:04d}-{month:02d}-{day:02d}{tail}"
    day_first, month_first = 1 <= b <= 12 and 1 <= a <= 31, 1 <= a <= 12 and 1 <= b <= 31
    if day_first and month_first:
        return (iso(b, a) if a == b else
                f"{iso(b, a)} if day first, {iso(a, b)} if month first")
    if day_first:
        return f"{iso(b, a)} (day first; no month {a})"
    if month_first:
        return f"{iso(a, b)} (month first; no month {b})"
    return "no day/month reading fits; e.g. 2020-01-09T14:00"


def end_of_day_note(file_name: str, columns, lines) -> str:
    """The ledger note of the columns whose 24:00 labels were read as the next day's 00:00
    ("" for none), with the count of the rows and their lines (:func:`.ledger.compact_lines`).

    Parameters
    ----------
    file_name : str
    columns : list of str
        Header names of the time columns holding a 24:00 label.
    lines : array of int
        File lines (1-based) of the rows with such a label, in any of `columns` [1].

    >>> end_of_day_note("p.csv", ["start", "end"], [4, 5, 6, 9])
    "p.csv: labels at 24:00 (end of day) in 'start', 'end' read as 00:00 of the next day: 4 rows (lines 4-6, 9)"
    """
    if not columns:
        return ""
    v = np.unique(np.asarray(lines, dtype=np.int64))
    return (f"{file_name}: labels at 24:00 (end of day) in "
            f"{', '.join(repr(c) for c in columns)} read as 00:00 of the next day: "
            f"{len(v)} row{'s' * (len(v) != 1)} ({compact_lines(v)})")


#: Two digits either side of a comma: a decimal comma (1,5) in a comma-separated file.
_DECIMAL_COMMA = re.compile(r"^[-+]?\d+$")
#: A cell that reads as a timestamp (a date first).
_STAMP = re.compile(r"^\d{4}-\d\d-\d\d|^\d\d?[./]\d\d?[./]\d{2,4}")
#: Header names of time columns: their cells must stay timestamps after a join.
_TIME_NAMES = ("time", "start", "end", "date")
#: A number with a decimal point.
_DECIMAL = re.compile(r"^[-+]?\d*\.\d+$")


def check_unit_brackets(path, line: int, column: str) -> None:
    """Refuse a header that names one of our columns with its unit outside square
    brackets (``SO4 (ueq/L)``, ``sample_volume (mL)``, ``SO4_mg/L``): read as an unknown
    column it would be left unused, and the budget would lack it with only a note.

    Raises
    ------
    InputError
        Naming the file, the header line, the column and the header to write.
    """
    found = misplaced_unit(column)
    if found is None:
        return
    name, unit = found
    if name == "pH":
        want = "'pH' (no unit)"
    else:
        want = f"'{name} [{unit}]'" if unit else f"'{name} [unit]'"
    raise InputError("unit not in square brackets (the column would not be read)",
                     file=path, line=line, column=column, value=column,
                     expected=f"the header {want}: the name, then the unit in square "
                     "brackets")


def decimal_comma_pairs(cells, header, others=None) -> list | None:
    """The pairs of neighbouring cells that, joined back with a comma, give the row the
    header's fields with every joined cell under a numeric column (not a time, site,
    sampler, flag or method column) that holds numbers with a decimal point in the other
    rows (`others`, when given), and every time column's cell a timestamp; None when no
    such joining exists.

    Parameters
    ----------
    cells : list of str
        The row's cells (more than the header's).
    header : list of str
        The header's cells.
    others : list of list of str, optional
        Other rows of the file, of the header's length.

    Returns
    -------
    list of int or None
        The index of the first cell of each pair.

    >>> decimal_comma_pairs(["a", "2020-01-01T01:00", "1", "5", "2"],
    ...                     ["site", "time", "x [m]", "y [m]"])
    [2]
    >>> decimal_comma_pairs(["a", "1", "5", "2020-01-01T01:00", "2"],
    ...                     ["site", "id", "time", "x [m]"]) is None
    True
    """
    from itertools import combinations
    c = [str(x).strip() for x in cells]
    h = [str(x).strip() for x in header]
    k = len(c) - len(h)
    cand = [i for i in range(len(c) - 1)
            if _DECIMAL_COMMA.match(c[i]) and c[i + 1].isdigit()]
    if k < 1 or len(cand) < k or len(cand) > 12:
        return None
    for pick in combinations(cand, k):
        if any(b - a < 2 for a, b in zip(pick, pick[1:])):
            continue                              # overlapping pairs
        row, joined, i = [], [], 0
        while i < len(c):
            if i in pick:
                joined.append(len(row))
                row.append(f"{c[i]},{c[i + 1]}")
                i += 2
            else:
                row.append(c[i])
                i += 1
        names = [x.split("[")[0].strip().lower() for x in h]
        if any(_text_column(names[j]) or (others is not None and not _has_decimals(
                others, j)) for j in joined):
            continue
        if all(_STAMP.match(row[j]) or not row[j] for j, n in enumerate(names)
               if n in _TIME_NAMES):
            return list(pick)
    return None


def _text_column(name: str) -> bool:
    return (name in _TIME_NAMES or name in ("site", "sampler_id", "id", "flags", "flag",
                                            "comment", "note", "method")
            or name.startswith("method_") or name.endswith("_method"))


def _has_decimals(rows, j) -> bool:
    return any(len(r) > j and _DECIMAL.match(str(r[j]).strip()) for r in rows)


def fields_error(path, line, n_head, cells=None, header=None, others=None) -> InputError:
    """The error of a CSV row with another number of fields than the header; with a hint
    when it has more and joining pairs of neighbouring whole numbers back into numbers
    with a decimal comma (``1,5``: a spreadsheet of a decimal-comma locale exporting
    with commas as separators) gives it the header's fields, each joined number under a
    numeric column that holds decimals in the `others` rows and the time columns holding
    timestamps (:func:`decimal_comma_pairs`).

    >>> str(fields_error("p.csv", 3, 3, ["alpha", "1", "5", "2"], ["site", "a [m]", "b [m]"]))[:95]
    "p.csv, line 3: malformed CSV row (wrong number of fields; a decimal comma, as in '1,5'? write '"
    >>> str(fields_error("p.csv", 3, 3, ["alpha", "1", "5", "2"], ["site", "time", "b [m]"]))
    'p.csv, line 3: malformed CSV row (wrong number of fields), expected 3 fields as in the header'
    """
    hint = ""
    if cells is not None and header is not None and len(cells) > n_head:
        pairs = decimal_comma_pairs(cells, header, others)
        if pairs is not None:
            c = [str(x).strip() for x in cells]
            pair = f"{c[pairs[0]]},{c[pairs[0] + 1]}"
            hint = (f"; a decimal comma, as in {pair!r}? write {pair.replace(',', '.')!r}, or "
                    "export as 'CSV UTF-8, comma-delimited' with a decimal point")
    return InputError(f"malformed CSV row (wrong number of fields{hint})", file=path,
                      line=line, expected=f"{n_head} fields as in the header")


def _top_lines_again(path, body, rest, n_meta, top, meta, meta_lines):
    """(body, lines): `body` with each line below the header that repeats a ``#`` line
    of the top as written made blank (dropped as a blank line; in `rest` too, in
    place), and those 1-based file lines [int array].

    `rest` holds the file's lines from the header on (the header is line ``n_meta + 1``),
    `body` the same joined by newlines,
    `top` each stripped ``#`` line of the top -> its line, `meta` and `meta_lines` the
    ``key: value`` read there.  Any other ``#`` line below the header is refused, located:
    a ``key: value`` of a key declared at the top with another value (two files joined,
    e.g. one labelling interval starts) as two different declarations naming both lines
    and both values, any other as a ``#`` line below the header (before, both were read
    as a data row: "site not in the catalogue")."""
    if "#" not in body:
        return body, np.zeros(0, np.int64)
    out, k, pos = [], 0, 0
    for m in _HASH_LINE.finditer(body):        # the few '#' lines only, not every line
        k += body.count("\n", pos, m.start())
        pos = m.start()
        if k == 0:
            continue                            # the header itself (a '#' inside it)
        s, line = m.group().strip(), n_meta + 1 + k
        if s in top:
            out.append(line)
            rest[k] = ""
            continue
        text = s.lstrip("#").strip()
        key, val = (x.strip() for x in text.split(":", 1)) if ":" in text else ("", text)
        if key.lower() in meta:
            was = meta_lines[key.lower()]
            raise InputError(
                f"two different declarations of {key.lower()!r} in one file (two files "
                f"joined?): line {was} says {meta[key.lower()]!r}, line {line} says {val!r}",
                file=path, line=line, column=key.lower(), value=val,
                expected="one declaration for the whole file (split the file where the "
                         "second one starts, or write its rows as the first part's)")
        raise InputError(
            "a '#' line below the header" + (" (a metadata line not declared at the top: "
                                             "two files joined?)" if key else ""),
            file=path, line=line, column=key.lower() or None, value=s[:60],
            expected="'#' lines above the header only (a file pasted after itself may "
                     "repeat them as written: they are skipped)")
    return ("\n".join(rest) if out else body), np.asarray(out, np.int64)


def _header_again(df: pd.DataFrame) -> np.ndarray:
    """Rows whose every cell is the header's own text (a column without a header, what
    pandas names ``Unnamed: k``, empty): the header repeated below itself [bool]."""
    head = np.array(["" if re.match(r"^Unnamed: \d+$", str(c)) else str(c).strip()
                     for c in df.columns], dtype=object)
    if not len(df) or (head == "").all():
        return np.zeros(len(df), bool)
    site = df.iloc[:, 0].to_numpy(dtype=object) == head[0]     # a cheap first sieve
    if not site.any():
        return site
    out = np.zeros(len(df), bool)
    out[site] = (df.loc[site].apply(lambda c: c.str.strip()).to_numpy(dtype=object)
                 == head[None, :]).all(axis=1)
    return out


@dataclass
class RawTable:
    """A CSV file read as text, with its metadata and parsed headers.

    Attributes
    ----------
    path : Path
    meta : dict
        ``# key: value`` lines at the top of the file.
    frame : DataFrame
        All cells as stripped strings, columns named by their header *name* (without
        the unit); index irrelevant.
    lines : ndarray of int
        1-based line number of each row in the file.
    headers : dict
        name -> :class:`~workbench.units.Header`.
    """

    path: Path
    meta: dict
    frame: pd.DataFrame
    lines: np.ndarray
    headers: dict
    raw_headers: dict = field(default_factory=dict)
    #: column name -> {missing-value text as typed: [row indices]} of the non-empty
    #: texts read as missing (filled by :meth:`numbers` with ``missing="samples"``).
    missing_seen: dict = field(default_factory=dict)
    #: column name -> bool array: the timestamp carries a zone (``Z`` or an offset).
    zoned: dict = field(default_factory=dict)
    #: Time columns with a 24:00 label (read as 00:00 of the next day), in order.
    end_of_day: list = field(default_factory=list)
    #: Row indices (into :attr:`lines`) holding a 24:00 label in any time column.
    end_of_day_rows: list = field(default_factory=list)
    #: Notes of species given in two units, joined (:mod:`.unitswitch`).
    unit_switch_notes: list = field(default_factory=list)
    #: metadata key -> the 1-based line of its ``# key: value`` line.
    meta_lines: dict = field(default_factory=dict)
    #: column name -> [(raw later column, bool rows)] of a joined unit switch: a
    #: message on such a row names the column the cell was written in.
    switched: dict = field(default_factory=dict)
    #: File lines below the header that repeat it cell for cell (a file pasted after
    #: itself, header and all): not read as rows (:meth:`header_again_note`).
    header_again: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    #: File lines below the header that repeat a ``#`` line of the top as written (a
    #: file pasted after itself with its metadata): not read (:meth:`meta_again_note`).
    meta_again: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))

    # ------------------------------------------------------------------ reading
    @classmethod
    def read(cls, path) -> "RawTable":
        path = Path(path)
        text = _open_text(path)
        all_lines = text.splitlines()
        meta, n_meta, meta_lines, top = {}, 0, {}, {}
        for ln in all_lines:
            s = ln.strip()
            if s.startswith("#"):
                n_meta += 1
                top.setdefault(s, n_meta)
                body = s.lstrip("#").strip()
                if ":" in body:
                    key, val = body.split(":", 1)
                    meta[key.strip().lower()] = val.strip()
                    meta_lines[key.strip().lower()] = n_meta
            elif s == "" and n_meta == len(meta) and n_meta:
                n_meta += 1
            else:
                break
        while n_meta < len(all_lines) and not all_lines[n_meta].strip():
            n_meta += 1  # blank lines above the header
        rest = all_lines[n_meta:]
        if not any(ln.strip() for ln in rest):
            raise InputError("empty file", file=path, expected="a header line and data rows")
        body = "\n".join(rest)
        body, meta_again = _top_lines_again(path, body, rest, n_meta, top, meta, meta_lines)
        head = next(ln for ln in rest if ln.strip())
        if head.count(";") > head.count(",") or head.count("\t") > head.count(","):
            sep = "semicolon" if head.count(";") >= head.count("\t") else "tab"
            raise InputError(f"{sep}-separated header (a spreadsheet export in a "
                             "decimal-comma locale?)", file=path, line=n_meta + 1,
                             value=head[:60], expected="comma-separated values with a "
                             "decimal point (export as 'CSV UTF-8, comma-delimited')")
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("error", pd.errors.ParserWarning)
                df = pd.read_csv(io.StringIO(body), dtype=str, keep_default_na=False,
                                 skip_blank_lines=False, skipinitialspace=True,
                                 index_col=False)
        except (pd.errors.ParserError, pd.errors.ParserWarning):
            odd = [k for k, ln in enumerate(rest) if ln.count('"') % 2]
            if odd:
                raise InputError("a quote opened and not closed", file=path,
                                 line=odd[0] + 1 + n_meta, value=rest[odd[0]][:60],
                                 expected='quotes in pairs ("...") around a cell') from None
            rows = list(csv.reader(io.StringIO(body)))
            header = rows[0]
            n_head = len(header)
            bad = next(((k + 2 + n_meta, r) for k, r in enumerate(rows[1:])
                        if r and len(r) != n_head), (None, None))
            others = [r for r in rows[1:] if len(r) == n_head]
            raise fields_error(path, bad[0], n_head, bad[1], header, others) from None
        lines = np.arange(len(df)) + n_meta + 2
        data = body[body.find("\n") + 1:] if "\n" in body else ""
        if '"' in data or _BLANK.search(data):            # else no cell has any to strip
            df = df.apply(lambda c: c.str.strip())
        blank = (df == "").all(axis=1).to_numpy().copy()   # blanks and quotes only: blank too
        blank |= _header_again(df)                      # not a row: said in a note
        again = lines[blank & ~(df == "").all(axis=1).to_numpy()]
        df, lines = df.loc[~blank].reset_index(drop=True), lines[~blank]
        if df.empty:
            raise InputError("no data rows", file=path, line=n_meta + 1,
                             expected="at least one data row below the header")
        for col in df.columns:
            check_unit_brackets(path, n_meta + 1, col)
        from .unitswitch import merge_unit_switches
        df, switches, origin = merge_unit_switches(df, path, n_meta + 1, lines)
        headers, raw, names = {}, {}, []
        for col in df.columns:
            h = parse_header(col)
            if h.name in headers:
                raise InputError("duplicate column", file=path, line=n_meta + 1,
                                 column=col, expected="each column once")
            headers[h.name] = h
            raw[h.name] = col
            names.append(h.name)
        df.columns = names
        if '"' in data:                                   # a quote left open swallows lines
            broken = df.apply(lambda c: c.str.contains("\n", regex=False)).to_numpy()
            if broken.any():
                r, c = (int(x[0]) for x in np.nonzero(broken))
                raise InputError("a quote opened and not closed (the cell runs over several "
                                 "lines)", file=path, line=int(lines[r]), column=raw[df.columns[c]],
                                 value=df.iat[r, c].split("\n")[0][:40],
                                 expected='quotes in pairs ("...") around a cell')
        tab = cls(path, meta, df, lines, headers, raw)
        tab.meta_lines = meta_lines
        tab.unit_switch_notes = switches
        tab.switched = {parse_header(a).name: v for a, v in origin.items()}
        tab.header_again = again
        tab.meta_again = meta_again
        return tab

    # ------------------------------------------------------------------ helpers
    def error(self, problem, *, row=None, column=None, value=None, expected=None):
        """An InputError located at data row index `row` (0-based) and `column`."""
        line = int(self.lines[row]) if row is not None else None
        col = self.raw_headers.get(column, column) if column is not None else None
        for later, rows in self.switched.get(column, ()):
            if row is not None and rows[row]:
                col = later                     # the cell was written in the later unit
        return InputError(problem, file=self.path, line=line, column=col, value=value,
                          expected=expected)

    def unit_groups(self, name) -> list:
        """The units of column `name`, each with the rows written in it: a list of
        (:class:`~workbench.units.Header`, bool rows [n]); one entry for a column written
        in one unit, one more per later column of a unit switch (:mod:`.unitswitch`), so
        that each cell is converted to SI once from the unit it was written in."""
        rows = np.ones(len(self.lines), bool)
        out = []
        for later, mask in self.switched.get(name, ()):
            out.append((parse_header(later), np.asarray(mask, bool)))
            rows &= ~np.asarray(mask, bool)
        return [(self.headers[name], rows)] + out

    @property
    def header_line(self) -> int:
        return int(self.lines[0]) - 1 if len(self.lines) else 1

    def require(self, names, any_of=(), examples=None, hints=None):
        """Raise for the first required column that is missing, naming in the same
        message every other missing one and the file's own columns, so that a file
        from another logger is fixed in one pass.

        `examples`: name -> a header with its unit (``"wind_speed [m/s]"``) shown for
        the missing columns; `hints`: (present column, missing column) -> a sentence
        said when the file has the first and lacks the second (a ``time`` column in a
        file of periods)."""
        missing = [n for n in names if n not in self.headers]
        if missing:
            n, examples = missing[0], examples or {}
            expected = f"a column named {n!r}" + suggest(n, self.headers)
            if len(missing) > 1:
                expected += "; also missing: " + ", ".join(repr(m) for m in missing[1:])
            shown = [examples[m] for m in missing if m in examples]
            if shown:
                expected += " (headers such as " + ", ".join(repr(x) for x in shown) \
                            + ": name, then the unit in brackets)"
            for (have, lack), text in (hints or {}).items():
                if have in self.headers and lack in missing:
                    expected += "; " + text
            own = [self.raw_headers.get(h, h) for h in self.headers if h not in names]
            if own:
                more = f", ... ({len(own) - 12} more)" if len(own) > 12 else ""
                expected += ("; the file's other columns: "
                             + ", ".join(repr(c) for c in own[:12]) + more
                             + " (rename those that hold these variables)")
            raise InputError("missing required column" + ("s" if len(missing) > 1 else ""),
                             file=self.path, line=self.header_line, column=n,
                             value=None, expected=expected)
        for group in any_of:
            if not any(g in self.headers for g in group):
                raise InputError("missing required column", file=self.path,
                                 line=self.header_line, column=" or ".join(group),
                                 expected="one of " + ", ".join(repr(g) for g in group))

    def has(self, name) -> bool:
        return name in self.headers

    def unit_of(self, name, required=True, default=None) -> str | None:
        h: Header = self.headers[name]
        if h.unit is None or h.unit == "":
            if required and default is None:
                raise InputError("column has no unit", file=self.path, line=self.header_line,
                                 column=self.raw_headers[name],
                                 expected=f"a unit in square brackets, e.g. '{name} [...]'")
            return default
        return h.unit

    def text(self, name) -> np.ndarray:
        return self.frame[name].to_numpy(dtype=object).astype(str)

    def numbers(self, name, *, censoring=False, missing="met"):
        """Parse a numeric column.

        One parse of the whole column; the text checks look only at the cells that did
        not parse (most columns have none).

        Parameters
        ----------
        missing : {"met", "samples"}
            Which texts mean missing: :data:`MISSING_TEXTS` (as typed) or
            :data:`SAMPLE_MISSING_TEXTS` (any case; each non-empty one is recorded in
            :attr:`missing_seen` for the ledger notes).

        Returns
        -------
        values : ndarray of float
            NaN for empty cells; for ``<x`` cells the limit x.
        censored : ndarray of bool
            Only when `censoring` is True: cells written ``<x``.
        """
        s = self.frame[name]
        body = s.str.lstrip("<").str.strip() if censoring else s
        v = pd.to_numeric(body, errors="coerce").to_numpy(dtype=float)
        odd = np.flatnonzero(np.isnan(v))
        if len(odd):
            if not censoring:
                cens = s.iloc[odd].str.startswith("<").to_numpy()
                if cens.any():
                    i = int(odd[np.flatnonzero(cens)[0]])
                    raise self.error("censored value not allowed here", row=i, column=name,
                                     value=s.iloc[i], expected=CENSORED_ELSEWHERE)
            if missing == "samples":
                low = body.iloc[odd].str.lower()
                is_missing = low.isin(SAMPLE_MISSING_TEXTS).to_numpy()
            else:
                low = body.iloc[odd]
                is_missing = low.isin(MISSING_TEXTS).to_numpy()
            bad = ~is_missing
            if bad.any():
                i = int(odd[np.flatnonzero(bad)[0]])
                what = "text in a numeric column" + number_hint(str(s.iloc[i]).strip(),
                                                                censoring)
                allowed = ("or empty, NA, N/A, NaN or - for missing" if missing == "samples"
                           else "or empty for missing")
                raise self.error(what, row=i, column=name, value=s.iloc[i],
                                 expected=f"a number ({allowed})"
                                 + (", or '<limit' below detection" if censoring else ""))
            if missing == "samples":
                typed = s.iloc[odd][is_missing & (s.iloc[odd] != "").to_numpy()]
                if len(typed):
                    self.missing_seen[name] = {t: np.flatnonzero(s.to_numpy() == t)
                                               for t in pd.unique(typed)}
        inf = np.isinf(v)
        if inf.any():
            i = int(np.flatnonzero(inf)[0])
            raise self.error("not a finite number", row=i, column=name, value=s.iloc[i],
                             expected="a finite number (or empty for missing)")
        if censoring:
            return v, s.str.startswith("<").to_numpy()
        return v

    def times(self, name, utc_offset_h) -> np.ndarray:
        """Parse ISO 8601 timestamps to naive UTC datetime64[ns].

        A naive timestamp takes the row's `utc_offset_h` (array, hours east of UTC).
        """
        s = self.frame[name]
        if (s == "").any():
            i = int(np.flatnonzero((s == "").to_numpy())[0])
            raise self.error("missing timestamp", row=i, column=name, value="",
                             expected="an ISO 8601 timestamp such as 2020-01-09T14:00")
        aware = s.str.contains(_OFFSET).to_numpy()
        self.zoned[name] = aware
        eod = end_of_day(s)
        if eod.any() and name not in self.end_of_day:
            self.end_of_day.append(name)
            self.end_of_day_rows.append(np.flatnonzero(eod))
        out = np.empty(len(s), dtype="datetime64[ns]")
        if aware.any():
            tv = parse_iso(s[aware], utc=True)
            self._check_times(s[aware], tv, name)
            out[aware] = tv
        if (~aware).any():
            tv = parse_iso(s[~aware], utc=False)
            self._check_times(s[~aware], tv, name)
            off = np.asarray(utc_offset_h, dtype=float)[~aware]
            out[~aware] = tv - (off * 3600e9).astype("timedelta64[ns]")
        return out

    def _check_times(self, s, tv, name):
        """Raise on the first of `s` whose parsed time `tv` [datetime64] is NaT or out of
        the years."""
        bad = np.isnat(tv)
        odd = ~bad & ((tv < YEARS[0]) | (tv >= YEARS[1]))
        if odd.any():
            idx = s.index[np.flatnonzero(odd)[0]]
            raise self.error("timestamp outside the years 1900-2099 (a typing slip in the "
                             "year?)", row=int(idx), column=name, value=s.loc[idx],
                             expected="a timestamp in 1900-2099")
        if bad.any():
            idx = s.index[np.flatnonzero(bad)[0]]
            hint = ""
            if re.fullmatch(r"\d{5}(\.\d*)?", str(s.loc[idx])):
                hint = " (an Excel date serial number? format the column as a date first)"
            elif re.search(r"[T ](?:2[4-9]|[3-9]\d):\d\d", str(s.loc[idx])):
                hint = (" (an hour of 24 or more? hours run 00-23; only 24:00 may end a "
                        "day)")
            elif day_month_readings(str(s.loc[idx])):
                hint = (" (a date in day/month or month/day order? write year-month-day: "
                        + day_month_readings(str(s.loc[idx])) + ")")
            raise self.error("not an ISO 8601 timestamp" + hint, row=int(idx), column=name,
                             value=s.loc[idx], expected="a timestamp such as 2020-01-09T14:00 "
                             "or 2020-01-09T14:00+01:00")

    def missing_note(self) -> str:
        """The ledger note counting the texts read as missing ("" when there were none),
        e.g. ``p.csv: read as missing: SO4 [mg/L] 'NA' x2 (lines 4, 9)``."""
        parts = []
        for name in (c for c in self.frame.columns if c in self.missing_seen):
            seen = self.missing_seen[name]
            for text, rows in seen.items():
                lines = ", ".join(str(int(x)) for x in self.lines[rows[:5]])
                more = f" and {len(rows) - 5} more" if len(rows) > 5 else ""
                parts.append(f"{self.raw_headers.get(name, name)} {text!r} x{len(rows)} "
                             f"(line{'s' * (len(rows) > 1)} {lines}{more})")
        if not parts:
            return ""
        return f"{self.path.name}: cells read as missing (as empty cells): " + "; ".join(parts)

    def header_again_note(self) -> str:
        """The ledger note of lines repeating the header ("" for none), e.g. ``m.csv: the
        header repeated on line 8762 (a file pasted after itself?): not read as a row``."""
        if not len(self.header_again):
            return ""
        from .ledger import compact_lines
        return (f"{self.path.name}: the header repeated on "
                f"{compact_lines(self.header_again)} (a file pasted after itself?): not "
                "read as a row")

    def meta_again_note(self) -> str:
        """The ledger note of lines repeating a ``#`` line of the top ("" for none), e.g.
        ``m.csv: the metadata repeated on line 8762 (a file pasted after itself?): not
        read as a row``."""
        if not len(self.meta_again):
            return ""
        return (f"{self.path.name}: the metadata repeated on "
                f"{compact_lines(self.meta_again)} (a file pasted after itself?): not "
                "read as a row")

    def end_of_day_note(self) -> str:
        """The ledger note of 24:00 labels read as the next day's 00:00 ("" for none)."""
        if not self.end_of_day:
            return ""
        rows = np.concatenate(self.end_of_day_rows)
        return end_of_day_note(self.path.name, [self.raw_headers.get(c, c)
                                                for c in self.end_of_day], self.lines[rows])

    def unknown_columns(self, known) -> list[str]:
        return [self.raw_headers[n] for n in self.headers if n not in known]
