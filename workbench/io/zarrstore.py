"""Opening a zarr store (a folder ``x.zarr`` or a zipped store ``x.zarr.zip``) as a lazy
Dataset, for the met reader (:mod:`workbench.io.metzarr`) and the grid readers
(:mod:`workbench.grid_io`).

The store is opened through xarray's zarr backend without dask (``chunks=None``): the
variables are lazily indexed, so ``ds[name].isel(site=slice(0, 10)).values`` reads and
decompresses only the chunks that hold those sites.  The arrays' own metadata are read
(not the store's consolidated metadata): a store whose consolidated metadata are missing
or out of date (attributes edited after it was written) reads as it is on disk; either
case is reported in a note.

The metadata documents (the group's and each array's) are read once, by
:func:`store_metadata`, into a :class:`StoreMetadata`; :func:`open_zarr` opens the store
with them consolidated in memory (a :class:`_KnownMetadata` store in front of the
store's files: the documents from the snapshot, the chunks from the files).  A reader
that opens the store many times (a grid block for each variable,
:mod:`workbench.grid_cells`; each variable's scratch copy) passes the snapshot taken
when the grid was checked, carried with the checked grid: the store's metadata are then
read once in a run, not at every open (2026-12-05: 1,273 metadata reads for the 4
blocks of an 8 x 8 grid, 4,969 for its 16 blocks).

Mistakes are reported as one :class:`~workbench.errors.InputError` naming the store, the
variable, the value and what was expected: a folder that is not a store (CSV files in a
``.zarr`` folder), a zip without a store, a store that cannot be opened, and a missing
zarr package (naming the ``zarr`` extra).
"""
from __future__ import annotations

import dataclasses
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
        return _json(self.read_bytes(name))

    def read_bytes(self, name):
        """The bytes of the file `name` of the store, or None."""
        if not self.has(name):
            return None
        try:
            if self.zipped:
                with zipfile.ZipFile(self.path) as z:
                    return z.read(f"{self.prefix}/{name}" if self.prefix else name)
            return (self.path / name).read_bytes()
        except (OSError, KeyError):
            return None


def _json(raw):
    """The JSON document in `raw` (bytes), or None."""
    if raw is None:
        return None
    try:
        return json.loads(raw)
    except ValueError:
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


def consolidation_note(path: Path, files: _Files, read=None) -> str | None:
    """A note when the store's consolidated metadata are missing or differ from the
    arrays' own metadata (which are what the readers use), else None.  `read`: the
    store's documents already read (name -> parsed JSON or None, as
    :func:`_documents` gives them), not read again."""
    docs = read if read is not None else {}

    def doc(name):
        if name not in docs:
            docs[name] = files.read_json(name)
        return docs[name]
    root = doc("zarr.json")
    if root is not None:                                    # zarr format 3
        meta = (root.get("consolidated_metadata") or {}).get("metadata")
        cons = {k: (v or {}).get("attributes", {}) for k, v in (meta or {}).items()
                if "/" not in k}
        arrays = files.arrays("zarr.json")
        own = {k: (doc(f"{k}/zarr.json") or {}).get("attributes", {})
               for k in cons if k in arrays}
    else:                                                   # zarr format 2
        meta = (doc(".zmetadata") or {}).get("metadata")
        keys = [k[:-len("/.zattrs")] for k in (meta or {})
                if k.endswith("/.zattrs") and k.count("/") == 1]
        cons = {k: meta[f"{k}/.zattrs"] for k in keys}
        arrays = files.arrays(".zarray")
        own = {k: doc(f"{k}/.zattrs") or {} for k in keys if k in arrays}
    if meta is None:
        return (f"{path.name}: no consolidated metadata; each array's own metadata read "
                "(as fast on a local disk; zarr.consolidate_metadata adds them)")
    differ = sorted((arrays ^ set(cons)) | {k for k in set(cons) & arrays if cons[k] != own[k]})
    if differ:
        return (f"{path.name}: consolidated metadata out of date for {', '.join(differ)}; "
                "the arrays' own metadata read (zarr.consolidate_metadata refreshes them)")
    return None


@dataclasses.dataclass(frozen=True, eq=False)
class StoreMetadata:
    """The metadata documents of a zarr store, read once (:func:`store_metadata`).

    Attributes
    ----------
    path : str
        The store (folder or zip).
    zipped : bool
    prefix : str
        The group's folder inside a zip ("" for a store at the zip's root or a folder).
    arrays : tuple of str
        The group's arrays.
    docs : dict
        The documents :func:`open_zarr` serves, by name relative to the group: the
        group's own, with every array's own metadata consolidated in it (format 3: in
        ``zarr.json``; format 2: ``.zmetadata``), as they were read.
    note : str or None
        On the store's own consolidated metadata (missing or out of date), or None.
    """

    path: str
    zipped: bool
    prefix: str
    arrays: tuple
    docs: dict = dataclasses.field(repr=False)
    note: str | None = None

    def attributes(self, name) -> dict:
        """The attributes of array `name` as read."""
        if "zarr.json" in self.docs:
            meta = json.loads(self.docs["zarr.json"])["consolidated_metadata"]["metadata"]
            return (meta.get(name) or {}).get("attributes") or {}
        meta = json.loads(self.docs[".zmetadata"])["metadata"]
        return meta.get(f"{name}/.zattrs") or {}


def store_metadata(path, role: str = "met") -> StoreMetadata:
    """Check that `path` is a zarr store and read its metadata documents, each once.

    Parameters
    ----------
    path : str or Path
        A store folder or a zipped store (the store at the zip's root, or in its one
        top-level folder).
    role : str
        What the store should hold, for the messages ("met", "air", "land_use").

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
    root_raw = files.read_bytes("zarr.json")
    read = {"zarr.json": _json(root_raw)}
    if not any(files.has(n) for n in _GROUP_FILES) or \
            (read["zarr.json"] or {}).get("node_type") == "array":
        raise _not_a_store(path, files, role)
    if importlib.util.find_spec("zarr") is None:
        raise InputError("a zarr store, and the zarr package is not installed", file=path,
                         expected=f"the zarr package: {ZARR_EXTRA}")
    version = importlib.metadata.version("zarr")
    if int(version.split(".")[0]) < 3:      # xarray reads zarr stores with zarr 3
        raise InputError(f"a zarr store, and zarr {version} is installed", file=path,
                         expected=f"zarr 3 or later (Python 3.11 or later): {ZARR_EXTRA}")
    if read["zarr.json"] is not None:                       # zarr format 3
        arrays = sorted(files.arrays("zarr.json"))
        own = {}
        for a in arrays:
            read[f"{a}/zarr.json"] = doc = files.read_json(f"{a}/zarr.json")
            if (doc or {}).get("node_type") == "array":
                own[a] = doc
        arrays = sorted(own)
        root = dict(read["zarr.json"])
        root["consolidated_metadata"] = {"kind": "inline", "must_understand": False,
                                         "metadata": own}
        docs = {"zarr.json": json.dumps(root).encode()}
    else:                                                   # zarr format 2
        arrays = sorted(files.arrays(".zarray"))
        docs = {n: raw for n in (".zgroup", ".zattrs")
                if (raw := files.read_bytes(n)) is not None}
        meta = {n: _json(raw) for n, raw in docs.items()}
        for a in arrays:
            for name in (".zarray", ".zattrs"):
                read[f"{a}/{name}"] = doc = files.read_json(f"{a}/{name}")
                if doc is not None:
                    meta[f"{a}/{name}"] = doc
        docs[".zmetadata"] = json.dumps({"zarr_consolidated_format": 1,
                                         "metadata": meta}).encode()
    return StoreMetadata(str(path), files.zipped, files.prefix, tuple(arrays), docs,
                         consolidation_note(path, files, read))


def _zarr_store(path: Path, files):
    """The zarr store object of a folder (a read-only LocalStore) or of a zip (a
    read-only ZipStore); `files`: anything with ``zipped`` (a :class:`StoreMetadata`)."""
    if not files.zipped:
        from zarr.storage import LocalStore
        return LocalStore(str(path), read_only=True)
    from zarr.storage import ZipStore
    return ZipStore(str(path), mode="r")


def open_zarr(path, role: str = "met", check_consolidated: bool = True, only=None,
              metadata: StoreMetadata | None = None) -> tuple[xr.Dataset, list]:
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
    metadata : StoreMetadata, optional
        The store's metadata as read before (:func:`store_metadata`, when the store
        was checked): no metadata document is read again, only chunks.  Without, they
        are read here, each once.

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
    meta = metadata if metadata is not None else store_metadata(path, role)
    from .zarrknown import KnownMetadata
    drop = None
    if only is not None:                 # the arrays known, none of them read
        drop = sorted(set(meta.arrays) - {only})
    files = _zarr_store(path, meta)
    store = KnownMetadata(files, meta.docs, meta.prefix)
    try:
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", module=r"zarr(\..*)?$")
            # the metadata are the arrays' own, consolidated in memory when read
            ds = xr.open_dataset(store, engine="zarr", chunks=None, consolidated=True,
                                 cache=False, drop_variables=drop)
    except Exception as exc:  # many codecs and formats, many error types
        if meta.zipped:
            files.close()
        first = str(exc).strip().splitlines()[0][:200] if str(exc).strip() else ""
        if "decode" in first.lower() and "time" in first:
            attrs = meta.attributes("time")
            units = attrs.get("units", "(no units)")
            cal = attrs.get("calendar")
            raise InputError("time not decoded as dates", file=path, column="time",
                             value=f"{units} (calendar {cal})" if cal else units,
                             expected="a CF time coordinate ('hours since 2020-01-01 00:00', "
                             "standard calendar)") from None
        raise InputError(f"cannot open the zarr store ({type(exc).__name__}: {first})",
                         file=path, expected="a zarr store written by xarray's "
                         "Dataset.to_zarr (CF attributes, codecs of the zarr package)") from None
    if meta.zipped:                      # a ZipStore: closed with the Dataset
        backend_close = getattr(ds, "_close", None)

        def close():
            if backend_close is not None:
                backend_close()
            files.close()
        ds.set_close(close)
    note = meta.note if check_consolidated else None
    return ds, [note] if note else []
