"""A site's own surface and collector follow its declared history in one run.

A site whose land use changed (``[[site.change]] what = "land_use"``, docs/data_formats.md,
"A long record") has its own surface (its ``land_use`` row) computed under the class in
force at each hour: before the change the ``from`` class, after it the ``to`` class,
switching at 00:00 UTC of the change's date.  The engine computes each class once (the
classes before a change as receptors of the site, with the class defaults of the
land-use table, as a declared receptor of that class would be), and
:func:`in_force` puts on the site's own row the hours of the class in force (a boolean
time mask per change, no loop over hours).  The site's ``canopy_height_m``,
``roughness_length_m``, ``displacement_height_m`` and ``lai`` describe the surface as it
is now (after the last change): they apply to the hours of the site's own class only.
Receptors declared by the user keep their one class in every hour.

Without ``met_land_use`` the wind mast stands over the site's own surface and follows
the same history (:func:`mast_history`, :func:`mast_in_force`: the class under the mast
over each hour, on the met); a given ``met_land_use`` stays fixed.

A changed collector (``what = "collector"``) is followed by the budget sample by sample
(:func:`collector_split`): each precipitation sample is under the collector in force
over its dates (:func:`sample_collectors`), and a period's wet deposition is the sum of
its samples' contributions under their own rules (docs/budget.md, "Bulk collectors");
:func:`collector_shares` (the share of a period's hours by the change's date) is what
the budget falls back on without the samples.

Parts: :mod:`workbench.surfacecollectors` (the collector's history, sample by sample
and period by period) and :mod:`workbench.surfacechanges` (a history's segments in time
and their words per period), re-exported here.
"""
from __future__ import annotations

import dataclasses

import numpy as np
import xarray as xr

from .landuse import LAND_USE
from .surfacechanges import _HOUR, _period_bounds, _period_words, _segments, describe
# the collector's history, re-exported here (imports of workbench.surfacehistory keep
# working)
from .surfacecollectors import (_DAY, _bulk_share_of_pieces, collector_history,  # noqa: F401
                                collector_shares, collector_split, sample_collectors)

#: The classes of ``land_use_in_force`` (its flag values are the positions here).
CLASSES = tuple(LAND_USE)
#: Per-(site, receptor) counts of the velocities and the hourly flag each one counts:
#: counted again over the hours of the class in force.
COUNT_OF = {"n_ustar_floor": "ustar_floor_used", "n_ra_cap": "ra_cap_used",
            "n_ra_height_raised": "ra_height_raised", "n_hno3_rc_floor": "rc_floor_used_HNO3"}


def land_use_history(catalogue) -> tuple:
    """The declared land-use changes of the catalogue's sites, as the key of the stages
    that follow them: ``((site, land_use, ((date, from, to), ...)), ...)`` for the sites
    with at least one change (dates ISO text, in date order).  A site whose
    ``land_use`` is set otherwise by an override (a what-if of the apps) is left out:
    the override asks for that surface in every hour."""
    out = []
    for s in catalogue:
        ch = tuple((c.date.isoformat(), c.before, c.after)
                   for c in getattr(s, "changes", ()) if c.what == "land_use")
        if ch and ch[-1][2] == s.land_use:   # a what-if land_use override: not followed
            out.append((s.id, s.land_use, ch))
    return tuple(out)


def mast_history(catalogue, history) -> tuple:
    """The entries of `history` (:func:`land_use_history`) whose wind mast stands over
    the site's own surface: those without ``met_land_use``, whose mast surface follows
    the land use hour by hour.  A site that gives ``met_land_use`` keeps that class
    under its mast in every hour (what the user declared)."""
    mast = {s.id: s.met_land_use for s in catalogue}
    return tuple(h for h in history if mast.get(h[0]) is None)


#: Code of an hour whose mast surface is the one the catalogue describes (not an
#: earlier class): :func:`mast_in_force`.
AS_DECLARED = -1


def mast_in_force(met: xr.Dataset, history) -> xr.Dataset:
    """The met with ``met_land_use_in_force`` (site, time): per hour the position in
    :data:`CLASSES` of the class under the wind mast when it is an earlier class of the
    site's own surface (the hours before a land-use change, switching at 00:00 UTC of
    the change's date, as :func:`class_in_force`), :data:`AS_DECLARED` (-1) where the
    mast surface is the one of the catalogue.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly met (site, time).
    history : tuple
        :func:`mast_history`: the sites whose mast follows their land use.
    """
    sites = [str(x) for x in met["site"].values]
    times = met["time"].values
    code = np.full((len(sites), times.size), AS_DECLARED, np.int8)
    for site, own, changes in history:
        if site not in sites:
            continue
        k, classes = class_in_force(times, changes)
        per = np.array([AS_DECLARED if c == own else CLASSES.index(c) for c in classes],
                       np.int8)
        code[sites.index(site)] = per[k]
    var = xr.Variable(("site", "time"), code, {
        "long_name": "land-use class under the wind mast where it is an earlier class of "
                     "the site's surface (-1: the surface of the catalogue)",
        "flag_values": np.arange(-1, len(CLASSES), dtype=np.int8),
        "flag_meanings": "as_declared " + " ".join(CLASSES)})
    dims = met["temperature"].dims if "temperature" in met else ("site", "time")
    da = xr.DataArray(var, coords={"site": met["site"], "time": met["time"]}).transpose(
        *[d for d in dims if d in ("site", "time")])
    if met.chunks and "temperature" in met and met["temperature"].chunks:
        da = da.chunk(dict(zip(met["temperature"].dims, met["temperature"].chunks)))
    return met.assign(met_land_use_in_force=da)


def mast_land_use(catalogue, sites, times) -> xr.Variable:
    """The land-use class under each site's wind mast over each hour, for velocities.nc.

    Parameters
    ----------
    catalogue : SiteCatalogue
        With the site overrides applied.
    sites : sequence of str
    times : ndarray of datetime64
        Ends of the hours (UTC).

    Returns
    -------
    xarray.Variable
        (site, time) int8: the position in :data:`CLASSES` of the class under the mast,
        a CF flag variable (``flag_values`` -1 .. n-1, ``flag_meanings`` "unknown" and
        the classes):
        ``met_land_use`` where the site gives it (every hour), else the class of the
        site's own surface in force at the hour (:func:`mast_in_force`, following its
        declared land-use changes); -1 (unknown) for a site not in `catalogue`.
    """
    sites = [str(x) for x in sites]
    grid = xr.Dataset(coords={"site": sites, "time": np.asarray(times)})
    code = mast_in_force(grid, mast_history(catalogue, land_use_history(catalogue)))[
        "met_land_use_in_force"].transpose("site", "time").values.astype(np.int8)
    known = {s.id: s for s in catalogue}
    now = np.array([CLASSES.index(c) if (c := (known[x].met_land_use or known[x].land_use)
                                         if x in known else None) in CLASSES else -1
                    for x in sites], np.int8)
    code = np.where(code == AS_DECLARED, now[:, None], code).astype(np.int8)
    return xr.Variable(("site", "time"), code, {
        "long_name": "land-use class under the wind mast over each hour",
        "flag_values": np.arange(-1, len(CLASSES), dtype=np.int8),
        "flag_meanings": "unknown " + " ".join(CLASSES)})


def earlier_classes(history) -> dict:
    """site -> the classes of its own surface before its last change (not its land use)."""
    out = {}
    for site, own, changes in history:
        _, classes = _segments(changes)
        out[site] = tuple(dict.fromkeys(c for c in classes if c != own))
    return out


def history_catalogue(catalogue, history):
    """The catalogue with each site's earlier classes added to its receptors (computed
    with the class defaults, as declared receptors are)."""
    from .io.sites import SiteCatalogue
    extra = earlier_classes(history)
    sites = []
    for s in catalogue:
        add = tuple(c for c in extra.get(s.id, ()) if c not in s.surfaces)
        sites.append(dataclasses.replace(s, receptors=tuple(s.receptors) + add) if add else s)
    return SiteCatalogue(sites, catalogue.path)


def class_in_force(times, changes) -> tuple:
    """Index of the class in force over each hour and the classes.

    Parameters
    ----------
    times : ndarray of datetime64
        Ends of the hours (UTC).
    changes : tuple of (date, from, to)
        The site's land-use (or collector) changes in date order.

    Returns
    -------
    (ndarray of int, list of str)
        The hour starting at or after a change's instant is under its ``to`` class.
    """
    instants, classes = _segments(changes)
    start = np.asarray(times).astype("datetime64[ns]") - _HOUR
    return np.searchsorted(instants, start, side="right"), classes


def _moved(a, dims, first=("site", "receptor")):
    axes = [dims.index(d) for d in first]
    return np.moveaxis(a, axes, range(len(axes)))


def in_force(vel: xr.Dataset, history, receptors, real_active=None) -> xr.Dataset:
    """The velocities with each site's own surface under its class in force.

    Parameters
    ----------
    vel : xarray.Dataset
        Velocities (site, receptor, time) computed on the receptors and the earlier
        classes of the sites (:func:`history_catalogue`).
    history : tuple
        :func:`land_use_history`.
    receptors : sequence of str
        The receptors of the result (the earlier classes that are not among them are
        dropped once used).
    real_active : xarray.DataArray, optional
        (site, receptor) the pairs the sites ask for: the pairs computed for a history
        only are put back to "not computed" (NaN, 0, false), as
        :func:`workbench.stages.wanted_pairs` leaves them.

    Returns
    -------
    xarray.Dataset
        Every (site, receptor, time) variable on `receptors`, the site's own row taken
        hour by hour from the class in force; ``land_use_in_force`` (site, receptor,
        time) [flag] the class of each hour (a declared receptor: its own); the counts
        of :data:`COUNT_OF` counted again over those hours.
    """
    from .pairfill import fill_value
    recs = [str(r) for r in vel["receptor"].values]
    sites = [str(s) for s in vel["site"].values]
    out_r = [str(r) for r in receptors]
    keep = np.array([recs.index(r) for r in out_r], dtype=int)
    times = vel["time"].values
    n_t = times.size
    # (site, out receptor) -> per-hour index of the source receptor in `recs`
    take = {}
    code = np.empty((len(sites), len(out_r), n_t), np.int8)
    code[...] = np.array([CLASSES.index(r) for r in out_r], np.int8)[None, :, None]
    notes = []
    for site, own, changes in history:
        if site not in sites or own not in out_r:
            continue
        k, classes = class_in_force(times, changes)
        src = np.array([recs.index(c) for c in classes])[k]
        i, j = sites.index(site), out_r.index(own)
        take[(i, j)] = src
        code[i, j] = np.array([CLASSES.index(c) for c in classes], np.int8)[k]
        notes.append(f"{site}: surface {describe(changes)}")
    hours = np.arange(n_t)
    pairs_off = None
    if real_active is not None:
        ra = real_active.sel(site=sites, receptor=out_r).transpose("site", "receptor").values
        act = (vel["active"].transpose("site", "receptor").values[:, keep] if "active" in vel
               else np.ones(ra.shape, bool))
        pairs_off = act & ~ra.astype(bool)
    out = {}
    for name, v in vel.data_vars.items():
        v = v.variable
        if "receptor" not in v.dims:
            out[name] = v
            continue
        a = np.array(np.take(np.asarray(v.values), keep, axis=v.dims.index("receptor")))
        if "site" in v.dims:
            view = _moved(a, v.dims)                        # (site, receptor, ...)
            if "time" in v.dims:
                src = np.asarray(v.values)
                src_view = _moved(src, v.dims)
                ti = [d for d in v.dims if d not in ("site", "receptor")].index("time")
                for (i, j), s_idx in take.items():
                    got = np.moveaxis(src_view[i], ti + 1, 1)     # (receptor, time, ...)
                    np.moveaxis(view[i, j], ti, 0)[...] = got[s_idx, hours]
            if pairs_off is not None and pairs_off.any() and name != "active":
                view[pairs_off] = fill_value(v.dtype, v.attrs)
        out[name] = xr.Variable(v.dims, a, dict(v.attrs))
    if take:
        for n_name, flag in COUNT_OF.items():
            if n_name in out and flag in out and out[flag].dims == ("site", "receptor", "time"):
                n = np.asarray(out[flag].values).sum(axis=-1).astype(out[n_name].dtype)
                out[n_name] = xr.Variable(out[n_name].dims, n, out[n_name].attrs)
        for name in ("displacement_height", "roughness_length", "canopy_height"):
            if name in out and "time" not in out[name].dims:
                out[name].attrs["history"] = ("of the site's surface as it is now; the hours "
                                              "before a land-use change: see land_use_in_force")
    if real_active is not None and "active" in out:
        out["active"] = xr.Variable(("site", "receptor"), ra.astype(bool), out["active"].attrs)
    out["land_use_in_force"] = xr.Variable(("site", "receptor", "time"), code, {
        "long_name": "land-use class of the surface over each hour",
        "flag_values": np.arange(len(CLASSES), dtype=np.int8),
        "flag_meanings": " ".join(CLASSES)})
    coords = {k: c.variable for k, c in vel.coords.items() if "receptor" not in c.dims}
    coords["receptor"] = out_r
    ds = xr.Dataset(out, coords=coords, attrs=dict(vel.attrs))
    if notes:
        ds.attrs["land_use_history"] = "; ".join(notes)
    return ds


def period_notes(catalogue, sites, receptors, periods) -> np.ndarray:
    """(site, receptor, period) words for the dry rows of a site's own surface whose
    periods are not all under its land use: ``surface conifer_forest until 2014-04-01,
    grass after`` (a period that straddles a change), ``surface conifer_forest``
    (a period wholly under an earlier class); "" elsewhere."""
    out = np.full((len(sites), len(receptors), len(periods)), "", dtype=object)
    p0, p1 = _period_bounds(periods)
    for site, own, changes in land_use_history(catalogue):
        if site not in sites or own not in receptors:
            continue
        i, j = list(sites).index(site), list(receptors).index(own)
        out[i, j] = _period_words(changes, p0, p1, own, "surface", "land_use before")
    return out


