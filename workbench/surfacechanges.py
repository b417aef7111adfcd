"""A site's declared changes (land use, collector) in time: the segments between
changes (:func:`_segments`), the words of a history (:func:`describe`) and of each
reporting period under it (:func:`_period_words`); used by
:mod:`workbench.surfacehistory` and :mod:`workbench.surfacecollectors`.
"""
from __future__ import annotations

import numpy as np

#: One hour (the met's time step).
_HOUR = np.timedelta64(1, "h")


def _segments(changes):
    """(instants [datetime64 ns], classes): class k is in force from instant k-1 (UTC
    midnight of the change's date) to instant k."""
    instants = np.array([np.datetime64(d, "ns") for d, _, _ in changes])
    classes = [changes[0][1]] + [to for _, _, to in changes]
    return instants, classes


def describe(changes) -> str:
    """``conifer_forest until 2014-04-01, grass after``."""
    parts = [f"{frm} until {d}" for d, frm, _ in changes]
    return ", ".join(parts) + f", {changes[-1][2]} after"


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
