"""A zarr store whose metadata documents are known: served from those read once
(:class:`workbench.io.zarrstore.StoreMetadata`), the chunks from the store's files.

Imported by :func:`workbench.io.zarrstore.open_zarr` only, after it has checked that
the zarr package is installed (the zarr extra).
"""
from __future__ import annotations

from zarr.storage import WrapperStore

#: Names of the metadata documents of a zarr store (formats 3 and 2): a key whose last
#: part is one of these is metadata, any other key a chunk.
METADATA_NAMES = ("zarr.json", ".zgroup", ".zattrs", ".zarray", ".zmetadata")


def is_metadata(key: str) -> bool:
    """True for the key of a metadata document (its last part a name of
    :data:`METADATA_NAMES`), False for a chunk's key.

    >>> is_metadata("zarr.json"), is_metadata("time/.zattrs"), is_metadata("t/c/0/0/0")
    (True, True, False)
    """
    return key.rsplit("/", 1)[-1] in METADATA_NAMES


class KnownMetadata(WrapperStore):
    """The group of a store, read only: its metadata documents from `docs` (name
    relative to the group -> bytes; a name not in `docs` is a document the store does
    not have), every other key (the chunks) from `store`, under the group's folder
    `prefix` ("" for the store's root)."""

    def __init__(self, store, docs: dict, prefix: str = ""):
        super().__init__(store)
        self._docs = docs
        self._prefix = prefix

    def _with_store(self, store):
        return type(self)(store, self._docs, self._prefix)

    def _key(self, key: str) -> str:
        return f"{self._prefix}/{key}" if self._prefix else key

    async def get(self, key, prototype, byte_range=None):
        if is_metadata(key):
            raw = self._docs.get(key)
            if raw is None:
                return None
            if byte_range is not None:   # zarr reads its documents whole
                raise ValueError(f"a part of the metadata document {key} asked for")
            return prototype.buffer.from_bytes(raw)
        return await self._store.get(self._key(key), prototype, byte_range)

    async def get_partial_values(self, prototype, key_ranges):
        key_ranges = list(key_ranges)
        if any(is_metadata(k) for k, _ in key_ranges):
            return [await self.get(k, prototype, r) for k, r in key_ranges]
        return await self._store.get_partial_values(
            prototype, [(self._key(k), r) for k, r in key_ranges])

    async def exists(self, key) -> bool:
        if is_metadata(key):
            return key in self._docs
        return await self._store.exists(self._key(key))

    async def _get_many(self, requests):
        for key, prototype, byte_range in requests:
            yield key, await self.get(key, prototype, byte_range)

    def list_dir(self, prefix: str):
        return self._store.list_dir(self._key(prefix) if prefix else self._prefix)

    async def list_prefix(self, prefix: str):
        cut = len(self._prefix) + 1 if self._prefix else 0
        async for key in self._store.list_prefix(self._key(prefix) if prefix
                                                 else self._prefix):
            yield key[cut:]

    def list(self):
        return self.list_prefix("")
