"""Optional heavy dependencies, imported where they are used.

The workbench runs on numpy, pandas and xarray alone.  dask (chunked, lazy met
records) and distributed (a cluster) are in the ``scale`` extra; a function that needs
one calls :func:`require`, which imports it or raises one :class:`MissingExtraError`
that names the extra to install.
"""
from __future__ import annotations

import importlib

from .errors import WorkbenchError

#: module -> (extra that provides it, what it is needed for)
EXTRAS = {
    "dask": ("scale", "chunked (lazy) met records"),
    "dask.array": ("scale", "chunked (lazy) met records"),
    "distributed": ("scale", "running on a dask cluster"),
    "numba": ("bench", "the compiled reference kernel of benchmarks/engine_vs_reference.py"),
}


class MissingExtraError(WorkbenchError, ImportError):
    """An optional dependency is not installed."""


def require(module: str):
    """Import `module`, or raise :class:`MissingExtraError` naming the extra to install.

    >>> require("json").__name__
    'json'
    """
    try:
        return importlib.import_module(module)
    except ImportError as exc:
        extra, why = EXTRAS.get(module, (None, "this feature"))
        how = (f'python -m pip install "deposition-workbench[{extra}]"' if extra
               else f"python -m pip install {module.split('.')[0]}")
        raise MissingExtraError(f"{module} is not installed ({exc}); it is needed for {why}: "
                                f"install it with {how}") from exc
