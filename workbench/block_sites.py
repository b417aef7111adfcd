"""The sites of a network in blocks: blocks of the sites that ask for the same receptor
surfaces (:func:`wanted_blocks`, :func:`site_blocks`), a block without met joined to
one with some, what a block needs of a worker's memory (:func:`block_need`,
:func:`describe_block`) and its texts held once each (:func:`shared_texts`) (split
from :mod:`workbench.blocks`, which re-exports every name).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .io.ledger import shared_strings


def _n_sites(n) -> str:
    """``1 site``, ``2 sites``."""
    return f"{n} site" + ("" if n == 1 else "s")


def blocks_with_met(wanted, inputs, receptors) -> list:
    """`wanted` (:func:`wanted_blocks`) with each block whose sites have no hour of met
    (a site listed in sites.toml before its first record) joined to the first block
    that has some, its surfaces added in the network's order: such a block alone has
    an empty met table, which the dry chain cannot take; in a whole run, and so here,
    those sites' dry budgets are missing.  Unchanged when every block has met or none
    has.

    >>> from types import SimpleNamespace as S
    >>> import xarray as xr
    >>> inp = S(met=xr.Dataset(coords={"site": ["a", "b"]}))
    >>> blocks_with_met([(["a"], ("grass",)), (["n"], ("crops",)), (["b"], ("grass",))],
    ...                 inp, ["grass", "crops"])
    [(['a', 'n'], ('grass', 'crops')), (['b'], ('grass',))]
    """
    met = getattr(inputs, "met", None)
    have = set(met["site"].values.astype(str)) if met is not None and "site" in met.coords \
        else set()
    has = [any(s in have for s in sites) for sites, _ in wanted]
    if all(has) or not any(has):
        return list(wanted)
    host = has.index(True)
    out = [(list(sites), tuple(recs)) for sites, recs in wanted]
    for i, (sites, recs) in enumerate(wanted):
        if not has[i]:
            hs, hr = out[host]
            joined = set(hr) | set(recs)
            out[host] = (hs + list(sites), tuple(r for r in receptors if r in joined))
    return [b for b, h in zip(out, has) if h]


def site_blocks(sites, block_sites=None) -> list:
    """The site ids in consecutive blocks of at most `block_sites` (None: one block).

    >>> site_blocks(["a", "b", "c"], 2)
    [['a', 'b'], ['c']]
    """
    sites = list(sites)
    if block_sites is None or block_sites >= len(sites):
        return [sites] if sites else []
    if int(block_sites) < 1:
        raise ValueError(f"block_sites must be at least 1, got {block_sites!r}")
    n = int(block_sites)
    return [sites[i:i + n] for i in range(0, len(sites), n)]


def wanted_blocks(catalogue, receptors, block_sites=None) -> list:
    """Blocks of sites that ask for the same receptor surfaces, and those surfaces.

    The sites are grouped by the set of surfaces they ask for (their own land use and
    their further receptors); each group, in catalogue order, is cut into blocks of at
    most `block_sites`.  A block run with ``Study.run(..., receptors=surfaces)``
    computes only (site, receptor) pairs that a site asks for.

    Parameters
    ----------
    catalogue : SiteCatalogue
        The network's catalogue, site overrides applied.
    receptors : list of str
        Every receptor surface of the network, in the order of a whole run.
    block_sites : int, optional
        Largest block [sites] (default: one block per group).

    Returns
    -------
    list of (list of str, tuple of str)
        (site ids, receptor surfaces in the network's order), groups in the order of
        their first site in the catalogue.

    >>> from types import SimpleNamespace as S
    >>> cat = [S(id="a", surfaces=("grass",)), S(id="b", surfaces=("forest", "grass")),
    ...        S(id="c", surfaces=("grass",))]
    >>> wanted_blocks(cat, ["grass", "forest"], 1)
    [(['a'], ('grass',)), (['c'], ('grass',)), (['b'], ('grass', 'forest'))]
    """
    groups = {}
    for s in catalogue:
        wanted = set(s.surfaces)
        key = tuple(r for r in receptors if r in wanted)
        groups.setdefault(key, []).append(s.id)
    return [(block, key) for key, ids in groups.items() for block in site_blocks(ids, block_sites)]


#: Memory of a block of sites at its peak in the worker, per site-hour and receptor
#: surface [bytes] (measured with tracemalloc on the demo network, 8 years of hours:
#: 122 MiB for one site x 70,128 hours x 2 receptors, 164 MiB for 3: 915 and 816 bytes;
#: docs/performance.md, "A block of sites on a worker").  The hourly met of the block
#: itself, (sites x hours x variables x 8 bytes), is about 1/30 of it.
BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR = 900
#: Memory of a worker process before its first block [MiB] (the same measure: 63 MiB
#: idle, 128 MiB with the package and the modules a block imports).
WORKER_BASE_MIB = 130


def block_need(n_sites, n_receptors, n_hours, n_vars) -> tuple:
    """(hourly met, peak of the block's engine) of a block of sites [bytes]: the met is
    ``n_sites x n_hours x n_vars x 8`` bytes (float64), the peak
    :data:`BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR` a site-hour and receptor surface.

    >>> block_need(1, 2, 8760, 9)
    (630720, 15768000)
    """
    site_hours = int(n_sites) * int(n_hours)
    return (site_hours * int(n_vars) * 8,
            site_hours * max(1, int(n_receptors)) * BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR)


def describe_block(blocks, wanted, now, met, block_sites):
    """The words of :func:`workbench.worker_memory.memory_error` for the block of sites
    ``blocks[now[0]]`` (its receptors in ``wanted[now[0]]``; `met` the network's hourly
    met, whose whole record every block holds)."""
    n_hours = int(met.sizes.get("time", 0)) if met is not None else 0
    n_vars = len(met.data_vars) if met is not None else 0

    def describe():
        sites, recs = blocks[now[0]], wanted[now[0]][1]
        met_b, peak = block_need(len(sites), len(recs), n_hours, n_vars)
        names = ", ".join(sites[:3]) + (", ..." if len(sites) > 3 else "")
        if len(sites) > 1:
            smaller = (f"a smaller --block-sites (now {block_sites}; the memory follows a "
                       "block's site-hours)")
        else:
            smaller = ("a shorter met record (a block is already one site; its memory "
                       "follows its hours)")
        return (f"a block of {_n_sites(len(sites))} ({names})",
                f"a block of {len(sites) * n_hours:,} site-hours ({_n_sites(len(sites))} x "
                f"{n_hours:,} hours) and {len(recs)} receptor surface"
                f"{'' if len(recs) == 1 else 's'}: its hourly met is "
                f"{met_b / 2**20:,.1f} MiB ({n_vars} variables x 8 bytes a site-hour) and "
                f"the engine's work on it about {peak / 2**20:,.0f} MiB at its peak "
                f"(measured: about {BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR} bytes a site-hour "
                f"and receptor), besides about {WORKER_BASE_MIB} MiB of the worker itself",
                smaller)
    return describe


def shared_texts(ds):
    """`ds` with each text variable (an object array of ``str`` only) holding one
    ``str`` object per distinct text: equal cells share it.  The same values, dims,
    attributes and encoding; index coordinates and other dtypes are kept as they are;
    None stays None.

    The budget's statuses and notes and the screened samples' checks are made by
    ``numpy.where``, ``numpy.full`` and ``astype(object)`` over fixed-width text, which
    give every cell a ``str`` object of its own (about 50 bytes and the text): a
    network run in blocks holds every block's results until they are reduced, and
    these copies were about 0.05 MB a site-year of it (docs/performance.md, "What a
    block holds for the monthly trends").

    >>> import xarray as xr
    >>> ds = xr.Dataset({"s": ("x", np.array(["missing"] * 3).astype(object))})
    >>> ds["s"].values[0] is ds["s"].values[2]
    False
    >>> out = shared_texts(ds)
    >>> out["s"].values[0] is out["s"].values[2], out.identical(ds)
    (True, True)
    """
    if ds is None:
        return None
    new, indexed = {}, set(ds.xindexes)
    for name, v in ds.variables.items():
        if v.dtype != object or v.size < 2 or name in indexed:
            continue
        flat = v.values.reshape(-1)
        if pd.api.types.infer_dtype(flat, skipna=False) != "string":
            continue                      # a None, a NaN or a number among them: as it is
        new[name] = v.copy(deep=False, data=shared_strings(flat).reshape(v.shape))
    if not new:
        return ds
    data = {n: x for n, x in new.items() if n in ds.data_vars}
    coords = {n: x for n, x in new.items() if n not in ds.data_vars}
    out = ds.assign(data) if data else ds
    return out.assign_coords(coords) if coords else out
