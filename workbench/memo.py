"""Helpers of the caches: bounded dicts and content digests.

The caches of :class:`workbench.pipeline.Study` and of
:func:`workbench.drydep.velocities` keep their entries in plain dicts, oldest first
(insertion order); :func:`trim` and :func:`recent` bound them.  Content-keyed caches key
an intermediate by :func:`digest` of the xarray Variables it reads.
"""
from __future__ import annotations

import hashlib

import numpy as np


def trim(entries: dict, limit: int) -> None:
    """Drop the oldest entries of `entries` (insertion order) beyond `limit`."""
    while len(entries) > limit:
        entries.pop(next(iter(entries)))


def recent(entries: dict, key, limit: int, make=dict):
    """``entries[key]`` (``make()`` when new), moved to the most recent place; the
    oldest entries beyond `limit` are dropped."""
    value = entries.pop(key) if key in entries else make()
    entries[key] = value
    trim(entries, limit)
    return value


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
