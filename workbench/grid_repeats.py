"""A gridded met file with a time step twice: the met repeat rule of the site readers
(:mod:`workbench.io.metaxes`, docs/data_formats.md, "Field-data slips we check") held
to the (time, y, x) met of ``workbench grid``.

A time step whose hour repeats an earlier one in every variable (NaN equal to NaN) is
dropped: one note names the file, the variables, the time indices and the times, and
says how many steps were dropped (the grid has no per-record ledger: the count goes
into grid.nc's attributes and provenance.json's notes too).  A repeated step with
another value in any variable is one located error naming the file, the variable, the
first differing cell (its y and x indices and coordinates), the time and both values.

Only the repeated steps are read, and in blocks
(:func:`workbench.io.metaxes.first_difference`: at most about
:data:`~workbench.io.metaxes.REPEAT_BLOCK_VALUES` values a side, rows of the plane
where one step is larger), never the whole grid; no loop over hours.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .grid_read import GridError, read_values
from .io.ledger import consecutive_runs
from .io.metaxes import REPEAT_BLOCK_VALUES, _compared, first_difference, first_of_repeats


@dataclass(frozen=True)
class MetRepeats:
    """The time steps of the met file dropped as exact repeats.

    Attributes
    ----------
    n_file : int
        Time steps in the file [-].
    keep, dropped, of : ndarray of int
        Time indices of the file kept, dropped, and the one each dropped step repeats.
    """

    n_file: int
    keep: np.ndarray
    dropped: np.ndarray
    of: np.ndarray

    @classmethod
    def of_times(cls, times) -> "MetRepeats":
        """The repeats of the met's hour labels (datetime64[ns], end of each hour)."""
        times = np.asarray(times).astype("datetime64[ns]")
        dropped, of = first_of_repeats(times)
        keep = np.setdiff1d(np.arange(len(times)), dropped)
        return cls(len(times), keep, dropped, of)

    @property
    def n_dropped(self) -> int:
        return int(len(self.dropped))


def _variables(ds) -> list:
    """The met file's variables on time, in the met table's order (the time bounds,
    equal wherever the hour is, left out)."""
    bounds = ds["time"].attrs.get("bounds")
    return [n for n in _compared(ds, "time") if n != bounds]


def check_met_repeats(ds, path, times, found: MetRepeats,
                      block_values=REPEAT_BLOCK_VALUES) -> str:
    """Compare each repeated step with the step it repeats, in every variable on time.

    Parameters
    ----------
    ds : xarray.Dataset
        The met file opened lazily, variables on (time, y, x).
    path : Path
    times : ndarray of datetime64[ns]
        End of each hour of the file, repeats included.
    found : MetRepeats
    block_values : int
        About the most values of one variable compared at once on each side; the result
        does not depend on it [-].

    Returns
    -------
    str
        The note on the steps dropped ("" when none repeats).

    Raises
    ------
    GridError
        A repeated step with another value: the file, the variable, the first differing
        cell, the time and both values.
    """
    dropped, of = found.dropped, found.of
    if not len(dropped):
        return ""
    bad, bad_name = None, None
    for name in _variables(ds):              # blocks of repeated steps, not hours
        upto = len(dropped) if bad is None else bad[0]       # an earlier step wins
        if not upto:
            break
        hit = first_difference(ds[name], "time", dropped[:upto], of[:upto],
                               lambda part, name=name: read_values(
                                   part, path, name, " of the repeated time steps"),
                               block_values)
        if hit is not None:
            bad, bad_name = hit, name
    if bad is not None:
        raise _conflict(ds, path, times, found, bad_name, bad)
    return repeat_note(ds, path, times, found)


def _stamp(t) -> str:
    return str(np.asarray(t).astype("datetime64[m]"))


def _conflict(ds, path, times, found, name, bad) -> GridError:
    """The located error of a repeated step with another value of `name`."""
    k, cell, order, first, again = bad
    i, j = int(found.of[k]), int(found.dropped[k])
    var = ds[name]
    where = []
    for d, at in zip(order[1:], cell):
        if var.sizes[d] == 1 and d not in ds.coords:
            continue
        text = f"{d} index {at}"
        if d in ds.coords and ds[d].ndim == 1:
            text += f" ({d} = {np.asarray(ds[d].values[at]).item()!s})"
        where.append(text)
    unit = str(var.attrs.get("units", ""))
    u = f" {unit}" if unit not in ("", "1") else ""
    cell_text = ", ".join(where) if where else "its only value"
    return GridError(f"time step repeated with another value (time {_stamp(times[j])} UTC, "
                     f"end of the hour: time index {j} repeats time index {i}; first cell "
                     f"that differs: {cell_text})", file=path, column=name,
                     value=f"{again}{u}",
                     expected=f"one value per cell and hour (time index {i} has {name} "
                     f"{first}{u} where time index {j} has {again}{u}); keep the corrected "
                     "time step only")


def repeat_note(ds, path, times, found, runs: int = 5) -> str:
    """The note naming the steps dropped: file, variables, time indices, times, count.

    E.g. ``"met.nc: 24 of 48 time steps repeat an earlier one in every variable
    (temperature, ...) and are dropped as exact repeats (the grid keeps 24 steps; no
    per-record ledger: grid.nc's attribute workbench_met_repeated_steps_dropped = 24):
    time indices 24-47 (2021-01-02T01:00 to 2021-01-03T00:00) repeat time indices 0-23"``.
    """
    a, b = np.asarray(found.dropped, np.int64), np.asarray(found.of, np.int64)
    if not len(a):
        return ""
    first, last = consecutive_runs(a, b)
    text = []
    for i, j in zip(first[:runs], last[:runs]):
        text.append(f"time index {a[i]} ({_stamp(times[a[i]])}) repeats time index {b[i]}"
                    if i == j else
                    f"time indices {a[i]}-{a[j]} ({_stamp(times[a[i]])} to "
                    f"{_stamp(times[a[j]])}) repeat time indices {b[i]}-{b[j]}")
    more = int(np.sum(last[runs:] - first[runs:] + 1))
    tail = f"; and {more} more" if more else ""
    n = len(a)
    names = ", ".join(_variables(ds))
    return (f"{path.name}: {n} of {found.n_file} time step{'s' * (found.n_file != 1)} "
            f"{'repeat' if n != 1 else 'repeats'} an earlier one in every variable ({names}) "
            f"and {'are' if n != 1 else 'is'} dropped as exact repeats (the grid keeps "
            f"{found.n_file - n} steps; no per-record ledger: grid.nc's attribute "
            f"workbench_met_repeated_steps_dropped = {n}): " + "; ".join(text) + tail)
