"""A site's changed collector followed by the budget: the collector changes of a
catalogue (:func:`collector_history`), the collector of each precipitation sample
(:func:`sample_collectors`), the bulk part of each period's wet deposition from its
samples (:func:`collector_split`) and, without the samples, the share of a period's
hours under a bulk collector (:func:`collector_shares`); docs/budget.md, "Bulk
collectors".  Re-exported by :mod:`workbench.surfacehistory`.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .surfacechanges import _HOUR, _period_bounds, _period_words, _segments


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
