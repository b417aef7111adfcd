"""Small helpers: a bounded dict and a content digest.

The caches of the pipeline are the one stage graph of :mod:`workbench.graph` (keys
derived from the options each stage declares); what is left here is :func:`trim`,
which bounds the small table of hour slots of :mod:`workbench.dryflux`, and
:func:`digest` of xarray Variables (the graph has its own,
:func:`workbench.graph.variables_digest`).
"""
from __future__ import annotations

import hashlib

import numpy as np


def trim(entries: dict, limit: int) -> None:
    """Drop the oldest entries of `entries` (insertion order) beyond `limit`."""
    while len(entries) > limit:
        entries.pop(next(iter(entries)))


def digest(variables, *texts: str) -> str:
    """Digest of some texts and of named xarray Variables (name, dims and values).

    Parameters
    ----------
    variables : iterable of (str, xarray.Variable)
        Object arrays are hashed as their texts.
    *texts : str

    Returns
    -------
    str
        32 hexadecimal digits (BLAKE2b, 16 bytes).
    """
    h = hashlib.blake2b(digest_size=16)
    for t in texts:
        h.update(t.encode())
    for name, v in variables:
        h.update(str(name).encode() + str(v.dims).encode())
        values = np.ascontiguousarray(v.values)
        h.update((values.astype(str) if values.dtype == object else values).tobytes())
    return h.hexdigest()
