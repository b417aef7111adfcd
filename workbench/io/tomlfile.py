"""Reading a TOML file (site catalogue, scenario) with located errors."""
from __future__ import annotations

import re
from pathlib import Path

from ..errors import InputError
from .readbytes import read_hashed

try:  # Python >= 3.11
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib


def read_toml(path, error=InputError, missing="file not found", expected="an existing TOML file"):
    """Parse a TOML file; data only, nothing is executed.

    Parameters
    ----------
    path : str or Path
    error : type
        The InputError subclass to raise.
    missing, expected : str
        Wording of the error for a file that does not exist.

    Returns
    -------
    data : dict
    text : str
        The file's text (for finding the line of a key).
    """
    path = Path(path)
    try:
        raw = read_hashed(path)         # the bytes parsed are the bytes hashed
    except FileNotFoundError:
        raise error(missing, file=path, expected=expected) from None
    except IsADirectoryError:
        raise error("is a directory", file=path, expected=expected) from None
    except PermissionError:
        raise error("file cannot be read (permission denied)", file=path,
                    expected="a readable file") from None
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise error("a UTF-16 text file", file=path, line=1,
                    expected="a file saved as UTF-8")
    try:
        text = raw.decode("utf-8-sig")          # a byte-order mark is simply accepted
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        col = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise error(f"not UTF-8 text (byte 0x{raw[exc.start]:02x} at byte offset {exc.start}, "
                    f"character {col} of the line)", file=path, line=line,
                    value=raw[raw.rfind(b"\n", 0, exc.start) + 1:].split(b"\n")[0]
                    .decode("latin-1").strip(),
                    expected="a file saved as UTF-8 (it looks like Latin-1 or Windows-1252: "
                    "save as UTF-8)") from None
    try:
        return tomllib.loads(text), text
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        line = int(m.group(1)) if m else None
        raise error(f"invalid TOML ({exc}){_value_hint(text, line)}{_twice_hint(exc)}",
                    file=path, line=line) from None
    except RecursionError:
        raise error("TOML nested too deeply to read", file=path,
                    expected="tables and arrays nested a few levels at most") from None


#: A value TOML cannot read that a spreadsheet or another language writes: a boolean
#: in capitals or as yes/no (``True``, ``FALSE``, ``yes``), and a bare word.
_BARE_BOOL = re.compile(r"=\s*(True|False|TRUE|FALSE|[Yy]es|[Nn]o|YES|NO)\s*(#.*)?$")
_BARE_WORD = re.compile(r"=\s*([A-Za-z_][^\s\"'#\[\]{}]*)\s*(#.*)?$")
_DECIMAL_COMMA = re.compile(r"=\s*([-+]?\d+),(\d+)\s*(#.*)?$")
_BARE_DATE = re.compile(r"=\s*(\d{1,4}[/.]\d{1,2}[/.]\d{1,4}[^#]*?)\s*(#.*)?$")
#: An unquoted date-time at 24:00 (the end of a day), which TOML refuses (hours 00-23).
_BARE_END_OF_DAY = re.compile(r"=\s*(\d{4}-\d\d-\d\d)[T ]24:00(?::00(?:\.0+)?)?"
                              r"(Z|[+-]\d\d:\d\d)?\s*(#.*)?$")


def _twice_hint(exc) -> str:
    """What a key or table given twice (a row pasted twice) asks for; "" otherwise."""
    if "Cannot overwrite a value" in str(exc):
        return ("; a key given twice in one table (a line pasted twice?): keep one, the "
                "value you mean")
    if re.search(r"Cannot declare .* twice", str(exc)):
        return ("; a table given twice (a block pasted twice?): keep one table with "
                "each key once ([[site]] starts each new site)")
    return ""


def _value_hint(text, line) -> str:
    """What to write for a value of `line` that TOML refuses ("" when none is seen):
    ``compare_schemes = True`` (TOML's booleans are lower case), a bare word
    (``resolution = year``), a date with slashes or dots (``start = 01/01/2021``) and a
    decimal comma (``cl_nut_n = 714,5``).

    >>> _value_hint("a = True", 1)
    "; write true or false, lower case (TOML's booleans): got True"
    >>> _value_hint("cl_nut_n = 714,5", 1)
    '; a decimal comma? write 714.5'
    >>> print(_value_hint("end = 2021-12-31T24:00:00Z", 1))
    ; TOML's date-times take the hours 00-23: write the end of 2021-12-31 as the next day's 00:00, 2022-01-01T00:00:00Z, or in quotes, "2021-12-31T24:00Z" (read so)
    >>> _value_hint('resolution = year', 1)
    '; write text in quotes: resolution = "year"'
    """
    if not line:
        return ""
    lines = text.splitlines()
    if not 0 < line <= len(lines):
        return ""
    s = lines[line - 1]
    m = _BARE_BOOL.search(s)
    if m:
        return f"; write true or false, lower case (TOML's booleans): got {m.group(1)}"
    m = _DECIMAL_COMMA.search(s)
    if m:
        return f"; a decimal comma? write {m.group(1)}.{m.group(2)}"
    m = _BARE_END_OF_DAY.search(s)
    if m:
        import datetime as _dt
        try:
            day = _dt.date.fromisoformat(m.group(1)) + _dt.timedelta(days=1)
        except ValueError:
            return ""
        zone = m.group(2) or ""
        return (f"; TOML's date-times take the hours 00-23: write the end of "
                f"{m.group(1)} as the next day's 00:00, {day.isoformat()}T00:00:00{zone}, "
                f"or in quotes, \"{m.group(1)}T24:00{zone}\" (read so)")
    m = _BARE_WORD.search(s) or _BARE_DATE.search(s)
    if m and m.group(1).lower() not in ("true", "false", "inf", "nan"):
        key = s[:s.index("=")].strip()
        return f'; write text in quotes: {key} = "{m.group(1)}"'
    return ""


_HEADER = re.compile(r"^\s*\[\[?\s*([^\[\]]+?)\s*\]\]?\s*(?:#.*)?$")
_KEY = re.compile(r"^\s*((?:[A-Za-z0-9_\-]+|\"[^\"]*\"|'[^']*')"
                  r"(?:\s*\.\s*(?:[A-Za-z0-9_\-]+|\"[^\"]*\"|'[^']*'))*)\s*=")


def _dotted(name: str) -> list[str]:
    """The parts of a dotted TOML name, unquoted (``site."a b".x`` -> [site, a b, x])."""
    return [p.strip().strip("\"'") for p in
            re.findall(r"\"[^\"]*\"|'[^']*'|[^.]+", name)]


def toml_line(text_lines, path, start: int = 0, end: int | None = None) -> int | None:
    """The 1-based line where the key or table `path` is written, in lines [start, end).

    Parameters
    ----------
    text_lines : list of str
        The file's lines.
    path : sequence of str
        The dotted name of the key or table (``["site", "critical_loads", "moorland"]``);
        an array of tables (``[[site]]``) is named without its index: give the lines of
        one of its tables as [start, end).

    Returns
    -------
    int or None
        The first line that writes `path` or something inside it: a table header
        (``[site.critical_loads.moorland]``, or a table below it), a key of the table
        above (``cl_nut_n = ...`` under ``[site.critical_loads]``), or a dotted key
        (``critical_loads.cl_nut_n = ...`` under ``[site]``); None when none does.

    >>> toml_line(["[[site]]", "id = 1", "", "[site.reciever.x]", "a = 1"], ["site", "reciever"])
    4
    >>> toml_line(["[a]", "b.c = 1"], ["a", "b", "c"]), toml_line(["x = 1"], ["y"])
    (2, None)
    """
    want = [str(p) for p in path]
    stop = len(text_lines) if end is None else min(end, len(text_lines))
    table: list[str] = []
    for i in range(max(start, 0), stop):
        ln = text_lines[i]
        m = _HEADER.match(ln)
        if m:
            table = _dotted(m.group(1))
            if table[:len(want)] == want:
                return i + 1
            continue
        m = _KEY.match(ln)
        if m and (table + _dotted(m.group(1)))[:len(want)] == want:
            return i + 1
    return None
