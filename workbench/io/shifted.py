"""A column moved by one row against the others (a paste or a sort of one column).

In a precipitation file the chemistry columns of a sample are filled together: a dry
week or a sample not analysed has none, an analysed one has (nearly) all.  When one ion
column slides by one row, its values land on the rows next to where they belong: on dry
weeks (a value with no other chemistry) and off analysed ones (a gap where the others
have theirs).  :func:`check_shifted` refuses a file in which one column disagrees with
the others' presence on several rows and a shift of one row explains those rows (all
but a tenth): every value of that column would be read against the wrong sample.  The
thresholds are our choice.
"""
from __future__ import annotations

import numpy as np

#: Rows of disagreement before a shift is considered [rows] (our choice): fewer are
#: single samples analysed for a few ions only.
MIN_MISMATCH = 4


def check_shifted(tab, present: dict, rows=None):
    """Raise a located InputError for a column shifted by one row.

    Parameters
    ----------
    tab : RawTable
        The file (for the error's line and value).
    present : dict of str -> numpy.ndarray of bool
        Per column (header name): the row holds a value (or a censored one) [n].
    rows : numpy.ndarray of bool, optional
        The rows to compare, in file order (default all; e.g. without dropped repeats).
    """
    if len(present) < 3:
        return
    names = list(present)
    keep = np.ones(len(next(iter(present.values()))), bool) if rows is None else rows
    mat = np.column_stack([np.asarray(present[c], bool)[keep] for c in names])
    if len(mat) < 2 * MIN_MISMATCH:
        return
    idx = np.flatnonzero(keep)
    total = mat.sum(axis=1)
    for k, name in enumerate(names):
        p = mat[:, k]
        others = (total - p) > 0                     # any other column holds a value
        if (p != others).sum() < MIN_MISMATCH:
            continue
        for lag, way in ((1, "down"), (-1, "up")):
            moved = p[lag:] if lag > 0 else p[:lag]
            base = others[:-lag] if lag > 0 else others[-lag:]
            if (moved != base).sum() > (p != others).sum() // 10:
                continue
            orphan = np.flatnonzero(p & ~others)
            hole = np.flatnonzero(~p & others)
            first = int(idx[orphan[0]] if len(orphan) else idx[hole[0]])
            raise tab.error(
                f"a column shifted one row {way}? {len(orphan)} rows hold a value where the "
                f"row has no other chemistry and {len(hole)} rows lack one where the others "
                f"have theirs, and a shift of one row explains them", row=first,
                column=name, value=tab.frame[name].iloc[first],
                expected="each value on the row of its sample (move the column back one row)")
