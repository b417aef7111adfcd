"""Codes of the ``flags`` column of precipitation samples, and lab-code mapping files.

A sample may carry several codes separated by spaces, commas or semicolons
(``"contaminated trace"``).  The codes are self-describing words; each says what it
does to the sample's chemistry and to its gauge depth.  The words and the table are
ours; the actions follow common practice in precipitation chemistry (a contaminated
sample or one exposed with the lid open is useless for concentrations, but the gauge
still measured the rain that fell).

===================  ===============================  ===========  ==============
code                 meaning                          chemistry    gauge depth
===================  ===============================  ===========  ==============
``contaminated``     visibly contaminated             invalid      counts
``lid_open``         wet-only lid stuck open          invalid      counts
                     (dry deposition collected)
``trace``            too little water for analysis    invalid      counts
``not_analysed``     not analysed                     invalid      counts
``overflow``         collector bottle overflowed      invalid      counts
``sample_lost``      sample lost or leaked            invalid      counts
``gauge_failed``     gauge failed or tampered with    valid        invalid (fill)
``invalid_record``   the whole row is invalid         invalid      invalid
``depth_estimated``  gauge depth estimated by the     valid        counts (marked)
                     operator
===================  ===============================  ===========  ==============

A laboratory that writes its own codes names a *mapping file* in the scenario
(``[inputs] flag_map = "lab_codes.toml"``); :func:`read_flag_map` reads it and
:func:`workbench.io.read_precipitation` applies it.  See ``docs/data_formats.md``.
"""
from __future__ import annotations

import re
from pathlib import Path

#: code -> (meaning, chemistry_valid, gauge_valid)
FLAGS = {
    "contaminated": ("visibly contaminated", False, True),
    "lid_open": ("wet-only lid open, dry deposition collected", False, True),
    "trace": ("trace sample, too little water for analysis", False, True),
    "not_analysed": ("not analysed", False, True),
    "overflow": ("collector bottle overflowed", False, True),
    "sample_lost": ("sample lost or leaked", False, True),
    "gauge_failed": ("gauge failed", True, False),
    "invalid_record": ("invalid record", False, False),
    "depth_estimated": ("gauge depth estimated by the operator", True, True),
}

#: The one table of a mapping file.
MAP_SECTION = "codes"
#: Characters that cannot be part of a code (they separate codes in a flags cell).
_SEPARATORS = re.compile(r"[\s,;]")


def split(text) -> list[str]:
    """Split a flags cell into codes.

    >>> split("contaminated; trace"), split(""), split(None)
    (['contaminated', 'trace'], [], [])
    """
    if text is None:
        return []
    s = str(text).strip()
    if s in ("", "nan", "None"):
        return []
    return [c for c in s.replace(",", " ").replace(";", " ").split() if c]


def words_hint() -> str:
    """The valid words, as written in error messages."""
    return "one of the flag words " + ", ".join(FLAGS)


def _key_line(lines: list[str], key: str) -> int | None:
    """1-based line of `key` (bare or quoted) in the TOML text, else None."""
    pat = re.compile(r"^\s*(?:" + re.escape(key) + r"|\"" + re.escape(key) + r"\"|'"
                     + re.escape(key) + r"')\s*=")
    for no, line in enumerate(lines, start=1):
        if pat.match(line):
            return no
    return None


def read_flag_map(path) -> dict[str, tuple[str, ...]]:
    """Read a mapping file that translates a laboratory's flag codes into ours.

    The file is TOML with one table ``[codes]``: each key is a code as the lab writes
    it (case matters), each value one of our words (:data:`FLAGS`), a list of them
    (the lab's code means several things), or an empty list (the code carries no
    information for the screening: it is dropped, and counted in the ledger notes).

    Parameters
    ----------
    path : str or Path
        The mapping file.

    Returns
    -------
    dict
        Lab code -> tuple of our words.

    Raises
    ------
    InputError
        Missing file, invalid TOML, no ``[codes]`` table, another table or key, a
        lab code that contains a separator or is one of our words, a value that is
        not a word of ours; each names the file, the line and the code.
    """
    from .errors import InputError
    from .io.tomlfile import read_toml
    path = Path(path)
    raw, text = read_toml(path, InputError, "flag mapping file not found",
                          "an existing TOML file with a [codes] table")
    lines = text.splitlines()
    for key in raw:
        if key != MAP_SECTION:
            raise InputError("unknown table or key in a flag mapping file", file=path,
                             line=_key_line(lines, key) or _table_line(lines, key), column=key,
                             expected=f"only a [{MAP_SECTION}] table of lab code = word(s)")
    table = raw.get(MAP_SECTION)
    if not isinstance(table, dict) or not table:
        raise InputError(f"no [{MAP_SECTION}] table in the flag mapping file", file=path,
                         line=_table_line(lines, MAP_SECTION), expected=f"a [{MAP_SECTION}] "
                         "table with lines such as K1 = \"contaminated\"")
    out = {}
    for code, value in table.items():
        line = _key_line(lines, code)
        if not code or _SEPARATORS.search(code):
            raise InputError("lab code contains a separator", file=path, line=line,
                             column=f"{MAP_SECTION}.{code}", value=code,
                             expected="a code without spaces, commas or semicolons")
        if code in FLAGS:
            raise InputError("lab code is already a flag word", file=path, line=line,
                             column=f"{MAP_SECTION}.{code}", value=code,
                             expected="a lab code that is not one of the flag words "
                             "(the words are read as they are, without mapping)")
        words = [value] if isinstance(value, str) else value
        if not isinstance(words, list) or not all(isinstance(w, str) for w in words):
            raise InputError("mapping of a lab code is not a word or a list of words",
                             file=path, line=line, column=f"{MAP_SECTION}.{code}", value=value,
                             expected=words_hint() + ", a list of them, or []")
        for w in words:
            if w not in FLAGS:
                raise InputError("unknown flag word in a mapping file", file=path, line=line,
                                 column=f"{MAP_SECTION}.{code}", value=w, expected=words_hint())
        out[code] = tuple(dict.fromkeys(words))
    return out


def _table_line(lines: list[str], name: str) -> int | None:
    """1-based line of the header ``[name]`` in the TOML text, else None."""
    pat = re.compile(r"^\s*\[\s*" + re.escape(name) + r"\s*\]")
    for no, line in enumerate(lines, start=1):
        if pat.match(line):
            return no
    return None
