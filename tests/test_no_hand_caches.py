"""No hand-keyed cache of data outside the stage graph (DEVELOPERS.md, "The stage graph").

A static scan of the package: memoizing decorators, module-level dicts filled at run
time, ``id()`` keys and keys written by hand from option fields (a ``*key`` function
or method returning the fields it reads, or a ``repr``/``hash`` of a tuple of them)
are allowed only where the tables below say why (constants or class metadata, never
data).  A new one fails here: make it a stage of the graph (``workbench.graph``, whose
keys come from the fields each stage declares), or add it with its reason if it caches
no data.
"""
import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "workbench"

#: (file, function) -> why a memoizing decorator there caches no data.
ALLOWED_MEMO = {
    ("graph.py", "_class_fields"): "the field names of an options class",
    ("drydep/zhang_tables.py", "_hermgauss"): "Gauss-Hermite nodes of an order (constants)",
    ("ui/figures_budget.py", "subplot_layout"): "plotly layout JSON of a subplot grid (constants)",
}
#: (file, function) -> why ``id()`` is used there (not as a cache key).
ALLOWED_ID = {
    ("drydep/core_hourly.py", "own"): "arrays handed to an output within one call (no copy twice)",
}
MEMO_NAMES = {"lru_cache", "cache", "memoize"}
#: (file, function) -> why a ``*key`` function returning values it reads from objects
#: keys no cache of data.
ALLOWED_KEYS = {
    ("ui/apps.py", "_tab_key"): "what a tab shows (the graph keys of the results it "
                                "draws and the widgets' values), compared with what it "
                                "drew to skip an equal redraw; indexes no data",
    ("ui/scheme_tab.py", "_key"): "the state the tab's figures were drawn for (the "
                                  "settings by the graph's own token), compared; indexes "
                                  "no data",
}
#: Modules where keys are derived from the declared option fields (the graph itself).
GRAPH_MODULES = {"graph.py", "stages.py"}
#: Calls that derive a key the graph's way (from every field, not a hand-picked few).
GRAPH_DERIVED = {"token", "content_digest"}


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


def _call_name(node) -> str:
    f = node.func
    return f.attr if isinstance(f, ast.Attribute) else getattr(f, "id", "")


def _fields_read(node) -> set:
    """The (object, attribute) pairs read in an expression (``self.pair_split``,
    ``options.air_censored``; a chain ``a.b.c`` counts as ``(a, b)``)."""
    return {(n.value.id, n.attr) for n in ast.walk(node)
            if isinstance(n, ast.Attribute) and isinstance(n.value, ast.Name)}


def hand_keys(tree) -> set:
    """Functions of a module's `tree` that return a key written by hand from fields:
    named ``key`` or ``*key`` and returning two or more fields read from objects, or
    returning ``repr``/``hash``/``str`` of a tuple or list of two or more fields; a
    function that derives its key the graph's way (:data:`GRAPH_DERIVED`) is not one.
    """
    out = set()
    for fn in _functions(tree):
        own = list(_own_nodes(fn))
        if any(isinstance(n, ast.Call) and _call_name(n) in GRAPH_DERIVED for n in own):
            continue
        named = fn.name.lower().endswith("key")
        for node in own:
            if not isinstance(node, ast.Return) or node.value is None:
                continue
            v = node.value
            wrapped = (isinstance(v, ast.Call) and _call_name(v) in ("repr", "hash", "str")
                       and v.args and isinstance(v.args[0], (ast.Tuple, ast.List))
                       and len(_fields_read(v.args[0])) >= 2)
            if wrapped or (named and len(_fields_read(v)) >= 2):
                out.add(fn.name)
    return out


def _scan():
    memo, ids, module_dicts, keys = set(), set(), set(), set()
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE).as_posix()
        tree = ast.parse(path.read_text(encoding="utf-8"))
        if rel not in GRAPH_MODULES:
            keys.update((rel, name) for name in hand_keys(tree))
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
    return memo, ids, module_dicts, keys


def test_memoizing_decorators_cache_no_data():
    memo, _, _, _ = _scan()
    assert memo - set(ALLOWED_MEMO) == set(), "a memoized function: make it a graph stage"
    assert set(ALLOWED_MEMO) <= memo, "an allowed entry is gone: remove it from the table"


def test_no_id_keys():
    _, ids, _, _ = _scan()
    assert ids - set(ALLOWED_ID) == set()


def test_no_empty_module_dicts_filled_at_run_time():
    """Registries filled at import (the stage table) are the only module-level dicts."""
    _, _, module_dicts, _ = _scan()
    assert module_dicts <= {("graph.py", "STAGES")}, module_dicts


def test_no_hand_written_keys():
    """Caching lives in the graph, keyed from the fields each stage declares: no
    method returns a key of option fields picked by hand (``BudgetOptions.flux_key``
    did, unused, until 2026-12)."""
    _, _, _, keys = _scan()
    assert keys - set(ALLOWED_KEYS) == set(), "a hand-written key: make it a graph stage"
    assert set(ALLOWED_KEYS) <= keys, "an allowed entry is gone: remove it from the table"


def test_hand_key_scan_sees_one():
    """The scan of :func:`test_no_hand_written_keys` finds the shapes it is meant to
    (a repr of option fields, a tuple of them under a ``*key`` name) and leaves a key
    derived by the graph, a key of one value and a plain method alone."""
    tree = ast.parse(
        "class Options:\n"
        "    def flux_key(self):\n"
        "        return repr((self.a, self.b, sorted(self.c.items())))\n"
        "    def cache_key(self):\n"
        "        return (self.a, self.b)\n"
        "    def label(self):\n"
        "        return repr((self.a, self.b))\n"
        "    def key(self):\n"
        "        return content_digest([], repr(token(self)))\n"
        "    def path_key(self):\n"
        "        return str(self.path)\n"
        "    def summary(self):\n"
        "        return (self.a, self.b)\n")
    assert hand_keys(tree) == {"flux_key", "cache_key", "label"}
