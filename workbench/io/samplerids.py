"""Sampler ids that look like a typo of another sampler of the same site.

A sampler id typed wrong on a few rows (``RDG-PI`` for ``RDG-P1``, ``rdg-p1``) makes a
new sampler: its rows stand alone as another sampler's samples, or are averaged with the
real sampler's where they overlap (collocated samplers).  Nothing in the numbers says so,
so :func:`typo_notes` names such an id in a ledger note; the rows are read as written
(the id could be a real short-lived sampler).  Two ids of a site that differ only in case,
blanks or separators (``RDG-P1``, ``rdg-p1``) over the same period are one sampler's
sample uploaded twice (two exports put together): :func:`check_spellings` refuses the
file, since averaging them as collocated samplers would count the sample twice.  The
thresholds are our choice.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: An id with at most this many rows at a site may be a typo [rows] (our choice) ...
RARE_ROWS = 3
#: ... of an id with at least this many times its rows at the same site [1] (our choice).
COMMON_FACTOR = 10
#: Characters a hand or a font confuses (compared as the first of each pair).
_LOOKALIKE = str.maketrans({"O": "0", "o": "0", "I": "1", "l": "1", "i": "1", "L": "1"})


def _spelling(text: str) -> str:
    """The id without case, blanks, dashes, dots and underscores."""
    return "".join(ch for ch in text if ch not in " -_./").lower()


def check_spellings(tab, sites, samplers, start, end, rows=None):
    """Raise a located InputError for two spellings of one sampler over one period.

    Parameters
    ----------
    tab : RawTable
    sites, samplers : numpy.ndarray of str
        Per data row.
    start, end : numpy.ndarray of datetime64[ns]
        The row's period [UTC].
    rows : numpy.ndarray of bool, optional
        The rows to compare (default all; e.g. without dropped repeats).
    """
    df = pd.DataFrame({"site": np.asarray(sites, dtype=object).astype(str),
                       "id": np.asarray(samplers, dtype=object).astype(str),
                       "start": start, "end": end, "row": np.arange(len(sites))})
    if rows is not None:
        df = df[np.asarray(rows, bool)]
    df = df[df["id"] != ""]
    if df.empty:
        return
    df["key"] = df["id"].map(_spelling)
    n_ids = df.groupby(["site", "key", "start", "end"])["id"].transform("nunique")
    clash = df[n_ids > 1]
    if clash.empty:
        return
    for _, grp in clash.groupby(["site", "key", "start", "end"], sort=False):
        first = grp.iloc[0]
        other = grp[grp["id"] != first["id"]].iloc[0]
        break
    i = int(max(first["row"], other["row"]))
    j = int(min(first["row"], other["row"]))
    raise tab.error(
        f"sampler_id differs from {str(tab.frame['sampler_id'].iloc[j])!r} (line "
        f"{int(tab.lines[j])}) only in case, blanks or separators, over the same period (one "
        f"sample uploaded twice under two spellings?)", row=i, column="sampler_id",
        value=tab.frame["sampler_id"].iloc[i],
        expected="one spelling of each sampler id (keep one row of the sample)")


def _key(text: str) -> str:
    """:func:`_spelling` with look-alike letters read as their digits."""
    return _spelling(text.translate(_LOOKALIKE))


def _one_edit(a: str, b: str) -> bool:
    """True when `b` is `a` with one character changed, added or removed."""
    if abs(len(a) - len(b)) > 1 or a == b:
        return False
    if len(a) == len(b):
        return sum(x != y for x, y in zip(a, b)) == 1
    short, long_ = (a, b) if len(a) < len(b) else (b, a)
    return any(long_[:k] + long_[k + 1:] == short for k in range(len(long_)))


def looks_like(rare: str, common: str) -> bool:
    """`rare` reads as a slip of `common`.

    >>> looks_like("RDG-PI", "RDG-P1"), looks_like("rdg p1", "RDG-P1"), looks_like("W2", "W1")
    (True, True, True)
    >>> looks_like("FP1", "PS1"), looks_like("A", "B")
    (False, False)
    """
    if min(len(rare), len(common)) < 2:
        return False
    return _key(rare) == _key(common) or _one_edit(rare, common)


def typo_notes(file_name: str, sites, samplers, lines) -> list[str]:
    """One note per sampler id that looks like a typo of a common id of its site.

    Parameters
    ----------
    file_name : str
    sites, samplers : array_like of str
        Site and sampler id of each data row (blank: no sampler).
    lines : array_like of int
        The file's line of each row.

    Returns
    -------
    list of str
    """
    df = pd.DataFrame({"site": np.asarray(sites, dtype=object).astype(str),
                       "id": np.asarray(samplers, dtype=object).astype(str),
                       "line": np.asarray(lines)})
    df = df[df["id"] != ""]
    notes = []
    for site, rows in df.groupby("site", sort=False):
        counts = rows["id"].value_counts()
        for rare, n in counts.items():
            if n > RARE_ROWS:
                continue
            common = sorted((c for c, m in counts.items()
                             if m >= COMMON_FACTOR * n and looks_like(rare, c)),
                            key=lambda c: _key(c) != _key(rare))   # look-alikes first
            if not common:
                continue
            at = rows.loc[rows["id"] == rare, "line"].tolist()
            where = (f"line {at[0]}" if len(at) == 1 else
                     "lines " + ", ".join(str(x) for x in at))
            beside = " or ".join(f"{c!r} ({counts[c]} rows)" for c in common)
            notes.append(f"{file_name}: sampler_id {rare!r} at {site}: {n} row{'s' * (n > 1)} "
                         f"({where}), like {beside}: a typo? Read as another sampler "
                         f"(averaged with the other where their periods overlap)")
    return notes
