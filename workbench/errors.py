"""The project's error and warning types.

Every problem with a user's input is reported as one :class:`InputError` whose
message names the file, the line, the column, the offending value and what was
expected, so that no traceback from deep inside pandas reaches a user.
"""
from __future__ import annotations

import difflib
import re


class WorkbenchError(Exception):
    """Base class of the errors raised on purpose by the workbench."""


class InputError(WorkbenchError, ValueError):
    """A problem with an input file, located as precisely as possible.

    Parameters
    ----------
    problem : str
        What is wrong, in a few words ("negative depth").
    file : str or Path, optional
        The file that holds the problem.
    line : int, optional
        1-based line number in the file (the header is line 1 of a CSV file
        without comment lines).
    column : str, optional
        Column (or key) name.
    value : object, optional
        The offending value as written in the file.
    expected : str, optional
        What would have been accepted.

    Examples
    --------
    >>> err = InputError("negative depth", file="p.csv", line=4,
    ...                  column="gauge_depth [mm]", value="-2", expected="a depth >= 0")
    >>> print(err)
    p.csv, line 4, column 'gauge_depth [mm]': negative depth: got '-2', expected a depth >= 0
    """

    def __init__(self, problem, *, file=None, line=None, column=None, value=None,
                 expected=None):
        self.problem = problem
        self.file = str(file) if file is not None else None
        self.line = line
        self.column = column
        self.value = value
        self.expected = expected
        super().__init__(self._message())

    def _message(self) -> str:
        where = []
        if self.file is not None:
            where.append(self.file)
        if self.line is not None:
            where.append(f"line {self.line}")
        if self.column is not None:
            where.append(f"column {self.column!r}")
        text = ", ".join(where)
        text = f"{text}: {self.problem}" if text else self.problem
        if self.value is not None:
            text += f": got {str(self.value)!r}"
        if self.expected is not None:
            text += f", expected {self.expected}"
        return text


class ModelDefectError(WorkbenchError, RuntimeError):
    """A result that the model's own equations rule out: a defect of the code, not of
    the input (e.g. a particle Vd above the aerodynamic limit,
    :func:`workbench.drydep.particle_limit.check_aerodynamic_limit`).  The message
    locates it and asks for a report."""


class ScenarioError(InputError):
    """A problem in a scenario file (unknown key, wrong type, missing path)."""


class WorkbenchDeprecationWarning(DeprecationWarning):
    """Deprecation warnings of the package (turned into errors in the tests)."""


def suggest(word: str, choices) -> str:
    """Return ``" (did you mean 'x'?)"`` for the nearest valid choice, or ``""``.

    >>> suggest("precipitaton", ["precipitation", "air"])
    " (did you mean 'precipitation'?)"
    >>> suggest("grasland", ["moorland", "grass"]), suggest("Grass", ["grass", "crops"])
    (" (did you mean 'grass'?)", " (did you mean 'grass'?)")
    """
    word, choices = str(word), [str(c) for c in choices]
    same = [c for c in choices if c.lower() == word.lower()]          # only the case differs
    close = same or difflib.get_close_matches(word, choices, n=3, cutoff=0.6)
    # among close choices, one sharing the word's first three letters reads as meant
    start = [c for c in close if c[:3].lower() == word[:3].lower()]
    close = start or close
    return f" (did you mean {close[0]!r}?)" if close else ""


def missing_file_hint(path, given=None) -> str:
    """Words for a file that is not there: where it was looked for and the nearest
    name beside it (``" (did you mean 'air.csv'?)"``, :func:`suggest`), or that its
    folder does not exist either.

    Parameters
    ----------
    path : str or Path
        The absolute path looked for.
    given : str or Path, optional
        The path as the user wrote it; when it is relative, the words say where it was
        looked for (`path`).

    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp()); _ = (d / "air.csv").write_text("")
    >>> missing_file_hint(d / "ari.csv")
    " (did you mean 'air.csv'?)"
    >>> missing_file_hint(d / "x" / "air.csv").startswith(" (no folder ")
    True
    """
    from pathlib import Path
    path = Path(path)
    looked = f"; looked for {path}" if given is not None and not Path(given).is_absolute() \
        else ""
    folder = path.parent
    if not folder.is_dir():
        return f" (no folder {folder}{looked})"
    try:
        names = sorted(p.name for p in folder.iterdir() if p.is_file())
    except OSError:
        names = []
    near = suggest(path.name, names)
    if near:
        return near[:-1] + looked + ")"
    return f" ({looked[2:]})" if looked else ""


def check_choice(option: str, value, choices) -> str:
    """`value` when it is one of `choices`, else a ValueError naming `option`.

    The message lists the choices and the nearest one (:func:`suggest`):

    >>> check_choice("particle_settling", "stoke", ("stokes", "clift_gauvin"))
    Traceback (most recent call last):
    ...
    ValueError: unknown particle_settling 'stoke'; use one of stokes, clift_gauvin (did you mean 'stokes'?)
    """
    if value not in choices:
        raise ValueError(f"unknown {option} {value!r}; use one of "
                         f"{', '.join(choices)}{suggest(value, choices)}")
    return value


#: An unsigned number as typed (digits, decimals, exponent): the pattern that the
#: readers' hints on numbers written with a unit share.
NUMBER_TEXT = r"(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"


#: How a TOML value type reads in a message.
_TYPE_WORDS = {int: "a whole number", float: "a number", str: "text in quotes",
               list: "a list [...]", dict: "a table", bool: "true or false"}


def type_words(typ) -> str:
    """The expected TOML type in words ("a number" for int or float).

    >>> type_words((int, float)), type_words(str)
    ('a number', 'text in quotes')
    """
    types = (typ,) if isinstance(typ, type) else tuple(typ)
    if set(types) == {int, float}:
        return "a number"
    return " or ".join(_TYPE_WORDS.get(t, t.__name__) for t in types)


def type_hint(v) -> str:
    """A hint for a value of the wrong type: a number written in quotes, or degrees with
    minutes ("" otherwise).

    >>> type_hint("52.0"), type_hint("52°30'N"), type_hint("0.2 m")
    ('; write the number without quotes', "; write decimal degrees (52°30' is 52.5)", '; write the number alone, without quotes, in the unit the key names')
    """
    if isinstance(v, str) and any(m in v for m in ("°", "'", '"')) and any(c.isdigit() for c in v):
        return "; write decimal degrees (52°30' is 52.5)"
    if isinstance(v, str) and re.match(r"\s*[-+]?\d+(\.\d*)?\s*[A-Za-z%]", v):
        return "; write the number alone, without quotes, in the unit the key names"
    if isinstance(v, str):
        try:
            float(v)
        except ValueError:
            return ""
        return "; write the number without quotes"
    return ""
