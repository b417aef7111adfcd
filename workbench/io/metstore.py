"""A site-major, on-disk store of checked hourly met, read block by block.

The hourly met of a network on one (site, time) grid in float64 is 0.56 MB a
site-year (570 MB at 1,000 site-years); held whole it is the largest input of a run
computed in blocks of sites.  The met readers (:mod:`workbench.io.metfast` for the
CSV, :mod:`workbench.io.met` for NetCDF) therefore write the checked values group of
sites by group of sites into a :class:`MetStore`: one ``.npy`` file per variable of
shape (site, time), plus ``row_present``, in a temporary folder (under ``TMPDIR``;
removed when the last Dataset that reads it is gone, or at exit).  Site-major means the
hours of one site are contiguous on disk, so the sites of a block are read with one
seek per site.

:meth:`MetStore.dataset` gives an ordinary :class:`xarray.Dataset` whose variables
are lazily indexed: ``ds.sel(site=block)`` reads nothing, ``.values`` or ``.load()``
reads only the selected sites and hours (:class:`StoreArray`, an xarray backend array
over a memory map that is opened and closed at each read, so pages of the file never
stay mapped).  A store of at most :data:`IN_MEMORY_BYTES` is loaded at once by the
readers (a small network, a whole run and the apps keep plain arrays); a larger one
stays on disk.  The store is plain numpy (``numpy.lib.format``): no new dependency.

A Dataset from the store can be pickled (a dask worker of the same machine then reads
its block from the same files): the pickle holds the file names, not the values nor
the owner of the folder, so only the process that wrote the store removes it.
"""
from __future__ import annotations

import shutil
import tempfile
import weakref
from pathlib import Path

import numpy as np
import xarray as xr
from xarray.backends import BackendArray
from xarray.core import indexing

#: Grids of at most this many bytes are loaded into memory by the readers [byte]
#: (about 55 site-years of the usual eight variables).
IN_MEMORY_BYTES = 32 << 20


class StoreArray(BackendArray):
    """One variable of a :class:`MetStore`, read lazily (outer indexing, one vector).

    Parameters
    ----------
    path : Path
        The ``.npy`` file, shape (site, time).
    shape : tuple of int
    dtype : numpy.dtype
    owner : MetStore, optional
        Kept alive while this array is (not pickled).
    """

    def __init__(self, path, shape, dtype, owner=None):
        self.path = str(path)
        self.shape = tuple(shape)
        self.dtype = np.dtype(dtype)
        self._owner = owner

    def __getstate__(self):
        return {"path": self.path, "shape": self.shape, "dtype": self.dtype, "_owner": None}

    def __getitem__(self, key):
        return indexing.explicit_indexing_adapter(
            key, self.shape, indexing.IndexingSupport.OUTER_1VECTOR, self._read)

    def _read(self, key):
        m = np.load(self.path, mmap_mode="r")
        try:
            return np.array(m[key])
        finally:
            del m                           # unmapped: the pages do not stay resident


class MetStore:
    """(site, time) arrays of one met file in a temporary folder.

    Parameters
    ----------
    names : list of str
        The met variables (float64).
    n_sites, n_times : int
        Shape of the grid [sites, hours].
    folder : str or Path, optional
        Parent of the store's folder (default: the system's temporary folder).
    """

    def __init__(self, names, n_sites, n_times, folder=None):
        self.folder = Path(tempfile.mkdtemp(prefix="workbench-met-", dir=folder))
        self._cleanup = weakref.finalize(self, shutil.rmtree, str(self.folder), True)
        self.names = list(names)
        self.shape = (int(n_sites), int(n_times))
        for name in self.names:
            self._create(name, np.float64)
        self._create("row_present", np.bool_)

    def _create(self, name, dtype):
        m = np.lib.format.open_memmap(self.path(name), mode="w+", dtype=dtype, shape=self.shape)
        del m                                 # a sparse file: written group by group

    def path(self, name) -> Path:
        """The ``.npy`` file of variable `name`."""
        return self.folder / f"{name}.npy"

    def spill(self, name) -> Path:
        """A scratch file of the reader (rows as they come), removed with the store."""
        return self.folder / f"rows_{name}.bin"

    @property
    def nbytes(self) -> int:
        """Bytes of the grid [byte]."""
        return self.shape[0] * self.shape[1] * (8 * len(self.names) + 1)

    def write(self, first, grids: dict, present):
        """Write the rows of consecutive sites.

        Parameters
        ----------
        first : int
            Position of the first of these sites in the store.
        grids : dict of str to numpy.ndarray
            Each variable's values, shape (k, n_times) [internal units].
        present : numpy.ndarray of bool
            (k, n_times): an input row exists for the hour.
        """
        for name, grid in list(grids.items()) + [("row_present", present)]:
            m = np.load(self.path(name), mmap_mode="r+")
            m[first:first + len(grid)] = grid
            del m             # unmapped; the kernel writes the pages back (no msync wait)

    def dataset(self, site_ids, times, attrs: dict, site_index=None, time_slice=None):
        """The store as a lazily indexed Dataset.

        Parameters
        ----------
        site_ids : list of str
            The sites of the Dataset (of the rows `site_index`, default all).
        times : numpy.ndarray of datetime64[ns]
            The hours of the Dataset (end of hour, UTC; of `time_slice`, default all).
        attrs : dict of str to dict
            Attributes of each variable (``units``, ``long_name``); ``"source_file"``
            -> the file the store was read from.
        site_index : numpy.ndarray of int, optional
            Rows of the store that the Dataset shows.
        time_slice : slice, optional
            Columns of the store that the Dataset shows.
        """
        dvars = {}
        for name in self.names + ["row_present"]:
            dtype = np.bool_ if name == "row_present" else np.float64
            arr = indexing.LazilyIndexedArray(StoreArray(self.path(name), self.shape, dtype,
                                                         owner=self))
            var = xr.Variable(("site", "time"), arr, attrs[name])
            if site_index is not None or time_slice is not None:
                var = var.isel(site=slice(None) if site_index is None else site_index,
                               time=time_slice or slice(None))
            dvars[name] = var
        ds = xr.Dataset(dvars, coords={"site": list(site_ids), "time": times})
        ds["time"].attrs.update({"long_name": "end of the hour (UTC)"})
        ds.attrs["source_file"] = attrs["source_file"]
        return ds

    def remove(self):
        """Delete the folder now (a Dataset that still reads it fails)."""
        self._cleanup()


def is_lazy(ds) -> bool:
    """True when `ds` (a met Dataset) still reads its values from a store."""
    return ds is not None and any(not isinstance(v.variable._data, np.ndarray)
                                  for v in ds.data_vars.values())


def load_small(ds, store: MetStore, limit=None):
    """`ds` in memory (and the store removed) when the store is small, else as it is.

    Parameters
    ----------
    ds : xarray.Dataset
        From :meth:`MetStore.dataset`.
    store : MetStore
    limit : int, optional
        [byte]; default :data:`IN_MEMORY_BYTES` (read at call time, so tests can lower it).
    """
    limit = IN_MEMORY_BYTES if limit is None else limit
    if store.nbytes > limit:
        return ds
    ds = ds.load()
    store.remove()
    return ds


def grid_rows(values: dict, keep, si, ti, n_sites, n_times):
    """The (site, time) rows of a group of sites.

    Parameters
    ----------
    values : dict of str to numpy.ndarray
        Per row [internal units].
    keep : numpy.ndarray of bool
        Rows that enter the grid.
    si, ti : numpy.ndarray of int
        Site (0..n_sites-1) and hour (0..n_times-1) of each kept row.
    n_sites, n_times : int

    Returns
    -------
    (dict of str to numpy.ndarray, numpy.ndarray of bool)
        Each variable's grid (NaN where no row) and ``row_present``.
    """
    at = np.asarray(si, np.int64) * n_times + ti          # flat positions, computed once
    grids = {}
    for name, v in values.items():
        g = np.full((n_sites, n_times), np.nan)
        g.reshape(-1)[at] = v[keep]
        grids[name] = g
    present = np.zeros((n_sites, n_times), bool)
    present.reshape(-1)[at] = True
    return grids, present
