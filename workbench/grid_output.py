"""CF NetCDF maps of a gridded run and the ``workbench grid`` run folder.

``grid.nc``: dims (time, y, x), one time step per reporting period with CF time bounds;
the input grid's coordinates, auxiliary latitude/longitude and grid mapping copied
from the land-use file; every variable with ``units``, ``long_name``,
``grid_mapping`` and ``cell_methods``; a ``history`` attribute naming the inputs (with
their SHA-256), the options and the package version.  grid.nc is written first without
the maps' values (:func:`create_grid_netcdf`), then each block's maps at their place as
the block ends (:class:`MapFile`): the same bytes as xarray's writing of the whole maps.
The folder is written whole or not at all (:class:`workbench.runfolder.RunFolder`),
``provenance.json`` last.
"""
from __future__ import annotations

import contextlib
import datetime as _dt
import json
import sys
from pathlib import Path

import numpy as np
import xarray as xr

from . import __version__
from .grid import (DRY_SPECIES, default_block, make_periods, output_names, span_notes,
                   staged, store_grid)
from .grid_io import GridError, block_catalogue, describe, open_grid, read_block
from .io.metchecks import NIGHT_SUN_HINT
from .landuse import LAND_USE
from .runfolder import OutputError, RunFolder, os_error_message

#: The reporting unit of deposition: kg of the element per hectare, as a UDUNITS string
#: (1 ha = 1e4 m2).
KG_PER_HA = "1e-4 kg m-2"
GRID_FILE = "grid.nc"
#: The grid inputs read block by block while the maps are computed (the land-use grid
#: is read whole by :func:`workbench.grid_io.open_grid`): one that changes before the
#: last read refuses the run.
LAZY_GRID_INPUTS = ("met", "air")


def _attrs(name, grid, mapping) -> dict:
    """units, long_name and cell_methods of an output variable."""
    kind, _, what = name.partition("_")
    if name == "met_flagged_hours":
        a = {"units": "1", "long_name": "hours of the period whose met failed a plausibility "
             "check of the site reader (a value that cannot be right masked, a doubtful "
             "one kept as read; docs/data_formats.md section 4)", "cell_methods": "time: sum"}
    elif name == "met_missing_hours":
        a = {"units": "1", "long_name": "hours of the period without a deposition velocity "
             "from the cell's own met (a met value the engine needs is missing or was "
             "masked in that hour; the previous hour's rain is not needed: without it the "
             "hour's own rain decides the surface wetness): filled from the "
             "cell's mean diurnal cycle where it has enough hours, else no Vd (NaN maps "
             "when every hour is missing)",
             "cell_methods": "time: sum"}
    elif name.startswith("flux_coverage_"):
        sp = name[len("flux_coverage_"):]
        a = {"units": "1", "long_name": f"share of the period's hours with a {sp} "
             "concentration and a deposition velocity", "cell_methods": "time: mean"}
    elif kind == "vd":
        a = {"units": "m s-1", "long_name": f"dry deposition velocity of {what} (hourly, gaps "
             f"filled from the mean diurnal cycle), mean over the period at "
             f"{grid.sampler_height:g} m", "cell_methods": "time: mean"}
    elif what in ("S", "N"):
        parts = [s for s, e in DRY_SPECIES.items() if e == what and s in grid.species]
        a = {"units": KG_PER_HA, "long_name": f"total dry deposition of {what} over the "
             f"period (kg {what}/ha): sum of {', '.join(parts)} (NaN where one is unknown)",
             "cell_methods": "time: sum", "species_summed": " ".join(parts)}
    else:
        el = DRY_SPECIES[what]
        a = {"units": KG_PER_HA, "long_name": f"dry deposition of {what} over the period "
             f"(kg {el}/ha, as {el}), scaled to the whole period from the covered hours",
             "cell_methods": "time: sum"}
    if mapping:
        a["grid_mapping"] = mapping
    return a


def grid_dataset(names, arr, grid, periods, history: str) -> xr.Dataset:
    """The CF Dataset of a gridded run (lazy when `arr` is a dask array).

    Parameters
    ----------
    names : list of str
    arr : numpy or dask array
        (variable, period, y, x) from :func:`workbench.grid.compute_grid`.
    grid : Grid
    periods : pandas.DataFrame
    history : str
        Line for the ``history`` attribute.
    """
    ydim, xdim = grid.dims
    mapping = grid.template.attrs.get("grid_mapping", "")
    start = periods["start"].values.astype("datetime64[ns]")
    end = periods["end"].values.astype("datetime64[ns]")
    dvars = {n: (("time", ydim, xdim), arr[k], _attrs(n, grid, mapping))
             for k, n in enumerate(names)}
    ds = xr.Dataset(dvars)
    ds = ds.assign_coords({c: grid.template[c].variable for c in grid.template.coords})
    ds = ds.assign_coords(time=("time", start, {"standard_name": "time", "axis": "T",
                                                "long_name": "start of the reporting period",
                                                "bounds": "time_bnds"}))
    ds["time_bnds"] = (("time", "nv"), np.stack([start, end], 1))
    ds["period"] = ("time", periods["label"].astype(str).values,
                    {"long_name": "label of the reporting period"})
    if mapping and mapping in grid.template:
        ds[mapping] = grid.template[mapping].variable
    ds["land_use"] = ((ydim, xdim), _class_codes(grid.classes),
                      {"long_name": "land-use class of the cell (the receptor of its maps)",
                       "flag_values": np.arange(len(_CLASSES), dtype="int16"),
                       "flag_meanings": " ".join(_CLASSES),
                       **({"grid_mapping": mapping} if mapping else {})})
    from .report import CAUTION          # the file may travel without a report
    ds.attrs = {"Conventions": "CF-1.8", "title": "gridded dry deposition velocities and "
                "dry deposition of S and N (deposition workbench)",
                "institution": "deposition workbench user",
                "source": f"deposition workbench {__version__}: the site engine run on "
                "every cell (model-based estimates, uncertain; for regulatory work follow "
                "the methods your authority requires)",
                "history": history,
                "comment": CAUTION,
                "references": "docs/methods_dry.md of the deposition workbench"}
    return ds


#: Our classes in their order: the codes of the output's land_use map.
_CLASSES = list(LAND_USE)


def _class_codes(classes) -> np.ndarray:
    lookup = {c: k for k, c in enumerate(_CLASSES)}
    return np.array([lookup.get(c, -1) for c in classes.reshape(-1)],
                    "int16").reshape(classes.shape)


def flag_reasons(grid, j: int, i: int) -> dict:
    """reason -> hours, of the plausibility flags of the met of cell (j, i) (the checks
    of :func:`read_block`), worded for a grid: a site's ``utc_offset_h`` is the grid's
    time coordinate."""
    ys, xs = slice(j, j + 1), slice(i, i + 1)
    cat = block_catalogue(grid, ys, xs)
    if not len(cat):
        return {}
    reasons = read_block(grid, ys, xs, cat, with_reasons=True)[3]
    out = {}
    for text in reasons:
        for part in str(text).split("; ") if text else ():
            part = part.replace(NIGHT_SUN_HINT, "check that the time coordinate is UTC and "
                                "labels the end of the hour (or has time bounds), and the "
                                "grid's latitude and longitude")
            out[part] = out.get(part, 0) + 1
    return dict(sorted(out.items(), key=lambda kv: -kv[1]))


def _over_periods(var: xr.DataArray, combine, each=None) -> np.ndarray:
    """`combine` (np.add, np.logical_and) of ``each(values)`` over the periods of a
    (time, y, x) map read back from grid.nc, one period at a time [the map's unit]: the
    sum or the "every period" of the whole map, holding (y, x) planes only."""
    out = None
    for p in range(var.sizes["time"]):
        plane = var.isel(time=p).values
        plane = each(plane) if each else plane
        out = plane if out is None else combine(out, plane)
    if out is None:                              # no period: the empty sum, or "all"
        shape = tuple(var.sizes[d] for d in var.dims[1:])
        return np.zeros(shape) if combine is np.add else np.ones(shape, bool)
    return out


def flag_notes(path: Path, grid) -> list:
    """A note on the met records that failed a plausibility check: how many, in how many
    cells, and the reasons at the cell with the most (read again, one cell)."""
    with xr.open_dataset(path) as ds:
        flagged = _over_periods(ds["met_flagged_hours"], np.add)
        ydim, xdim = grid.dims
        ycoord = ds[ydim].values if ydim in ds.coords else np.arange(grid.shape[0])
        xcoord = ds[xdim].values if xdim in ds.coords else np.arange(grid.shape[1])
    total = np.nansum(flagged)
    if not total > 0:
        return []
    j, i = np.unravel_index(np.nanargmax(flagged), flagged.shape)
    reasons = flag_reasons(grid, int(j), int(i))
    top = "; ".join(_fate(text, n) for text, n in list(reasons.items())[:3])
    cells = int(np.nansum(flagged > 0))
    return [f"{grid.paths['met'].name}: {int(total)} cell-hours in {cells} "
            f"cell{'s' if cells != 1 else ''} failed a plausibility check (counted in "
            f"met_flagged_hours); of all the met hours of the cell with the most "
            f"({ydim}={ycoord[j]:g} {xdim}={xcoord[i]:g}): {top}"]


#: What a check did to the values of a reason ending in "(kept)" or "(masked)"
#: (:mod:`workbench.io.metchecks`), said once, before the reason.
_FATES = {" (kept)": "kept as read (used in the maps)",
          " (masked)": "masked (set to missing)"}


def _fate(text: str, hours: int) -> str:
    """``"<hours> h <what was done>: <reason>"``: the reason's trailing "(kept)" or
    "(masked)" said as what happened to the values, once (a reason that ends in
    neither is given as it is).

    >>> _fate("pressure looks reduced to sea level, not station pressure (kept)", 3)
    '3 h kept as read (used in the maps): pressure looks reduced to sea level, not station pressure'
    >>> _fate("odd", 2)
    '2 h odd'
    """
    for tail, fate in _FATES.items():
        if text.endswith(tail):
            return f"{hours} h {fate}: {text[:-len(tail)]}"
    return f"{hours} h {text}"


def missing_met_notes(path: Path, grid) -> list:
    """Notes on the cells whose maps lack a Vd for want of met, or a deposition for want
    of concentrations, read back from grid.nc.

    Every cell with a class is counted: those with no Vd at any hour of any period
    (NaN maps), those with a Vd but no concentration of a species in any period, and
    those with some hours filled from their mean diurnal cycle.
    """
    with xr.open_dataset(path) as ds:
        if "met_missing_hours" not in ds:
            return []
        miss = _over_periods(ds["met_missing_hours"], np.add)
        # each map read a period at a time: (y, x) planes in memory, not whole maps
        vd = [_over_periods(ds[n], np.logical_and, np.isnan) for n in ds.data_vars
              if n.startswith("vd_")]
        coverage = {n[len("flux_coverage_"):]: _over_periods(
            ds[n], np.logical_and, lambda c: np.nan_to_num(c) == 0)
            for n in ds.data_vars if n.startswith("flux_coverage_")}
        ydim, xdim = grid.dims
        ycoord = ds[ydim].values if ydim in ds.coords else np.arange(grid.shape[0])
        xcoord = ds[xdim].values if xdim in ds.coords else np.arange(grid.shape[1])
    has_class = np.array([c is not None for c in grid.classes.reshape(-1)]).reshape(grid.shape)
    no_vd = has_class & (np.all(vd, axis=0) if vd else np.zeros(grid.shape, bool))
    some = has_class & ~no_vd & (miss > 0)
    notes = []
    if no_vd.any():
        j, i = np.nonzero(no_vd)
        where = ", ".join(f"{ydim}={ycoord[a]:g} {xdim}={xcoord[b]:g}"
                          for a, b in list(zip(j, i))[:3])
        cls = sorted({str(c) for c in grid.classes[no_vd]})
        notes.append(f"{grid.paths['met'].name}: {int(no_vd.sum())} of {int(has_class.sum())} "
                     f"cells with a class ({', '.join(cls)}) have no met the engine can use "
                     f"at any hour (a required variable missing, _FillValue or masked "
                     f"throughout; e.g. {where}): no deposition velocity, NaN in their vd_, "
                     "dry_ maps; counted in met_missing_hours")
    no_air = {sp: int((has_class & ~no_vd & zero).sum()) for sp, zero in coverage.items()}
    no_air = {sp: n for sp, n in no_air.items() if n}
    if no_air:
        notes.append(f"{grid.paths['air'].name}: cells with a class and a Vd but no "
                     "concentration in any period (dry_<species> NaN, flux_coverage_<species> "
                     "0): " + ", ".join(f"{sp} {n}" for sp, n in no_air.items()))
    if some.any():
        n = int(some.sum())
        notes.append(f"{grid.paths['met'].name}: {n} cell{' has' if n == 1 else 's have'} "
                     "hours without usable met (met_missing_hours > 0, at most "
                     f"{int(miss[some].max())} h): their Vd there is filled from the cell's "
                     "mean diurnal cycle")
    return notes


def _encoding(ds: xr.Dataset) -> dict:
    """The encoding of grid.nc's variables (NaN as _FillValue of the maps, CF time)."""
    enc = {n: {"_FillValue": np.nan} for n in ds.data_vars if ds[n].dtype.kind == "f"}
    for name in ("time", "time_bnds"):
        enc[name] = {"units": "hours since 1970-01-01 00:00:00", "calendar": "standard",
                     "dtype": "float64", "_FillValue": None}
    for name in ds.coords:
        if name not in enc:
            enc[name] = {"_FillValue": None}
    enc["land_use"] = {"dtype": "int16", "_FillValue": np.int16(-1)}
    return enc


def write_grid_netcdf(ds: xr.Dataset, path: Path):
    """Write (and compute, when lazy) the maps as NetCDF3 (scipy: no extra library),
    whole: every map is held in memory by the writer (:func:`create_grid_netcdf` writes
    them block by block)."""
    ds.to_netcdf(path, engine="scipy", format="NETCDF3_64BIT", encoding=_encoding(ds))


class _AllButMaps:
    """The writer given to :meth:`xarray.Dataset.dump_to_store`: writes every variable
    but the maps (coordinates, bounds, land use), whose place in the file is kept for
    :class:`MapFile`."""

    def __init__(self, maps):
        self.maps = set(maps)

    def add(self, source, target, region=None):
        if getattr(target, "variable_name", None) in self.maps:
            return
        target[region or ...] = np.asarray(source)


class MapFile:
    """The maps of grid.nc written in place, block by block.

    ``maps[:, :, ys, xs] = values`` (variable, period, y, x; the contract of
    :func:`dask.array.store`) encodes the block as xarray encodes the whole map
    (:func:`xarray.conventions.encode_cf_variable`, the encoding of
    :func:`write_grid_netcdf`) and writes it at its place in the file (NetCDF3 keeps a
    variable's values contiguous, big-endian, at the offset its header gives) through a
    memory map opened for the block's writes and closed after them: memory holds the
    block, not the map.

    Parameters
    ----------
    path : Path
        A grid.nc made by :func:`create_grid_netcdf`.
    ds : xarray.Dataset
        Its Dataset (the maps' attributes and encoding).
    names : list of str
        The maps, in the order of the first axis of the values.
    """

    def __init__(self, path: Path, ds: xr.Dataset, names, encoding: dict):
        from scipy.io import netcdf_file
        self.path = Path(path)
        self.names = list(names)
        self.template = {n: ds[n].variable for n in self.names}
        self.encoding = {n: encoding.get(n, {}) for n in self.names}
        self.offsets, self.shapes, self.dtypes = {}, {}, {}
        f = netcdf_file(self.path, "r", mmap=True)
        try:
            for n in self.names:
                data = f.variables[n].data
                root = data
                while isinstance(root.base, np.ndarray):
                    root = root.base
                self.offsets[n] = (data.__array_interface__["data"][0]
                                   - root.__array_interface__["data"][0])
                self.shapes[n], self.dtypes[n] = data.shape, data.dtype.str
                del data, root
        finally:
            f.close()

    def __setitem__(self, key, values):
        key = key if isinstance(key, tuple) else (key,)
        key = key + (slice(None),) * (4 - len(key))
        which = self.names[key[0]] if isinstance(key[0], slice) else [self.names[key[0]]]
        values = np.asarray(values).reshape((len(which),) + np.shape(values)[-3:])
        for k, name in enumerate(which):
            var = self.template[name]
            block = xr.Variable(var.dims, values[k], var.attrs, self.encoding[name])
            coded = xr.conventions.encode_cf_variable(block, name=name).values
            mm = None
            try:
                mm = np.memmap(self.path, dtype=self.dtypes[name], mode="r+",
                               offset=self.offsets[name], shape=self.shapes[name])
                mm[key[1:]] = coded
            except OSError as exc:
                raise OutputError(os_error_message(exc, self.path) + "; nothing was "
                                  "written into the output folder") from exc
            finally:
                del mm                               # unmapped: the pages leave the process


def create_grid_netcdf(ds: xr.Dataset, path: Path, names) -> MapFile:
    """Write grid.nc but the values of the maps `names` (its header, coordinates, land
    use, and the maps' place), then return the :class:`MapFile` that writes them block by
    block.  The same bytes as :func:`write_grid_netcdf` once every block is written
    (tested); the maps of `ds` may be a placeholder (``numpy.broadcast_to``: nothing is
    read from them)."""
    from xarray.backends import ScipyDataStore
    enc = _encoding(ds)
    store = ScipyDataStore(str(path), mode="w", format="NETCDF3_64BIT")
    try:
        ds.dump_to_store(store, writer=_AllButMaps(names), encoding=enc)
    finally:
        store.close()
    return MapFile(path, ds, names, enc)


def grid_paths(sc) -> dict:
    """role -> absolute path of the ``[grid]`` files of a scenario."""
    out = {}
    for role in ("met", "air", "land_use"):
        v = sc.data.get("grid", {}).get(role)
        if v is not None:
            p = Path(v)
            out[role] = p if p.is_absolute() else (sc.base / p).resolve()
    return out


@contextlib.contextmanager
def _cluster(workers=None, scheduler=None, log=None):
    """A dask client for the blocks (:func:`workbench.blocks.start_client`; the log
    records of the workers it starts go to `log`, a path), closed with the cluster it
    started at the end; None without `workers` and `scheduler`."""
    if not (workers or scheduler):
        yield None
        return
    import logging
    from .blocks import start_client
    client = start_client(workers, scheduler, log=log)
    try:
        yield client
    finally:
        cluster = client.cluster if not scheduler else None
        # a worker slow to stop on a busy machine is killed by its nanny after 4 s, which
        # logs a WARNING that looked like a fault at the end of a good run: not shown
        nanny = logging.getLogger("distributed.nanny")
        level = nanny.level
        nanny.setLevel(logging.ERROR)
        try:
            client.close()
            if cluster is not None:
                cluster.close()
        finally:
            nanny.setLevel(level)


@contextlib.contextmanager
def _terminate_as_interrupt():
    """SIGTERM (a batch system's time limit, ``kill``) raises KeyboardInterrupt while a
    grid runs, as Ctrl-C does: the run folder and its scratch copy (hundreds of MB for a
    year of a large grid) are removed instead of left behind as ``.<out>.incomplete``.
    Only where the default handler is in force, on the main thread."""
    import signal
    import threading

    def on_term(signum, frame):
        raise KeyboardInterrupt
    if threading.current_thread() is not threading.main_thread() or \
            signal.getsignal(signal.SIGTERM) is not signal.SIG_DFL:
        yield
        return
    before = signal.signal(signal.SIGTERM, on_term)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, before)


def run_grid(scenario_path, out, overwrite=False, quiet=False, block=None,
             use_dask=None, workers=None, scheduler=None) -> dict:
    """Compute a scenario's ``[grid]`` and write the run folder (grid.nc, provenance.json).

    Parameters
    ----------
    use_dask : bool, optional
        Blocks as dask tasks (default: when dask is installed).
    workers : int, optional
        Run the block tasks on a local dask cluster of this many single-threaded worker
        processes (started and closed here, as ``workbench run --workers``).
    scheduler : str, optional
        Run them on the dask scheduler at this address (``tcp://host:8786``).  With
        `workers` or `scheduler`, dask and distributed are needed (the ``scale`` extra);
        each block's maps come back to this process as the block ends and are written
        into grid.nc (:func:`workbench.grid.store_grid`, :class:`MapFile`).

    Returns
    -------
    dict
        name -> Path of each file written.
    """
    from .errors import ScenarioError
    from .scenario import load_scenario
    from .io.inputs import file_stamp
    from .io.readbytes import changed_while_read
    from .writers import changed_note, provenance, sha256
    sc = load_scenario(scenario_path)
    paths = grid_paths(sc)
    if len(paths) != 3:
        raise ScenarioError("no [grid] section", file=sc.path, column="grid",
                            expected="a [grid] section with met, air and land_use paths")
    say = (lambda text: None) if quiet else (lambda text: print(text, file=sys.stderr))
    from .cli_status import console_lines

    def say_wrapped(text):          # a note, fitted to an 80-column terminal
        say("\n".join(console_lines([text])))
    if workers or scheduler:
        use_dask = True
    elif use_dask is None:
        import importlib.util
        use_dask = importlib.util.find_spec("dask") is not None
    started = _dt.datetime.now(_dt.timezone.utc)
    from .dasklog import run_log
    # distributed's own messages go to dask.log of the run folder (workbench.dasklog)
    with _terminate_as_interrupt(), \
            RunFolder(out, {"scenario": sc.path, **paths}, overwrite, say=say) as folder, \
            run_log(folder, active=bool(workers or scheduler)) as log, \
            _cluster(workers, scheduler, log) as client:
        # read lazily, block by block: hashed just before they are opened, and again at
        # the end (an edit meanwhile is named in provenance.json, by content)
        read = {role: file_stamp(p) for role, p in paths.items()}   # None: open_grid says
        grid = open_grid(paths["met"], paths["air"], paths["land_use"])
        say_wrapped(describe(grid))
        if block is None:          # a block's memory: about the same for any record length
            block = default_block(len(grid.times))
        for note in grid.notes:
            say_wrapped(f"note: {note}")
        p = sc.data["period"]
        periods = make_periods(grid, p["resolution"], p["start"], p["end"])
        # the days of the record a default start or end leaves out, in the site run's
        # words (workbench.periods.excluded_record_notes): console, provenance, grid.nc
        left = span_notes(grid, p["start"], p["end"])
        for note in left:
            say_wrapped("note: " + note.removeprefix("period: "))
        grid.notes.extend(left)
        o = sc.options
        # inputs chunked across the blocks: a block-major scratch copy inside the
        # (incomplete) run folder, removed before the folder is committed; with a
        # cluster the copy runs on its workers (no chunk decompressed in this process)
        with staged(grid, block, folder.path, say, client=client) as grid:
            names = output_names(grid.species)
            where = ""
            if client is not None:             # the tasks run on the cluster
                where = (f" on the dask scheduler at {scheduler}" if scheduler
                         else f" on a local dask cluster of {workers} workers")
            # inputs also named relative to the run folder (a project moved whole is
            # found by `workbench verify`, as for a site run)
            prov = provenance(sc, {"scenario": sc.path, **paths}, started, out=folder.out,
                              read={"scenario": sc.sha256, **read})
            history = (f"{started:%Y-%m-%dT%H:%M:%SZ} workbench grid {sc.path} (deposition "
                       f"workbench {__version__}; blocks of {block} cells"
                       f"{' as dask tasks' if use_dask else ''}{where}); inputs: "
                       + "; ".join(f"{r} {v['path']} sha256 {v['sha256']}"
                                   for r, v in prov["inputs"].items()))
            # the maps are not held here: grid.nc is written first but their values,
            # and each block's values go to their place in it as the block ends
            holder = np.broadcast_to(np.float64(np.nan),
                                     (len(names), len(periods)) + tuple(grid.shape))
            ds = grid_dataset(names, holder, grid, periods, history)
            ds.attrs["workbench_options"] = json.dumps(
                {k: sc.resolved().get(k) for k in ("dry", "budget", "period", "grid")},
                default=str)
            if left:
                ds.attrs["workbench_period_notes"] = "; ".join(left)
            if grid.met_dropped:       # no per-record ledger: the count and the note here
                ds.attrs["workbench_met_repeated_steps_dropped"] = int(grid.met_dropped)
                ds.attrs["workbench_met_repeat_note"] = "; ".join(
                    n for n in grid.notes if "dropped as exact repeats" in n)
            target = folder.path / GRID_FILE
            try:
                maps = create_grid_netcdf(ds, target, names)
            except OSError as exc:
                raise OutputError(os_error_message(exc, target) + "; nothing was written "
                                  "into the output folder") from exc
            store_grid(grid, maps, o["dry"], o["budget"], periods, sc.fixed_velocity,
                       block=block, use_dask=use_dask, client=client, progress=say)
            flags = flag_notes(target, grid)      # the scratch copy, if any, still here
        grid.notes.extend(missing := flags + missing_met_notes(target, grid))
        # after the last read of the inputs (grid.nc is written): the met and air grids
        # are read block by block until then, so an edit meanwhile may have given some
        # blocks the old content and some the new: refused; the land-use grid and the
        # scenario are read whole before the blocks: an edit is named, as for a site run
        for role in LAZY_GRID_INPUTS:
            err = changed_while_read(paths[role], read[role], GridError)
            if err is not None:
                raise err
        changed = {r: p for r, p in {"scenario": sc.path, **paths}.items()
                   if file_stamp(p) != ({"scenario": sc.sha256, **read})[r]}
        for p_changed in changed.values():
            print(f"warning: {changed_note(p_changed, None)}", file=sys.stderr)
        if changed:
            prov.update(provenance(sc, {"scenario": sc.path, **paths}, started,
                                   out=folder.out, changed=changed,
                                   read={"scenario": sc.sha256, **read}))
        for note in missing:
            say_wrapped(f"note: {note}")
        try:
            prov["outputs"] = [GRID_FILE, "provenance.json"]
            # the checksum of grid.nc, for `workbench verify` (as a site run's outputs)
            prov["output_sha256"] = {GRID_FILE: sha256(target)}
            prov["grid_block"] = int(block)      # the maps are bit for bit per block size
            prov["notes"] = grid.notes
            # provenance() was called before the blocks ran: the end is now
            prov["run_finished_utc"] = _dt.datetime.now(_dt.timezone.utc).strftime(
                "%Y-%m-%dT%H:%M:%SZ")
            (folder.path / "provenance.json").write_text(json.dumps(prov, indent=2, default=str))
        except OSError as exc:
            raise OutputError(os_error_message(exc, target) + "; nothing was written into the "
                              "output folder") from exc
        try:
            final = folder.commit()
        except OSError as exc:
            raise OutputError(os_error_message(exc, folder.out, "rename into place")) from exc
    return {GRID_FILE: final / GRID_FILE, "provenance.json": final / "provenance.json"}
