"""A column moved by one row against the others (a paste or a sort of one column).

In a precipitation file the chemistry columns of a sample are filled together: a dry
week or a sample not analysed has none, an analysed one has (nearly) all.  When one ion
column slides by one row, its values land on the rows next to where they belong: on dry
weeks (a value with no other chemistry) and off analysed ones (a gap where the others
have theirs).  :func:`check_shifted` refuses a file in which one column disagrees with
the others' presence on several rows and a shift of one row explains those rows (all
but a tenth): every value of that column would be read against the wrong sample.  The
thresholds are our choice.

In an air file the species of one sampler are filled together the same way (a filter
pack's or denuder's periods: a failed period has none), but samplers differ in what
they measure (a passive NH3 sampler beside a filter pack), so the rows are compared
within each site and sampler, on the columns that sampler fills.  A shift shows only
where the presence varies: a sampler with a value in every period and column hides a
shifted column from this check (the values alone could tell, and we do not guess).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: Rows of disagreement before a shift is considered [rows] (our choice): fewer are
#: single samples analysed for a few ions only.
MIN_MISMATCH = 4


def check_shifted(tab, present: dict, rows=None, groups=None, what="chemistry"):
    """Raise a located InputError for a column shifted by one row.

    Parameters
    ----------
    tab : RawTable
        The file (for the error's line and value).
    present : dict of str -> numpy.ndarray of bool
        Per column (header name): the row holds a value (or a censored one) [n].
    rows : numpy.ndarray of bool, optional
        The rows to compare, in file order (default all; e.g. without dropped repeats).
    groups : numpy.ndarray, optional
        A label per row (the air file's site and sampler): each group's rows are
        compared among themselves, in file order, on the columns the group fills, and
        only in a group filling three columns or more (with two, either could be the
        one moved).  Default: one group.
    what : str
        What the other columns hold, for the message ("chemistry", "concentration").
    """
    if len(present) < 3:
        return
    names = list(present)
    n = len(next(iter(present.values())))
    keep = np.ones(n, bool) if rows is None else np.asarray(rows, bool)
    idx = np.flatnonzero(keep)
    if len(idx) < 2 * MIN_MISMATCH:
        return
    g = np.zeros(len(idx), np.int64) if groups is None else pd.factorize(np.asarray(groups)[idx])[0]
    order = np.argsort(g, kind="stable")        # each group's rows together, in file order
    idx, g = idx[order], g[order]
    mat = np.column_stack([np.asarray(present[c], bool)[idx] for c in names])
    n_g = int(g.max()) + 1
    used = np.column_stack([np.bincount(g, weights=mat[:, k], minlength=n_g) > 0
                            for k in range(len(names))])          # (group, column)
    wide = used.sum(axis=1) >= 3
    same = g[1:] == g[:-1]                       # consecutive rows of one group
    total = mat.sum(axis=1)
    for k, name in enumerate(names):
        inside = wide[g] & used[g, k]            # rows of the groups filling the column
        p = mat[:, k]
        others = (total - p) > 0                 # any other column holds a value
        miss = int(((p != others) & inside).sum())
        if miss < MIN_MISMATCH:
            continue
        pair = same & inside[1:]
        for lag, way in ((1, "down"), (-1, "up")):
            moved, base = (p[1:], others[:-1]) if lag > 0 else (p[:-1], others[1:])
            if ((moved != base) & pair).sum() > miss // 10:
                continue
            orphan = idx[p & ~others & inside]
            hole = idx[~p & others & inside]
            first = int(orphan.min() if len(orphan) else hole.min())
            raise tab.error(
                f"a column shifted one row {way}? {len(orphan)} rows hold a value where the "
                f"row has no other {what} and {len(hole)} rows lack one where the others "
                f"have theirs, and a shift of one row explains them", row=first,
                column=name, value=tab.frame[name].iloc[first],
                expected="each value on the row of its sample (move the column back one row)")
