"""A NetCDF or zarr met file with a time step or a site twice on its axes.

The met CSV rule (docs/data_formats.md, "Field-data slips we check") held to gridded
met: a time step (or a site) repeating an earlier one in every variable is dropped,
its records ``rejected`` in the ledger with
:data:`~workbench.io.common.REPEAT_REASON` and named in one note; a repeat with another
value in any variable is one located error naming the file, the site, the time, the
variable and both values.  Only the repeated steps are read, variable by variable, in blocks
of repeats of at most about :data:`REPEAT_BLOCK_VALUES` values a side (no loop over
hours; :func:`first_difference` also serves the gridded met of ``workbench grid``).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError


def first_of_repeats(labels):
    """The repeats of an axis and the position each one repeats.

    Parameters
    ----------
    labels : ndarray
        The axis labels (times as datetime64, site ids as str); NaT is never a repeat.

    Returns
    -------
    dropped, of : ndarray of int
        Positions of the labels seen before, in axis order, and the position of the
        first label each one repeats.
    """
    labels = np.asarray(labels)
    codes, _ = pd.factorize(labels)           # codes in order of first appearance
    dup = pd.Index(labels).duplicated(keep="first")
    if np.issubdtype(labels.dtype, np.datetime64):
        dup &= ~np.isnat(labels)
    dropped = np.flatnonzero(dup)
    firsts = np.flatnonzero(~pd.Index(labels).duplicated(keep="first"))
    return dropped, firsts[codes[dropped]]


def _compared(raw, dim):
    """The data variables on `dim` (variables not read included, as in the CSV rule)."""
    from .metvars import MET_VARIABLES
    names = [str(n) for n, v in raw.data_vars.items() if dim in v.dims]
    rank = {n: i for i, n in enumerate(MET_VARIABLES)}    # the met table's order first
    return sorted(names, key=lambda n: (rank.get(n, len(rank)), names.index(n)))


def _same(a, b):
    """Cell-wise equality, NaN equal to NaN."""
    eq = a == b
    if np.issubdtype(a.dtype, np.floating) or np.issubdtype(a.dtype, np.complexfloating):
        eq |= np.isnan(a) & np.isnan(b)
    return eq


#: Values of one variable compared at once, each side, by :func:`first_difference`
#: [-].  The repeated steps of every site read at once held about 70 MB a side per
#: variable for 1,000 sites x a year given twice; in blocks of this many values the
#: comparison holds some 8 MB a side whatever the file's size, with the same result
#: (2026-12-05, benchmarks/repeat_memory.py, docs/performance.md; our choice).
REPEAT_BLOCK_VALUES = 1 << 20


def first_difference(var, dim, dropped, of, read, block_values=REPEAT_BLOCK_VALUES):
    """The first repeat along `dim` whose values differ from those it repeats.

    Only the repeated positions are read, in blocks of repeats (and, where one
    repeat holds more than `block_values` values, of rows of the next dim), so that
    each side holds at most about `block_values` values: the result is that of one
    comparison of every repeat at once.

    Parameters
    ----------
    var : xarray.DataArray
        A lazily read variable with `dim` among its dims.
    dim : str
    dropped, of : ndarray of int
        Positions along `dim` of the repeats and of the labels they repeat
        (:func:`first_of_repeats`).
    read : callable
        ``read(part)`` -> the values of a lazily indexed part of `var`.
    block_values : int
        About the most values of `var` read at once on each side [-].

    Returns
    -------
    None or (k, cell, order, first, again)
        `k` the index into `dropped` of the first repeat that differs, `cell` the
        index (a tuple over the dims of ``order[1:]``) of its first differing value in
        C order, `order` the dims (`dim` first), `first` and `again` the values at
        `of[k]` and `dropped[k]`.  NaN equals NaN.
    """
    order = (dim,) + tuple(d for d in var.dims if d != dim)
    rest = tuple(int(var.sizes[d]) for d in order[1:])
    per_step = int(np.prod(rest, dtype=np.int64))
    per_row = int(np.prod(rest[1:], dtype=np.int64)) if rest else 1
    n_rows = rest[0] if rest else 1
    block = max(1, int(block_values))
    if per_step <= block or not rest:
        steps, rows = max(1, block // max(per_step, 1)), n_rows
    else:
        steps, rows = 1, max(1, block // max(per_row, 1))
    dropped, of = np.asarray(dropped, np.int64), np.asarray(of, np.int64)
    for k0 in range(0, len(dropped), steps):          # blocks of repeats, not hours
        ks = slice(k0, k0 + steps)
        n_k = len(dropped[ks])
        cell = np.full(n_k, -1, np.int64)
        first = again = None
        for r0 in range(0, n_rows, rows):
            where = {dim: of[ks]}
            if rest and rows < n_rows:
                where[order[1]] = slice(r0, r0 + rows)
            # indexed before the transpose: a lazily transposed variable indexed by a
            # list is read whole by xarray's backends, not at the positions
            a = np.asarray(read(var.isel(where).transpose(*order))).reshape(n_k, -1)
            where[dim] = dropped[ks]
            b = np.asarray(read(var.isel(where).transpose(*order))).reshape(n_k, -1)
            differ = ~_same(a, b)
            new = differ.any(axis=1) & (cell < 0)
            if new.any():
                at = np.argmax(differ[new], axis=1)
                cell[new] = r0 * per_row + at
                if first is None:
                    first = np.empty(n_k, a.dtype)
                    again = np.empty(n_k, b.dtype)
                first[new], again[new] = a[new, at], b[new, at]
            del a, b, differ
        if (cell >= 0).any():
            k = int(np.argmax(cell >= 0))
            idx = np.unravel_index(int(cell[k]), rest) if rest else ()
            return k0 + k, tuple(int(i) for i in idx), order, first[k], again[k]
    return None


def check_repeats(raw, path, dim, read_values, block_values=REPEAT_BLOCK_VALUES):
    """Drop exact repeats along `dim` of `raw`; raise for a repeat with another value.

    Parameters
    ----------
    raw : xarray.Dataset
        The met file opened lazily, dims (site, time).
    path : Path
    dim : {"time", "site"}
    read_values : callable
        ``read_values(var, path, name)`` -> the values of a lazily read variable (a
        located error for a damaged file).
    block_values : int
        About the most values of one variable compared at once on each side
        (:func:`first_difference`); the result does not depend on it [-].

    Returns
    -------
    keep, dropped, of : ndarray of int
        Positions along `dim` kept, dropped, and the position each dropped one repeats.

    Raises
    ------
    InputError
        A repeat with another value: the file, the variable, the site, the time and the
        two values.
    """
    labels = raw[dim].values
    if dim == "time":
        labels = labels.astype("datetime64[ns]")
    else:
        labels = labels.astype(str)
    n = len(labels)
    dropped, of = first_of_repeats(labels)
    if not len(dropped):
        return np.arange(n), dropped, of
    other = "site" if dim == "time" else "time"
    bad_at, bad_name = None, None
    for name in _compared(raw, dim):        # blocks of repeats per variable, not hours
        upto = len(dropped) if bad_at is None else bad_at[0]   # an earlier one wins
        if not upto:
            break
        found = first_difference(raw[name], dim, dropped[:upto], of[:upto],
                                 lambda part, name=name: read_values(part, path, name),
                                 block_values)
        if found is not None:
            bad_at, bad_name = found, name
    if bad_at is not None:
        raise _conflict(raw, path, dim, other, dropped, of, bad_name, bad_at)
    keep = np.setdiff1d(np.arange(n), dropped)
    return keep, dropped, of


def _conflict(raw, path, dim, other, dropped, of, name, bad_at):
    """The located error of a repeat along `dim` with another value of `name`."""
    k, cell, order, first, again = bad_at
    where = dict(zip(order[1:], cell))
    unit = raw[name].attrs.get("units", "")
    i, j = int(of[k]), int(dropped[k])
    lab = raw[dim].values
    if dim == "time":
        t = str(np.asarray(lab[j]).astype("datetime64[s]"))[:19]
        s = str(raw["site"].values[where["site"]]) if "site" in where else ""
        place = f"site {s!r}, time {t}: time index {j} repeats time index {i}"
    else:
        s = str(lab[j])
        ti = where.get("time")
        t = (str(np.asarray(raw["time"].values[ti]).astype("datetime64[s]"))[:19]
             if ti is not None else "")
        place = f"site {s!r}, time {t}: site index {j} repeats site index {i}"
    u = f" {unit}" if unit not in ("", "1") else ""
    keep = "the corrected time step only" if dim == "time" else "one copy of each site"
    return InputError(f"duplicate hourly timestamp with another value ({place})", file=path,
                      column=name, value=f"{again}{u}",
                      expected=f"one value per site and hour ({dim} index {i} has {name} "
                      f"{first}{u} where {dim} index {j} has {again}{u}); keep {keep}")


def repeat_note(path, dim, raw, dropped, of, n_other, runs: int = 5) -> str:
    """The ledger note naming the dropped steps of `dim`, the file and the variables.

    E.g. ``"met.nc: 24 time steps exact repeats of earlier ones in every variable
    (temperature, wind_speed, ...), dropped (48 records): time indices 24-47 (2021-01-02T01:00
    to 2021-01-03T00:00) repeat time indices 0-23"``.
    """
    from .ledger import consecutive_runs
    a, b = np.asarray(dropped, np.int64), np.asarray(of, np.int64)
    if not len(a):
        return ""
    first, last = consecutive_runs(a, b)
    lab = raw[dim].values

    def show(i):
        if dim == "time":
            return str(np.asarray(lab[i]).astype("datetime64[m]"))
        return repr(str(lab[i]))
    text = []
    for i, j in zip(first[:runs], last[:runs]):
        text.append(f"{dim} index {a[i]} ({show(a[i])}) repeats {dim} index {b[i]}" if i == j
                    else f"{dim} indices {a[i]}-{a[j]} ({show(a[i])} to {show(a[j])}) repeat "
                    f"{dim} indices {b[i]}-{b[j]}")
    more = int(np.sum(last[runs:] - first[runs:] + 1))
    tail = f"; and {more} more (input_rows.csv lists their records)" if more else ""
    names = ", ".join(_compared(raw, dim))
    what = "time step" if dim == "time" else "site"
    return (f"{path.name}: {len(a)} {what}{'s' * (len(a) != 1)} repeating an earlier one in "
            f"every variable ({names}), dropped as exact repeats ({len(a) * n_other} records "
            "rejected): " + "; ".join(text) + tail)


class AxisRepeats:
    """The time steps and sites of a gridded met file dropped as exact repeats."""

    def __init__(self, raw, path, found):
        self.ids = raw["site"].values.astype(str)
        self.n_time = raw.sizes["time"]
        (self.keep_time, drop_t, of_t), (self.keep_site, drop_s, of_s) = found
        self.dropped_time, self.dropped_site = drop_t, drop_s
        self.notes = [n for n in (
            repeat_note(path, "time", raw, drop_t, of_t, len(self.ids)),
            repeat_note(path, "site", raw, drop_s, of_s, raw.sizes["time"])) if n]

    @classmethod
    def find(cls, raw, path, read_values, block_values=REPEAT_BLOCK_VALUES):
        """None when neither axis repeats a label; else the repeats (exact: dropped),
        or the located error of a repeat with another value."""
        found = (check_repeats(raw, path, "time", read_values, block_values),
                 check_repeats(raw, path, "site", read_values, block_values))
        if not len(found[0][1]) and not len(found[1][1]):
            return None
        return cls(raw, path, found)

    def records(self, codes, rejected, repeat_code):
        """The ledger arrays of the kept (site, time) grid spread onto the file's grid,
        the dropped records with `repeat_code`, rejected.

        Returns
        -------
        ids : ndarray of str
            The file's site labels (the record numbering is site-major).
        n_time : int
        codes, rejected : ndarray
            One per record of the file, 1-based record number - 1.
        """
        n_s, n_t = len(self.ids), self.n_time
        cell = np.ix_(self.keep_site, self.keep_time)
        full = np.full((n_s, n_t), repeat_code, np.int32)
        full[cell] = np.asarray(codes).reshape(len(self.keep_site), len(self.keep_time))
        out = np.ones((n_s, n_t), bool)
        out[cell] = np.asarray(rejected).reshape(full[cell].shape)
        return self.ids, n_t, full.reshape(-1), out.reshape(-1)
