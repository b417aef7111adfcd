"""What a notebook's later cells say when its app did not open.

A notebook opens its app in one cell (``app = SiteExplorer.from_scenario(SCENARIO)``)
and uses it in later ones (``print(app.statement)``).  When the input is bad, the open
cell shows its one located message (:func:`workbench.ui.controls.short_errors`) and
fails, and ``app`` is never made: a user who runs the next cell by itself met a
``NameError`` traceback, or, worse, the app of an earlier run of other inputs.

:func:`bind_unmade` gives every name the failed cell would have made from the failing
line on a :class:`NotOpened` in its place; any use of it stops with one plain line
(:class:`NothingToShow`, no traceback) saying there is nothing to show until the input
is fixed.

>>> unmade_names("import x\\napp = f(SCENARIO)\\napp\\nb, c = app.g()", 2)
['app', 'b', 'c']
"""
from __future__ import annotations

import ast
import linecache

from ..errors import WorkbenchError

__all__ = ["NothingToShow", "NotOpened", "unmade_names", "bind_unmade"]


class NothingToShow(WorkbenchError):
    """A later cell used what a failed cell did not make."""


def _nothing(name: str) -> str:
    return (f"Nothing to show: '{name}' was not made, because the input did not open (the "
            "message above says what to mend). Fix the input in the first cell, then run "
            "the cells again from the top.")


class NotOpened:
    """Stands in a notebook's namespace for what a failed cell did not make.

    Every use (an attribute, an item, a call, a loop) raises :class:`NothingToShow`;
    shown as a cell's result, it is that sentence.
    """

    def __init__(self, name: str):
        object.__setattr__(self, "_name", name)

    @property
    def text(self) -> str:
        return _nothing(self._name)

    def __getattr__(self, attr):
        if attr.startswith("_"):       # IPython and libraries probing for _repr_html_...
            raise AttributeError(attr)
        raise NothingToShow(self.text)

    def __setattr__(self, attr, value):
        raise NothingToShow(self.text)

    def __getitem__(self, key):
        raise NothingToShow(self.text)

    def __call__(self, *args, **kwargs):
        raise NothingToShow(self.text)

    def __iter__(self):
        raise NothingToShow(self.text)

    def __bool__(self):
        raise NothingToShow(self.text)

    def __repr__(self) -> str:
        return self.text

    __str__ = __repr__


def _targets(node) -> list[str]:
    """Names a top-level statement binds (assignments and imports)."""
    out = []
    if isinstance(node, ast.Assign):
        for t in node.targets:
            out += [n.id for n in ast.walk(t) if isinstance(n, ast.Name)]
    elif isinstance(node, (ast.AnnAssign, ast.AugAssign)) and isinstance(node.target, ast.Name):
        out.append(node.target.id)
    elif isinstance(node, (ast.Import, ast.ImportFrom)):
        out += [(a.asname or a.name).split(".")[0] for a in node.names if a.name != "*"]
    return out


def unmade_names(source: str, lineno: int) -> list[str]:
    """Names that cell `source` binds at or after the top-level statement holding line
    `lineno` (1-based): those a failure at that line left unmade.  [] when the source
    does not parse."""
    try:
        body = ast.parse(source).body
    except SyntaxError:
        return []
    names = []
    for node in body:
        if getattr(node, "end_lineno", node.lineno) >= lineno:
            names += [n for n in _targets(node) if n not in names]
    return names


def _cell_frame(tb):
    """(file name, line) of the notebook cell's own frame in traceback `tb`."""
    while tb is not None:
        code = tb.tb_frame.f_code
        if code.co_name == "<module>" and linecache.getlines(code.co_filename):
            return code.co_filename, tb.tb_lineno
        tb = tb.tb_next
    return None, None


def bind_unmade(namespace: dict, tb) -> list[str]:
    """Put a :class:`NotOpened` in `namespace` for every name the failed cell of
    traceback `tb` did not make (also where an earlier run had made it: it belonged to
    other inputs).  Returns the names."""
    filename, lineno = _cell_frame(tb)
    if filename is None:
        return []
    names = unmade_names("".join(linecache.getlines(filename)), lineno)
    for name in names:
        namespace[name] = NotOpened(name)
    return names
