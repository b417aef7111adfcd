"""Notes on the weeks a sampler has no sample: gaps inside its record, and a site whose
record starts after, or ends before, the file's.

A collector or filter pack out of service leaves no row, so nothing is flagged or
rejected; the budget counts the hours in its coverage (``wet_coverage_fraction``,
``air_coverage``) and a gap of a few weeks in a year may stay within the completeness
thresholds (docs/budget.md).  These notes name each gap where a user reads first: the
``notes:`` of ``workbench check`` and the input notes of report.html.
"""
from __future__ import annotations

import numpy as np

#: A gap shorter than this is a changeover, not a missing sample [d] (a day: a weekly
#: changeover takes hours; our choice).
MIN_GAP_DAYS = 1.0
#: Days by which a site's record may start after / end before the file's unsaid [d]
#: (the value of :data:`workbench.preflight.COVERAGE_SLACK_DAYS`, our choice).
EDGE_SLACK_DAYS = 31


def _day(t) -> str:
    return str(np.datetime64(t, "m"))[:16].replace("T00:00", "")


def _weeks(seconds: float) -> str:
    w = round(seconds / (7 * 86400.0), 1)
    return f"{w:g} week{'' if w == 1 else 's'}"


def _sampler_rows(ds):
    """The rows' site, start, end [UTC] and sampler key (``sampler_id``, or the site's
    name where it has none) as numpy arrays; None for no Dataset or no row."""
    if ds is None or not ds.sizes.get(next(iter(ds["site"].dims), ""), 0):
        return None
    site = ds["site"].values.astype(str)
    sampler = (ds["sampler_id"].values.astype(str) if "sampler_id" in ds
               else np.full(site.shape, ""))
    return site, ds["start"].values, ds["end"].values, np.where(sampler == "", site, sampler)


def _gap_words(gaps) -> tuple[str, str]:
    """The gaps' total length in words and ``(N gaps; longest X from A to B UTC)``;
    `gaps` a non-empty list of (first instant, last instant) [UTC]."""
    secs = np.array([(g1 - g0) / np.timedelta64(1, "s") for g0, g1 in gaps])
    j = int(np.argmax(secs))
    return _weeks(secs.sum()), (f"({len(gaps)} gap{'' if len(gaps) == 1 else 's'}; longest "
                                f"{_weeks(secs[j])} from {_day(gaps[j][0])} to "
                                f"{_day(gaps[j][1])} UTC)")


def interval_gaps(start, end, min_gap):
    """The gaps between sampling intervals [start, end) (overlaps merged).

    Parameters
    ----------
    start, end : array of datetime64
        Interval bounds (any order).
    min_gap : numpy.timedelta64
        Shortest gap returned [time].

    Returns
    -------
    list of (datetime64, datetime64)
        Each gap's first and last instant [UTC], in time order.
    """
    order = np.argsort(start, kind="stable")
    s, e = np.asarray(start)[order], np.asarray(end)[order]
    reach = np.maximum.accumulate(e)          # latest end so far (merges overlaps)
    gap = s[1:] - reach[:-1]
    k = np.flatnonzero(gap >= min_gap)
    return [(reach[:-1][i], s[1:][i]) for i in k]


def _covered(gap, start, end) -> bool:
    """Whether the intervals [start, end) cover all of `gap` but changeovers shorter than
    :data:`MIN_GAP_DAYS`."""
    g0, g1 = gap
    inside = (end > g0) & (start < g1)
    if not inside.any():
        return False
    s = np.maximum(start[inside], g0)
    e = np.minimum(end[inside], g1)
    hole = np.timedelta64(int(MIN_GAP_DAYS * 86400), "s")
    return not interval_gaps(np.concatenate([[g0], s, [g1]]),
                             np.concatenate([[g0], e, [g1]]), hole)


def sampler_turns(ds) -> list:
    """The turns of samplers at each site: where the sampler of the site's samples (in
    time order) changes to one that was not running before.

    Parameters
    ----------
    ds : xarray.Dataset
        Samples or air periods with ``site``, ``start``, ``end`` and ``sampler_id``.

    Returns
    -------
    list of (site, datetime64, str)
        The site, the start of the new sampler's first sample [UTC] and
        ``sampler W1 -> D1 (24 h samples, 168 h before)``.  Collocated samplers
        (running at once) are not turns.
    """
    if ds is None or "sampler_id" not in ds or not ds.sizes.get(next(iter(ds["site"].dims), ""), 0):
        return []
    site = ds["site"].values.astype(str)
    start, end = ds["start"].values, ds["end"].values
    sampler = ds["sampler_id"].values.astype(str)
    out = []
    for s_id in dict.fromkeys(site):
        at = np.flatnonzero(site == s_id)
        at = at[np.argsort(start[at], kind="stable")]
        names = sampler[at]
        k = np.flatnonzero(names[1:] != names[:-1]) + 1
        slack = np.timedelta64(int(MIN_GAP_DAYS * 86400), "s")
        for r, i in enumerate(k):
            old, new = names[i - 1], names[i]
            j = k[r + 1] if r + 1 < k.size else names.size      # the new run: [i, j)
            span0, span1 = start[at[i]], end[at[j - 1]]
            before = at[:i][names[:i] == old]
            after = at[j:][names[j:] == old]
            if (end[before] > span0 + slack).any() or (start[after] < span1 - slack).any() \
                    or j - i < 2:
                continue                    # running at once (collocated), or one sample
            new_rows = at[i:j]
            still = names[:i] == old
            h_new = np.median(end[new_rows] - start[new_rows]) / np.timedelta64(1, "h")
            h_old = np.median(end[at[:i]][still] - start[at[:i]][still]) / np.timedelta64(1, "h")
            what = f"sampler {old} -> {new}"
            if abs(h_new - h_old) > 1:
                what += f" ({h_new:g} h samples, {h_old:g} h before)"
            out.append((s_id, start[at[i]], what))
    return out


def sampling_gap_notes(ds, role: str) -> list[str]:
    """Lines on the gaps of each sampler's record and on sites that start late or end
    early.

    A gap is a stretch of at least the sampler's median sample length (and at least
    :data:`MIN_GAP_DAYS`) without any sample of that sampler: with weekly samples, one
    missing week is a gap.  A site whose first sample starts more than
    :data:`EDGE_SLACK_DAYS` after the file's first (or whose last ends that much before
    the file's last) is said too.

    Parameters
    ----------
    ds : xarray.Dataset
        Precipitation samples (dim ``sample``) or air periods (dim ``period``) with
        ``site``, ``start``, ``end`` and optionally ``sampler_id``.
    role : str
        ``"precipitation"`` or ``"air"``: the word the lines open with.

    Returns
    -------
    list of str
        E.g. ``air v18-F1: 10 weeks without samples (1 gap; longest 10 weeks from
        2017-08-03 14:00 UTC)``.
    """
    rows = _sampler_rows(ds)
    if rows is None:
        return []
    site, start, end, key = rows
    lo, hi = start.min(), end.max()
    slack = np.timedelta64(EDGE_SLACK_DAYS, "D")
    out = []
    for s_id in dict.fromkeys(site):
        at = site == s_id
        a, b = start[at].min(), end[at].max()
        late = [f"starts {_day(a)} UTC ({_weeks((a - lo) / np.timedelta64(1, 's'))} after "
                f"the file's first sample)"] if a - lo > slack else []
        late += [f"ends {_day(b)} UTC ({_weeks((hi - b) / np.timedelta64(1, 's'))} before "
                 f"the file's last)"] if hi - b > slack else []
        if late:
            out.append(f"{role} {s_id}: the record " + " and ".join(late))
        for k in dict.fromkeys(key[at]):
            m = key == k
            length = np.median(end[m] - start[m])
            gaps = interval_gaps(start[m], end[m],
                                 max(length, np.timedelta64(int(MIN_GAP_DAYS * 86400), "s")))
            other = at & ~m          # a gap the site's other samplers fill is a turn of
            gaps = [g for g in gaps  # samplers (said by sampler_turns), not a gap
                    if not _covered(g, start[other], end[other])]
            if not gaps:
                continue
            total, words = _gap_words(gaps)
            out.append(f"{role} {k}: {total} without samples {words}")
    return out


def species_gap_notes(ds, role: str = "air") -> list[str]:
    """Lines on the stretches a sampler ran without a value of one of its species: a
    month of NH3 blank in rows whose other species have values leaves no gap of the
    sampler (:func:`sampling_gap_notes` says nothing) but lowers that species' coverage
    alone (its ``air_coverage`` in budget.csv).

    A species counts for a sampler where it has a value (or one below detection) in
    some row of it; a stretch of at least the sampler's median sample length (and
    :data:`MIN_GAP_DAYS`) inside the sampler's record without such a row is said,
    unless the sampler had no row there (a gap of the sampler, said by
    :func:`sampling_gap_notes`) or another sampler of the site has the species there.

    Parameters
    ----------
    ds : xarray.Dataset
        Air periods (dim ``period``) with ``site``, ``start``, ``end``, optionally
        ``sampler_id``, and the species (variables with a ``quantity`` attribute,
        NaN where no value; ``<species>_censored`` where below detection).
    role : str
        The word the lines open with.

    Returns
    -------
    list of str
        E.g. ``air RDG-F1: NH3 without a value in 4 weeks of its samples (1 gap;
        longest 4 weeks from 2020-06-04 14:00 to 2020-07-02 14:00 UTC)``.
    """
    out = []
    for k, _, sp, gaps in species_gap_runs(ds):
        total, words = _gap_words(gaps)
        out.append(f"{role} {k}: {sp} without a value in {total} of its samples {words}")
    return out


def species_gap_runs(ds) -> list:
    """The stretches of :func:`species_gap_notes`: (sampler, site, species, gaps), the
    gaps in time order, each (first instant, last instant) [UTC]; a sampler without
    ``sampler_id`` goes by its site's name.

    The loop runs over the samplers and species (a few), never over rows or hours.
    """
    rows = _sampler_rows(ds)
    if rows is None:
        return []
    site, start, end, key = rows
    species = [k for k in ds.data_vars if "quantity" in ds[k].attrs]
    has = {sp: (np.isfinite(np.asarray(ds[sp].values, float))
                | (np.asarray(ds[f"{sp}_censored"].values, bool)
                   if f"{sp}_censored" in ds else False)) for sp in species}
    day = np.timedelta64(int(MIN_GAP_DAYS * 86400), "s")
    out = []
    for k in dict.fromkeys(key):
        m = key == k
        length = max(np.median(end[m] - start[m]), day)
        a, b = start[m].min(), end[m].max()
        s_id = site[m][0]
        for sp in species:
            v = m & has[sp]
            if not v.any() or v.sum() == m.sum():
                continue
            # the sampler's first start and last end as empty intervals: a species
            # blank at the start or end of the record is a gap too
            gaps = interval_gaps(np.concatenate([[a], start[v], [b]]),
                                 np.concatenate([[a], end[v], [b]]), length)
            other = (site == s_id) & ~m & has[sp]
            gaps = [g for g in gaps if _covered(g, start[m], end[m])
                    and not _covered(g, start[other], end[other])]
            if gaps:
                out.append((str(k), str(s_id), sp, gaps))
    return out
