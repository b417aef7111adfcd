"""The project's error and warning types.

Every problem with a user's input is reported as one :class:`InputError` whose
message names the file, the line, the column, the offending value and what was
expected, so that no traceback from deep inside pandas reaches a user.
"""
from __future__ import annotations

import difflib


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


class ScenarioError(InputError):
    """A problem in a scenario file (unknown key, wrong type, missing path)."""


class WorkbenchDeprecationWarning(DeprecationWarning):
    """Deprecation warnings of the package (turned into errors in the tests)."""


def suggest(word: str, choices) -> str:
    """Return ``" (did you mean 'x'?)"`` for the nearest valid choice, or ``""``.

    >>> suggest("precipitaton", ["precipitation", "air"])
    " (did you mean 'precipitation'?)"
    """
    close = difflib.get_close_matches(str(word), [str(c) for c in choices], n=1, cutoff=0.6)
    return f" (did you mean {close[0]!r}?)" if close else ""
