"""Opening a zarr store (a folder ``x.zarr`` or a zipped store ``x.zarr.zip``) as a lazy
Dataset, for the met reader (:mod:`workbench.io.metzarr`) and the grid readers
(:mod:`workbench.grid_io`).

The store is opened through xarray's zarr backend without dask (``chunks=None``): the
variables are lazily indexed, so ``ds[name].isel(site=slice(0, 10)).values`` reads and
decompresses only the chunks that hold those sites.  The arrays' own metadata are read
(``consolidated=False``): on a local disk that costs a file per variable, and a store
whose consolidated metadata are missing or out of date (attributes edited after it was
written) reads as it is on disk; either case is reported in a note.

Mistakes are reported as one :class:`~workbench.errors.InputError` naming the store, the
variable, the value and what was expected: a folder that is not a store (CSV files in a
``.zarr`` folder), a zip without a store, a store that cannot be opened, and a missing
zarr package (naming the ``zarr`` extra).
"""
from __future__ import annotations

import importlib.metadata
import importlib.util
import json
import warnings
import zipfile
from pathlib import Path

import xarray as xr

from ..errors import InputError

#: How to install the reader of zarr stores.
ZARR_EXTRA = 'python -m pip install "deposition-workbench[zarr]"'
#: Files at the root of a zarr group: format 3 (``zarr.json``) and format 2.
_GROUP_FILES = ("zarr.json", ".zgroup")
_ARRAY_FILES = (".zarray",)


#: A chunk larger than this is named in a note: a reader of chunked inputs (the met
#: store's site groups, the grid's scratch copy) holds one whole [byte].
LARGE_CHUNK_BYTES = 256 << 20


def chunk_sizes(var) -> dict:
    """dim -> cells of one chunk of a lazily opened variable (a zarr store's or a
    NetCDF4 file's own chunks); empty for a file without chunks (NetCDF3, contiguous
    NetCDF4)."""
    pref = var.encoding.get("preferred_chunks")
    if pref:
        return dict(pref)
    sizes = var.encoding.get("chunksizes")
    return dict(zip(var.dims, sizes)) if sizes else {}


def is_zarr_path(path) -> bool:
    """True for a path read as a zarr store: a name ending in ``.zarr`` or ``.zarr.zip``,
    or any folder (a folder is never a CSV or NetCDF file).

    >>> is_zarr_path("met.zarr"), is_zarr_path("met.zarr.zip"), is_zarr_path("met.csv")
    (True, True, False)
    """
    p = Path(path)
    name = p.name.lower()
    return name.endswith(".zarr") or name.endswith(".zarr.zip") or p.is_dir()


class _Files:
    """The files of a store folder or zip, by name relative to the store's root (a
    folder is not listed whole: a store may hold many thousand chunk files)."""

    def __init__(self, path: Path):
        self.path = path
        self.zipped = path.is_file()
        self.prefix = ""
        if self.zipped:
            with zipfile.ZipFile(path) as z:
                names = [n for n in z.namelist() if not n.endswith("/")]
            tops = {n.split("/", 1)[0] for n in names if "/" in n}
            if not any(n in names for n in _GROUP_FILES) and len(tops) == 1:
                top = tops.pop()         # zipped with its folder: "met.zarr/zarr.json"
                if any(f"{top}/{g}" in names for g in _GROUP_FILES):
                    self.prefix = top
            cut = len(self.prefix) + 1 if self.prefix else 0
            self._zip_all = names
            self._zip = {n[cut:] for n in names if n.startswith(self.prefix)}

    def has(self, name) -> bool:
        """True when the store holds the file `name`."""
        return name in self._zip if self.zipped else (self.path / name).is_file()

    def some(self, limit=2000) -> list:
        """Up to `limit` file names of the folder or zip (for messages), sorted."""
        if self.zipped:
            return sorted(self._zip_all)[:limit]
        out = []
        for p in self.path.rglob("*"):
            if p.is_file():
                out.append(p.relative_to(self.path).as_posix())
                if len(out) >= limit:
                    break
        return sorted(out)

    def arrays(self, marker) -> set:
        """Names of the top-level arrays (folders holding the metadata file `marker`)."""
        if self.zipped:
            return {n.split("/")[0] for n in self._zip
                    if n.count("/") == 1 and n.endswith("/" + marker)}
        return {p.name for p in self.path.iterdir() if (p / marker).is_file()}

    def read_json(self, name):
        """The JSON document `name` of the store, or None."""
        if not self.has(name):
            return None
        try:
            if self.zipped:
                with zipfile.ZipFile(self.path) as z:
                    raw = z.read(f"{self.prefix}/{name}" if self.prefix else name)
            else:
                raw = (self.path / name).read_bytes()
            return json.loads(raw)
        except (OSError, ValueError, KeyError):
            return None


def _not_a_store(path: Path, files: _Files, role: str):
    """The located error of a folder or zip that holds no zarr group."""
    kind = "zip file" if files.zipped else "folder"
    if any(files.has(n) for n in _ARRAY_FILES) or (
            files.read_json("zarr.json") or {}).get("node_type") == "array":
        return InputError("a single zarr array, not a store of variables", file=path,
                          expected=f"a zarr group holding the {role} variables (as "
                          "xarray's Dataset.to_zarr writes it)")
    listed = files.some()
    tables = [n for n in listed if n.lower().endswith((".csv", ".csv.gz", ".txt"))]
    if tables:
        shown = ", ".join(tables[:3]) + (f" and {len(tables) - 3} more" if len(tables) > 3
                                         else "")
        return InputError(f"a {kind} of CSV files, not a zarr store", file=path, value=shown,
                          expected="a zarr store (zarr.json or .zgroup at its root, as "
                          "xarray's Dataset.to_zarr writes it), or the path of one CSV file "
                          "(e.g. met = \"folder/met.csv\")")
    shown = ", ".join(listed[:3]) or "nothing"
    return InputError(f"a {kind} that is not a zarr store (no zarr.json or .zgroup at its "
                      "root)", file=path, value=shown,
                      expected="a zarr store as xarray's Dataset.to_zarr writes it")


def consolidation_note(path: Path, files: _Files) -> str | None:
    """A note when the store's consolidated metadata are missing or differ from the
    arrays' own metadata (which are what the readers use), else None."""
    root = files.read_json("zarr.json")
    if root is not None:                                    # zarr format 3
        meta = (root.get("consolidated_metadata") or {}).get("metadata")
        cons = {k: (v or {}).get("attributes", {}) for k, v in (meta or {}).items()
                if "/" not in k}
        own = {k: (files.read_json(f"{k}/zarr.json") or {}).get("attributes", {})
               for k in cons}
        arrays = files.arrays("zarr.json")
    else:                                                   # zarr format 2
        meta = (files.read_json(".zmetadata") or {}).get("metadata")
        keys = [k[:-len("/.zattrs")] for k in (meta or {})
                if k.endswith("/.zattrs") and k.count("/") == 1]
        cons = {k: meta[f"{k}/.zattrs"] for k in keys}
        own = {k: files.read_json(f"{k}/.zattrs") or {} for k in keys}
        arrays = files.arrays(".zarray")
    if meta is None:
        return (f"{path.name}: no consolidated metadata; each array's own metadata read "
                "(as fast on a local disk; zarr.consolidate_metadata adds them)")
    differ = sorted((arrays ^ set(cons)) | {k for k in set(cons) & arrays if cons[k] != own[k]})
    if differ:
        return (f"{path.name}: consolidated metadata out of date for {', '.join(differ)}; "
                "the arrays' own metadata read (zarr.consolidate_metadata refreshes them)")
    return None


def _zarr_store(path: Path, files: _Files):
    """The zarr store object of a folder (its path) or of a zip (a read-only ZipStore)."""
    if not files.zipped:
        return str(path)
    from zarr.storage import ZipStore
    return ZipStore(str(path), mode="r")


def open_zarr(path, role: str = "met", check_consolidated: bool = True, only=None
              ) -> tuple[xr.Dataset, list]:
    """Open a zarr store lazily (no dask, no values read but the coordinates).

    Parameters
    ----------
    path : str or Path
        A store folder or a zipped store (the store at the zip's root, or in its one
        top-level folder).
    role : str
        What the store should hold, for the messages ("met", "air", "land_use").
    check_consolidated : bool
        Compare the consolidated metadata with the arrays' own (False: no note).
    only : str, optional
        Open this variable alone: the store's other arrays are dropped before they are
        read, its coordinates too (a variable read by position, as a grid block reads
        it: opening the store for each block and variable read the 1-D ``time``,
        ``time_bnds``, ``y`` and ``x`` chunks each time).

    Returns
    -------
    ds : xarray.Dataset
        Lazily indexed variables, CF decoded (close it, or use it in ``with``).
    notes : list of str
        On the consolidated metadata (missing or out of date).

    Raises
    ------
    InputError
        Naming the store, what is wrong and what was expected.
    """
    path = Path(path)
    if not path.exists():
        raise InputError("zarr store not found", file=path,
                         expected=f"an existing zarr store (folder or .zarr.zip) of {role}")
    if path.is_file() and not zipfile.is_zipfile(path):
        raise InputError("neither a zarr store folder nor a zip file", file=path,
                         expected="a folder written by xarray's Dataset.to_zarr, or that "
                         "folder's content zipped (.zarr.zip)")
    files = _Files(path)
    if not any(files.has(n) for n in _GROUP_FILES) or \
            (files.read_json("zarr.json") or {}).get("node_type") == "array":
        raise _not_a_store(path, files, role)
    if importlib.util.find_spec("zarr") is None:
        raise InputError("a zarr store, and the zarr package is not installed", file=path,
                         expected=f"the zarr package: {ZARR_EXTRA}")
    version = importlib.metadata.version("zarr")
    if int(version.split(".")[0]) < 3:      # xarray reads zarr stores with zarr 3
        raise InputError(f"a zarr store, and zarr {version} is installed", file=path,
                         expected=f"zarr 3 or later (Python 3.11 or later): {ZARR_EXTRA}")
    drop = None
    if only is not None:                 # the top-level arrays listed, none of them read
        drop = sorted((files.arrays("zarr.json") | files.arrays(".zarray")) - {only})
    store = _zarr_store(path, files)
    try:
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", module=r"zarr(\..*)?$")
            ds = xr.open_dataset(store, engine="zarr", chunks=None, consolidated=False,
                                 cache=False, group=files.prefix or None,
                                 drop_variables=drop)
    except Exception as exc:  # many codecs and formats, many error types
        if hasattr(store, "close"):
            store.close()
        first = str(exc).strip().splitlines()[0][:200] if str(exc).strip() else ""
        if "decode" in first.lower() and "time" in first:
            attrs = (files.read_json("time/zarr.json") or {}).get("attributes") or \
                files.read_json("time/.zattrs") or {}
            units = attrs.get("units", "(no units)")
            cal = attrs.get("calendar")
            raise InputError("time not decoded as dates", file=path, column="time",
                             value=f"{units} (calendar {cal})" if cal else units,
                             expected="a CF time coordinate ('hours since 2020-01-01 00:00', "
                             "standard calendar)") from None
        raise InputError(f"cannot open the zarr store ({type(exc).__name__}: {first})",
                         file=path, expected="a zarr store written by xarray's "
                         "Dataset.to_zarr (CF attributes, codecs of the zarr package)") from None
    if hasattr(store, "close"):          # a ZipStore: closed with the Dataset
        backend_close = getattr(ds, "_close", None)

        def close():
            if backend_close is not None:
                backend_close()
            store.close()
        ds.set_close(close)
    note = consolidation_note(path, files) if check_consolidated else None
    return ds, [note] if note else []
