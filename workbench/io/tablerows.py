"""The text of a CSV file and the shape of its rows: the file opened as UTF-8 text (gzip,
workbooks and UTF-16 refused, located), a header whose unit is not in square brackets,
a row with another number of fields than the header (with the decimal-comma hint),
``#`` lines and the header repeated below the header.

Moved from :mod:`workbench.io.table`, which re-exports them.
"""
from __future__ import annotations

import gzip
import re
import zlib
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError
from ..units import misplaced_unit
from .linechunks import meta_line
from .readbytes import read_hashed


#: A ``#`` line (comment or ``# key: value`` metadata) below the header.
_HASH_LINE = re.compile(r"^[^\S\n]*#.*$", re.M)


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
        s, line = meta_line(m.group()), n_meta + 1 + k
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
