"""The notes of ``trends.csv``: the detection-limit notes of a run's inputs
(:func:`detection_limit_notes`) and the words of a row's note (the values used, too
few years, no test or no percent slope, the years left out, the years without a row,
a corrected p held at the smallest p the values allow).  :mod:`.trends` re-exports
these names.
"""
from __future__ import annotations

import numpy as np

#: Species of each (element, pathway) pair, for the detection-limit notes of the sums.
_SPECIES_OF = {("S", "wet"): ("SO4",), ("S", "dry"): ("SO2", "pSO4"),
               ("N", "wet"): ("NO3", "NH4"), ("N", "dry"): ("HNO3", "pNO3", "pNH4", "NH3", "NO2")}


def detection_limit_notes(inputs) -> dict:
    """(site, species) -> a note where the detection limit of a species changed.

    A detection limit is known where a value was written as ``<DL``; the note names the
    years in which the set of limits seen differs from the year before.
    """
    import pandas as pd
    notes = {}
    for ds in (getattr(inputs, "precipitation", None), getattr(inputs, "air", None)):
        if ds is None:
            continue
        year = pd.DatetimeIndex(ds["start"].values).year.to_numpy()
        site = ds["site"].values.astype(str)
        for v in ds.data_vars:
            if not v.endswith("_detection_limit"):
                continue
            a = ds[v].values
            ok = ~np.isnan(a)
            if not ok.any():
                continue
            f = pd.DataFrame({"site": site[ok], "year": year[ok],
                              "dl": np.round(a[ok] / np.nanmax(a[ok]), 6)})
            for s, g in f.groupby("site"):
                sets = g.groupby("year")["dl"].apply(lambda d: tuple(sorted(set(d))))
                if len(set(sets)) > 1:
                    changed = [int(y) for y, prev, cur in zip(sets.index[1:], sets.values[:-1],
                                                             sets.values[1:]) if prev != cur]
                    sp = v[: -len("_detection_limit")]
                    notes[(s, sp)] = (f"detection limit of {sp} changed (years with a new "
                                      f"set of limits: {' '.join(map(str, changed))})")
    return notes


def _dl_note(notes, site, element, pathway, species):
    if species != "all":
        names = (species,)
    elif pathway == "total":
        names = _SPECIES_OF[(element, "wet")] + _SPECIES_OF[(element, "dry")]
    else:
        names = _SPECIES_OF.get((element, pathway), ())
    return "; ".join(notes[(site, n)] for n in names if (site, n) in notes)


def _note(variant, few, min_years, excluded, dl, flags=()) -> str:
    """The note of one trend row: the values used, too few years, no test or no percent
    slope (`flags`), what was left out and the detection-limit note."""
    note = [f"values: {variant.replace('_', ' ')}"]
    if few:
        note.append(f"fewer than {min_years} complete years")
    note.extend(f for f in flags if f)
    if excluded:
        note.append(excluded)
    if dl:
        note.append(dl)
    return "; ".join(note)


#: The note of a row whose corrected p was below the smallest p any order of its
#: values allows (:func:`exact_min_p`) and is held there.
P_HELD = ("corrected p (Hamed-Rao) held at {p_min:.2g}, the smallest p any order of "
          "these {n} values allows (exact permutation distribution of S); the correction "
          "gave {raw:.2g}, which {n} values cannot support")


#: Why a row has no test or no percent slope (notes of trends.csv).
NO_TEST = "all values equal (Var S = 0): no test"
NO_PERCENT = "values below 0 (net emission): no percent slope"
#: The base of the percent slope is the median of the values used: a median of 0 (most
#: years 0) leaves the percent empty, and the note says why (it was empty without a word).
NO_PERCENT_ZERO = "median of the values 0: no percent slope (its base)"
GAP = "no row for {}"


def _flags(n, var_s, vmin, gaps="", median=np.nan):
    """The reasons of :data:`NO_TEST`, :data:`NO_PERCENT` and :data:`NO_PERCENT_ZERO`
    for one row."""
    return (NO_TEST if n >= 2 and var_s == 0 else "",
            NO_PERCENT if np.isfinite(vmin) and vmin < 0 else
            NO_PERCENT_ZERO if median == 0 else "", gaps)


def _left_out_notes(code, status, n_series, year=None) -> list:
    """'years left out: 2 flagged (2019 2021), 1 filled (2017)' of each series (most
    frequent status first, then the first seen), from the series code, status and
    `year` of the rows left out, in the order of the series' rows; without `year`, the
    counts alone ('2 flagged': the years were not said before, so that a user could
    not find the year a trend left out)."""
    import pandas as pd
    notes = [""] * n_series
    if not code.size:
        return notes
    yr = (np.asarray(year).astype(str) if year is not None
          else np.full(code.size, "", dtype=object))
    f = pd.DataFrame({"c": code, "st": status, "pos": np.arange(code.size), "y": yr})
    g = f.groupby(["c", "st"], sort=False).agg(size=("pos", "size"), min=("pos", "min"),
                                               years=("y", lambda v: " ".join(sorted(v))))
    g = g.reset_index().sort_values(["c", "size", "min"], ascending=[True, False, True],
                                    kind="stable")
    text = g["size"].astype(str) + " " + g["st"].astype(str)
    if year is not None:
        text = text + " (" + g["years"].astype(str) + ")"
    for c, parts in text.groupby(g["c"].to_numpy(), sort=False):
        notes[int(c)] = "years left out: " + ", ".join(parts)
    return notes


def _gap_notes(code, year, n_series) -> list:
    """'no row for 2015' of each series that has no row at all for a year between its
    first and last (the spacing of the years is kept: Sen's slope uses the years)."""
    notes = [""] * n_series
    if not code.size:
        return notes
    y0 = int(year.min())
    has = np.zeros((n_series, int(year.max()) - y0 + 1), bool)
    has[code, year - y0] = True
    first = has.argmax(axis=1)
    last = has.shape[1] - 1 - has[:, ::-1].argmax(axis=1)
    cols = np.arange(has.shape[1])
    gap = ~has & (cols >= first[:, None]) & (cols <= last[:, None])
    for c in np.flatnonzero(gap.any(axis=1)):
        notes[c] = GAP.format(" ".join(str(y0 + int(i)) for i in np.flatnonzero(gap[c])))
    return notes
