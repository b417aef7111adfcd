"""Reader of hourly meteorology (CSV, or NetCDF or zarr through xarray).

Returns a Dataset on (``site``, ``time``) with one common hourly axis, ``time`` being
the END of each hour in UTC (see docs/data_model.md), and a ledger.  Values that fail
the plausibility checks of :mod:`workbench.io.metchecks` are set to NaN and their rows
flagged with a hint; nothing is refused for plausibility alone.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from ..errors import InputError, suggest
from . import metchecks, methours
from .metclock import add_clock_notes
from .common import (REPEAT_REASON, check_sites, check_time_zones, join_reasons, repeat_note,
                     unit_error, unused_note)
from .ledger import Ledger
from .readbytes import changed_while_read, record_whole
from .table import RawTable
from .tabletimes import minute_59_hint

from .metvars import _UNITS_OUT, HOUR, MET_VARIABLES, convert_met  # noqa: F401 (re-exported)
from .metvars import site_time_dataset
from .methours import CLOCK_BACK_MONTHS, clock_change_hint  # noqa: F401 (re-exported; in
#                    methours so that metlocate needs no import of met: no import cycle)


#: Headers shown for missing required met columns (any unit of the dimension is read).
MET_HEADER_EXAMPLES = {"wind_speed": "wind_speed [m/s]", "temperature": "temperature [degC]",
                       "relative_humidity": "relative_humidity [%]",
                       "solar_radiation": "solar_radiation [W/m2]",
                       "precipitation": "precipitation [mm]", "pressure": "pressure [hPa]"}


def _convert(tab: RawTable, name: str, target: str):
    raw = tab.numbers(name, missing="samples")        # NA, N/A, NaN, - ... counted
    unit = tab.unit_of(name, default="1" if target == "1" else None)
    try:
        return convert_met(raw, unit, name, target), unit
    except ValueError as exc:
        raise unit_error(tab, name, exc, f"a unit convertible to {target}",
                         (target,)) from None


def read_met(path, catalogue):
    """Read hourly meteorology.

    Parameters
    ----------
    path : str or Path
        CSV (optionally gzipped) with ``site, time`` and the variables of
        :data:`MET_VARIABLES` (units in the headers), or a NetCDF file with dims
        (site, time) and ``units`` attributes, or a zarr store of the same layout (a
        folder ``met.zarr`` or a zipped ``met.zarr.zip``; :mod:`workbench.io.metzarr`).
        In a CSV, every time label of one site carries a zone or none (the first label
        breaking the site's convention is an error, :func:`~workbench.io.common.check_time_zones`),
        and empty, NA, N/A, NaN, - and -- (any case) are missing values, counted in one
        ledger note per file (the sample readers' rules, docs/data_formats.md).
    catalogue : SiteCatalogue

    Returns
    -------
    met : xarray.Dataset
        Dims (site, time); SI units (see docs/data_model.md).
    ledger : Ledger
        One row per hour read; notes list gaps and file-level hints, and the clock
        check of :mod:`workbench.io.metclock` (solar radiation against the sun).
    """
    path = Path(path)
    if path.suffix in (".nc", ".nc4", ".netcdf"):
        return _read_met_netcdf(path, catalogue)
    from .zarrstore import is_zarr_path
    if is_zarr_path(path):                  # a zarr store: a folder or a .zarr.zip
        return read_met_zarr(path, catalogue)
    from .metfast import read_met_csv_fast
    fast = read_met_csv_fast(path, catalogue)
    if fast is not None:        # else a file the line-by-line reader below must judge
        return fast
    tab = RawTable.read(path)
    tab.require(["site", "time"] + [k for k, v in MET_VARIABLES.items() if v[1]],
                examples=MET_HEADER_EXAMPLES)
    sites = check_sites(tab, catalogue)
    off = catalogue.utc_offsets(sites)
    label = tab.meta.get("time_label", "end").lower()
    if label not in ("end", "start"):
        raise InputError("unknown time label", file=tab.path,
                         line=tab.meta_lines.get("time_label"), column="time_label",
                         value=label, expected="'end' or 'start'")
    t = tab.times("time", off)
    check_time_zones(tab, sites, names=("time",))     # one convention per site
    if label == "start":
        t = t + HOUR
    clock = methours.clock_offsets(tab.frame["time"].to_numpy(object), tab.zoned["time"],
                                   methours.site_offsets_ns(off))
    measured = t
    t, off_hour = methours.to_hour_ends(t, clock)     # half/quarter hours: the UTC hour

    # a row repeating an earlier row of its site and hour cell for cell is dropped (a
    # file pasted after itself); a repeat with another value is refused below
    drop, of_row = methours.exact_repeats(tab.frame, sites, t, measured)
    kept = np.flatnonzero(~drop)

    def where(i, problem, expected):
        i = int(kept[i])
        return tab.error(problem, row=i, column="time", value=tab.frame["time"].iloc[i],
                         expected=expected)

    def differs(i, first):
        i, first = int(kept[i]), int(kept[first])
        k = int(methours.same_cells(tab.frame, [i], [first], measured)[0])
        col = tab.frame.columns[max(k, 0)]
        return (f", which has {tab.raw_headers.get(col, col)!r} "
                f"{tab.frame[col].iloc[first]!r} where this line has "
                f"{tab.frame[col].iloc[i]!r}") if k >= 0 else ""
    check_hours(sites[kept], t[kept], where, lambda i: f"line {int(tab.lines[kept[i]])}",
                off_hour[kept], moved=(t != measured)[kept], differs=differs)
    values, raw_units = {}, {}
    for name, (target, req, _) in MET_VARIABLES.items():
        if tab.has(name):
            values[name], raw_units[name] = _convert(tab, name, target)
            values[name] = values[name][kept]
    ds, ledger = _assemble(values, sites[kept], t[kept], tab.lines[kept], tab.path, catalogue,
                           raw_units, empty_reason="no values in the row")
    if drop.any():                       # in the ledger, with the sample readers' words
        ledger = ledger + Ledger.for_rows(tab.path, tab.lines[drop], sites[drop],
                                          np.full(int(drop.sum()), REPEAT_REASON, object),
                                          np.ones(int(drop.sum()), bool))
        ledger.notes.append(repeat_note(tab, tab.lines[drop], tab.lines[of_row[drop]]))
    add_clock_notes(ds, ledger, catalogue, tab.path,      # after the gap notes
                    zoned_sites=set(sites[tab.zoned["time"]]))
    pos = pd.Index(list(catalogue.ids)).get_indexer(sites)
    ledger.notes[:0] = methours.move_notes(      # one per site whose hours were moved
        list(catalogue.ids), catalogue.utc_offsets(list(catalogue.ids)),
        methours.moved_pairs(pos, clock, tab.zoned["time"], t != measured),
        methours.moved_pairs(pos, clock, tab.zoned["time"],
                             methours.kept_on_utc(measured, clock)))
    unknown = tab.unknown_columns(set(MET_VARIABLES) | {"site", "time"})
    if unknown:
        ledger.notes.append(unused_note(tab.path.name, unknown))
    if tab.missing_note():
        ledger.notes.append(tab.missing_note())
    if tab.meta_again_note():
        ledger.notes.append(tab.meta_again_note())
    if tab.header_again_note():
        ledger.notes.append(tab.header_again_note())
    if tab.end_of_day_note():
        ledger.notes.append(tab.end_of_day_note())
    return ds, ledger


def check_hours(sites, t, where, name_row, off_hour=None, moved=None, differs=None):
    """Raise for a time off the whole hour or a second row for one site and hour.

    Parameters
    ----------
    sites : ndarray of str
    t : ndarray of datetime64[ns]
        End of each row's hour (UTC).
    where : callable
        ``where(i, problem, expected)`` -> the located InputError of row i.
    name_row : callable
        ``name_row(i)`` -> how row i is named in a message ("line 7", "time index 3").
    off_hour : ndarray of bool, optional
        Rows off the whole hour of their own clock
        (:func:`~workbench.io.methours.to_hour_ends`); default: `t` off the UTC hour.
    moved : ndarray of bool, optional
        Rows moved onto the whole UTC hour (a repeat they make gets a hint).
    differs : callable, optional
        ``differs(i, first)`` -> the words naming the first cell where row i differs
        from row `first` of its site and hour (", which has 'temperature [degC]' '4.1'
        where this line has '5.3'"); exact repeats are dropped before
        (:func:`~workbench.io.methours.exact_repeats`).
    """
    nat = np.isnat(t)
    if nat.any():
        raise where(int(np.flatnonzero(nat)[0]), "missing time (NaT: a fill value or a "
                    "number that does not decode as a date in the time coordinate?)",
                    "a time for every index")
    if off_hour is None:
        off_hour = t != methours.floor_hour(t)
    if off_hour.any():
        i = int(np.flatnonzero(off_hour)[0])
        raise where(i, "timestamp not on the hour" + minute_59_hint(t[i]),
                    "hourly timestamps (minutes 00)")
    dup = pd.DataFrame({"s": sites, "t": t}).duplicated().to_numpy()
    if dup.any():
        i = int(np.flatnonzero(dup)[0])
        first = int(np.flatnonzero((sites == sites[i]) & (t == t[i]))[0])
        raise where(i, "duplicate hourly timestamp",
                    f"one row per site and hour (also on {name_row(first)}"
                    + (differs(i, first) if differs is not None else "") + ")"
                    + _repeat_hint(sites, t, i, first)
                    + methours.repeat_hint(moved is not None and bool(moved[i] or moved[first]))
                    + methours.twice_hint(int(dup.sum()), _adjacent(sites, i, first)))


def _adjacent(sites, i, first) -> bool:
    """Is row `first` the row of its site just before row `i`?"""
    same_site = np.flatnonzero(sites == sites[i])
    k = int(np.searchsorted(same_site, i))
    return bool(k > 0 and same_site[k - 1] == first)


def _repeat_hint(sites, t, i, first) -> str:
    """:func:`clock_change_hint` of row `i` repeating row `first` (t: UTC hour ends)."""
    return clock_change_hint(_adjacent(sites, i, first),
                             int(str(np.datetime64(t[i], "M"))[5:7]))


def _assemble(values, sites, t, lines, path, catalogue, raw_units, empty_reason):
    """Checks, ledger and the (site, time) grid, shared by the CSV and NetCDF paths.

    A row (record) without any value is rejected in the ledger with `empty_reason`.
    """
    n = len(sites)
    empty = np.ones(n, bool)
    for v in values.values():
        empty &= np.isnan(v)
    site_notes = []
    reasons, values = metchecks.run_row_checks(values, sites, t, catalogue, raw_units,
                                               missing="no value", notes=site_notes)
    reasons = np.where(empty, join_reasons([reasons, np.full(n, empty_reason, object)]), reasons)
    ledger = Ledger.for_many_rows(path, lines, sites, reasons, empty)
    keep = ~empty
    if not keep.any():
        raise InputError("no values in any row", file=path,
                         expected="at least one hour with a value")
    present_ids, si = np.unique(sites[keep].astype(str), return_inverse=True)
    site_ids = [s for s in catalogue.ids if s in set(present_ids.tolist())]
    order = np.array([site_ids.index(s) for s in present_ids.tolist()], int)  # per site, not row
    si = order[si]
    ds = site_time_dataset(values, keep, site_ids, si, t[keep], path)
    ledger.notes.extend(metchecks.describe_gaps(ds))
    ledger.notes.extend(site_notes)
    return ds, ledger


#: Records of a NetCDF met file checked at a time (whole sites; the checks are per site).
NETCDF_GROUP_RECORDS = 400_000


def _read_met_netcdf(path: Path, catalogue):
    """The NetCDF path, held to the CSV rules: dims (site, time) only, site ids in the
    catalogue, whole and unique hours, units converted once, every record in the
    ledger (its "line" is the record number of the (site, time) grid, 1-based).

    The file is opened lazily and read :data:`NETCDF_GROUP_RECORDS` records (whole
    sites) at a time into a :class:`~workbench.io.metstore.MetStore`, so no step holds
    the met of every site."""
    if not path.exists():
        raise InputError("file not found", file=path, expected="an existing file")
    _needs_hdf5_engine(path)
    digest = record_whole(path)   # read lazily by xarray: hashed before it is opened
    try:
        raw = xr.open_dataset(path)
    except Exception as exc:  # many engines, many error types
        first = str(exc).strip().splitlines()[0][:160] if str(exc).strip() else ""
        hint = (" (reading NetCDF needs the scipy or netCDF4 package)"
                if "backends" in str(exc) else "")
        raise InputError(f"cannot open NetCDF ({type(exc).__name__}: {first}){hint}", file=path,
                         expected="a NetCDF file") from None
    with raw:
        out = _netcdf_body(raw, path, catalogue)
    _same_after_read(path, digest)      # and after the last read: else refused
    return out


def _same_after_read(path, digest):
    """Raise when a lazily read met file's content differs from the one hashed before
    it was opened (:func:`workbench.io.readbytes.changed_while_read`)."""
    err = changed_while_read(path, digest)
    if err is not None:
        raise err


def _needs_hdf5_engine(path):
    """Raise the located error naming the extra when a NetCDF4 (HDF5) file cannot be read."""
    with open(path, "rb") as f:
        if f.read(4) != b"\x89HDF":
            return
    import importlib.util
    if importlib.util.find_spec("netCDF4") or importlib.util.find_spec("h5netcdf"):
        return
    raise InputError("a NetCDF4 (HDF5) file, and no reader of that format is installed",
                     file=path, expected='a NetCDF3 file, or the netCDF4 package: python -m pip '
                     'install "deposition-workbench[netcdf4]"')


def _netcdf_layout(raw, path, catalogue):
    """The structural checks of a NetCDF met file; (squeezed notes, label) or raise."""
    for dim in ("site", "time"):
        if dim not in raw.dims:
            raise InputError("missing dimension", file=path, column=dim,
                             value=", ".join(map(str, raw.dims)) or "none",
                             expected="dims (site, time)")
    for name, (_, req, _) in MET_VARIABLES.items():
        if req and name not in raw:
            raise InputError("missing required variable", file=path, column=name,
                             expected=f"a variable named {name!r}" + suggest(name, list(raw.data_vars)))
    squeezed = []
    for name in MET_VARIABLES:
        if name in raw:
            extra = [d for d in raw[name].dims if d not in ("site", "time") and raw.sizes[d] == 1]
            if extra:     # a single level (height = 10 m): the variable itself
                raw[name] = raw[name].squeeze(extra, drop=True)
                squeezed.append(f"{name} ({', '.join(map(str, extra))})")
    for name in MET_VARIABLES:
        if name in raw and set(raw[name].dims) != {"site", "time"}:
            raise InputError("variable on other dimensions", file=path, column=name,
                             value="(" + ", ".join(map(str, raw[name].dims)) + ")",
                             expected="dims (site, time) only (select or average the extra "
                             "dimension before reading)")
    if "site" not in raw.coords:
        raise InputError("site dimension without site ids", file=path, column="site",
                         expected="a 'site' coordinate holding the ids of the catalogue")
    if not np.issubdtype(raw["time"].dtype, np.datetime64):
        raise InputError("time not decoded as dates", file=path, column="time",
                         value=f"{raw['time'].dtype} {time_units(raw['time'])}",
                         expected="a CF time coordinate ('hours since 2020-01-01 00:00', "
                         "standard calendar)")
    label = str(raw.attrs.get("time_label", "end")).lower()
    if label not in ("end", "start"):
        raise InputError("unknown time label", file=path, column="time_label", value=label,
                         expected="'end' or 'start' (global attribute)")
    ids = raw["site"].values.astype(str)
    unknown = ~pd.Series(ids).isin(catalogue.ids).to_numpy()
    if unknown.any():
        s = ids[np.flatnonzero(unknown)[0]]
        raise InputError("site not in the catalogue", file=path, column="site", value=s,
                         expected="one of " + ", ".join(catalogue.ids) + suggest(s, catalogue.ids))
    return squeezed, label


def time_units(time) -> str:
    """The units (and a calendar other than the standard one) of a time coordinate as
    written in the file, for messages (decoded times keep them in ``encoding``)."""
    units = time.attrs.get("units") or time.encoding.get("units") or "(no units)"
    cal = time.attrs.get("calendar") or time.encoding.get("calendar")
    return f"{units} (calendar {cal})" if cal and cal not in ("standard", "gregorian",
                                                               "proleptic_gregorian") else units


def _netcdf_units(raw, path):
    """The units of each variable, checked (present, numeric, convertible)."""
    raw_units = {}
    for name, (target, _, _) in MET_VARIABLES.items():
        if name not in raw:
            continue
        unit = raw[name].attrs.get("units", "1" if target == "1" else None)
        if unit is None:
            raise InputError("variable has no units attribute", file=path, column=name,
                             expected=f"a CF 'units' attribute convertible to {target}")
        if not np.issubdtype(raw[name].dtype, np.number):
            raise InputError("variable is not numeric", file=path, column=name,
                             value=str(raw[name].dtype), expected="numbers")
        try:
            convert_met(np.zeros(1), str(unit), name, target)
        except ValueError as exc:
            spell = (" (UDUNITS-2 spellings: 'degC', 'degree_Celsius', 'Celsius', 'K', "
                     "'degF')" if target == "K" else "")
            raise InputError(f"unknown or dimensionally wrong unit ({exc})", file=path,
                             column=name, value=unit,
                             expected=f"a unit convertible to {target}{spell}") from None
        raw_units[name] = unit
    return raw_units


def read_values(var, path, name):
    """The values of a lazily read variable, or the located error of a damaged file."""
    try:
        return var.values
    except Exception as exc:  # codecs and engines raise many error types
        first = str(exc).strip().splitlines()[0][:160] if str(exc).strip() else ""
        raise InputError(f"cannot read the values ({type(exc).__name__}: {first})", file=path,
                         column=name, expected="values the format can decode (the file or "
                         "store may be damaged or half-copied)") from None


def _netcdf_body(raw, path, catalogue, group_sites=None):
    """Read, check and store `raw` (opened lazily) a group of whole sites at a time;
    `group_sites` sites per group (default: :data:`NETCDF_GROUP_RECORDS` records)."""
    from .ledger import CODED_ABOVE, CodedRows
    from .metstore import MetStore, grid_rows, load_small
    from .metvars import met_attrs
    squeezed, label = _netcdf_layout(raw, path, catalogue)
    raw, again = _drop_axis_repeats(raw, path)
    ids = raw["site"].values.astype(str)
    times = raw["time"].values.astype("datetime64[ns]")
    if label == "start":
        times = times + HOUR
    n_s, n_t = len(ids), len(times)

    def where(i, problem, expected):
        return InputError(f"{problem} (site {str(ids[i // n_t])!r}, time index {i % n_t})", file=path,
                          column="time", value=str(times[i % n_t])[:19], expected=expected)
    if n_s and n_t:      # the hours are the same for every site: the first site's records
        check_hours(np.repeat(ids[:1].astype(object), n_t), times, where,
                    lambda i: f"time index {i % n_t}")
    raw_units = _netcdf_units(raw, path)
    names = list(raw_units)
    if not n_s or not n_t:
        raise InputError("no values in any row", file=path,
                         expected="at least one hour with a value")
    t_first = times.min()
    n_grid = int((times.max() - t_first) // HOUR) + 1
    ti_all = ((times - t_first) // HOUR).astype(np.int64)
    store = MetStore(names, n_s, n_grid)
    reason_codes = np.empty(n_s * n_t, np.int32)
    rejected = np.empty(n_s * n_t, bool)
    texts, gaps, site_notes = {}, {}, []
    kept_sites = np.zeros(n_s, bool)
    lo_t, hi_t = n_grid, -1
    step = group_sites or max(1, NETCDF_GROUP_RECORDS // n_t)
    for k0 in range(0, n_s, step):
        k1 = min(n_s, k0 + step)
        values = {}
        for name in names:
            target = MET_VARIABLES[name][0]
            v = read_values(raw[name].isel(site=slice(k0, k1)).transpose("site", "time"),
                            path, name)
            values[name] = convert_met(v.astype(float).reshape(-1), str(raw_units[name]), name,
                                       target)
        sites = np.repeat(ids[k0:k1].astype(object), n_t)
        t = np.tile(times, k1 - k0)
        empty = np.ones(len(sites), bool)
        for v in values.values():
            empty &= np.isnan(v)
        reasons, values = metchecks.run_row_checks(values, sites, t, catalogue, raw_units,
                                                   missing="no value", notes=site_notes)
        reasons = np.asarray(reasons, dtype=object)
        if empty.any():                     # joined on the empty records only
            reasons[empty] = join_reasons([reasons[empty], np.full(
                int(empty.sum()), "all variables missing (NaN) in the record", object)])
        codes, uniq = pd.factorize(reasons)
        for u in uniq:
            texts.setdefault(u, len(texts))
        reason_codes[k0 * n_t:k1 * n_t] = np.array([texts[u] for u in uniq], np.int32)[codes]
        rejected[k0 * n_t:k1 * n_t] = empty
        keep = ~empty
        si = np.repeat(np.arange(k1 - k0), n_t)[keep]
        ti = np.tile(ti_all, k1 - k0)[keep]
        grids, present = grid_rows(values, keep, si, ti, k1 - k0, n_grid)
        store.write(k0, grids, present)
        has = present.any(axis=1)
        kept_sites[k0:k1] = has
        if keep.any():
            lo_t, hi_t = min(lo_t, int(ti.min())), max(hi_t, int(ti.max()))
        notes = metchecks.describe_gaps(xr.Dataset(
            {"row_present": (("site", "time"), present[has])},
            coords={"site": ids[k0:k1][has], "time": t_first + np.arange(n_grid) * HOUR}),
            values={k: g[has] for k, g in grids.items()})
        gaps.update(zip(ids[k0:k1][has], notes))
        del values, grids, present
    if not kept_sites.any():
        store.remove()
        raise InputError("no values in any row", file=path,
                         expected="at least one hour with a value")
    ledger_ids, n_t_file = ids, n_t
    if again is not None:     # the dropped repeats back in the file's record numbering
        ledger_ids, n_t_file, reason_codes, rejected = again.records(
            reason_codes, rejected, texts.setdefault(REPEAT_REASON, len(texts)))
    n = len(ledger_ids) * n_t_file
    lines = np.arange(n) + 1
    text_arr = np.array(list(texts), dtype=object)
    if n <= CODED_ABOVE:
        ledger = Ledger.for_rows(path, lines, np.repeat(ledger_ids.astype(object), n_t_file),
                                 text_arr[reason_codes], rejected)
    else:
        ledger = Ledger.for_codes(CodedRows(
            str(path), lines, np.repeat(np.arange(len(ledger_ids), dtype=np.int32), n_t_file),
            ledger_ids.astype(object), reason_codes, text_arr, rejected))
    if again is not None:
        ledger.notes.extend(again.notes)
    pos = {s: i for i, s in enumerate(ids)}
    site_ids = [s for s in catalogue.ids if s in pos and kept_sites[pos[s]]]
    ds = store.dataset(site_ids, t_first + np.arange(lo_t, hi_t + 1) * HOUR,
                       met_attrs(names, path), site_index=np.array([pos[s] for s in site_ids]),
                       time_slice=slice(lo_t, hi_t + 1))
    ds = load_small(ds, store)
    ledger.notes.extend(gaps[s] for s in site_ids)
    ledger.notes.extend(site_notes)
    add_clock_notes(ds, ledger, catalogue, path, NETCDF_GROUP_RECORDS)
    if squeezed:
        ledger.notes.append(f"{path.name}: single-level dimension dropped from "
                            + ", ".join(squeezed))
    return ds, ledger


def _drop_axis_repeats(raw, path):
    """`raw` without the time steps and sites that repeat earlier ones in every
    variable (:mod:`workbench.io.metaxes`), and what was dropped (None: nothing)."""
    from .metaxes import AxisRepeats
    again = AxisRepeats.find(raw, path, read_values)
    if again is None:
        return raw, None
    return raw.isel(site=again.keep_site, time=again.keep_time), again


def read_met_zarr(path, catalogue):
    """Read hourly met from a zarr store, held to the NetCDF rules (how the chunks are
    read: :mod:`workbench.io.metzarr`).

    Parameters
    ----------
    path : str or Path
        A store folder (``met.zarr``) or a zipped store (``met.zarr.zip``) with dims
        (site, time), a ``site`` coordinate of catalogue ids, a CF time coordinate and a
        ``units`` attribute on each variable (docs/data_formats.md, section 4).
    catalogue : SiteCatalogue

    Returns
    -------
    met : xarray.Dataset
        Dims (site, time); SI units, as :func:`read_met`.
    ledger : Ledger
        One row per record of the (site, time) grid (its "line" the 1-based record
        number, site-major); notes on gaps, dropped single levels, chunks and the
        consolidated metadata.

    Raises
    ------
    InputError
        Naming the store, the variable, the value and what was expected.
    """
    import shutil
    import tempfile
    from .metzarr import plan, site_major_copy
    from .zarrstore import open_zarr
    path = Path(path)
    # read lazily by zarr: hashed just before it is opened, and again after the last read
    digest = record_whole(path) if path.exists() else None
    raw, notes = open_zarr(path, "met")
    with raw:
        squeezed, _ = _netcdf_layout(raw, path, catalogue)
        names = list(_netcdf_units(raw, path))
        step, chunks, chunk_notes = plan(raw, names, raw.sizes["site"], raw.sizes["time"],
                                         NETCDF_GROUP_RECORDS)
        if step is not None:       # chunks of at most a group's sites: read directly
            ds, ledger = _netcdf_body(raw, path, catalogue, group_sites=step)
        else:                      # larger chunks: each read once into a site-major copy
            folder = tempfile.mkdtemp(prefix="workbench-zarr-")
            try:
                copy = site_major_copy(raw, names, chunks, folder,
                                       lambda var, name: read_values(var, path, name))
                ds, ledger = _netcdf_body(copy, path, catalogue)
            finally:
                shutil.rmtree(folder, ignore_errors=True)
    _same_after_read(path, digest)
    if squeezed:
        ledger.notes.append(f"{path.name}: single-level dimension dropped from "
                            + ", ".join(squeezed))
    ledger.notes.extend(f"{path.name}: {n}" for n in chunk_notes)
    ledger.notes.extend(notes)
    return ds, ledger
