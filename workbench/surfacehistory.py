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
"""
from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
import xarray as xr

from .landuse import LAND_USE

#: The classes of ``land_use_in_force`` (its flag values are the positions here).
CLASSES = tuple(LAND_USE)
#: Per-(site, receptor) counts of the velocities and the hourly flag each one counts:
#: counted again over the hours of the class in force.
COUNT_OF = {"n_ustar_floor": "ustar_floor_used", "n_ra_cap": "ra_cap_used",
            "n_ra_height_raised": "ra_height_raised", "n_hno3_rc_floor": "rc_floor_used_HNO3"}
_HOUR = np.timedelta64(1, "h")


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


def collector_history(catalogue) -> tuple:
    """``((site, collector, ((date, from, to), ...)), ...)`` of the collector changes.
    A site whose collector is set otherwise by an override (``[sites.<id>] collector``)
    is left out: the override asks for that collector in every period."""
    out = []
    for s in catalogue:
        ch = tuple((c.date.isoformat(), c.before, c.after)
                   for c in getattr(s, "changes", ()) if c.what == "collector")
        if ch and ch[-1][2] == s.collector:
            out.append((s.id, s.collector, ch))
    return tuple(out)


def _segments(changes):
    """(instants [datetime64 ns], classes): class k is in force from instant k-1 (UTC
    midnight of the change's date) to instant k."""
    instants = np.array([np.datetime64(d, "ns") for d, _, _ in changes])
    classes = [changes[0][1]] + [to for _, _, to in changes]
    return instants, classes


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


def describe(changes) -> str:
    """``conifer_forest until 2014-04-01, grass after``."""
    parts = [f"{frm} until {d}" for d, frm, _ in changes]
    return ", ".join(parts) + f", {changes[-1][2]} after"


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


def _period_bounds(periods):
    """Starts and ends of the reporting periods [datetime64 ns]."""
    return (periods["start"].to_numpy().astype("datetime64[ns]"),
            periods["end"].to_numpy().astype("datetime64[ns]"))


def _period_words(changes, p0, p1, now, what, before) -> np.ndarray:
    """Per period: ``<what> <describe(changes)>`` for a period that straddles changes,
    ``<what> <class> (<before> <date>)`` for one wholly under a class other than `now`,
    "" elsewhere (a loop over the periods, a few tens)."""
    instants, classes = _segments(changes)
    k0 = np.searchsorted(instants, p0, side="right")     # class at the period's start
    k1 = np.searchsorted(instants, p1, side="left")      # ... at its end
    words = np.full(len(p0), "", dtype=object)
    for k in range(len(p0)):
        a, b = int(k0[k]), int(k1[k])
        if a != b:
            words[k] = f"{what} " + describe(changes[a:b])
        elif classes[a] != now:
            words[k] = f"{what} {classes[a]} ({before} {changes[a][0]})"
    return words


def collector_shares(catalogue, sites, periods) -> tuple:
    """(site, period) share of each period's hours under a bulk collector [1] and the
    words for the periods under a collector other than the site's (or straddling a
    change): ``collector bulk until 2011-01-01, wet_only after``."""
    n_p = len(periods)
    share = np.array([[1.0 if catalogue[s].collector == "bulk" else 0.0] * n_p
                      for s in sites]).reshape(len(sites), n_p)
    words = np.full((len(sites), n_p), "", dtype=object)
    p0, p1 = _period_bounds(periods)
    for site, now, changes in collector_history(catalogue):
        if site not in sites:
            continue
        i = list(sites).index(site)
        instants, classes = _segments(changes)
        bounds = np.concatenate([[np.datetime64("1700-01-01", "ns")], instants,
                                 [np.datetime64("2250-01-01", "ns")]])
        length = (p1 - p0).astype(float)
        bulk = np.zeros(n_p)
        for k, c in enumerate(classes):        # the few segments, each over every period
            over = (np.minimum(p1, bounds[k + 1]) - np.maximum(p0, bounds[k])).astype(float)
            if c == "bulk":
                bulk += np.clip(over, 0, None)
        share[i] = np.where(length > 0, bulk / np.where(length > 0, length, 1), share[i])
        words[i] = _period_words(changes, p0, p1, now, "collector", "before")
    return share, words


#: A sample counts under the collector of a change's day when it starts on it or ends
#: by its end; one that holds the whole day is shared (:func:`sample_collectors`).
_DAY = np.timedelta64(1, "D")


def sample_collectors(site, start, end, history, collectors) -> tuple:
    """The collector of each precipitation sample, and the samples that straddle a change.

    Parameters
    ----------
    site : ndarray of str
        The sample's site.
    start, end : ndarray of datetime64
        The sample's start and end [UTC].
    history : tuple
        :func:`collector_history`.
    collectors : dict
        site -> its collector now (``wet_only`` or ``bulk``).

    Returns
    -------
    (ndarray of float, ndarray of bool)
        Per sample 1.0 under a bulk collector, 0.0 under a wet-only one (NaN for a
        straddling sample: its share is found per piece), and the straddling samples.

    Notes
    -----
    A change is dated by its day (the first day of the new collector, UTC).  A sample
    that starts on that day or later was taken with the new collector; one that ends
    by the end of that day (and started before it) with the earlier one: a collector is
    swapped when one sample is taken off and the next put on, so a sample ending on the
    change day was exposed in the old collector.  Only a sample that holds the whole day
    (starts before it, ends after it; said by :func:`workbench.io.sitechanges.sample_notes`)
    was exposed in both, at an instant nobody wrote down.
    """
    site = np.asarray(site).astype(str)
    s = np.asarray(start).astype("datetime64[ns]")
    e = np.asarray(end).astype("datetime64[ns]")
    bulk = np.array([collectors.get(x, "wet_only") == "bulk" for x in site], float)
    straddles = np.zeros(len(site), bool)
    for sid, _, changes in history:
        at = site == sid
        if not at.any():
            continue
        instants, classes = _segments(changes)
        k_lo = np.searchsorted(instants, s[at], side="right")   # changes begun by the start
        k_hi = np.searchsorted(instants + _DAY, e[at], side="left")  # days ended before the end
        cls = np.array([c == "bulk" for c in classes], float)
        both = k_hi > k_lo
        bulk[at] = np.where(both, np.nan, cls[np.minimum(k_lo, len(classes) - 1)])
        straddles[at] = both
    return bulk, straddles


def _bulk_share_of_pieces(table, sites_of_piece, history, met, opt):
    """Share [1] of each (sample, period) piece of a straddling sample that was under a
    bulk collector: the piece split at 00:00 UTC of each change's date by the wet
    chain's straddle rule (its hours, or its hourly met precipitation with
    ``straddle = "met"`` where the met covers the piece), as a sample is split between
    two periods (docs/methods_wet.md)."""
    p0 = table["start"].to_numpy().astype("datetime64[ns]")
    p1 = table["end"].to_numpy().astype("datetime64[ns]")
    hours = (p1 - p0) / _HOUR
    bulk_h = np.zeros(len(p0))
    by_met = None
    if opt is not None and getattr(opt, "straddle", "hours") == "met" and met is not None \
            and "precipitation" in met:
        from .wet.hourly import site_positions, window_sums
        pos = site_positions(sites_of_piece, met["site"].values)
        tot, n_tot, h_tot = window_sums(met["precipitation"], pos, p0, p1)
        by_met = [np.zeros(len(p0)), (n_tot == h_tot) & (h_tot > 0) & (tot > 0), tot, pos]
    for sid, _, changes in history:
        at = sites_of_piece == sid
        if not at.any():
            continue
        instants, classes = _segments(changes)
        bounds = np.concatenate([[np.datetime64("1700-01-01", "ns")], instants,
                                 [np.datetime64("2250-01-01", "ns")]])
        for k, c in enumerate(classes):          # the few segments, each over every piece
            if c != "bulk":
                continue
            a = np.maximum(p0, bounds[k])
            b = np.minimum(p1, bounds[k + 1])
            over = np.where(at & (b > a), (b - a) / _HOUR, 0.0)
            bulk_h += over
            if by_met is not None:
                from .wet.hourly import window_sums
                sub, n_sub, h_sub = window_sums(met["precipitation"], by_met[3],
                                                np.where(b > a, a, p0), np.where(b > a, b, p0))
                ok = (b > a) & (n_sub == h_sub)
                by_met[0] += np.where(at & ok, sub, 0.0)
                by_met[1] &= ~(at & (b > a) & ~ok)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(hours > 0, bulk_h / np.where(hours > 0, hours, 1.0), 0.0)
        if by_met is not None:
            share = np.where(by_met[1], by_met[0] / np.where(by_met[1], by_met[2], 1.0), share)
    return np.clip(share, 0.0, 1.0), np.clip(bulk_h / np.where(hours > 0, hours, 1.0), 0, 1)


def collector_split(screened, periods, options, met, history, collectors) -> dict:
    """The bulk part of each period's wet deposition, sample by sample.

    Parameters
    ----------
    screened : xarray.Dataset
        Screened precipitation samples (:func:`workbench.wet.screen`).
    periods : pandas.DataFrame
        The reporting periods (those of the wet deposition).
    options : WetOptions
        The straddle rule (``straddle``) splits a straddling sample.
    met : xarray.Dataset or None
        Hourly ``precipitation`` [mm] for ``straddle = "met"``.
    history : tuple
        :func:`collector_history` (the sites whose collector changed).
    collectors : dict
        site -> its collector now.

    Returns
    -------
    dict
        ``sites`` (the wet chain's site axis); per wet species ``share[<sp>]`` (site,
        period) [1], the share of the period's wet deposition carried by samples under a
        bulk collector: :math:`\\sum_{i\\,valid} \\beta_{ip} w_{ip} C_i / \\sum_{i\\,valid}
        w_{ip} C_i` with the wet chain's piece weights :math:`w_{ip}` (its flux is
        :math:`D_p = P_p \\sum_{valid} w C / \\sum_{valid} w`, so each sample contributes
        :math:`P_p w_{ip} C_i / \\sum_{valid} w`, and this is the bulk samples' sum of
        those); ``nss<ion>`` from the same sums through the sea-salt correction;
        ``precip_share`` (site, period) [1] the bulk samples' share of the precipitation
        (for a period whose mean was filled from the climatology); ``hour_share``
        (site, period) [1] the bulk samples' share of the sampled hours (NaN: no sample
        in the period); ``estimated`` (site, period) bool, a sample that straddles a
        change has a piece in the period (its share split by the straddle rule);
        ``beta``, ``interval``, ``period`` (pieces) each piece's bulk share [1], its
        sample and its period, in the order of the wet chain's sample weights.
        :math:`\\beta_{ip}` is 1 under bulk, 0 under wet-only
        (:func:`sample_collectors`), the split share for a straddling sample.
    """
    from .wet import seasalt
    from .wet.deposition import _species_list, sample_weights
    from .wet.pwm import group_sums, precipitation_weighted_mean
    ptable = periods.reset_index(drop=True)
    site_s = screened.variables["site"].values.astype(str)
    sites = np.unique(site_s)
    site_idx = pd.Index(sites).get_indexer(site_s)
    n_s, n_p = len(sites), len(ptable)
    table, weight, *_ = sample_weights(screened, ptable, options, met)
    i = table["interval"].values
    beta_s, straddles = sample_collectors(site_s, screened.variables["start"].values,
                                          screened.variables["end"].values, history, collectors)
    beta = beta_s[i]
    beta_h = beta.copy()
    st = straddles[i]
    if st.any():
        piece = table[st]
        share, share_h = _bulk_share_of_pieces(piece, site_s[i][st], history, met, options)
        beta[st], beta_h[st] = share, share_h
    flat = site_idx[i] * n_p + table["period"].values
    n_flat = n_s * n_p
    used = screened.variables["used"].values.astype(bool)[i]
    depth = np.where(used, weight, np.nan)

    def per(values):
        return group_sums(values, flat, n_flat).reshape(n_s, n_p)

    out = {"sites": [str(s) for s in sites], "share": {}, "history": history}
    pwm, part = {}, {}
    for sp in _species_list(screened):
        c = np.asarray(screened.variables[sp].values, dtype=float)[i]
        whole, num, den = precipitation_weighted_mean(c, depth, groups=flat, n_groups=n_flat,
                                                      with_sums=True)
        _, num_b, _ = precipitation_weighted_mean(c * beta, depth, groups=flat,
                                                  n_groups=n_flat, with_sums=True)
        pwm[sp] = whole.reshape(n_s, n_p)
        with np.errstate(invalid="ignore", divide="ignore"):
            part[sp] = (num_b / np.where(den > 0, den, np.nan)).reshape(n_s, n_p)
    tracer = getattr(options, "seasalt_tracer", None)
    if tracer in pwm:
        for ion in seasalt.corrected_ions(tracer, list(pwm)):
            pwm[f"nss{ion}"] = seasalt.non_seasalt(pwm[ion], pwm[tracer], ion, tracer)
            part[f"nss{ion}"] = seasalt.non_seasalt(part[ion], part[tracer], ion, tracer)
    for sp in pwm:
        with np.errstate(invalid="ignore", divide="ignore"):
            out["share"][sp] = np.clip(part[sp] / pwm[sp], 0.0, 1.0)
    w_all = per(weight)
    h = per((table["end"].values - table["start"].values) / _HOUR)
    with np.errstate(invalid="ignore", divide="ignore"):
        out["precip_share"] = np.where(w_all > 0, per(weight * beta) / w_all, np.nan)
        out["hour_share"] = np.where(h > 0, per(((table["end"].values - table["start"].values)
                                                 / _HOUR) * beta_h) / h, np.nan)
    out["estimated"] = per(st.astype(float)) > 0
    # each piece's bulk share, for the Monte Carlo's redrawn share (workbench/analysis/bulk.py)
    out["beta"], out["interval"], out["period"] = beta, i, table["period"].values
    return out

