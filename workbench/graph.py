"""The stage graph: named pure stages, their declared option reads, one bounded cache.

Every computation stage of a budget (screening, wet chain, velocities and their
steps, the dry rows, the budget...) is a :class:`Stage` registered in :data:`STAGES`
with the option fields it reads (``reads={"dry": ("ustar_floor", ...)}``).  A
:class:`Graph` runs a stage and keeps its result in one cache, bounded by a count of
entries and by bytes, the least recently used dropped first.  The key of a result is
*derived*, never written by hand: a digest of

- the stage name,
- the values of the option fields the stage declares (:func:`token`),
- the keys of its upstream results (:class:`Node`) -- an input's node carries the
  identity of the data (a study's token) or a digest of its content,
- its plain parameters (a species, a receptor subset...).

The stage receives its options as :class:`OptionView` objects: a read of a field the
stage did not declare raises :class:`UndeclaredOptionRead`, so that a declaration
cannot silently miss a field (dropping ``sulfate_basis`` from the air stage's reads
raises instead of reusing a wrong cached result).  ``docs/engine.md`` lists the stages
and the fields each declares (``python docs/make_engine_table.py``).
"""
from __future__ import annotations

import dataclasses
import functools
import hashlib
import json
from collections import Counter, OrderedDict
from typing import Callable, NamedTuple

import numpy as np

#: Default bounds of a graph's cache: entries and bytes (a velocities Dataset of a
#: site-year with three receptors is about 15-40 MB).  The bytes count each numpy
#: buffer once, however many results hold it (until 2026-12-05 they were counted in
#: each, 1.77 times the arrays held after the demo network's run: the bound was then
#: 3,000 MB, about 1,700 MB of arrays; docs/performance.md, "What the stage graph
#: holds after a network run").
MAX_ENTRIES = 2048
MAX_BYTES = 2_000_000_000
_MISSING = object()


class UndeclaredOptionRead(AttributeError):
    """A stage read an option field that it does not declare."""


class Node(NamedTuple):
    """A value with its derived key (``"<stage>:<digest>"``; inputs ``"input:..."``)."""
    key: str
    value: object


def _field_names(obj) -> frozenset:
    while isinstance(obj, OptionView):
        obj = object.__getattribute__(obj, "_obj")
    if dataclasses.is_dataclass(obj):
        return _class_fields(type(obj))
    return frozenset(vars(obj))


@functools.lru_cache(maxsize=None)
def _class_fields(cls) -> frozenset:
    return frozenset(f.name for f in dataclasses.fields(cls))


class OptionView:
    """Read-only view of an options object that allows the declared fields only.

    Methods of the options class are bound to the view (``mode_of`` reads
    ``particle_modes`` through the guard); ``to_dict`` / ``to_json`` give the declared
    fields only (what the stage read, for the provenance attributes).

    Parameters
    ----------
    obj : dataclass instance, namespace or OptionView
    allowed : iterable of str
        Fields the stage declares.
    stage, group : str
        For the error message.
    changes : dict, optional
        Field values replacing those of `obj` (see :meth:`with_values`).
    """

    __slots__ = ("_obj", "_allowed", "_stage", "_group", "_changes")

    def __init__(self, obj, allowed, stage="", group="", changes=None):
        for name, value in (("_obj", obj), ("_allowed", frozenset(allowed)), ("_stage", stage),
                            ("_group", group), ("_changes", dict(changes or {}))):
            object.__setattr__(self, name, value)

    def __getattr__(self, name):
        if name.startswith("__") or name in OptionView.__slots__:     # (unpickling)
            raise AttributeError(name)
        obj = self._obj
        if name in _field_names(obj):
            if name not in self._allowed:
                raise UndeclaredOptionRead(
                    f"stage {self._stage!r} read {self._group}.{name}, which it does not "
                    f"declare (reads: {sorted(self._allowed)}); add it to the reads of the "
                    "stage's declaration (@stage or declare)")
            return self._changes[name] if name in self._changes else getattr(obj, name)
        if name in ("to_dict", "to_json"):
            return getattr(self, "_" + name)
        attr = getattr(type(_base(obj)), name, _MISSING)
        if callable(attr) and not isinstance(attr, type):
            return attr.__get__(self)                  # the method reads through the guard
        return getattr(obj, name)

    def _to_dict(self) -> dict:
        full = _base(self).to_dict() if hasattr(_base(self), "to_dict") else {
            k: getattr(_base(self), k) for k in _field_names(self)}
        return {k: getattr(self, k) if k in self._changes else v
                for k, v in full.items() if k in self._allowed}

    def _to_json(self) -> str:
        return json.dumps(self._to_dict(), sort_keys=True, default=str)

    def with_values(self, **changes) -> "OptionView":
        """The same view with some (declared) fields replaced."""
        bad = [k for k in changes if k not in self._allowed]
        if bad:
            raise UndeclaredOptionRead(f"stage {self._stage!r} sets undeclared {bad}")
        return OptionView(self._obj, self._allowed, self._stage, self._group,
                          {**self._changes, **changes})

    def __setattr__(self, name, value):
        raise dataclasses.FrozenInstanceError(f"options are read-only in stage {self._stage!r}")

    def __repr__(self):
        return f"OptionView({self._group}: {sorted(self._allowed)})"

    def __reduce__(self):
        return (OptionView, (self._obj, self._allowed, self._stage, self._group, self._changes))


def _base(obj):
    """The options object under (nested) views, with the views' changes applied."""
    if not isinstance(obj, OptionView):
        return obj
    inner = _base(object.__getattribute__(obj, "_obj"))
    changes = object.__getattribute__(obj, "_changes")
    if not changes:
        return inner
    if dataclasses.is_dataclass(inner):
        return dataclasses.replace(inner, **changes)
    return type(inner)(**{**vars(inner), **changes})


class Options:
    """The option groups handed to a stage (``o.wet``, ``o.dry``, ``o.budget``)."""

    def __init__(self, views: dict):
        self.__dict__.update(views)

    def __getattr__(self, name):
        raise UndeclaredOptionRead(f"no option group {name!r} was given to this stage")


# ------------------------------------------------------------------------- keys
def token(value):
    """A canonical, hashable description of an option value or parameter.

    Dicts are sorted, dataclasses are described field by field, arrays by a digest of
    their bytes; a type without a canonical description raises TypeError (never a
    fall-back to ``repr`` or ``id``).
    """
    if isinstance(value, Node):
        return ("node", value.key)
    if isinstance(value, OptionView):
        return token(_base(value))
    if value is None or isinstance(value, (bool, str)):
        return (type(value).__name__, value)
    if isinstance(value, (int, np.integer)):
        return ("int", int(value))
    if isinstance(value, (float, np.floating)):
        return ("float", repr(float(value)))
    if isinstance(value, np.bool_):
        return ("bool", bool(value))
    if isinstance(value, np.datetime64):
        return ("datetime64", str(value))
    if isinstance(value, (tuple, list)):
        return (type(value).__name__, tuple(token(v) for v in value))
    if isinstance(value, (set, frozenset)):
        return ("set", tuple(sorted((token(v) for v in value), key=repr)))
    if isinstance(value, dict):
        return ("dict", tuple(sorted(((token(k), token(v)) for k, v in value.items()), key=repr)))
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return (type(value).__qualname__,
                tuple((f.name, token(getattr(value, f.name))) for f in dataclasses.fields(value)))
    if isinstance(value, np.ndarray):
        return ("array", value.dtype.str, value.shape, content_digest([value]))
    raise TypeError(f"no cache token for a {type(value).__name__}; pass it as a Node")


def content_digest(arrays, *texts) -> str:
    """Digest of some numpy arrays (dtype, shape, bytes; object arrays as texts) and
    texts: 32 hexadecimal digits (BLAKE2b)."""
    h = hashlib.blake2b(digest_size=16)
    for t in texts:
        h.update(str(t).encode() + b"\0")
    for a in arrays:
        a = np.ascontiguousarray(a)
        h.update(f"{a.dtype.str}{a.shape}".encode())
        h.update((a.astype(str) if a.dtype == object else a).tobytes())
    return h.hexdigest()


def variables_digest(variables, *texts) -> str:
    """Digest of named xarray Variables (name, dims and values) and texts."""
    variables = list(variables)
    names = [f"{n}{v.dims}" for n, v in variables]
    return content_digest([v.values for _, v in variables], *texts, *names)


def input_node(name: str, identity: str, value) -> Node:
    """A node for input data: `identity` is a study's token or a content digest."""
    return Node(f"input:{name}:{identity}", value)


# ------------------------------------------------------------------------- stages
@dataclasses.dataclass(frozen=True)
class Stage:
    """A named pure stage.

    Attributes
    ----------
    name : str
    fn : callable or None
        ``fn(o, **deps, **params)`` with ``o`` the :class:`Options` views; None when
        the function is supplied at the call (the velocity steps of
        :mod:`workbench.drydep.core`, closures over the met block).
    reads : dict
        Option group -> the fields the stage reads.
    counts_as : str or None
        The :attr:`workbench.pipeline.Study.counts` entry a computation adds to.
    freeze : bool
        Make the numpy arrays of a (dict) result read-only when cached.
    doc : str
    """
    name: str
    fn: Callable | None
    reads: dict
    counts_as: str | None = None
    freeze: bool = False
    doc: str = ""


#: Every stage, by name (filled by :func:`stage` and :func:`declare`).
STAGES: dict = {}


def declare(name, reads=None, fn=None, counts_as=None, freeze=False, doc=""):
    """Register a stage (a stage of the same name is replaced)."""
    if not doc and fn is not None:           # the first paragraph of its docstring
        doc = " ".join((fn.__doc__ or "").strip().split("\n\n")[0].split())
    STAGES[name] = Stage(name, fn, {g: tuple(f) for g, f in (reads or {}).items()},
                         counts_as, freeze, doc)
    return STAGES[name]


def stage(name, reads=None, counts_as=None, freeze=False):
    """Decorator registering ``fn`` as the stage `name`."""
    def deco(fn):
        declare(name, reads, fn, counts_as, freeze)
        return fn
    return deco


def _root(a: np.ndarray) -> np.ndarray:
    """The numpy array owning the memory of `a` (a view's base, followed)."""
    while isinstance(a.base, np.ndarray):
        a = a.base
    return a


def _sizes(value, held: dict) -> int:
    """The numpy buffers of `value` into `held` (address -> (bytes, owning array)), and
    the bytes of the rest (lazy or pandas data, other objects) returned."""
    if isinstance(value, np.ndarray):
        root = _root(value)
        if root.nbytes:
            held[root.__array_interface__["data"][0]] = (root.nbytes, root)
        return 0
    if hasattr(value, "nbytes") and hasattr(value, "variables"):      # xarray Dataset
        return sum(_variable(v, held) for v in value.variables.values())
    if hasattr(value, "variable") and hasattr(value, "coords"):       # xarray DataArray
        return _variable(value.variable, held) + sum(
            _variable(c.variable, held) for c in value.coords.values())
    if hasattr(value, "memory_usage") and hasattr(value, "columns"):    # DataFrame
        return int(value.memory_usage(deep=False).sum())
    if isinstance(getattr(value, "nbytes", None), (int, np.integer)):   # e.g. a Study
        return int(value.nbytes)
    if isinstance(value, dict):
        return sum(_sizes(v, held) for v in value.values())
    if isinstance(value, (tuple, list)):
        return sum(_sizes(v, held) for v in value)
    return 64


def _variable(var, held: dict) -> int:
    data = getattr(var, "_data", None)
    if isinstance(data, np.ndarray):
        return _sizes(data, held)
    try:
        return int(var.nbytes)                  # lazy (dask, a file) or an index
    except Exception:                                                   # odd
        return 0


def _freeze(value):
    if isinstance(value, np.ndarray):
        value.flags.writeable = False
    elif isinstance(value, dict):
        for v in value.values():
            _freeze(v)
    return value


class Graph:
    """Runs stages, keeping their results in one bounded (LRU) cache.

    Parameters
    ----------
    max_entries : int
    max_bytes : int
        Rough bound of the cached results [bytes] (an entry larger than this is still
        kept alone, until the next one).  A numpy buffer held by several results (a
        step's arrays in the velocities Dataset, the filled Vd in the rows of every
        species that reads it) is counted once, while one of them is cached.

    Attributes
    ----------
    counts : collections.Counter
        Computations per stage name (what a test counts).
    edges : dict
        stage name -> the stage (and input) names it was run on, as observed.
    """

    def __init__(self, max_entries=MAX_ENTRIES, max_bytes=MAX_BYTES):
        self.max_entries, self.max_bytes = int(max_entries), int(max_bytes)
        self._store = OrderedDict()      # key -> (value, own bytes, buffers), oldest first
        self._buffers = {}               # address -> [entries holding it, bytes, array]
        self._bytes = 0
        self.counts = Counter()
        self.edges = {}

    def __len__(self):
        return len(self._store)

    @property
    def nbytes(self) -> int:
        return self._bytes

    def __getstate__(self):                         # a pickled graph travels empty
        return {"max_entries": self.max_entries, "max_bytes": self.max_bytes}

    def __setstate__(self, state):
        self.__init__(state["max_entries"], state["max_bytes"])

    # ------------------------------------------------------------------ keys
    def key(self, st: Stage, options=None, deps=None, params=None) -> str:
        """The derived key of a stage's result."""
        options, deps, params = options or {}, deps or {}, params or {}
        opts = []
        for group, names in sorted(st.reads.items()):
            if group not in options:
                continue
            obj = options[group]
            have = _field_names(obj)
            opts.append((group, tuple((n, token(getattr(obj, n))) for n in names if n in have)))
        parts = (st.name, tuple(opts), tuple(sorted((k, d.key) for k, d in deps.items())),
                 tuple(sorted((k, token(v)) for k, v in params.items())))
        h = hashlib.blake2b(repr(parts).encode(), digest_size=16).hexdigest()
        return f"{st.name}:{h}"

    def _observe(self, st, deps):
        ups = self.edges.setdefault(st.name, set())
        ups.update(d.key.split(":", 2)[0] if not d.key.startswith("input:")
                   else "input:" + d.key.split(":", 2)[1] for d in deps.values())

    # ------------------------------------------------------------------ running
    def run(self, name, options=None, deps=None, params=None, fn=None, counts=None) -> Node:
        """The result of stage `name` (cached, else computed and cached).

        Parameters
        ----------
        name : str or Stage
        options : dict, optional
            group -> options object (dataclass or view).
        deps : dict, optional
            name -> :class:`Node`: upstream results and inputs (their values are
            passed to the stage function by name; their keys enter the key).
        params : dict, optional
            Plain values passed by name (and entering the key through :func:`token`).
        fn : callable, optional
            The stage function when the stage declares none.
        counts : dict, optional
            Also incremented at :attr:`Stage.counts_as` on a computation.
        """
        st = STAGES[name] if isinstance(name, str) else name
        options, deps, params = options or {}, deps or {}, params or {}
        key = self.key(st, options, deps, params)
        self._observe(st, deps)
        got = self.get(key)
        if got is not _MISSING:
            return Node(key, got)
        views = Options({g: OptionView(o, st.reads.get(g, ()), st.name, g)
                         for g, o in options.items()})
        value = (fn or st.fn)(views, **{k: d.value for k, d in deps.items()}, **params)
        self.put(st, key, value, counts)
        return Node(key, value)

    def get(self, key):
        """The cached value of `key` (made the most recent), or a sentinel."""
        hit = self._store.get(key, _MISSING)
        if hit is _MISSING:
            return _MISSING
        self._store.move_to_end(key)
        return hit[0]

    def has(self, key) -> bool:
        return key in self._store

    def put(self, st, key, value, counts=None):
        """Store a computed value (counted as a computation of `st`)."""
        st = STAGES[st] if isinstance(st, str) else st
        if st.freeze:
            _freeze(value)
        self.counts[st.name] += 1
        if counts is not None and st.counts_as:
            counts[st.counts_as] = counts.get(st.counts_as, 0) + 1
        if key in self._store:
            self._drop(self._store.pop(key))
        held = {}
        own = _sizes(value, held)
        for address, (n, root) in held.items():
            got = self._buffers.get(address)
            if got is None:
                self._buffers[address] = [1, n, root]
                self._bytes += n
            else:
                got[0] += 1
        self._store[key] = (value, own, tuple(held))
        self._bytes += own
        while len(self._store) > 1 and (len(self._store) > self.max_entries
                                        or self._bytes > self.max_bytes):
            self._drop(self._store.popitem(last=False)[1])

    def _drop(self, entry):
        """Take a removed entry's bytes off the count (its buffers held elsewhere in
        the cache stay counted)."""
        _, own, addresses = entry
        self._bytes -= own
        for address in addresses:
            got = self._buffers[address]
            got[0] -= 1
            if not got[0]:
                del self._buffers[address]
                self._bytes -= got[1]

    def clear(self):
        self._store.clear()
        self._buffers.clear()
        self._bytes = 0

    def scratch(self) -> "Graph":
        """A graph for the inner results of one stage: it reads this graph's cache (a
        result found there is used, and made the most recent there) and keeps what it
        computes itself, under this graph's bounds, only as long as it is held; its
        computations are counted in this graph's :attr:`counts` (and :attr:`edges`).

        The Monte Carlo's runs of the velocities on scaled air
        (:mod:`workbench.analysis.airvd`) compute their velocities, fills and sums in
        one: the stage of their rows is cached here, their inner results are not, so
        the eight runs neither push the point run's results out of the cache nor have
        to be held for the rows to be found again."""
        g = _Scratch(self.max_entries, self.max_bytes)
        g.parent, g.counts, g.edges = self, self.counts, self.edges
        return g

    def steps(self, identity: str, counts=None, air: str | None = None) -> "Steps":
        """The velocity steps of one calculation on inputs of this `identity` (`air`:
        the identity of an air the steps that read it were given, see :class:`Steps`)."""
        return Steps(self, identity, counts, air)


MISSING = _MISSING


class _Scratch(Graph):
    """:meth:`Graph.scratch`: its own cache first, then its parent's."""

    parent: Graph

    def get(self, key):
        hit = super().get(key)
        return self.parent.get(key) if hit is _MISSING else hit

    def has(self, key) -> bool:
        return super().has(key) or self.parent.has(key)


class Steps:
    """The steps of one :func:`workbench.drydep.velocities` calculation in a graph.

    `identity` names the met block and the surfaces (a study's token and the key of
    its surfaces, or a content digest); each step's key is derived from its declared
    reads, this identity, its parameters and the keys of the steps it is run on.

    `air`, where given, is the key of an air other than the one `identity` stands for
    (the Monte Carlo's grid of scaled air, :mod:`workbench.analysis.airvd`): a step run
    with ``reads_air=True`` (one that reads the hourly inputs made from the air) has it
    in its key as well; the others, and so their results, are those of the same met
    and surfaces whatever the air (computed once for the grid's runs).
    """

    def __init__(self, graph: Graph, identity: str, counts=None, air: str | None = None):
        self.graph, self.identity, self.counts, self.air = graph, identity, counts, air
        self.keys = {}

    def _deps(self, after, reads_air=False):
        deps = {"inputs": Node(f"input:met+surfaces:{self.identity}", None)}
        if reads_air and self.air is not None:
            deps["air"] = Node(self.air, None)
        deps.update({d: Node(self.keys[d], None) for d in after})
        return deps

    def run(self, name, compute, opt, after=(), reads_air=False, **params):
        """``compute(view)`` of step `name` (cached); `after`: the steps it reads;
        `reads_air`: it reads the hourly inputs made from the air."""
        node = self.graph.run(name, {"dry": opt}, self._deps(after, reads_air), params,
                              fn=lambda o, **_: compute(o.dry), counts=self.counts)
        self.keys[name] = node.key
        return node.value

    def lookup(self, name, opt, after=(), **params):
        """(key, cached value or :data:`MISSING`, guarded view) of a step (one that does
        not read the air)."""
        st = STAGES[name]
        deps = self._deps(after)
        key = self.graph.key(st, {"dry": opt}, deps, params)
        self.graph._observe(st, deps)
        return key, self.graph.get(key), OptionView(opt, st.reads.get("dry", ()), name, "dry")

    def store(self, name, key, value):
        self.graph.put(name, key, value, self.counts)


def unread_fields(classes) -> dict:
    """``{group: [fields no stage declares]}`` for option classes ``{group: cls}``."""
    declared = {g: set() for g in classes}
    for st in STAGES.values():
        for g, names in st.reads.items():
            declared.setdefault(g, set()).update(names)
    return {g: [f.name for f in dataclasses.fields(cls) if f.name not in declared[g]]
            for g, cls in classes.items()}


def readers(group: str, field: str) -> list:
    """Names of the stages declaring ``group.field``."""
    return [s.name for s in STAGES.values() if field in s.reads.get(group, ())]
