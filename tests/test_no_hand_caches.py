"""No hand-keyed cache of data outside the stage graph (DEVELOPERS.md, "The stage graph").

A static scan of the package: memoizing decorators, module-level dicts filled at run
time and ``id()`` keys are allowed only where the table below says why (constants or
class metadata, never data).  A new one fails here: make it a stage of the graph
(``workbench.graph``), or add it with its reason if it caches no data.
"""
import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "workbench"

#: (file, function) -> why a memoizing decorator there caches no data.
ALLOWED_MEMO = {
    ("graph.py", "_class_fields"): "the field names of an options class",
    ("drydep/zhang_tables.py", "_hermgauss"): "Gauss-Hermite nodes of an order (constants)",
    ("ui/figures.py", "subplot_layout"): "plotly layout JSON of a subplot grid (constants)",
}
#: (file, function) -> why ``id()`` is used there (not as a cache key).
ALLOWED_ID = {
    ("drydep/core.py", "own"): "arrays handed to an output within one call (no copy twice)",
}
MEMO_NAMES = {"lru_cache", "cache", "memoize"}


def _functions(tree):
    for node in ast.walk(tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            yield node


def _own_nodes(fn):
    """The nodes of a function's body, without those of the functions nested in it."""
    todo = list(fn.body)
    while todo:
        node = todo.pop()
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda)):
            continue
        yield node
        todo.extend(ast.iter_child_nodes(node))


def _decorator_name(d):
    d = d.func if isinstance(d, ast.Call) else d
    return d.attr if isinstance(d, ast.Attribute) else getattr(d, "id", "")


def _scan():
    memo, ids, module_dicts = set(), set(), set()
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE).as_posix()
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for fn in _functions(tree):
            if any(_decorator_name(d) in MEMO_NAMES for d in fn.decorator_list):
                memo.add((rel, fn.name))
            if any(isinstance(node, ast.Call) and getattr(node.func, "id", "") == "id"
                   for node in _own_nodes(fn)):
                ids.add((rel, fn.name))
        for node in tree.body:                   # module level: NAME = {} / dict()
            value = getattr(node, "value", None)
            empty = (isinstance(value, ast.Dict) and not value.keys) or (
                isinstance(value, ast.Call) and getattr(value.func, "id", "") in
                ("dict", "OrderedDict"))
            if empty:
                targets = node.targets if isinstance(node, ast.Assign) else [node.target]
                module_dicts.update((rel, getattr(t, "id", "?")) for t in targets)
    return memo, ids, module_dicts


def test_memoizing_decorators_cache_no_data():
    memo, _, _ = _scan()
    assert memo - set(ALLOWED_MEMO) == set(), "a memoized function: make it a graph stage"
    assert set(ALLOWED_MEMO) <= memo, "an allowed entry is gone: remove it from the table"


def test_no_id_keys():
    _, ids, _ = _scan()
    assert ids - set(ALLOWED_ID) == set()


def test_no_empty_module_dicts_filled_at_run_time():
    """Registries filled at import (the stage table) are the only module-level dicts."""
    _, _, module_dicts = _scan()
    assert module_dicts <= {("graph.py", "STAGES")}, module_dicts
