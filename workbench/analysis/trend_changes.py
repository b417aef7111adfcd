"""Trends across changes of method: the changes a site's record went through (declared
in the site catalogue, or seen in the files) and the trend rows whose years cross them
(:func:`workbench.analysis.trends.trend_table`, column ``method_changes``)."""
from __future__ import annotations

import numpy as np


#: Pathways a declared change of each kind bears on (``[[site.change]]`` ``what``;
#: the totals hold both pathways).
_CHANGE_PATHWAYS = {"land_use": ("dry",), "collector": ("wet", "dry"),
                    "location": ("wet", "dry"), "sampler": ("wet", "dry"),
                    "gauge": ("wet",), "laboratory": ("wet",), "units": ("wet",),
                    "detection_limit": ("wet", "dry"), "other": ("wet", "dry")}
#: The note of a trend row whose years cross a change of method.
CHANGE_NOTE = "crosses a change of method: {}"


def change_notes(catalogue, inputs=None) -> dict:
    """site -> list of (date [datetime64[D]], pathways, text) of its changes of method.

    The changes declared in the site catalogue (``[[site.change]]``,
    :mod:`workbench.io.sitechanges`) and those the records show: a sampler that takes
    over from another (:func:`workbench.io.samplegaps.sampler_turns`, precipitation:
    wet; air: dry).  A trend whose years cross one says so (:func:`trend_table`).
    """
    from ..io.samplegaps import sampler_turns
    out = {}
    for site in (catalogue or ()):
        for ch in getattr(site, "changes", ()):
            out.setdefault(site.id, []).append(
                (np.datetime64(ch.date.isoformat(), "D"), _CHANGE_PATHWAYS[ch.what],
                 ch.describe()))
    for role, pathways in (("precipitation", ("wet",)), ("air", ("dry",))):
        ds = getattr(inputs, role, None) if inputs is not None else None
        for site, t, text in sampler_turns(ds):
            out.setdefault(site, []).append((np.datetime64(t, "D"), pathways,
                                             f"{str(np.datetime64(t, 'D'))} {role} {text}"))
    for v in out.values():
        v.sort(key=lambda c: c[0])
    return out


def _change_columns(table, changes):
    """``method_changes`` of each trend row (the changes inside its years, by pathway)
    and the note with :data:`CHANGE_NOTE`."""
    crossed = np.full(len(table), "", dtype=object)
    if changes and len(table):
        site = table["site"].astype(str).to_numpy()
        path = table["pathway"].astype(str).to_numpy()
        first = pd_years(table["first_year"])
        last = pd_years(table["last_year"])
        for s, items in changes.items():
            at = site == s
            if not at.any():
                continue
            for date, pathways, text in items:
                year = date.astype("datetime64[Y]").astype(int) + 1970
                jan1 = date == date.astype("datetime64[Y]").astype("datetime64[D]")
                # inside the years used: after 1 January of the first, before the end of the
                # last (a change on 1 January of the first year is before the series)
                inside = at & (first <= year) & (last >= year) & ~(jan1 & (first == year))
                inside &= (path == "total") | np.isin(path, pathways)
                crossed = np.where(inside, np.where(crossed == "", text, crossed + "; " + text),
                                   crossed)
    note = table["note"].astype(str).to_numpy(dtype=object)
    note = np.where(crossed != "", note + "; " + np.char.mod(
        CHANGE_NOTE.replace("{}", "%s"), crossed.astype(str)).astype(object), note)
    return crossed, note


def pd_years(col):
    """Years of a first_year/last_year column as floats (NaN: no year) [yr]."""
    import pandas as pd
    return pd.to_numeric(col, errors="coerce").to_numpy(float)
